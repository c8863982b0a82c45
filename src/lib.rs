//! tellscope: how predictable is each pitcher's next pitch type from the game
//! situation, measured on held-out games against his usage prior, with
//! permutation tests and false-discovery control.
//!
//! The modules read as the pipeline a pitch takes:
//! ingest → situations → priors → model → evaluate → significance → report,
//! with `simulate` making invented logs with planted truth and `compare`
//! measuring change between two periods.

pub mod audit;
pub mod compare;
pub mod domain;
pub mod error;
pub mod evaluate;
pub mod report;
pub mod ingest;
pub mod model;
pub mod league;
pub mod outcomes;
pub mod priors;
pub mod progress;
pub mod settings;
pub mod significance;
pub mod simulate;
pub mod situations;
pub mod tells;

pub use error::{Error, Result};
