//! The model permutation test (Ojala & Garriga 2010, "Permutation tests for
//! studying classifier performance", JMLR 11): under the null that a
//! pitcher's pitch type is independent of the situation given his season,
//! his labels are exchangeable within each season. Each permutation shuffles
//! them within seasons, reruns the whole fit (priors included, since they
//! are learned from labels) and scores the same held-out statistic.
//!
//! Reproducibility: permutation `j` of a pitcher draws from its own ChaCha8
//! stream keyed by (seed, pitcher name) with stream number `j`, so results
//! do not depend on thread count or on which other pitchers are audited.
//! Sequential stopping (Besag & Clifford 1991) is applied to the results in
//! permutation order, so early stopping is deterministic too.

use crate::evaluate::fit::{self, beyond_statistic, statistic, Stat, Workspace};
use crate::evaluate::task::PitcherTask;
use crate::settings::Settings;
pub use crate::significance::driver::Member;
use crate::significance::driver::Sequential;
use crate::significance::permutation_p::SequentialPermutation;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use sha2::{Digest, Sha256};

/// Outcome of one pitcher's permutation test.
#[derive(Debug, Clone, PartialEq)]
pub struct PermutationResult {
    pub observed: f64,
    pub observed_tiebreak: f64,
    pub p_value: f64,
    pub permutations: usize,
    pub stopped_early: bool,
    /// Stopped early as a clear effect (p = 1/(m1 + 1)).
    pub decided_early: bool,
    /// No permutation reached the observed statistic.
    pub reached_none: bool,
    /// Stopped once no outcome of its remaining permutations could get it
    /// flagged in its family (`significance::driver::drive_family`): its
    /// p-value is that of the permutations drawn.
    pub ruled_out: bool,
    /// Null statistics (primary) in permutation order.
    pub null: Vec<f64>,
}

/// Which null a permutation test asks about.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Null {
    /// "The situation tells nothing beyond his mix": labels exchangeable
    /// within each season (each block of the scored season); the statistic
    /// is the model's held-out bits over his plain mix.
    Situation,
    /// "Nothing beyond his sheet": labels exchangeable within each game and
    /// count × batter side, so his count and side habits and each outing's
    /// own mix are all kept; the statistic is the model's held-out bits over
    /// the sheet.
    BeyondSheet,
}

impl Null {
    fn strata(self, task: &PitcherTask) -> &[Vec<u32>] {
        match self {
            Null::Situation => &task.strata,
            Null::BeyondSheet => &task.beyond_strata,
        }
    }

    fn domain(self) -> &'static [u8] {
        match self {
            Null::Situation => b"tellscope permutation v1",
            Null::BeyondSheet => b"tellscope beyond-sheet v1",
        }
    }

    fn statistic(self, scored: &crate::evaluate::fit::Scored, settings: &Settings) -> Stat {
        match self {
            Null::Situation => statistic(scored, settings.audit.statistic()),
            Null::BeyondSheet => beyond_statistic(scored),
        }
    }

    /// A workspace for this test's refits.
    pub fn workspace(self, task: &PitcherTask) -> Workspace {
        let mut ws = Workspace::new(task);
        ws.want_sheet = self == Null::BeyondSheet;
        ws.cells_fixed = self == Null::BeyondSheet;
        ws
    }
}

/// The RNG of permutation `j` of a pitcher.
pub fn permutation_rng(seed: u64, pitcher: &str, j: u64) -> ChaCha8Rng {
    null_rng(Null::Situation, seed, pitcher, j)
}

/// The RNG of permutation `j` of a pitcher under `null` (each test draws
/// its own shuffles).
pub fn null_rng(null: Null, seed: u64, pitcher: &str, j: u64) -> ChaCha8Rng {
    keyed_rng(null.domain(), seed, pitcher, j)
}

