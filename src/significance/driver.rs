//! The one permutation driver: permutations `0..m` in parallel batches,
//! read in order for Besag–Clifford stopping (and the early decision for a
//! clear effect). Every permutation test of the tool runs through it: the
//! audit's whole-model, beyond-the-sheet and location tests and compare's
//! label-swap test.
//!
//! A family of tests (one per pitcher, one Benjamini–Hochberg family) can
//! be run together ([`drive_family`]) with a family-wide stop: every
//! `ROUND` permutations each test's p-value is bounded below by what its
//! exceedances so far allow, (b + 1)/(m + 1), whatever its remaining
//! permutations give; BH run on those bounds gives the most rejections the
//! family could still reach, and a test whose bound lies above the bar
//! that many rejections set can no longer be flagged, so it stops
//! (`budget::best_bar`, where the argument is). The family's flags and the
//! flagged tests' p- and q-values are then exactly those of the full run;
//! a stopped test reports the p-value of the permutations it drew,
//! (b + 1)/(l + 1), an estimate (it is marked `ruled_out`).

use super::budget::best_bar;
use super::permutation_p::SequentialPermutation;
use rayon::prelude::*;

/// Permutations are run in parallel batches of at most this size, then read
/// in order for the stopping rule.
const BATCH: usize = 32;

/// A batch is only as large as the fewest permutations after which the test
/// could stop, but not below this: a pitcher with no tell stops after a few
/// dozen, so whole batches of 32 would mostly be thrown away. Which
/// permutations are drawn, and so every result, does not depend on batch
/// sizes (the stopping rule reads them in order).
const MIN_BATCH: usize = 4;

/// A family run together is checked for tests that can no longer be
/// flagged each time its tests have drawn this many more permutations.
pub const ROUND: usize = 100;

/// A permutation run: the null values in permutation order up to the stop,
/// and the stopping rule's verdict.
pub struct Sequential<N> {
    pub nulls: Vec<N>,
    pub p_value: f64,
    pub permutations: usize,
    pub stopped_early: bool,
    pub decided_early: bool,
    /// No permutation reached the observed statistic: the p-value is the
    /// least the permutations drawn allow (see `significance::budget`).
    pub reached_none: bool,
    /// Stopped because no outcome of its remaining permutations could get
    /// it flagged in its family ([`drive_family`]); the p-value is that of
    /// the permutations drawn.
    pub ruled_out: bool,
}

/// One test of a family for [`drive_family`]: the null values of its
/// permutations `0..known.len()` already drawn (by a pilot), read first,
/// and the size of its early decision for a clear effect, if any.
pub struct Member<N> {
    pub known: Vec<N>,
    pub decide_at: Option<usize>,
}

/// Run at most `m` permutations: `null(j, scratch)` is permutation `j`'s
/// value (`known` holds those of permutations `0..known.len()` already
/// drawn, by a pilot, and they are read first) and `reaches` says whether
/// it reaches the observed statistic; the
/// run stops after `stop_after` values reach it (Besag–Clifford), or after
/// `decide_at` permutations with none reaching it. `scratch` is one per
/// worker thread, made by `scratch` and kept across batches (a permutation's
/// value must never depend on what it held before, so results are the same
/// at any thread count). `progress` is told how many permutations each
/// batch ran.
#[allow(clippy::too_many_arguments)]
pub fn drive<W: Send, N: Send>(
    m: usize,
    stop_after: usize,
    decide_at: Option<usize>,
    known: Vec<N>,
    progress: &(dyn Fn(u64) + Sync),
    scratch: impl Fn() -> W + Sync,
    null: impl Fn(u64, &mut W) -> N + Sync,
    reaches: impl Fn(&N) -> bool + Sync,
) -> Sequential<N> {
    let mut runs = drive_family(&[()], vec![Member { known, decide_at }], m, stop_after, None, progress, |_| scratch(), |_, j, w| null(j, w), |_, v| reaches(v));
    runs.pop().expect("one test in, one out")
}

/// One test's progress through its permutations.
struct Running<N> {
    seq: SequentialPermutation,
    nulls: Vec<N>,
    /// The next permutation to draw.
    next: usize,
    decide_at: Option<usize>,
    ruled_out: bool,
}

impl<N> Running<N> {
    fn done(&self, m: usize) -> bool {
        self.ruled_out || self.seq.is_done() || self.next >= m
    }

    /// Values in permutation order into the stopping rule, until it is done.
    fn read(&mut self, values: Vec<N>, reaches: impl Fn(&N) -> bool) {
        for v in values {
            if self.seq.is_done() {
                break;
            }
            self.seq.push(if reaches(&v) { 1.0 } else { 0.0 });
            self.nulls.push(v);
        }
    }
}

