//! Priors of a pitcher's pitch type, fitted on training rows only.
//!
//! - the usage prior: his training pitch mix, kept off 0 by a Jeffreys-style
//!   half pseudo-count per type (so log loss stays finite on a type he did
//!   not throw in training);
//! - shrunk priors of pitch type given a group (the count, the batter): each
//!   group's counts pulled toward his mix with a Dirichlet pseudo-count `s`,
//!   estimated by empirical Bayes (Dirichlet-multinomial marginal maximum
//!   likelihood with the mean fixed at the mix) unless configured.

pub mod shrink;

use crate::settings::PriorStrength;

/// The usage prior of one fit.
#[derive(Debug, Clone, PartialEq)]
pub struct UsagePrior {
    pub counts: Vec<u32>,
    pub probs: Vec<f64>,
    /// His most used type in training (lowest class index among ties).
    pub top: usize,
}

/// Half a pseudo-pitch per type (Jeffreys prior for a multinomial).
pub const USAGE_PSEUDO: f64 = 0.5;

impl UsagePrior {
    pub fn from_counts(counts: Vec<u32>) -> UsagePrior {
        let k = counts.len() as f64;
        let n: u32 = counts.iter().sum();
        let probs = counts.iter().map(|&c| (c as f64 + USAGE_PSEUDO) / (n as f64 + USAGE_PSEUDO * k)).collect();
        let mut top = 0;
        for (i, &c) in counts.iter().enumerate() {
            if c > counts[top] {
                top = i;
            }
        }
        UsagePrior { counts, probs, top }
    }
}

/// Per-group counts of pitch types, `counts[g * k + class]`.
#[derive(Debug, Clone, PartialEq)]
pub struct GroupCounts {
    pub n_groups: usize,
    pub n_classes: usize,
    pub counts: Vec<u32>,
    pub totals: Vec<u32>,
}

impl GroupCounts {
    pub fn new(n_groups: usize, n_classes: usize) -> Self {
        GroupCounts { n_groups, n_classes, counts: vec![0; n_groups * n_classes], totals: vec![0; n_groups] }
    }

    pub fn clear(&mut self) {
        self.counts.iter_mut().for_each(|c| *c = 0);
        self.totals.iter_mut().for_each(|c| *c = 0);
    }

    #[inline]
    pub fn add(&mut self, group: usize, class: usize) {
        self.counts[group * self.n_classes + class] += 1;
        self.totals[group] += 1;
    }

    /// Sets each group's total from its class counts.
    pub fn fill_totals(&mut self) {
        for (t, c) in self.totals.iter_mut().zip(self.counts.chunks_exact(self.n_classes)) {
            *t = c.iter().sum();
        }
    }

    /// Pitches of each class over all groups.
    pub fn class_totals(&self) -> Vec<u32> {
        let mut t = vec![0u32; self.n_classes];
        for row in self.counts.chunks_exact(self.n_classes) {
            for (a, &b) in t.iter_mut().zip(row) {
                *a += b;
            }
        }
        t
    }

    /// Sets this table to the sum of `parts` (tables of the same shape).
    pub fn set_sum(&mut self, parts: &[GroupCounts]) {
        self.clear();
        for part in parts {
            for (a, b) in self.counts.iter_mut().zip(&part.counts) {
                *a += b;
            }
            for (a, b) in self.totals.iter_mut().zip(&part.totals) {
                *a += b;
            }
        }
    }

    /// Shrunk probability of `class` in `group`:
    /// (c_gk + s·m_k) / (n_g + s).
    #[inline]
    pub fn shrunk(&self, group: usize, class: usize, mix: &[f64], s: f64) -> f64 {
        (self.counts[group * self.n_classes + class] as f64 + s * mix[class]) / (self.totals[group] as f64 + s)
    }

    /// The same with another table's counts taken away (out-of-fold use).
    #[inline]
    pub fn shrunk_without(&self, other: &GroupCounts, group: usize, class: usize, mix: &[f64], s: f64) -> f64 {
        let i = group * self.n_classes + class;
        let c = (self.counts[i] - other.counts[i]) as f64;
        let n = (self.totals[group] - other.totals[group]) as f64;
        (c + s * mix[class]) / (n + s)
    }
}

/// The pseudo-count strength for a set of group count vectors.
pub fn strength(groups: &GroupCounts, mix: &[f64], setting: PriorStrength) -> f64 {
    match setting {
        PriorStrength::Fixed(s) => s,
        PriorStrength::Auto => strength_mle(groups, mix),
    }
}

