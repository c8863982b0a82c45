//! Every default setting, in one place: the values the code falls back on
//! where no config key or flag gives one, by config section. The documented
//! default settings file, `config/defaults.toml`, writes out the same values
//! (`tests/config_files.rs` checks the two agree), and a help text that
//! names a default is built from the constant here.

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

// [audit]
/// The held-out statistic the permutation test scores.
pub const STATISTIC: &str = "bits";
pub const STOP_AFTER_EXCEEDANCES: usize = 10;
pub const MIN_TRAIN_PITCHES: usize = 300;
pub const MIN_TEST_PITCHES: usize = 100;
pub const FORWARD_BLOCKS: usize = 5;
/// Seasons before the scored one the rolling scheme's models learn from
/// (more only while they hold fewer than `MIN_TRAIN_PITCHES`).
pub const HISTORY_SEASONS: usize = 1;
pub const NEW_TYPE_SHARE: f64 = 0.01;

// [model]
pub const MAX_DEPTH: usize = 6;
pub const MIN_SAMPLES_LEAF: usize = 20;
pub const MIN_SAMPLES_SPLIT: usize = 40;
pub const MIN_IMPURITY_DECREASE: f64 = 0.0;
pub const LEAF_SMOOTHING: f64 = 10.0;
pub const PRIOR_BLEND: f64 = 0.3;
pub const SPLIT_ALPHA: f64 = 0.05;
pub const MIN_TYPE_PITCHES: usize = 30;

// [tells]
pub const TELLS_MIN_EFFECT: f64 = 0.10;
pub const TELLS_MIN_N: usize = 20;
/// How the run's tell tests are corrected for multiplicity.
pub const TELLS_FDR_METHOD: &str = "hierarchical";

// [location]
pub const LOCATION_MIN_TRAIN_PITCHES: usize = 150;
pub const LOCATION_MIN_TEST_PITCHES: usize = 50;

// [compare]
pub const COMPARE_NEW_PITCH_SHARE: f64 = 0.05;
pub const COMPARE_ABSENT_SHARE: f64 = 0.01;
pub const COMPARE_BOOTSTRAP: usize = 400;
