//! Fits per second of the two tree learners on a pitcher-sized matrix:
//! 1,500 training rows x 45 features (37 one-hot situation levels, balls,
//! strikes, 6 usage priors binned 0..=20), 4 pitch classes, depth 6,
//! min leaf 20. Prints figures; asserts nothing about time.
//!
//!     cargo bench --bench tree_fit
//!
//! The "permutation loop" row is the intended use: the workspace is prepared
//! once, then each refit rewrites the 6 prior columns, refreshes them and
//! fits new labels.

use std::hint::black_box;
use std::time::Instant;

use rand::seq::SliceRandom;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use tellscope::model::fast_tree::{FastTree, FastTreeWorkspace, GrowOptions, ThresholdScan};
#[path = "../tests/common/reference_tree.rs"]
mod reference_tree;
use reference_tree::ReferenceTree;
use tellscope::model::{FeatureMatrix, Learner, TreeSettings};

const N_ROWS: usize = 1500;
const N_CLASSES: usize = 4;
const N_PRIORS: usize = 6;

/// Invented situations: one-hot levels of count (12), batter side (2),
/// platoon (2), outs (3), bases (8), times through (3), score (3), previous
/// pitch (4), then balls, strikes and the priors.
fn bench_matrix(rng: &mut ChaCha8Rng) -> (FeatureMatrix, Vec<u8>, usize) {
    let levels = [12usize, 2, 2, 3, 8, 3, 3, 4];
    let n_onehot: usize = levels.iter().sum();
    let n_features = n_onehot + 2 + N_PRIORS;
    let names = (0..n_features).map(|f| format!("f{f}")).collect();
    let mut x = FeatureMatrix::new(N_ROWS, names);
    let mut labels = vec![0u8; N_ROWS];
    for (r, label) in labels.iter_mut().enumerate() {
        let mut base = 0;
        let mut level = vec![0usize; levels.len()];
        for (i, &m) in levels.iter().enumerate() {
            level[i] = rng.random_range(0..m);
            x.set(r, base + level[i], 1);
            base += m;
        }
        let (balls, strikes) = (level[0] / 3, level[0] % 3);
        x.set(r, n_onehot, balls as u8);
        x.set(r, n_onehot + 1, strikes as u8);
        // A planted habit (breaking ball ahead in the count, fastball
        // behind, changeup to one side) plus noise.
        let lead = strikes as i32 - balls as i32;
        *label = if rng.random_bool(0.45) {
            rng.random_range(0..N_CLASSES) as u8
        } else if lead > 0 {
            1
        } else if lead < 0 {
            0
        } else if level[1] == 0 {
            2
        } else {
            rng.random_range(0..2) * 3
        };
    }
    write_priors(&mut x, &labels, n_onehot + 2);
    (x, labels, n_onehot + 2)
}

/// Usage priors as the pipeline would bin them: for each class (and two
/// more splits by batter side), the shrunk share of that class among rows
/// with the same count, on a 0..=20 grid.
fn write_priors(x: &mut FeatureMatrix, labels: &[u8], first: usize) {
    let mut counts = [[0u32; N_CLASSES]; 12];
    let mut totals = [0u32; 12];
    for (r, &l) in labels.iter().enumerate() {
        let c = (0..12).find(|&c| x.get(r, c) == 1).unwrap();
        counts[c][l as usize] += 1;
        totals[c] += 1;
    }
    for p in 0..N_PRIORS {
        let class = p % N_CLASSES;
        for r in 0..labels.len() {
            let c = (0..12).find(|&c| x.get(r, c) == 1).unwrap();
            let share = (counts[c][class] as f64 + 5.0 * 0.25) / (totals[c] as f64 + 5.0);
            let side = if p >= N_CLASSES {
                x.get(r, 12) as f64 * 0.1
            } else {
                0.0
            };
            x.set(r, first + p, ((share + side).min(1.0) * 20.0).round() as u8);
        }
    }
}