/// Distinct values and how often each occurs.
/// Distinct values and how often each occurs, ascending. Small values (most
/// of a batter's counts) are tallied directly; the few large ones sorted.
fn histogram(values: impl Iterator<Item = u32>) -> Vec<(u32, u32)> {
    const SMALL: usize = 64;
    let mut tally = [0u32; SMALL];
    let mut large: Vec<u32> = Vec::new();
    for x in values {
        if (x as usize) < SMALL {
            tally[x as usize] += 1;
        } else {
            large.push(x);
        }
    }
    let mut out: Vec<(u32, u32)> = tally.iter().enumerate().filter(|(_, &m)| m > 0).map(|(x, &m)| (x as u32, m)).collect();
    large.sort_unstable();
    for x in large {
        match out.last_mut() {
            Some((y, m)) if *y == x => *m += 1,
            _ => out.push((x, 1)),
        }
    }
    out
}

/// The counts a Dirichlet-multinomial likelihood in s depends on: how many
/// groups have each total, and per class how many groups have each count.
/// Few distinct values occur, so the likelihood costs a few hundred log-gamma
/// calls whatever the number of groups (batters).
struct DmSummary {
    totals: Vec<(u32, u32)>,
    cells: Vec<Vec<(u32, u32)>>,
}

fn dm_summary(groups: &GroupCounts) -> DmSummary {
    let k = groups.n_classes;
    let totals = histogram(groups.totals.iter().copied().filter(|&n| n > 0));
    let cells = (0..k).map(|c| histogram((0..groups.n_groups).map(|g| groups.counts[g * k + c]).filter(|&x| x > 0))).collect();
    DmSummary { totals, cells }
}

/// ln Γ(a + x) − ln Γ(a), the log of the rising factorial a(a+1)…(a+x−1):
/// for small x one log of the product (exact up to rounding), else two
/// log-gamma calls.
#[inline]
fn ln_rising(a: f64, x: u32) -> f64 {
    use statrs::function::gamma::ln_gamma;
    if x <= 12 {
        let mut prod = 1.0;
        for j in 0..x {
            prod *= a + j as f64;
        }
        prod.ln()
    } else {
        ln_gamma(a + x as f64) - ln_gamma(a)
    }
}

/// Dirichlet-multinomial log-likelihood in s, less terms constant in s:
/// Σ_g [ln Γ(s) − ln Γ(n_g + s) + Σ_k ln Γ(c_gk + s m_k) − ln Γ(s m_k)].
fn dm_objective(sum: &DmSummary, mix: &[f64], s: f64) -> f64 {
    let mut ll = 0.0;
    for &(n, mult) in &sum.totals {
        ll -= mult as f64 * ln_rising(s, n);
    }
    for (c, cells) in sum.cells.iter().enumerate() {
        let a = s * mix[c];
        for &(x, mult) in cells {
            ll += mult as f64 * ln_rising(a, x);
        }
    }
    ll
}

/// First and second derivatives in s of the objective of [`dm_objective`]:
/// d/da ln(a(a+1)…(a+x−1)) = Σ 1/(a+j), d²/da² = −Σ 1/(a+j)², with a = s
/// for the totals and a = s·m_k for the cells.
fn dm_derivatives(sum: &DmSummary, mix: &[f64], s: f64) -> (f64, f64) {
    // Short sums directly; long ones as ψ(a + x) − ψ(a) and ψ'(a) − ψ'(a + x)
    // (the same sums by the recurrences ψ(z + 1) = ψ(z) + 1/z and
    // ψ'(z + 1) = ψ'(z) − 1/z², Abramowitz & Stegun 6.3.5 and 6.4.6).
    // The values come ascending, so a short sum extends the one before it
    // (the same additions in the same order as summing from j = 0).
    fn sums_of(a: f64, values: &[(u32, u32)], mut each: impl FnMut(f64, f64, u32)) {
        let (mut d1, mut d2, mut j) = (0.0, 0.0, 0u32);
        for &(x, mult) in values {
            if x > 32 {
                use statrs::function::gamma::digamma;
                let z = a + x as f64;
                each(digamma(z) - digamma(a), shrink::trigamma(a) - shrink::trigamma(z), mult);
                continue;
            }
            while j < x {
                let r = 1.0 / (a + j as f64);
                d1 += r;
                d2 += r * r;
                j += 1;
            }
            each(d1, d2, mult);
        }
    }
    let (mut g1, mut g2) = (0.0, 0.0);
    sums_of(s, &sum.totals, |d1, d2, mult| {
        g1 -= mult as f64 * d1;
        g2 += mult as f64 * d2;
    });
    for (c, cells) in sum.cells.iter().enumerate() {
        let m = mix[c];
        sums_of(s * m, cells, |d1, d2, mult| {
            g1 += mult as f64 * m * d1;
            g2 -= mult as f64 * m * m * d2;
        });
    }
    (g1, g2)
}

