//! Defaults that more than one layer needs. The documented default settings
//! file is `config/defaults.toml`; these are the values the code falls back
//! on where no config or flag gives one.

/// The random seed of every run that names none.
pub const DEFAULT_SEED: u64 = 20_260_401;

/// Label-swap permutations per pitcher when none are asked for: enough for
/// the smallest p-value, 1/(m + 1), to pass a BH bar over the ~150 tests of a
/// staff's comparison.
pub const COMPARE_PERMUTATIONS: usize = 1999;

/// Permutations per pitcher of the audit's tests when none are asked for.
pub const AUDIT_PERMUTATIONS: usize = 999;

/// The false discovery rate of every flag when none is asked for.
pub const FDR: f64 = 0.05;
