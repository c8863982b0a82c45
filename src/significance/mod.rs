//! Significance: exact tests, multiple-testing control, intervals and
//! resampling. Every routine here is checked against an outside reference
//! (scipy, statsmodels, a published worked example) in
//! `tests/stats_reference.rs`.

pub mod cmh;
pub mod contingency;
pub mod driver;
pub mod budget;
pub mod fdr;
pub mod hypergeom;
pub mod permutation_p;
pub mod resample;
pub mod wilson;

/// A two-sided interval `[low, high]` for a proportion or a statistic.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Interval {
    pub low: f64,
    pub high: f64,
}

impl Interval {
    /// Whether `x` lies in the closed interval.
    pub fn contains(&self, x: f64) -> bool {
        self.low <= x && x <= self.high
    }

    pub fn width(&self) -> f64 {
        self.high - self.low
    }
}