/// Run a family of tests, each as [`drive`] runs one (`null(test, j,
/// scratch)`, `reaches(test, value)`, at most `m` permutations each), the
/// tests in parallel. With `fdr`, the family is one Benjamini–Hochberg
/// family at that level and every [`ROUND`] permutations a test with an
/// exceedance that can no longer be flagged stops (see the module); a test
/// none of whose permutations reached its statistic always runs on, so the
/// budget's note (`significance::budget::unresolved`) reads its floor.
/// Which permutations a test draws, and so every result, does not depend on
/// the thread count.
#[allow(clippy::too_many_arguments)]
pub fn drive_family<T: Sync, W: Send, N: Send>(
    tests: &[T],
    members: Vec<Member<N>>,
    m: usize,
    stop_after: usize,
    fdr: Option<f64>,
    progress: &(dyn Fn(u64) + Sync),
    scratch: impl Fn(&T) -> W + Sync,
    null: impl Fn(&T, u64, &mut W) -> N + Sync,
    reaches: impl Fn(&T, &N) -> bool + Sync,
) -> Vec<Sequential<N>> {
    assert_eq!(tests.len(), members.len(), "one member per test");
    let mut runs: Vec<Running<N>> = tests
        .iter()
        .zip(members)
        .map(|(t, member)| {
            // The stopping rule counts exceedances; each null value is fed
            // to it as 1 (reaches the observed one) or 0 against an
            // observed 0.5.
            let mut seq = SequentialPermutation::new(0.5, m, stop_after);
            if let Some(m1) = member.decide_at {
                seq = seq.with_early_decision(m1);
            }
            let next = member.known.len().min(m);
            let mut run = Running { seq, nulls: Vec::new(), next, decide_at: member.decide_at, ruled_out: false };
            run.read(member.known.into_iter().take(m).collect(), |v| reaches(t, v));
            progress(next as u64);
            run
        })
        .collect();
    // Without a family-wide stop, one round runs every test to its end.
    let round = if fdr.is_some() { ROUND } else { m.max(1) };
    let mut until = 0;
    while runs.iter().any(|r| !r.done(m)) {
        until += round;
        runs.par_iter_mut().zip(tests.par_iter()).filter(|(r, _)| !r.done(m)).for_each(|(run, t)| {
            advance(run, until.min(m), progress, || scratch(t), |j, w| null(t, j, w), |v| reaches(t, v))
        });
        if let Some(fdr) = fdr {
            rule_out(&mut runs, m, fdr);
        }
    }
    runs.into_iter()
        .map(|r| Sequential {
            p_value: r.seq.p_value(),
            permutations: r.seq.permutations_run(),
            stopped_early: r.seq.stopped_early(),
            decided_early: r.seq.decided_early(),
            reached_none: r.seq.exceedances() == 0,
            ruled_out: r.ruled_out,
            nulls: r.nulls,
        })
        .collect()
}

/// One test's permutations up to `until` (or its stop), in parallel
/// batches read in order; one scratch per worker thread, kept across the
/// batches.
fn advance<W: Send, N: Send>(
    run: &mut Running<N>,
    until: usize,
    progress: &(dyn Fn(u64) + Sync),
    scratch: impl Fn() -> W + Sync,
    null: impl Fn(u64, &mut W) -> N + Sync,
    reaches: impl Fn(&N) -> bool,
) {
    let pool: Vec<std::sync::Mutex<Option<W>>> =
        (0..rayon::current_num_threads().max(1)).map(|_| std::sync::Mutex::new(None)).collect();
    while run.next < until && !run.seq.is_done() {
        let size = run.seq.fewest_left().clamp(MIN_BATCH, BATCH);
        let mut end = (run.next + size).min(until);
        // Never past the early decision's size: a clear test stops there.
        if let Some(m1) = run.decide_at.filter(|&m1| run.next < m1) {
            end = end.min(m1);
        }
        let values: Vec<N> = (run.next..end)
            .into_par_iter()
            .map(|j| {
                let slot = rayon::current_thread_index().unwrap_or(0) % pool.len();
                let mut guard = pool[slot].lock().unwrap_or_else(|e| e.into_inner());
                let w = guard.get_or_insert_with(&scratch);
                null(j as u64, w)
            })
            .collect();
        run.read(values, &reaches);
        progress((end - run.next) as u64);
        run.next = end;
    }
}

