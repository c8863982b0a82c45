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
}

impl SequentialPermutation {
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
        self.is_done()
    }

    /// The fewest further permutations after which the test could be
    /// finished: the exceedances still missing, or what is left of the
    /// budget (0 once finished).
    pub fn fewest_left(&self) -> usize {
        if self.is_done() {
            return 0;
        }
        (self.target_exceedances - self.exceedances).min(self.max_permutations - self.run)
    }

    /// Whether no more permutations are needed.
    pub fn is_done(&self) -> bool {
        self.exceedances >= self.target_exceedances || self.run >= self.max_permutations
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
        if self.stopped_early() {
            self.exceedances as f64 / self.run as f64
        } else {
            permutation_p_value(self.exceedances, self.run)
        }
    }
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
