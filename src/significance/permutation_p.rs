//! Permutation p-values.
//!
//! * Fixed number of permutations: `p = (b + 1) / (m + 1)` with `b` the
//!   number of null statistics at or above the observed one among `m`
//!   random permutations. Phipson, B. & Smyth, G. K. (2010) "Permutation
//!   p-values should never be zero: calculating exact p-values when
//!   permutations are randomly drawn", Stat. Appl. Genet. Mol. Biol. 9(1),
//!   article 39. Counting the observed labelling as one of the permutations
//!   makes the test exact (valid) and the p-value never 0.
//! * Sequential stopping: Besag, J. & Clifford, P. (1991) "Sequential Monte
//!   Carlo p-values", Biometrika 78, 301–304. Draw permutations until `h` of
//!   them reach the observed statistic, or until `m` have been drawn. Clearly
//!   null effects stop after a handful of permutations; only promising ones
//!   use the full budget.
//!
//! * Deciding early for a clear effect: with `with_early_decision(m1)`, a
//!   test whose first `m1` permutations all fall below the observed
//!   statistic (event S) stops there with p = δ = 1/(m1 + 1); every other
//!   test goes on by Besag–Clifford, and its p_BC is reported unchanged
//!   when p_BC ≥ h/m1, and otherwise as the chance, under the null, of S
//!   or of a p_BC at most its own:
//!
//!   p = P0(S ∪ {p_BC ≤ x}) = δ + x − P0(S ∩ {p_BC ≤ x}),  x = p_BC.
//!
//!   That is the p-value of ordering the outcomes with S first, then by
//!   p_BC, so it is valid. Under the null the observed statistic's rank
//!   among the permutation distribution is uniform, u, and each draw
//!   reaches it with chance u. Write E_L for the exceedances among the
//!   first L draws. Below h/m1 every p_BC is x = (c + 1)/(L + 1) with
//!   {p_BC ≤ x} = {E_L ≤ c}: a full run has L = m, c = b; a stop at the
//!   h-th exceedance on draw l has L = l − 1, c = h − 1 (the stop comes
//!   after m1, so L ≥ m1). E_L is uniform on 0..=L, so P0(E_L ≤ c) = x,
//!   and given S, u is Beta(1, m1 + 1) and E_L − E_m1 beta-binomial, so
//!
//!   P0(S ∩ {E_L ≤ c}) = Σ_{i ≤ c} C(L − m1, i) B(i + 1, L − i + 1),
//!
//!   whose terms run t_0 = 1/(L + 1), t_{i+1} = t_i (L − m1 − i)/(L − i).
//!   (Our derivation; the closed form is checked against scipy's
//!   beta-binomial in `tests/stats_reference.rs`, the validity by
//!   simulation in tests/calibration.rs.) The sum is nearly δ whenever c
//!   exceedances are far more than the L − m1 draws after m1 would give a
//!   clear effect, so a borderline p-value pays almost nothing: p_BC =
//!   0.010 (9 of 999) with m1 = 520 reads 0.0100012, where the plain union
//!   bound, p_BC + δ, gave 0.0119. With ties among the statistics each
//!   draw reaches the observed one with a chance stochastically above
//!   uniform, and S ∪ {E_L ≤ c} is an event of few exceedances, so its
//!   chance only falls: still valid. No p-value is below δ. The audit
//!   picks m1 with δ ≤ fdr / N for N tests, so a test decided early is
//!   always rejected by Benjamini–Hochberg at `fdr`, whatever the other
//!   tests give.
//!
//! Ties: a null statistic counts as reaching the observed one when
//! `null >= observed - 100 ε |observed|` (ε = machine epsilon), the
//! tolerance `scipy.stats.permutation_test` uses, so that a permutation that
//! reproduces the observed value up to summation-order rounding is counted.