/// Stop every running test with an exceedance whose least possible p-value,
/// (b + 1)/(m + 1), lies above the best bar the family can still reach
/// (`budget::best_bar`). A finished test counts with its p-value, a
/// stopped one with its bound when it stopped.
fn rule_out<N>(runs: &mut [Running<N>], m: usize, fdr: f64) {
    let least = |r: &Running<N>| (r.seq.exceedances() as f64 + 1.0) / (m as f64 + 1.0);
    let lower: Vec<f64> =
        runs.iter().map(|r| if r.seq.is_done() && !r.ruled_out { r.seq.p_value() } else { least(r) }).collect();
    let bar = best_bar(&lower, fdr);
    for (r, &low) in runs.iter_mut().zip(&lower) {
        // A margin far above rounding keeps every stopped test clear of the
        // bar in the q-values' own arithmetic.
        if !r.done(m) && r.seq.exceedances() > 0 && low > bar * (1.0 + 1e-9) {
            r.ruled_out = true;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::significance::fdr::bh_q_values;
    use rand::{Rng, SeedableRng};

    /// A family run with the family-wide stop flags exactly the tests the
    /// full run flags, with the same p- and q-values, for fewer
    /// permutations (the guarantee of `budget::best_bar`, here through the
    /// driver's rounds, early decisions and Besag–Clifford stops). Each
    /// test's permutation j reaches its statistic with its own chance, by
    /// its own stream: a few strong effects, some middling, most null.
    #[test]
    fn a_family_wide_stop_keeps_every_flag() {
        for seed in 0..6u64 {
            let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
            // A league's family: running tests' bounds stay below h/(m + 1)
            // until they stop, so the stop bites once fewer are running
            // than BH could pass at that bound (fdr · R / m ≥ 0.01 needs
            // R ≥ 0.2 m).
            let tests: Vec<(u64, f64)> = (0..600u64)
                .map(|i| {
                    let c = match i % 40 {
                        0 => 0.0,
                        1..=4 => rng.random::<f64>() * 0.004,
                        5..=8 => rng.random::<f64>() * 0.05,
                        _ => rng.random::<f64>(),
                    };
                    (i, c)
                })
                .collect();
            let null = |&(i, c): &(u64, f64), j: u64, _: &mut ()| {
                let mut r = rand_chacha::ChaCha8Rng::seed_from_u64((seed << 40) ^ (i << 20) ^ j);
                r.random::<f64>() < c
            };
            let run = |fdr: Option<f64>| {
                let members = tests.iter().map(|&(i, _)| Member { known: Vec::new(), decide_at: (i % 2 == 0).then_some(400) }).collect();
                drive_family(&tests, members, 999, 10, fdr, &|_| {}, |_| (), null, |_, &v: &bool| v)
            };
            let (full, stopped) = (run(None), run(Some(0.05)));
            let p = |runs: &[Sequential<bool>]| runs.iter().map(|r| r.p_value).collect::<Vec<_>>();
            let (qf, qs) = (bh_q_values(&p(&full)), bh_q_values(&p(&stopped)));
            let mut ruled_out = 0;
            for i in 0..tests.len() {
                assert_eq!(qf[i] <= 0.05, qs[i] <= 0.05, "test {i}'s flag moved (seed {seed})");
                if qf[i] <= 0.05 {
                    assert_eq!((full[i].p_value, qf[i]), (stopped[i].p_value, qs[i]), "flagged test {i} moved");
                }
                if stopped[i].ruled_out {
                    ruled_out += 1;
                    assert!(!full[i].ruled_out && stopped[i].permutations <= full[i].permutations);
                    assert!(!stopped[i].reached_none, "a test no permutation reached runs on");
                } else {
                    assert_eq!(stopped[i].p_value, full[i].p_value, "a test that ran on moved");
                }
            }
            let work = |runs: &[Sequential<bool>]| runs.iter().map(|r| r.permutations).sum::<usize>();
            assert!(ruled_out > 0 && work(&stopped) < work(&full), "seed {seed}: {ruled_out} stopped");
        }
    }

    /// A single test through `drive` is the family of one without the
    /// family-wide stop: Besag–Clifford's verdict on the values in order.
    #[test]
    fn one_test_is_read_in_order() {
        let values: Vec<f64> = (0..200).map(|j| if j % 7 == 3 { 2.0 } else { 0.0 }).collect();
        let run = drive(999, 10, None, Vec::new(), &|_| {}, || (), |j, _| values.get(j as usize).copied().unwrap_or(0.0), |&v| v >= 1.0);
        // The 10th value at or above 1 is j = 66 (3, 10, ..., 66): p = 10/67.
        assert_eq!(run.permutations, 67);
        assert!(run.stopped_early && !run.ruled_out);
        assert!((run.p_value - 10.0 / 67.0).abs() < 1e-15);
    }
}
