//! Distances between distributions and the cluster bootstrap.
//!
//! Pitches within one game share the day's conditions and the batters
//! faced, so they are not independent. The bootstrap here resamples whole
//! clusters (games) with replacement, which keeps that dependence inside each
//! resample (the cluster or "block" bootstrap; Davison & Hinkley 1997,
//! "Bootstrap Methods and their Application", section 3.8). Intervals are
//! percentile intervals (Efron & Tibshirani 1993, "An Introduction to the
//! Bootstrap", chapter 13).

use super::Interval;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// Total variation distance `½ Σ |p_i - q_i|` between two discrete
/// distributions on the same categories (Levin, Peres & Wilmer, "Markov
/// Chains and Mixing Times", Prop. 4.2). Inputs may be counts or shares:
/// each side is divided by its own total first. The result is in [0, 1]:
/// the largest difference in probability the two give to any set of
/// categories.
///
/// Returns `None` if a side has a negative or non-finite entry or a zero total.
///
/// # Panics
/// If the two slices differ in length.
pub fn total_variation(p: &[f64], q: &[f64]) -> Option<f64> {
    assert_eq!(
        p.len(),
        q.len(),
        "total_variation: {} vs {} categories",
        p.len(),
        q.len()
    );
    let total = |x: &[f64]| -> Option<f64> {
        if x.iter().any(|&v| !v.is_finite() || v < 0.0) {
            return None;
        }
        let s: f64 = x.iter().sum();
        (s > 0.0).then_some(s)
    };
    let (sp, sq) = (total(p)?, total(q)?);
    let d: f64 = p
        .iter()
        .zip(q)
        .map(|(&a, &b)| (a / sp - b / sq).abs())
        .sum();
    Some((0.5 * d).min(1.0))
}

/// Quantile of already **sorted** values by linear interpolation between
/// order statistics (Hyndman & Fan 1996 type 7; numpy's default
/// `method="linear"`): position `h = (n - 1) q`.
///
/// # Panics
/// If `sorted` is empty or `q` is outside [0, 1].
pub fn quantile_sorted(sorted: &[f64], q: f64) -> f64 {
    assert!(!sorted.is_empty(), "quantile of no values");
    assert!((0.0..=1.0).contains(&q), "quantile level {q} not in [0, 1]");
    let h = (sorted.len() - 1) as f64 * q;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(sorted.len() - 1);
    let frac = h - lo as f64;
    sorted[lo] + frac * (sorted[hi] - sorted[lo])
}

/// A percentile bootstrap interval and what it was made from.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct BootstrapInterval {
    /// The statistic on the original clusters.
    pub estimate: f64,
    pub interval: Interval,
    /// Resamples whose statistic was finite and used for the percentiles
    /// (a resample can make a statistic undefined, e.g. a ratio with no
    /// denominator; those are left out).
    pub resamples_used: usize,
    pub level: f64,
}

/// Percentile bootstrap interval resampling whole clusters with replacement.
///
/// `clusters` holds one value per cluster (e.g. a game's pitches or its
/// totals); `statistic` computes the figure of interest from a resample,
/// given as references to the drawn clusters (the same cluster may appear
/// several times). Each of `resamples` resamples draws `clusters.len()`
/// clusters uniformly with replacement from a `ChaCha8Rng` seeded with
/// `seed`, so the same input and seed give the same interval. The interval
/// is the `(1-level)/2` and `(1+level)/2` type-7 quantiles of the resampled
/// statistics.
///
/// Returns `None` if there are no clusters, `resamples == 0`, `level` is
/// not in (0, 1), or no resample gave a finite statistic.
pub fn cluster_bootstrap<T, F>(
    clusters: &[T],
    mut statistic: F,
    resamples: usize,
    level: f64,
    seed: u64,
) -> Option<BootstrapInterval>
where
    F: FnMut(&[&T]) -> f64,
{
    if clusters.is_empty() || resamples == 0 || !(level > 0.0 && level < 1.0) {
        return None;
    }
    let all: Vec<&T> = clusters.iter().collect();
    let estimate = statistic(&all);
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let k = clusters.len();
    let mut draw: Vec<&T> = Vec::with_capacity(k);
    let mut values = Vec::with_capacity(resamples);
    for _ in 0..resamples {
        draw.clear();
        for _ in 0..k {
            draw.push(&clusters[rng.random_range(0..k)]);
        }
        let v = statistic(&draw);
        if v.is_finite() {
            values.push(v);
        }
    }
    if values.is_empty() {
        return None;
    }
    values.sort_by(f64::total_cmp);
    let tail = (1.0 - level) / 2.0;
    Some(BootstrapInterval {
        estimate,
        interval: Interval {
            low: quantile_sorted(&values, tail),
            high: quantile_sorted(&values, 1.0 - tail),
        },
        resamples_used: values.len(),
        level,
    })
}

/// Ratio of sums `Σ numerator / Σ denominator` over clusters given as
/// `(numerator, denominator)` pairs, e.g. (correct guesses, pitches) per
/// game; a ready-made statistic for [`cluster_bootstrap`]. NaN when the
/// denominators sum to 0.
pub fn ratio_of_sums(clusters: &[&(f64, f64)]) -> f64 {
    let (num, den) = clusters
        .iter()
        .fold((0.0, 0.0), |(a, b), &&(x, y)| (a + x, b + y));
    if den == 0.0 {
        f64::NAN
    } else {
        num / den
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn total_variation_by_hand() {
        // Definition ½ Σ|p - q| (Levin, Peres & Wilmer, Prop. 4.2):
        // shares (0.5, 0.3, 0.2) vs (0.2, 0.3, 0.5) -> ½(0.3 + 0 + 0.3) = 0.3.
        let d = total_variation(&[50.0, 30.0, 20.0], &[0.2, 0.3, 0.5]).unwrap();
        assert!((d - 0.3).abs() < 1e-15);
        assert_eq!(total_variation(&[1.0, 0.0], &[0.0, 1.0]), Some(1.0));
        assert_eq!(total_variation(&[1.0, 2.0], &[2.0, 4.0]), Some(0.0));
        assert_eq!(total_variation(&[0.0, 0.0], &[1.0, 1.0]), None);
        assert_eq!(total_variation(&[-1.0, 2.0], &[1.0, 1.0]), None);
    }

    #[test]
    fn bootstrap_is_deterministic_and_brackets_the_estimate() {
        let games: Vec<(f64, f64)> = (0..40)
            .map(|i| ((i % 7) as f64 + 3.0, 12.0 + (i % 5) as f64))
            .collect();
        let a = cluster_bootstrap(&games, ratio_of_sums, 2000, 0.95, 11).unwrap();
        let b = cluster_bootstrap(&games, ratio_of_sums, 2000, 0.95, 11).unwrap();
        assert_eq!(a, b);
        let c = cluster_bootstrap(&games, ratio_of_sums, 2000, 0.95, 12).unwrap();
        assert_ne!(a.interval, c.interval);
        assert!(a.interval.contains(a.estimate));
        assert!(a.interval.low < a.interval.high);
        assert_eq!(a.resamples_used, 2000);
    }

    #[test]
    fn bootstrap_rejects_degenerate_requests() {
        let none: Vec<(f64, f64)> = vec![];
        assert!(cluster_bootstrap(&none, ratio_of_sums, 100, 0.95, 1).is_none());
        let zero = vec![(0.0, 0.0)];
        assert!(cluster_bootstrap(&zero, ratio_of_sums, 100, 0.95, 1).is_none());
    }
}