/// Whether a null statistic counts as "at least as extreme" as the observed
/// one (larger = more extreme), with scipy's relative tolerance for rounding.
pub fn reaches(null: f64, observed: f64) -> bool {
    let gamma = (100.0 * f64::EPSILON * observed).abs();
    null >= observed - gamma
}

/// Permutation p-value `(b + 1) / (m + 1)` for `b` exceedances among `m`
/// random permutations (Phipson & Smyth 2010). Never 0; 1 when every
/// permutation reaches the observed statistic.
///
/// # Panics
/// If `exceedances > permutations`.
pub fn permutation_p_value(exceedances: usize, permutations: usize) -> f64 {
    assert!(
        exceedances <= permutations,
        "{exceedances} exceedances in {permutations} permutations"
    );
    (exceedances as f64 + 1.0) / (permutations as f64 + 1.0)
}

/// Besag–Clifford sequential permutation test for one observed statistic.
///
/// Feed null statistics one at a time with [`SequentialPermutation::push`];
/// stop drawing when it returns `true`. [`SequentialPermutation::p_value`]
/// then returns:
/// * stopped because `h` null statistics reached the observed one after
///   `l` permutations (`l <= m`): `h / l` (Besag & Clifford 1991). This holds
///   also when the h-th exceedance is the m-th permutation.
/// * ran all `m` permutations with `b < h` exceedances: `(b + 1) / (m + 1)`
///   (Besag & Clifford's `(g + 1)/n` with n - 1 = m draws; Phipson & Smyth).
/// * asked before either happened (l < m draws, b < h): `(b + 1) / (l + 1)`,
///   the fixed-m p-value of the permutations drawn so far; with l = 0 this is 1.
///
/// None of these is ever 0.
#[derive(Debug, Clone, PartialEq)]
pub struct SequentialPermutation {
    observed: f64,
    max_permutations: usize,
    target_exceedances: usize,
    run: usize,
    exceedances: usize,
    /// m1 of an early decision (see the module), when below m.
    decide_at: Option<usize>,
    decided: bool,
}

impl SequentialPermutation {
    /// Stop with p = 1/(m1 + 1) when none of the first `m1` permutations
    /// reaches the observed statistic (see the module); a no-op when `m1`
    /// is not below the budget.
    pub fn with_early_decision(mut self, m1: usize) -> Self {
        self.decide_at = (m1 >= 1 && m1 < self.max_permutations).then_some(m1);
        self
    }

    /// The early-decision size for `tests` tests at false discovery rate
    /// `fdr`: m1 = ⌈tests / fdr⌉, so 1/(m1 + 1) < fdr / tests.
    pub fn decision_size(tests: usize, fdr: f64) -> usize {
        if tests == 0 || !(fdr > 0.0) {
            return usize::MAX;
        }
        // One more than the least, so p = 1/(m1 + 1) lies strictly below
        // fdr / tests and its BH q never meets the bar only by rounding.
        ((tests as f64 / fdr).ceil() as usize).max(1)
    }

    /// `observed`: the statistic on the real labels (larger = stronger
    /// effect); `max_permutations`: m, the budget; `target_exceedances`: h
    /// (Besag & Clifford suggest h around 10–20). `h` is raised to 1 and `m`
    /// to 1 if given as 0.
    pub fn new(observed: f64, max_permutations: usize, target_exceedances: usize) -> Self {
        SequentialPermutation {
            observed,
            max_permutations: max_permutations.max(1),
            target_exceedances: target_exceedances.max(1),
            run: 0,
            exceedances: 0,
            decide_at: None,
            decided: false,
        }
    }

    /// Record one null statistic. Returns `true` when the test is finished
    /// (h exceedances reached or m permutations run). Statistics pushed
    /// after that are ignored.
    pub fn push(&mut self, null_statistic: f64) -> bool {
        if self.is_done() {
            return true;
        }
        self.run += 1;
        if reaches(null_statistic, self.observed) {
            self.exceedances += 1;
        }
        if self.decide_at == Some(self.run) && self.exceedances == 0 {
            self.decided = true;
        }
        self.is_done()
    }