/// Stream `j` of the ChaCha8 generator keyed by (`domain`, seed, pitcher):
/// each test draws its own shuffles, whatever the thread count.
pub fn keyed_rng(domain: &[u8], seed: u64, pitcher: &str, j: u64) -> ChaCha8Rng {
    // A test draws its streams one after another with the same key, so
    // each thread keeps the last key it hashed.
    thread_local! {
        static LAST: std::cell::RefCell<Option<(Vec<u8>, u64, String, [u8; 32])>> = const { std::cell::RefCell::new(None) };
    }
    let key = LAST.with_borrow_mut(|last| match last {
        Some((d, s, p, key)) if d.as_slice() == domain && *s == seed && p.as_str() == pitcher => *key,
        _ => {
            let mut h = Sha256::new();
            h.update(domain);
            h.update(seed.to_le_bytes());
            h.update(pitcher.as_bytes());
            let key: [u8; 32] = h.finalize().into();
            *last = Some((domain.to_vec(), seed, pitcher.to_string(), key));
            key
        }
    });
    let mut rng = ChaCha8Rng::from_seed(key);
    rng.set_stream(j);
    rng
}

/// Shuffle `labels` within each stratum (Fisher–Yates).
pub fn shuffle_within(labels: &mut [u8], strata: &[Vec<u32>], rng: &mut ChaCha8Rng) {
    for s in strata {
        for i in (1..s.len()).rev() {
            let j = rng.random_range(0..=i);
            labels.swap(s[i] as usize, s[j] as usize);
        }
    }
}

/// The statistic of permutation `j` of a pitcher: his labels shuffled
/// within seasons by that permutation's own stream, then the whole fit
/// rerun. `labels` is scratch of his labels' length.
pub fn permuted_statistic(task: &PitcherTask, settings: &Settings, j: u64, ws: &mut Workspace, labels: &mut [u8]) -> Stat {
    null_statistic(Null::Situation, task, settings, j, ws, labels)
}

/// The statistic of permutation `j` under `null`.
pub fn null_statistic(null: Null, task: &PitcherTask, settings: &Settings, j: u64, ws: &mut Workspace, labels: &mut [u8]) -> Stat {
    labels.copy_from_slice(&task.labels);
    let mut rng = null_rng(null, settings.audit.seed(), &task.name, j);
    shuffle_within(labels, null.strata(task), &mut rng);
    let scored = fit::refit(task, labels, settings, ws);
    null.statistic(&scored, settings)
}

/// The whole-model permutation test: batches in parallel, read in order
/// for Besag–Clifford stopping, and decided early for a clear effect after
/// `decide_at` permutations (`SequentialPermutation::with_early_decision`,
/// sized by [`decision_at`]). On real logs nearly every pitcher's count and
/// side habits make it significant, so that is where the refits go. Its
/// first permutations are the pilot's.
pub fn permutation_test(
    task: &PitcherTask,
    observed: Stat,
    settings: &Settings,
    decide_at: Option<usize>,
    pilot: Pilot,
    progress: &(dyn Fn(u64) + Sync),
) -> PermutationResult {
    let null = Null::Situation;
    drive(
        observed,
        settings,
        decide_at,
        pilot.nulls,
        progress,
        || (null.workspace(task), task.labels.clone()),
        |j, (ws, labels)| null_statistic(null, task, settings, j, ws, labels),
    )
}

/// Permutations of the pilot (see [`Pilot`]). A pilot with nothing to find
/// is clear by chance once in `PILOT + 1`: with 99, one null test in a
/// hundred, so a league's hundreds of null tests foresee few rejections
/// that are not there (with 19, one in twenty did; see [`decision_at`]).
/// A pilot stops at its first permutation that reaches the observed
/// statistic, so a test with nothing to find still costs a few; a clear
/// one's permutations are the first of his test.
pub const PILOT: usize = 99;

/// A test's pilot length under a budget of `m` permutations.
pub fn pilot_len(m: usize) -> usize {
    PILOT.min(m)
}

