//! Wilson score interval for a binomial proportion.
//!
//! Wilson, E. B. (1927) "Probable inference, the law of succession, and
//! statistical inference", JASA 22, 209–212; recommended over the Wald
//! interval by Newcombe (1998) "Two-sided confidence intervals for the single
//! proportion: comparison of seven methods", Statistics in Medicine 17,
//! 857–872 (his method 3). With `p = k/n` and `z` the upper `(1-level)/2`
//! normal quantile:
//!
//! ```text
//! centre = (p + z²/2n) / (1 + z²/n)
//! half   = z sqrt(p(1-p)/n + z²/4n²) / (1 + z²/n)
//! ```
//!
//! the same arithmetic as statsmodels `proportion_confint(method="wilson")`.

use super::Interval;
use statrs::distribution::{ContinuousCDF, Normal};

/// The confidence level used when none is given.
pub const DEFAULT_LEVEL: f64 = 0.95;

/// Wilson score interval for `k` successes in `n` trials at confidence
/// `level` (e.g. 0.95).
///
/// The bounds are clamped to [0, 1] (at k = 0 or k = n the formula gives 0
/// or 1 up to rounding). With `n = 0` there is no information and the
/// interval is the whole of [0, 1].
///
/// # Panics
/// If `k > n` or `level` is not strictly between 0 and 1.
pub fn wilson_interval(k: u64, n: u64, level: f64) -> Interval {
    assert!(k <= n, "wilson_interval: {k} successes in {n} trials");
    assert!(
        level > 0.0 && level < 1.0,
        "wilson_interval: level {level} not in (0, 1)"
    );
    if n == 0 {
        return Interval {
            low: 0.0,
            high: 1.0,
        };
    }
    let z = normal_upper_quantile((1.0 - level) / 2.0);
    let nf = n as f64;
    let p = k as f64 / nf;
    let z2 = z * z;
    let denom = 1.0 + z2 / nf;
    let centre = (p + z2 / (2.0 * nf)) / denom;
    let half = z * (p * (1.0 - p) / nf + z2 / (4.0 * nf * nf)).sqrt() / denom;
    Interval {
        low: (centre - half).max(0.0),
        high: (centre + half).min(1.0),
    }
}

/// Wilson interval at the default 95% level.
pub fn wilson_95(k: u64, n: u64) -> Interval {
    wilson_interval(k, n, DEFAULT_LEVEL)
}

/// `z` with P(Z > z) = `tail` for a standard normal Z.
fn normal_upper_quantile(tail: f64) -> f64 {
    let std = Normal::new(0.0, 1.0).expect("standard normal");
    -std.inverse_cdf(tail)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn z_for_95_percent() {
        // Handbook value: z_{0.975} = 1.959963984540054 (normal table).
        assert!((normal_upper_quantile(0.025) - 1.959963984540054).abs() < 1e-12);
    }

    #[test]
    fn empty_sample_is_uninformative() {
        assert_eq!(
            wilson_95(0, 0),
            Interval {
                low: 0.0,
                high: 1.0
            }
        );
    }
}