    /// The fewest further permutations after which the test could be
    /// finished: the exceedances still missing, or what is left of the
    /// budget (0 once finished).
    pub fn fewest_left(&self) -> usize {
        if self.is_done() {
            return 0;
        }
        let left = (self.target_exceedances - self.exceedances).min(self.max_permutations - self.run);
        match self.decide_at {
            Some(m1) if self.exceedances == 0 && self.run < m1 => left.min(m1 - self.run),
            _ => left,
        }
    }

    /// Whether no more permutations are needed.
    pub fn is_done(&self) -> bool {
        self.decided || self.exceedances >= self.target_exceedances || self.run >= self.max_permutations
    }

    /// Whether the test stopped early as a clear effect (see the module).
    pub fn decided_early(&self) -> bool {
        self.decided
    }

    /// Whether the test stopped on reaching `h` exceedances.
    pub fn stopped_early(&self) -> bool {
        self.exceedances >= self.target_exceedances
    }

    /// Permutations drawn so far (l).
    pub fn permutations_run(&self) -> usize {
        self.run
    }

    /// Null statistics so far at or above the observed one.
    pub fn exceedances(&self) -> usize {
        self.exceedances
    }

    /// The p-value; see the type's documentation for which formula applies.
    pub fn p_value(&self) -> f64 {
        if self.decided {
            return 1.0 / (self.run as f64 + 1.0);
        }
        let p = if self.stopped_early() {
            self.exceedances as f64 / self.run as f64
        } else {
            permutation_p_value(self.exceedances, self.run)
        };
        match self.decide_at {
            // Only a p-value an early stop could also have given (below
            // h / m1) pays for the early decision (see the module).
            Some(m1) if p < self.target_exceedances as f64 / m1 as f64 => {
                // The p_BC as (c + 1)/(L + 1): a stop at the h-th
                // exceedance on draw l is L = l − 1, c = h − 1; otherwise
                // the draws so far and their exceedances.
                let (big_l, c) = if self.stopped_early() {
                    (self.run - 1, self.target_exceedances - 1)
                } else {
                    (self.run, self.exceedances)
                };
                if big_l >= m1 {
                    early_decision_p(big_l, c, m1)
                } else {
                    // Asked before the decision's size (a stopped test's
                    // estimate): the union bound.
                    (p + 1.0 / (m1 as f64 + 1.0)).min(1.0)
                }
            }
            _ => p,
        }
    }
}

/// The p-value of a test with an early decision at `m1` that was not
/// decided early and whose Besag–Clifford p-value is (c + 1)/(L + 1) with
/// {p_BC ≤ that} = {at most c exceedances among the first L draws}, L ≥ m1:
/// P0(S ∪ {E_L ≤ c}) = δ + (c + 1)/(L + 1) − P0(S ∩ {E_L ≤ c}), δ = 1/(m1 + 1)
/// (see the module).
pub fn early_decision_p(big_l: usize, c: usize, m1: usize) -> f64 {
    assert!(big_l >= m1, "L = {big_l} below the decision's size {m1}");
    let after = (big_l - m1) as f64;
    let l = big_l as f64;
    // Σ_{i ≤ c} C(L − m1, i) B(i + 1, L − i + 1) by its terms' ratio.
    let mut term = 1.0 / (l + 1.0);
    let mut both = 0.0;
    for i in 0..=c.min(big_l - m1) {
        both += term;
        let i = i as f64;
        term *= (after - i) / (l - i);
    }
    let delta = 1.0 / (m1 as f64 + 1.0);
    let x = (c as f64 + 1.0) / (l + 1.0);
    // Never below x (the sum is at most δ); rounding aside.
    (x + (delta - both).max(0.0)).min(1.0)
}