/// A test's pilot: its first permutations (up to `PILOT`, stopping at the
/// first that reaches the observed statistic) and whether none did. The
/// audit counts the other pitchers' clear pilots to size a pitcher's early
/// decision ([`decision_at`]); a pitcher's own pilot never sizes his own
/// test, so its permutations are his test's first ones: they are drawn from
/// the test's own streams 0, 1, ... and handed to it, not drawn twice.
pub struct Pilot<N = Stat> {
    pub clear: bool,
    pub nulls: Vec<N>,
}

/// Each test's early-decision size in a family of tests with these pilots
/// (see [`decision_sizes`]).
pub fn pilot_sizes<N>(pilots: &[Pilot<N>], fdr: f64) -> Vec<usize> {
    decision_sizes(&pilots.iter().map(|p| p.clear).collect::<Vec<_>>(), fdr)
}

/// The pilot of a pitcher's test under `null` (see [`Pilot`]): the
/// whole-model test's (`Null::Situation`) or the beyond-the-sheet test's.
pub fn pilot_of(null: Null, task: &PitcherTask, observed: Stat, settings: &Settings) -> Pilot {
    let len = pilot_len(settings.audit.permutations());
    pilot(
        (null.workspace(task), task.labels.clone()),
        len,
        |j, (ws, labels)| null_statistic(null, task, settings, j, ws, labels),
        |v| v.reaches(&observed),
    )
}

/// The pilot of any test (the audit's and compare's label swaps): its
/// permutations 0, 1, ... until one `reaches` the observed statistic or
/// `len` have been drawn. Pilots of different pitchers run in parallel.
pub fn pilot<W, N>(mut scratch: W, len: usize, null: impl Fn(u64, &mut W) -> N, reaches: impl Fn(&N) -> bool) -> Pilot<N> {
    let mut nulls = Vec::with_capacity(len);
    for j in 0..len as u64 {
        let v = null(j, &mut scratch);
        let reached = reaches(&v);
        nulls.push(v);
        if reached {
            return Pilot { clear: false, nulls };
        }
    }
    Pilot { clear: true, nulls }
}

/// A pitcher's early-decision size m1 for a family of `family` tests when
/// `others_clear` of the other pitchers' pilots were clear: the least m1
/// whose p = 1/(m1 + 1) passes Benjamini–Hochberg with as few as a quarter
/// of the rejections the pilots foresee. A pilot with nothing to find is
/// clear by chance once in `PILOT + 1` (its observed statistic the largest
/// of `PILOT + 1` exchangeable ones), so the pilots foresee 1 + the clear
/// pilots beyond the (family − 1)/(PILOT + 1) chance gives. On a league's
/// location tests (668 pitchers, 9 clear effects) pilots of 19 were clear
/// for 56 pitchers, 33 of them by chance; counting every one sized the
/// decision at 940 permutations, whose p = 1/941 BH cannot pass with 9
/// rejections. Any size taken from the other pitchers' pilots keeps the
/// test valid.
pub fn decision_at(family: usize, others_clear: usize, fdr: f64) -> usize {
    let by_chance = family.saturating_sub(1) as f64 / (PILOT + 1) as f64;
    let foreseen = 1.0 + (others_clear as f64 - by_chance).max(0.0);
    // Passing BH with a quarter of the foreseen rejections: with none
    // foreseen, four times the size that passes it alone, so a clear effect
    // on a small staff reads q near a quarter of the bar.
    let tests = (4.0 * family as f64 / foreseen).ceil() as usize;
    SequentialPermutation::decision_size(tests, fdr)
}

/// Each test's early-decision size in a family whose pilots were `clear`
/// (one per test, in order): the size from the family and how many of the
/// *other* tests' pilots were clear, so a test's own pilot never sizes it.
pub fn decision_sizes(clear: &[bool], fdr: f64) -> Vec<usize> {
    let all_clear = clear.iter().filter(|&&c| c).count();
    clear.iter().map(|&mine| decision_at(clear.len(), all_clear - mine as usize, fdr)).collect()
}

