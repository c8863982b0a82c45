//! The one permutation driver: permutations `0..m` in parallel batches,
//! read in order for Besag–Clifford stopping (and the early decision for a
//! clear effect). Every permutation test of the tool runs through it: the
//! audit's whole-model, beyond-the-sheet and location tests and compare's
//! label-swap test.

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
    reaches: impl Fn(&N) -> bool,
) -> Sequential<N> {
    // The stopping rule counts exceedances; each null value is fed to it as
    // 1 (reaches the observed one) or 0 against an observed 0.5.
    let mut seq = SequentialPermutation::new(0.5, m, stop_after);
    if let Some(m1) = decide_at {
        seq = seq.with_early_decision(m1);
    }
    let mut nulls = Vec::new();
    // Values in permutation order into the stopping rule, until it is done.
    let mut read = |values: Vec<N>, seq: &mut SequentialPermutation| {
        for v in values {
            if seq.is_done() {
                break;
            }
            seq.push(if reaches(&v) { 1.0 } else { 0.0 });
            nulls.push(v);
        }
    };
    let mut start = known.len().min(m);
    read(known.into_iter().take(m).collect(), &mut seq);
    progress(start as u64);
    let pool: Vec<std::sync::Mutex<Option<W>>> =
        (0..rayon::current_num_threads().max(1)).map(|_| std::sync::Mutex::new(None)).collect();
    while start < m && !seq.is_done() {
        let size = seq.fewest_left().clamp(MIN_BATCH, BATCH);
        let mut end = (start + size).min(m);
        // Never past the early decision's size: a clear test stops there.
        if let Some(m1) = decide_at.filter(|&m1| start < m1) {
            end = end.min(m1);
        }
        let values: Vec<N> = (start..end)
            .into_par_iter()
            .map(|j| {
                let slot = rayon::current_thread_index().unwrap_or(0) % pool.len();
                let mut guard = pool[slot].lock().unwrap_or_else(|e| e.into_inner());
                let w = guard.get_or_insert_with(&scratch);
                null(j as u64, w)
            })
            .collect();
        read(values, &mut seq);
        progress((end - start) as u64);
        start = end;
    }
    Sequential {
        nulls,
        p_value: seq.p_value(),
        permutations: seq.permutations_run(),
        stopped_early: seq.stopped_early(),
        decided_early: seq.decided_early(),
        reached_none: seq.exceedances() == 0,
    }
}