/// Every distinct rearrangement of `labels`, in lexicographic order
/// (`n! / Π c_i!` of them for label multiplicities `c_i`). For exact
/// permutation tests on tiny samples; the count grows factorially, so keep
/// `labels` short (a dozen or so).
pub fn distinct_permutations<T: Ord + Clone>(labels: &[T]) -> Vec<Vec<T>> {
    let mut cur: Vec<T> = labels.to_vec();
    cur.sort();
    let mut out = vec![cur.clone()];
    // Next lexicographic permutation (Knuth, TAOCP 4A, Algorithm L), which
    // skips duplicates of repeated labels by construction.
    loop {
        let n = cur.len();
        if n < 2 {
            return out;
        }
        let mut i = n - 1;
        while i > 0 && cur[i - 1] >= cur[i] {
            i -= 1;
        }
        if i == 0 {
            return out;
        }
        let mut j = n - 1;
        while cur[j] <= cur[i - 1] {
            j -= 1;
        }
        cur.swap(i - 1, j);
        cur[i..].reverse();
        out.push(cur.clone());
    }
}

/// Exact permutation p-value: the share of all `null_statistics` (one per
/// distinct rearrangement, the observed labelling included) that reach the
/// observed statistic. Since the observed labelling is among them, this is at
/// least `1 / count` and never 0. Returns NaN for an empty list.
pub fn exact_p_value(observed: f64, null_statistics: &[f64]) -> f64 {
    let b = null_statistics
        .iter()
        .filter(|&&s| reaches(s, observed))
        .count();
    b as f64 / null_statistics.len() as f64
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn multiset_permutation_count() {
        // n! / (c1! c2! ...) distinct arrangements (elementary combinatorics):
        // 6! / (3! 2! 1!) = 60.
        let p = distinct_permutations(&['a', 'a', 'a', 'b', 'b', 'c']);
        assert_eq!(p.len(), 60);
        let mut d = p.clone();
        d.dedup();
        assert_eq!(d.len(), 60);
        assert_eq!(distinct_permutations::<u8>(&[]).len(), 1);
    }

    /// The early decision's arithmetic (see the module): decided at m1
    /// with p = 1/(m1 + 1); a p-value below h/m1 pays what the chance of S
    /// outside its own tail adds (the module's sum); a larger
    /// one is Besag–Clifford's unchanged.
    #[test]
    fn early_decision_rules() {
        assert_eq!(SequentialPermutation::decision_size(18, 0.05), 360);
        assert_eq!(SequentialPermutation::decision_size(20, 0.05), 400);
        let mut s = SequentialPermutation::new(10.0, 999, 10).with_early_decision(359);
        let mut n = 0;
        while !s.push(1.0) {
            n += 1;
        }
        assert_eq!((n + 1, s.decided_early(), s.stopped_early()), (359, true, false));
        assert!((s.p_value() - 1.0 / 360.0).abs() < 1e-15);
        // One exceedance early, then none: runs to m, p_BC = 2/1000, below
        // h/m1 = 10/359, so P0(S ∪ {E_999 ≤ 1}) = 1/360 + 2/1000 − (t0 + t1),
        // t0 = 1/1000, t1 = t0 · 640/999 (by hand from the module's sum).
        let mut s = SequentialPermutation::new(10.0, 999, 10).with_early_decision(359);
        s.push(11.0);
        while !s.push(1.0) {}
        assert_eq!(s.permutations_run(), 999);
        let (t0, t1) = (1.0 / 1000.0, 640.0 / 999.0 / 1000.0);
        assert!((s.p_value() - (1.0 / 360.0 + 2.0 / 1000.0 - t0 - t1)).abs() < 1e-15);
        assert!(s.p_value() < 2.0 / 1000.0 + 1.0 / 360.0, "tighter than the union bound");
        // Ten exceedances in the first 100: p_BC = 0.1, unchanged.
        let mut s = SequentialPermutation::new(10.0, 999, 10).with_early_decision(359);
        for i in 0..100 {
            s.push(if i % 10 == 9 { 11.0 } else { 1.0 });
        }
        assert!(s.stopped_early() && (s.p_value() - 0.1).abs() < 1e-15);
        // An early decision at or above the budget does nothing.
        let mut s = SequentialPermutation::new(10.0, 99, 10).with_early_decision(359);
        while !s.push(1.0) {}
        assert_eq!((s.permutations_run(), s.decided_early()), (99, false));
        assert!((s.p_value() - 0.01).abs() < 1e-15);
    }

    /// Bounds of the early decision's p-value that follow from its
    /// definition, P0(S ∪ {E_L ≤ c}): at least x = P0(E_L ≤ c) and δ =
    /// P0(S), at most their sum (the union bound it replaced), and rising
    /// with c; with c = L − m1 or more every outcome with c exceedances by
    /// L has none after m1 given S, so S ∩ {E_L ≤ c} = S and p = x.
    #[test]
    fn early_decision_p_lies_between_its_bounds() {
        for &m1 in &[1usize, 20, 100, 359, 520, 1100] {
            let delta = 1.0 / (m1 as f64 + 1.0);
            for &big_l in &[m1, m1 + 1, m1 + 50, 999, 1999, 4999] {
                if big_l < m1 {
                    continue;
                }
                let mut last = 0.0;
                for c in 0..30usize.min(big_l + 1) {
                    let x = (c as f64 + 1.0) / (big_l as f64 + 1.0);
                    let p = early_decision_p(big_l, c, m1);
                    assert!(p >= x - 1e-15 && p >= delta - 1e-15, "m1 {m1}, L {big_l}, c {c}: {p} below {x} or {delta}");
                    assert!(p <= (x + delta).min(1.0) + 1e-15, "m1 {m1}, L {big_l}, c {c}: {p} above the union bound");
                    assert!(p >= last - 1e-15, "m1 {m1}, L {big_l}: falls at c {c}");
                    if c >= big_l - m1 {
                        assert!((p - x).abs() < 1e-12, "m1 {m1}, L {big_l}, c {c}: {p} against {x}");
                    }
                    last = p;
                }
            }
        }
    }

    #[test]
    fn sequential_rules() {
        // Besag & Clifford (1991): stop at h exceedances, p = h / l.
        let mut s = SequentialPermutation::new(1.0, 100, 3);
        let mut stopped = false;
        for x in [2.0, 0.0, 1.0, 0.5, 3.0] {
            stopped = s.push(x);
        }
        assert!(stopped && s.stopped_early());
        assert_eq!(s.permutations_run(), 5);
        assert!((s.p_value() - 3.0 / 5.0).abs() < 1e-15);
        // Ran all m: (b + 1)/(m + 1) (Phipson & Smyth 2010).
        let mut s = SequentialPermutation::new(10.0, 4, 3);
        for x in [11.0, 0.0, 0.0, 0.0] {
            s.push(x);
        }
        assert!(s.is_done() && !s.stopped_early());
        assert!((s.p_value() - 2.0 / 5.0).abs() < 1e-15);
        assert!(s.push(100.0));
        assert_eq!(s.permutations_run(), 4);
    }

    #[test]
    fn fewest_left_is_the_soonest_possible_stop() {
        // h = 3: no stop before 3 exceedances; with 1 in, 2 more are needed.
        let mut s = SequentialPermutation::new(1.0, 10, 3);
        assert_eq!(s.fewest_left(), 3);
        s.push(2.0);
        s.push(0.0);
        assert_eq!(s.fewest_left(), 2);
        // Near the budget the budget decides: 8 run, 2 left.
        for _ in 0..6 {
            s.push(0.0);
        }
        assert_eq!(s.fewest_left(), 2);
        s.push(0.0);
        s.push(0.0);
        assert!(s.is_done());
        assert_eq!(s.fewest_left(), 0);
    }
}
