//! The bottom layer: terms of the trade and of the contract that every other
//! module speaks (factors and their levels, hands, pitch results, the log's
//! columns, shared defaults). It imports nothing of the crate's.

pub mod columns;
pub mod defaults;
pub mod labels;
pub mod levels;
pub mod numbers;
pub mod result;

pub use result::PitchResult;