/// The beyond-the-sheet tests of a family of pitchers (the audited ones,
/// one Benjamini–Hochberg family; `observed[i]` is `tasks[i]`'s statistic,
/// `pilots[i]` its pilot), run together: each by Besag–Clifford, decided
/// early for a clear effect at the size the other pitchers' pilots give
/// (as the whole-model test), and stopped once it can no longer be flagged
/// in the family ([`drive_family`]). On a league most of this test's
/// refits went to tests whose p-values lay below 0.05 but far above what
/// BH could pass (a league's family is too large for an early decision
/// below the budget); on a club's staff, to its few clear effects.
pub fn beyond_tests(
    tasks: &[&PitcherTask],
    observed: &[Stat],
    pilots: Vec<Pilot>,
    settings: &Settings,
    progress: &(dyn Fn(u64) + Sync),
) -> Vec<PermutationResult> {
    let null = Null::BeyondSheet;
    let sizes = pilot_sizes(&pilots, settings.audit.fdr());
    drive_family(
        observed,
        pilots.into_iter().zip(sizes).map(|(pilot, m1)| Member { known: pilot.nulls, decide_at: Some(m1) }).collect(),
        settings,
        progress,
        |i| (null.workspace(tasks[i]), tasks[i].labels.clone()),
        |i, j, (ws, labels)| null_statistic(null, tasks[i], settings, j, ws, labels),
    )
}

/// A permutation test of the statistic `observed` through the one driver
/// (`significance::driver::drive`), `settings.audit.permutations()` at most:
/// `null_stat(j, scratch)` is permutation `j`'s statistic; `known` holds
/// the first ones, already drawn by the test's pilot.
pub fn drive<W: Send>(
    observed: Stat,
    settings: &Settings,
    decide_at: Option<usize>,
    known: Vec<Stat>,
    progress: &(dyn Fn(u64) + Sync),
    scratch: impl Fn() -> W + Sync,
    null_stat: impl Fn(u64, &mut W) -> Stat + Sync,
) -> PermutationResult {
    let run = crate::significance::driver::drive(
        settings.audit.permutations(),
        settings.audit.stop_after_exceedances(),
        decide_at,
        known,
        progress,
        scratch,
        null_stat,
        |s: &Stat| s.reaches(&observed),
    );
    result(observed, run)
}

/// The permutation tests of one Benjamini–Hochberg family of pitchers, run
/// together (`significance::driver::drive_family`): `observed[i]` is test
/// i's statistic, `members[i]` its pilot's permutations and early
/// decision, `null_stat(i, j, scratch)` its permutation `j`'s statistic.
/// A test that can no longer be flagged in the family stops (`ruled_out`);
/// the family's flags are those of the full run.
#[allow(clippy::too_many_arguments)]
pub fn drive_family<W: Send>(
    observed: &[Stat],
    members: Vec<Member<Stat>>,
    settings: &Settings,
    progress: &(dyn Fn(u64) + Sync),
    scratch: impl Fn(usize) -> W + Sync,
    null_stat: impl Fn(usize, u64, &mut W) -> Stat + Sync,
) -> Vec<PermutationResult> {
    let at: Vec<usize> = (0..observed.len()).collect();
    let runs = crate::significance::driver::drive_family(
        &at,
        members,
        settings.audit.permutations(),
        settings.audit.stop_after_exceedances(),
        Some(settings.audit.fdr()),
        progress,
        |&i| scratch(i),
        |&i, j, w| null_stat(i, j, w),
        |&i, s: &Stat| s.reaches(&observed[i]),
    );
    observed.iter().zip(runs).map(|(&o, run)| result(o, run)).collect()
}