/// Microseconds per call: the best of 5 batches of `reps` calls, since the
/// machine is shared and a slow batch is someone else's load.
fn time_per_fit(reps: usize, mut f: impl FnMut()) -> f64 {
    f(); // warm up
    (0..5)
        .map(|_| {
            let start = Instant::now();
            for _ in 0..reps {
                f();
            }
            start.elapsed().as_secs_f64() * 1e6 / reps as f64
        })
        .fold(f64::INFINITY, f64::min)
}

fn main() {
    let mut rng = ChaCha8Rng::seed_from_u64(2024);
    let (mut x, labels, first_prior) = bench_matrix(&mut rng);
    let rows: Vec<u32> = (0..N_ROWS as u32).collect();
    let s = TreeSettings {
        max_depth: 6,
        min_samples_leaf: 20,
        min_samples_split: 40,
        min_impurity_decrease: 0.0,
    };

    let reference = ReferenceTree(s).fit(&x, &rows, &labels, N_CLASSES);
    let fast = FastTree(s).fit(&x, &rows, &labels, N_CLASSES);
    println!(
        "matrix {N_ROWS} rows x {} features, {N_CLASSES} classes, {s:?}",
        x.n_features()
    );
    println!(
        "trees: reference {} nodes, fast {} nodes, equal: {} (with 4 classes linfa may break a tie either way)",
        reference.nodes.len(),
        fast.nodes.len(),
        reference == fast
    );

    let reference_us = time_per_fit(10, || {
        black_box(ReferenceTree(s).fit(&x, &rows, &labels, N_CLASSES));
    });
    let one_shot_us = time_per_fit(500, || {
        black_box(FastTree(s).fit(&x, &rows, &labels, N_CLASSES));
    });

    let mut ws = FastTreeWorkspace::new(s);
    ws.prepare(&x, &rows);
    let fit_only_us = time_per_fit(1000, || {
        black_box(ws.fit(&labels, N_CLASSES));
    });

    let mut cart = FastTreeWorkspace::with_options(
        s,
        GrowOptions {
            scan: ThresholdScan::EveryNode,
            prune: false,
        },
    );
    cart.prepare(&x, &rows);
    let cart_nodes = cart.fit(&labels, N_CLASSES).nodes.len();
    let cart_us = time_per_fit(1000, || {
        black_box(cart.fit(&labels, N_CLASSES));
    });

    // Permutation loop: precomputed permuted labels and their priors.
    let n_perm = 64;
    let priors: Vec<usize> = (first_prior..first_prior + N_PRIORS).collect();
    let mut perms = Vec::new();
    let mut scratch = x.clone();
    for _ in 0..n_perm {
        let mut l = labels.clone();
        l.shuffle(&mut rng);
        write_priors(&mut scratch, &l, first_prior);
        let cols: Vec<Vec<u8>> = priors.iter().map(|&f| scratch.column(f).to_vec()).collect();
        perms.push((l, cols));
    }
    let mut i = 0;
    let loop_us = time_per_fit(1000, || {
        let (l, cols) = &perms[i % n_perm];
        for (&f, col) in priors.iter().zip(cols) {
            x.column_mut(f).copy_from_slice(col);
        }
        ws.refresh_features(&x, &priors);
        black_box(ws.fit(l, N_CLASSES));
        i += 1;
    });

    println!(
        "{:<44} {:>10} {:>12} {:>9}",
        "learner", "us/fit", "fits/s", "speed-up"
    );
    let row = |name: &str, us: f64| {
        println!(
            "{name:<44} {us:>10.1} {:>12.0} {:>8.1}x",
            1e6 / us,
            reference_us / us
        );
    };
    row("reference (linfa-trees 0.8)", reference_us);
    row("fast, one-shot Learner::fit (with prepare)", one_shot_us);
    row("fast, workspace fit only", fit_only_us);
    row("fast, permutation loop (6 priors + fit)", loop_us);
    row(
        &format!("fast, EveryNode scan, unpruned ({cart_nodes} nodes)"),
        cart_us,
    );
}