/// Newton's method on t = ln s for the maximum of the marginal likelihood,
/// from s = 20, to |Δt| < 0.005; `None` (the caller falls back to golden
/// section) when the curvature is not negative on the way.
fn newton_strength(sum: &DmSummary, mix: &[f64], lo: f64, hi: f64) -> Option<f64> {
    let mut t = 20f64.ln();
    for _ in 0..40 {
        let s = t.exp();
        let (g1, g2) = dm_derivatives(sum, mix, s);
        let gt = s * g1;
        let gtt = s * g1 + s * s * g2;
        if !(gtt < 0.0) {
            return None;
        }
        let step = (-gt / gtt).clamp(-2.0, 2.0);
        let next = (t + step).clamp(lo, hi);
        if (next - t).abs() < 0.005 {
            return Some(next.exp());
        }
        if (next == hi && gt > 0.0) || (next == lo && gt < 0.0) {
            // The maximum lies at the end of the allowed range.
            let s_end = next.exp();
            let (g1_end, _) = dm_derivatives(sum, mix, s_end);
            if (next == hi && g1_end > 0.0) || (next == lo && g1_end < 0.0) {
                return Some(s_end);
            }
        }
        t = next;
    }
    None
}

/// The empirical-Bayes strength: the s maximising the Dirichlet-multinomial
/// marginal likelihood with the mean fixed at the mix (the objective of
/// `shrink::fit_dirichlet_strength`, which is checked against scipy; this
/// is a cheaper search of the same function: Newton's method on ln s with
/// analytic derivatives, falling back to golden section to a tolerance of
/// 0.02 where the curvature is not negative). Used by every permutation refit,
/// hence the economy.
pub fn strength_mle(groups: &GroupCounts, mix: &[f64]) -> f64 {
    let (lo, hi) = (shrink::STRENGTH_MIN.ln(), shrink::STRENGTH_MAX.ln());
    let sum = dm_summary(groups);
    if let Some(s) = newton_strength(&sum, mix, lo, hi) {
        return s;
    }
    shrink::golden_section_max(|t: f64| dm_objective(&sum, mix, t.exp()), lo, hi, 0.02).exp()
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};

    // The fast search maximises the same likelihood as
    // shrink::fit_dirichlet_strength (checked against scipy's
    // dirichlet_multinomial in tests/stats_reference.rs): the two agree.
    // The long-sum branch (digamma/trigamma) equals the direct sums.
    #[test]
    fn derivative_sums_agree_on_both_branches() {
        use statrs::function::gamma::digamma;
        for &(a, x) in &[(0.7, 40u32), (3.2, 100), (50.0, 500)] {
            let direct: f64 = (0..x).map(|j| 1.0 / (a + j as f64)).sum();
            let direct2: f64 = (0..x).map(|j| 1.0 / ((a + j as f64) * (a + j as f64))).sum();
            assert!((digamma(a + x as f64) - digamma(a) - direct).abs() < 1e-9 * direct);
            assert!((shrink::trigamma(a) - shrink::trigamma(a + x as f64) - direct2).abs() < 1e-9 * direct2);
        }
    }

    #[test]
    fn fast_strength_matches_the_reference_fit() {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(3);
        for case in 0..20 {
            let k = 3 + case % 3;
            let n_groups = 5 + case * 3;
            let mut g = GroupCounts::new(n_groups, k);
            for grp in 0..n_groups {
                let tilt: usize = rng.random_range(0..k);
                for _ in 0..rng.random_range(5..80) {
                    let y = if rng.random::<f64>() < 0.3 { tilt } else { rng.random_range(0..k) };
                    g.add(grp, y);
                }
            }
            let mut totals = vec![0u64; k];
            for grp in 0..n_groups {
                for c in 0..k {
                    totals[c] += g.counts[grp * k + c] as u64;
                }
            }
            let n: u64 = totals.iter().sum();
            let mix: Vec<f64> = totals.iter().map(|&c| (c as f64 + 0.5) / (n as f64 + 0.5 * k as f64)).collect();
            let vectors: Vec<Vec<u64>> =
                (0..n_groups).map(|grp| (0..k).map(|c| g.counts[grp * k + c] as u64).collect()).collect();
            let reference = shrink::fit_dirichlet_strength(&vectors, &mix).unwrap().strength;
            let fast = strength_mle(&g, &mix);
            assert!((fast.ln() - reference.ln()).abs() < 0.03, "case {case}: {fast} vs {reference}");
        }
    }
}