fn result(observed: Stat, run: Sequential<Stat>) -> PermutationResult {
    PermutationResult {
        observed: observed.primary,
        observed_tiebreak: observed.secondary,
        p_value: run.p_value,
        permutations: run.permutations,
        stopped_early: run.stopped_early,
        decided_early: run.decided_early,
        reached_none: run.reached_none,
        ruled_out: run.ruled_out,
        null: run.nulls.iter().map(|s| s.primary).collect(),
    }
}

#[cfg(test)]
mod decision_tests {
    use super::*;

    /// The early decision's size: with no other clear pilot, four times the
    /// size that passes Benjamini–Hochberg alone (4N / fdr); with many, the
    /// size that passes it with a quarter of the pilots' clear effects.
    /// A test's own pilot never sizes its decision: a family of one is
    /// sized alike whether its pilot was clear or not, and each member of a
    /// family is sized from the others' clear pilots only.
    #[test]
    fn sizes_count_only_the_other_pilots() {
        assert_eq!(decision_sizes(&[true], 0.05), decision_sizes(&[false], 0.05));
        assert_eq!(
            decision_sizes(&[true, false, true], 0.05),
            vec![decision_at(3, 1, 0.05), decision_at(3, 2, 0.05), decision_at(3, 1, 0.05)]
        );
    }

    #[test]
    fn decision_size_from_family_and_pilots() {
        // Worked by hand. None foreseen: 4 × 18 = 72 tests → 72 / 0.05.
        assert_eq!(decision_at(18, 0, 0.05), 1440);
        // 16 clear against 17/100 = 0.17 by chance: 16.83 foreseen,
        // 72 / 16.83 → 5 tests → 100.
        assert_eq!(decision_at(18, 16, 0.05), 100);
        // 700 clear against 741/100 = 7.41 by chance: 693.59 foreseen,
        // 2968 / 693.59 → 5 tests → 100.
        assert_eq!(decision_at(742, 700, 0.05), 100);
        // p = 1/101 passes BH when at least 742 × (1/101) / 0.05 ≈ 147 tests
        // reject, a quarter of the 694 foreseen.
        assert!(1.0 / 101.0 <= 0.05 * (693.59 / 4.0) / 742.0);
        assert_eq!(decision_at(742, 0, 0.05), 59_360);
        // 55 other clear pilots among 668 against 667/100 = 6.67 by chance:
        // 49.33 foreseen, 2672 / 49.33 → 55 tests → 1100 (counting every
        // clear pilot: 2672 / 56 → 48 tests → 960).
        assert_eq!(decision_at(668, 55, 0.05), 1100);
        // Fewer clear pilots than chance gives foresee none beyond his own.
        assert_eq!(decision_at(668, 6, 0.05), decision_at(668, 0, 0.05));
    }
}

#[cfg(test)]
mod rng_tests {
    use super::*;

    /// The per-thread key cache never hands one test's key to another: a
    /// stream drawn after other keys equals the stream drawn from the hash
    /// computed here from scratch.
    #[test]
    fn cached_keys_are_the_hashed_keys() {
        let fresh = |domain: &[u8], seed: u64, pitcher: &str, j: u64| {
            let mut h = Sha256::new();
            h.update(domain);
            h.update(seed.to_le_bytes());
            h.update(pitcher.as_bytes());
            let mut rng = ChaCha8Rng::from_seed(h.finalize().into());
            rng.set_stream(j);
            rng.random::<u64>()
        };
        let cases: [(&[u8], u64, &str); 5] =
            [(b"a", 1, "Pitcher One"), (b"a", 1, "Pitcher One"), (b"b", 1, "Pitcher One"), (b"a", 2, "Pitcher One"), (b"a", 1, "Pitcher Two")];
        for (j, &(d, s, p)) in cases.iter().chain(cases.iter().rev()).enumerate() {
            assert_eq!(keyed_rng(d, s, p, j as u64).random::<u64>(), fresh(d, s, p, j as u64));
        }
    }
}
