//! The fast learner: grows the same Gini tree as linfa-trees 0.8.1 (see
//! `tests/common/reference_tree.rs` for how linfa chooses splits), in a few tens of
//! microseconds, for the hundreds of permutation refits per pitcher.
//!
//! # How it is fast
//!
//! Every feature is a small ordinal code, so a threshold `code <= t` only
//! matters at the codes present in the training rows. Each feature with
//! present codes `u_0 < u_1 < ... < u_m` becomes `m` *cut bits*, bit `j`
//! saying `code > u_j` (a one-hot level is one bit, a prior binned 0..=20 at
//! most 20). For a node, the count of rows of class `k` on the right of
//! every threshold of every feature is then a column sum of those bits over
//! the node's rows of class `k`, taken two ways:
//! * features with one cut (one-hot levels) have their bits packed into a
//!   few bytes per row and are summed eight columns at a time by adding a
//!   table-spread byte (`SPREAD`, one bit per byte lane) into a `u64`,
//!   flushed before a lane can overflow; a fit's rows are grouped by class
//!   at the root (stable partitions keep every node's rows so), and a node
//!   is summed one class run at a time with its accumulators in registers
//!   (`Run`);
//! * wider features (balls, strikes, binned priors) are counted in a
//!   histogram of their codes per class, one increment per row and feature,
//!   and the right-side counts are its suffix sums over the present codes.
//!
//! The larger child's sums are the parent's minus the smaller child's (the
//! usual histogram subtraction), and nodes that cannot be split (too deep,
//! too small, pure) get no sums at all.
//!
//! Per pitcher the caller builds a [`FastTreeWorkspace`] once with
//! [`FastTreeWorkspace::prepare`] (gathers and packs the training rows),
//! after each change of a few feature columns calls
//! [`FastTreeWorkspace::refresh_features`] or
//! [`FastTreeWorkspace::rewrite_features`] (repacks only those), and fits
//! with [`FastTreeWorkspace::fit`] for each new set of labels. Rows to score
//! (the held-out pitches) can be registered with
//! [`FastTreeWorkspace::prepare_scored`]: they are sent down with the
//! training rows as the tree grows, and their leaves read off
//! [`FastTreeWorkspace::scored_leaves`]; features of theirs that are a
//! function of a few keys can be read through a table instead
//! ([`FastTreeWorkspace::set_scored_keys`]), and so can training features
//! ([`FastTreeWorkspace::set_training_keys`]): a rewrite then finds their
//! present codes from the keys the rows use, and a group of few keys is
//! summed per key at large nodes (one histogram increment per row and key,
//! spread to the codes through the table, instead of one per row and
//! feature). Nothing is sorted and, after the first fit, nothing but the
//! returned [`Tree`] is allocated.
//!
//! # Same tree as linfa
//!
//! With the default [`GrowOptions`] the tree equals the reference learner's,
//! rule for rule:
//! * the same stopping rules (`min_samples_split`, `max_depth`, leaf size,
//!   `min_impurity_decrease` unscaled and at least `f64::EPSILON`);
//! * the same candidate thresholds, including linfa's rule that the threshold
//!   `code <= v` is scored in a node only when the last training row with
//!   code `v` (last in `rows` order) is in that node
//!   ([`ThresholdScan::Linfa`]);
//! * the same score, computed in `f32` with linfa's exact formula
//!   `w * gini(right) + (1 - w) * gini(left)`, `w = n_right / n`, and the same
//!   choice: the first candidate in scan order (features in index order, then
//!   thresholds ascending) whose `f32` score is the lowest. **Tie-break:**
//!   candidates whose `f32` scores are equal go to the lowest feature index,
//!   then the lowest threshold (a duplicated column never beats its
//!   original). Candidates whose exact Gini is equal but whose `f32` scores
//!   round apart (a mirrored 0/1 column: same partition, sides swapped) go
//!   to the lower rounding, as in linfa. Exact scores are computed first for
//!   every candidate and only those within 1e-4 of the best are rescored in
//!   `f32`; linfa's `f32` error is below 1e-6, so this drops no possible
//!   winner;
//! * the same threshold value: the floor of the midpoint between the split
//!   code and the next code present in the training rows;
//! * the same pruning: a split whose two children are leaves with the same
//!   modal class is collapsed, bottom up.
//!
//! Through that last-row rule the tree depends on the order of `rows`, in
//! both learners: give the training rows in one fixed order (ascending, say).
//!
//! Where linfa itself is not reproducible the fast learner fixes a rule:
//! linfa sums `gini` over a `HashMap` in random order, which with three or
//! more classes can change the rounding and so the winner among candidates
//! tied to the last bit; here the sum runs in class-index order. linfa's
//! modal class of a tie is random; here it is the lowest class index. With
//! two classes linfa is deterministic and the trees are always equal except
//! where a leaf's modal class is tied and pruning differs.
//!
//! [`GrowOptions`] also offers two departures from linfa, off by default:
//! [`ThresholdScan::EveryNode`] scores every threshold between codes
//! present in the node (textbook CART, as scikit-learn does, with threshold
//! the floor of the midpoint between the node's neighbouring codes), and
//! `prune: false` keeps splits that do not change the modal class (they still
//! sharpen the class shares of the leaves, which log-loss rewards).

use super::{FeatureMatrix, Learner, Node, Split, Tree, TreeSettings};

/// Which thresholds a node scores.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ThresholdScan {
    /// linfa-trees 0.8.1: `code <= v` only where the last training row with
    /// code `v` is in the node.
    #[default]
    Linfa,
    /// Every threshold between two codes present in the node (CART).
    EveryNode,
}

/// How a [`FastTreeWorkspace`] grows its trees.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct GrowOptions {
    pub scan: ThresholdScan,
    /// Collapse splits whose two leaves predict the same class (linfa does).
    pub prune: bool,
}

impl Default for GrowOptions {
    /// linfa-compatible: the tree equals the reference learner's (linfa-trees, `tests/common/reference_tree.rs`).
    fn default() -> Self {
        GrowOptions {
            scan: ThresholdScan::Linfa,
            prune: true,
        }
    }
}

/// The fast learner behind the [`Learner`] trait, linfa-compatible. For many
/// fits on the same rows use a [`FastTreeWorkspace`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FastTree(pub TreeSettings);

impl Learner for FastTree {
    fn fit(&self, x: &FeatureMatrix, rows: &[u32], labels: &[u8], n_classes: usize) -> Tree {
        let mut ws = FastTreeWorkspace::new(self.0);
        ws.prepare(x, rows);
        ws.fit(labels, n_classes)
    }
}

/// Candidates whose exact score is within this of the best are rescored in
/// `f32` as linfa does; linfa's `f32` rounding error on a score in [0, 1] is
/// a few units of 2^-24, far below it.
const RESCORE_TOLERANCE: f64 = 1e-4;

/// `SPREAD[b]` has bit `i` of `b` in byte lane `i`, so adding it to a `u64`
/// counts eight bit columns at once.
const SPREAD: [u64; 256] = {
    let mut t = [0u64; 256];
    let mut b = 0;
    while b < 256 {
        let mut i = 0;
        while i < 8 {
            if b & (1 << i) != 0 {
                t[b] |= 1u64 << (8 * i);
            }
            i += 1;
        }
        b += 1;
    }
    t
};

/// One class run of a node's rows: its rows' bit sums go
/// to `out` (the class's lanes), its wide features' codes to `hist` (the
/// class's histogram) and its keys to `key_hist`.
struct Run<'a> {
    rows: &'a [u32],
    /// Training rows in all (every row of `rows` is below it).
    n: usize,
    packed: &'a [u8],
    out: &'a mut [u32],
    hist: &'a mut [u32],
    /// Each wide feature's code column start and first histogram slot.
    columns: &'a [(usize, usize)],
    codes: &'a [u8],
    key_hist: &'a mut [u32],
    keys: &'a [u32],
}

impl Run<'_> {
    /// The run's sums with `S` bytes of packed bits per row, the eight-lane
    /// accumulators held in registers.
    fn sum<const S: usize>(mut self) {
        let mut a = [0u64; S];
        self.pass(S, 0, &mut a, true);
    }

    /// The same with `8 + S2` bytes per row, in two passes over the run so
    /// each pass's accumulators still fit in registers.
    fn sum_wide<const S2: usize>(mut self) {
        let mut a = [0u64; 8];
        self.pass(8 + S2, 0, &mut a, true);
        let mut b = [0u64; S2];
        self.pass(8 + S2, 8, &mut b, false);
    }

    /// The same for any stride, accumulating in `acc` (`stride` words).
    fn sum_any(mut self, stride: usize, acc: &mut [u64]) {
        acc.fill(0);
        self.pass(stride, 0, acc, true);
    }

    /// Bytes `first..first + acc.len()` of each row (`s` bytes a row) summed
    /// into their lanes; with `extras`, the wide features' histograms and
    /// the key counts too.
    #[inline(always)]
    fn pass(&mut self, s: usize, first: usize, acc: &mut [u64], extras: bool) {
        let w = acc.len();
        assert!(first + w <= s && self.out.len() >= 8 * (first + w));
        let out = &mut self.out[8 * first..8 * (first + w)];
        let flush = |acc: &mut [u64], out: &mut [u32]| {
            for (a, o) in acc.iter_mut().zip(out.chunks_exact_mut(8)) {
                let v = *a;
                if v != 0 {
                    for (lane, o) in o.iter_mut().enumerate() {
                        *o += ((v >> (8 * lane)) & 0xff) as u32;
                    }
                    *a = 0;
                }
            }
        };
        let (packed, columns, codes, keys) = (self.packed, self.columns, self.codes, self.keys);
        let (hist, key_hist) = (&mut *self.hist, &mut *self.key_hist);
        let keyed = extras && !key_hist.is_empty();
        let mut since_flush = 0;
        for &p in self.rows {
            let p = p as usize;
            assert!(p < self.n);
            let row = &packed[p * s + first..p * s + first + w];
            for (a, &b) in acc.iter_mut().zip(row) {
                *a += SPREAD[b as usize];
            }
            if extras {
                for &(col, b) in columns {
                    // SAFETY: p < n (checked above) and every column starts
                    // at most n before the end of `codes` (checked by
                    // `accumulate`); a wide feature's histogram has a slot
                    // for every code present among the training rows
                    // (`layout_hist`); only features with a cut are
                    // summed, and their columns are current (a keyed
                    // rewrite leaves only one-code columns stale).
                    unsafe {
                        let slot = b + *codes.get_unchecked(col + p) as usize;
                        debug_assert!(slot < hist.len());
                        *hist.get_unchecked_mut(slot) += 1;
                    }
                }
            }
            if keyed {
                key_hist[keys[p] as usize] += 1;
            }
            since_flush += 1;
            // A byte lane holds at most 255.
            if since_flush == 255 {
                flush(acc, out);
                since_flush = 0;
            }
        }
        flush(acc, out);
    }
}

/// Cut bits of one feature.
#[derive(Debug, Clone, Default)]
struct FeatureCuts {
    /// Codes present among the training rows, ascending.
    values: Vec<u8>,
    /// `last_pos[j]`: last position in `rows` holding `values[j]`.
    last_pos: Vec<u32>,
    /// First cut bit of the feature in a packed row; bit `bit + j` is
    /// `code > values[j]`.
    bit: usize,
    /// Bits reserved for the feature, at least `values.len() - 1`.
    capacity: usize,
}

impl FeatureCuts {
    fn n_cuts(&self) -> usize {
        self.values.len().saturating_sub(1)
    }

    /// The present codes and their last positions, from each code's last
    /// position (`u32::MAX`: absent).
    fn set_present(&mut self, last: &[u32; 256]) {
        self.values.clear();
        self.last_pos.clear();
        for (v, &p) in last.iter().enumerate() {
            if p != u32::MAX {
                self.values.push(v as u8);
                self.last_pos.push(p);
            }
        }
    }
}

/// Scored rows' codes of features `first..first + width` read through a
/// table: feature `first + j` of scored row `i` has code
/// `table[keys[i] * width + j]` (see [`FastTreeWorkspace::set_scored_keys`]).
#[derive(Debug, Clone, Default)]
struct ScoredKeys {
    first: usize,
    width: usize,
    keys: Vec<u32>,
    table: Vec<u8>,
}

/// Training rows' codes of some features that are a function of a key per
/// row (a pitch's game-fold part and count, say): feature `features[j]` of
/// training row `i` has code `table[keys[i] * width + j]` (see
/// [`FastTreeWorkspace::set_training_keys`]). The present codes of these
/// features are read off the keys the rows use, and, for a group counted
/// by key, a large node's histograms of them are summed per key (one
/// increment per row) and spread to the codes through the table.
#[derive(Debug, Clone, Default)]
struct TrainingKeys {
    features: Vec<usize>,
    keys: Vec<u32>,
    n_keys: usize,
    table: Vec<u8>,
    /// Each key some training row has, with the last position holding it.
    used: Vec<(u32, u32)>,
    count_by_key: bool,
    /// The group's wide features under the current layout: (place in
    /// `features`, first histogram slot).
    wide: Vec<(usize, usize)>,
}

/// Reusable state for fitting many trees on the same training rows of one
/// feature matrix. See the module doc for the intended loop.
#[derive(Debug, Clone)]
pub struct FastTreeWorkspace {
    settings: TreeSettings,
    options: GrowOptions,
    /// Training rows, as given to `prepare`.
    rows: Vec<u32>,
    n_features: usize,
    /// `codes[f * n + i]`: feature `f` of training row `rows[i]`.
    codes: Vec<u8>,
    /// Features whose code column was left unwritten by the last
    /// [`Self::rewrite_keyed_features`] (one present code: no cut reads it).
    stale: Vec<bool>,
    cuts: Vec<FeatureCuts>,
    /// Bytes per packed row (the narrow features' cut bits).
    stride: usize,
    /// Row-major cut bits of the narrow features, `stride` bytes per
    /// training row.
    packed: Vec<u8>,
    /// Sum slots per class: every feature's cut bits, rounded up to 8.
    lanes: usize,
    /// The wide features (more than one cut), in index order.
    wide: Vec<usize>,
    /// Per wide feature, its first slot in a class's code histogram (one
    /// slot per code up to its largest present code).
    hist_base: Vec<usize>,
    /// Histogram slots per class.
    hist_len: usize,
    hist: Vec<u32>,
    /// Scratch: each wide feature's offset in `codes` and first histogram slot.
    wide_columns: Vec<(usize, usize)>,
    keyed: Vec<TrainingKeys>,
    /// Per class and key, the node's rows (scratch of keyed sums).
    key_hist: Vec<u32>,
    /// Rows to be scored by each fitted tree (see [`Self::prepare_scored`]).
    scored_rows: Vec<u32>,
    /// `scored_codes[f * m + i]`: feature `f` of scored row `scored_rows[i]`.
    scored_codes: Vec<u8>,
    scored_keyed: Vec<ScoredKeys>,
    sidx: Vec<u32>,
    sspill: Vec<u32>,
    scored_leaf: Vec<u32>,
    // Scratch for growing, reused across fits.
    labels: Vec<u8>,
    n_classes: usize,
    idx: Vec<u32>,
    spill: Vec<u32>,
    node_id: Vec<u32>,
    next_id: u32,
    acc: Vec<u64>,
    /// Right-side class counts per cut bit, one slot per (depth, side):
    /// `sums[slot * slot_len + k * lanes + bit]`.
    sums: Vec<u32>,
    candidates: Vec<(usize, usize, f64)>,
    /// Scratch of a node's split scan: each cut bit's rows on the right.
    right_n: Vec<u32>,
    score_left: Vec<u32>,
    score_right: Vec<u32>,
}

impl FastTreeWorkspace {
    pub fn new(settings: TreeSettings) -> Self {
        Self::with_options(settings, GrowOptions::default())
    }

    pub fn with_options(settings: TreeSettings, options: GrowOptions) -> Self {
        FastTreeWorkspace {
            settings,
            options,
            rows: Vec::new(),
            n_features: 0,
            codes: Vec::new(),
            stale: Vec::new(),
            cuts: Vec::new(),
            stride: 0,
            packed: Vec::new(),
            lanes: 0,
            wide: Vec::new(),
            hist_base: Vec::new(),
            hist_len: 0,
            hist: Vec::new(),
            wide_columns: Vec::new(),
            keyed: Vec::new(),
            key_hist: Vec::new(),
            scored_rows: Vec::new(),
            scored_codes: Vec::new(),
            scored_keyed: Vec::new(),
            sidx: Vec::new(),
            sspill: Vec::new(),
            scored_leaf: Vec::new(),
            labels: Vec::new(),
            n_classes: 0,
            idx: Vec::new(),
            spill: Vec::new(),
            node_id: Vec::new(),
            next_id: 0,
            acc: Vec::new(),
            sums: Vec::new(),
            candidates: Vec::new(),
            right_n: Vec::new(),
            score_left: Vec::new(),
            score_right: Vec::new(),
        }
    }

    pub fn settings(&self) -> TreeSettings {
        self.settings
    }

    pub fn options(&self) -> GrowOptions {
        self.options
    }

    /// The training rows given to the last `prepare`.
    pub fn rows(&self) -> &[u32] {
        &self.rows
    }

    /// Gathers every feature of the training `rows` of `x` and packs their
    /// cut bits. Call once per matrix and row set.
    pub fn prepare(&mut self, x: &FeatureMatrix, rows: &[u32]) {
        let n = rows.len();
        self.rows.clear();
        self.rows.extend_from_slice(rows);
        self.n_features = x.n_features();
        self.keyed.clear();
        self.scored_rows.clear();
        self.scored_codes.clear();
        self.codes.clear();
        self.codes.resize(n * self.n_features, 0);
        gather_columns(x, rows, &mut self.codes);
        self.stale.clear();
        self.stale.resize(self.n_features, false);
        self.cuts.clear();
        self.cuts.resize(self.n_features, FeatureCuts::default());
        for f in 0..self.n_features {
            self.scan_values(f);
        }
        self.layout_and_pack();
    }

    /// Re-gathers the listed features from `x` after the caller rewrote their
    /// columns (binned priors recomputed for a permutation, say). Only those
    /// features are repacked unless one now needs more cut bits than it had
    /// room for, which relays out every row.
    pub fn refresh_features(&mut self, x: &FeatureMatrix, features: &[usize]) {
        assert_eq!(
            x.n_features(),
            self.n_features,
            "refresh with the prepared matrix"
        );
        let n = self.rows.len();
        for &f in features {
            let col = x.column(f);
            for (d, &r) in self.codes[f * n..(f + 1) * n].iter_mut().zip(&self.rows) {
                *d = col[r as usize];
            }
        }
        self.rescan(features.iter().copied());
    }

    /// Like [`Self::refresh_features`], with the caller writing the new
    /// codes itself: `fill(rows, codes)` gets the training `rows` (as
    /// prepared, in that order) and the codes of the features in
    /// `features`, column after column (`rows.len()` codes each), to
    /// overwrite. This saves the caller a feature matrix of the training
    /// rows, and lets it write several columns in one pass over the rows.
    pub fn rewrite_features(&mut self, features: std::ops::Range<usize>, fill: impl FnOnce(&[u32], &mut [u8])) {
        let n = self.rows.len();
        fill(&self.rows, &mut self.codes[features.start * n..features.end * n]);
        self.rescan(features);
    }

    /// Like [`Self::rewrite_features`] for features that all belong to
    /// training key groups, whose tables the caller has just written
    /// ([`Self::training_table`]): their present codes are read off the
    /// tables first, and `fill(rows, codes, need)` then only has to write
    /// the columns with `need[j]` (feature `features.start + j` offers a
    /// cut on these rows). A feature with one present code offers none, so
    /// no sum, scan or partition reads its column, and it may be left as
    /// it was: under shuffled labels most shrunk priors collapse to one
    /// code, and a refit then writes a few columns instead of all of them.
    /// The trees are the same.
    pub fn rewrite_keyed_features(&mut self, features: std::ops::Range<usize>, fill: impl FnOnce(&[u32], &mut [u8], &[bool])) {
        assert!(
            features.clone().all(|f| self.keyed.iter().any(|g| g.features.contains(&f))),
            "every rewritten feature in a key group"
        );
        let n = self.rows.len();
        let relayout = self.rescan_codes(features.clone());
        let need: Vec<bool> = features.clone().map(|f| self.cuts[f].n_cuts() > 0).collect();
        for (f, &need) in features.clone().zip(&need) {
            self.stale[f] = !need;
        }
        fill(&self.rows, &mut self.codes[features.start * n..features.end * n], &need);
        self.repack(features, relayout);
    }

    /// After features' codes changed: their present codes, and their
    /// packing (or a new layout when one outgrew its room).
    fn rescan(&mut self, features: impl Iterator<Item = usize> + Clone) {
        for f in features.clone() {
            self.stale[f] = false;
        }
        let relayout = self.rescan_codes(features.clone());
        self.repack(features, relayout);
    }

    /// The features' present codes; whether one outgrew its room.
    fn rescan_codes(&mut self, features: impl Iterator<Item = usize>) -> bool {
        let mut relayout = false;
        for f in features {
            self.scan_values_or_keys(f);
            if self.cuts[f].n_cuts() > self.cuts[f].capacity {
                relayout = true;
            }
        }
        relayout
    }

    /// The features' packing, or a new layout of every feature.
    fn repack(&mut self, features: impl Iterator<Item = usize>, relayout: bool) {
        if relayout {
            self.layout_and_pack();
        } else {
            for f in features {
                self.pack_feature(f);
            }
            self.layout_hist();
        }
    }

    /// Gathers every feature of `rows` of `x`, the rows each later fit
    /// scores: [`Self::scored_leaves`] then gives the leaf of each, found by
    /// sending them down with the training rows as the tree grows (cheaper
    /// than walking each row down the finished tree). Call after `prepare`.
    pub fn prepare_scored(&mut self, x: &FeatureMatrix, rows: &[u32]) {
        assert_eq!(x.n_features(), self.n_features, "score rows of the prepared matrix");
        let m = rows.len();
        self.scored_rows.clear();
        self.scored_rows.extend_from_slice(rows);
        self.scored_codes.clear();
        self.scored_codes.resize(m * self.n_features, 0);
        self.scored_keyed.clear();
        gather_columns(x, rows, &mut self.scored_codes);
    }

    /// Rewrites features of the scored rows, as [`Self::rewrite_features`]
    /// does for the training rows: `fill(rows, codes)`.
    pub fn rewrite_scored_features(&mut self, features: std::ops::Range<usize>, fill: impl FnOnce(&[u32], &mut [u8])) {
        let m = self.scored_rows.len();
        fill(&self.scored_rows, &mut self.scored_codes[features.start * m..features.end * m]);
    }

    /// From now on the scored rows' codes of `features` are read through a
    /// table the caller writes with [`Self::scored_table`] before each fit:
    /// feature `features.start + j` of scored row `i` has code
    /// `table[keys[i] * features.len() + j]`. A refit whose scored codes are
    /// a function of a few keys (a pitch's count or batter, say) then writes
    /// the table instead of a code per row and feature. Returns the group's
    /// number for `scored_table`. Call after `prepare_scored`.
    pub fn set_scored_keys(&mut self, features: std::ops::Range<usize>, keys: &[u32], n_keys: usize) -> usize {
        assert_eq!(keys.len(), self.scored_rows.len(), "one key per scored row");
        assert!(keys.iter().all(|&q| (q as usize) < n_keys), "keys below n_keys");
        assert!(features.end <= self.n_features);
        self.scored_keyed.push(ScoredKeys {
            first: features.start,
            width: features.len(),
            keys: keys.to_vec(),
            table: vec![0; n_keys * features.len()],
        });
        self.scored_keyed.len() - 1
    }

    /// The code table of scored key group `group` (`n_keys × width` codes).
    pub fn scored_table(&mut self, group: usize) -> &mut [u8] {
        &mut self.scored_keyed[group].table
    }

    /// Declares that the training rows' codes of `features` are a function
    /// of a key per row: feature `features[j]` of training row `i` has code
    /// `table[keys[i] * features.len() + j]`, the table the caller writes
    /// with [`Self::training_table`] *before* each rewrite of those
    /// features (the code columns stay the truth for everything else; the
    /// two must agree, which [`Self::keys_agree`] checks). A rewrite then
    /// finds the features' present codes from the keys the rows use, not
    /// from every row; with `count_by_key` (for a group of few keys) large
    /// nodes also count them once per row and key instead of once per row
    /// and feature. The trees are the same. Call after `prepare`; returns
    /// the group's number for `training_table`.
    pub fn set_training_keys(&mut self, features: Vec<usize>, keys: &[u32], n_keys: usize, count_by_key: bool) -> usize {
        assert_eq!(keys.len(), self.rows.len(), "one key per training row");
        assert!(keys.iter().all(|&q| (q as usize) < n_keys), "keys below n_keys");
        assert!(features.iter().all(|&f| f < self.n_features));
        assert!(
            self.keyed.iter().all(|g| g.features.iter().all(|f| !features.contains(f))),
            "a feature in one group at most"
        );
        let mut last = vec![u32::MAX; n_keys];
        for (i, &q) in keys.iter().enumerate() {
            last[q as usize] = i as u32;
        }
        let used = last.iter().enumerate().filter(|(_, &p)| p != u32::MAX).map(|(q, &p)| (q as u32, p)).collect();
        let width = features.len();
        self.keyed.push(TrainingKeys {
            features,
            keys: keys.to_vec(),
            n_keys,
            table: vec![0; n_keys * width],
            used,
            count_by_key,
            wide: Vec::new(),
        });
        self.layout_hist();
        self.keyed.len() - 1
    }

    /// Features in training key group `group` (the table's width).
    pub fn training_width(&self, group: usize) -> usize {
        self.keyed[group].features.len()
    }

    /// The code table of training key group `group` (`n_keys × width` codes).
    pub fn training_table(&mut self, group: usize) -> &mut [u8] {
        &mut self.keyed[group].table
    }

    /// Whether every training row's codes of the keyed features are the
    /// tables' (a check for the observed fit and tests; reads every code).
    pub fn keys_agree(&self) -> bool {
        let n = self.rows.len();
        self.keyed.iter().all(|g| {
            let w = g.features.len();
            g.features.iter().enumerate().filter(|&(_, &f)| !self.stale[f]).all(|(j, &f)| {
                self.codes[f * n..(f + 1) * n].iter().zip(&g.keys).all(|(&c, &q)| g.table[q as usize * w + j] == c)
            })
        })
    }

    /// Thresholds feature `f` offers on the training rows: one fewer than
    /// its distinct codes there.
    pub fn cuts_of(&self, f: usize) -> usize {
        self.cuts[f].n_cuts()
    }

    /// The leaf (node index of the last fitted tree) of each scored row, in
    /// the order given to [`Self::prepare_scored`].
    pub fn scored_leaves(&self) -> &[u32] {
        &self.scored_leaf
    }

    /// Whether the prepared codes are those of `x` at the prepared rows
    /// (a check for tests and debugging; it reads every code but those a
    /// keyed rewrite left unwritten).
    pub fn matches(&self, x: &FeatureMatrix) -> bool {
        let n = self.rows.len();
        x.n_features() == self.n_features
            && (0..self.n_features).filter(|&f| !self.stale[f]).all(|f| {
                let col = x.column(f);
                self.codes[f * n..(f + 1) * n]
                    .iter()
                    .zip(&self.rows)
                    .all(|(&c, &r)| col.get(r as usize) == Some(&c))
            })
    }

    /// Fits a tree to the prepared rows with `labels[i]` the class of
    /// `rows[i]`.
    pub fn fit(&mut self, labels: &[u8], n_classes: usize) -> Tree {
        let n = self.rows.len();
        assert_eq!(labels.len(), n, "one label per training row");
        // One pass copies the labels, counts the classes and checks them.
        self.labels.clear();
        self.labels.extend_from_slice(labels);
        let mut counts = vec![0u32; n_classes.max(256)];
        for &l in labels {
            counts[l as usize] += 1;
        }
        assert!(counts[n_classes..].iter().all(|&c| c == 0), "labels must be below n_classes = {n_classes}");
        counts.truncate(n_classes);
        self.n_classes = n_classes;
        // Rows grouped by class, in row order within a class: stable
        // partitions keep every node's rows so, and its sums are taken one
        // class run at a time ([`Self::accumulate`]). Neither scan reads the
        // order of a node's rows (linfa's last-row rule goes by row index,
        // through `node_id`), so the tree is the same.
        let mut at: Vec<u32> = counts
            .iter()
            .scan(0u32, |start, &c| {
                let here = *start;
                *start += c;
                Some(here)
            })
            .collect();
        self.idx.clear();
        self.idx.resize(n, 0);
        for (p, &l) in self.labels.iter().enumerate() {
            self.idx[at[l as usize] as usize] = p as u32;
            at[l as usize] += 1;
        }
        self.spill.resize(n, 0);
        self.node_id.clear();
        self.node_id.resize(n, 0);
        self.next_id = 1;
        self.acc.clear();
        self.acc.resize(n_classes * self.stride, 0);
        let m = self.scored_rows.len();
        self.sidx.clear();
        self.sidx.extend(0..m as u32);
        self.sspill.resize(m, 0);
        self.scored_leaf.clear();
        self.scored_leaf.resize(m, 0);

        let mut nodes = Vec::new();
        if self.splittable(n, 0, &counts) {
            self.ensure_slot(0);
            self.accumulate(0, n, 0, &counts);
        }
        self.grow(&mut nodes, 0, n, (0, m), 0, 0, 0, counts);
        Tree { nodes, n_classes }
    }

    /// Fits with other settings or options on the same prepared rows.
    pub fn fit_with(
        &mut self,
        settings: TreeSettings,
        options: GrowOptions,
        labels: &[u8],
        n_classes: usize,
    ) -> Tree {
        self.settings = settings;
        self.options = options;
        self.fit(labels, n_classes)
    }

    // ---- preparation ----

    /// The present codes of feature `f` and their last positions, read off
    /// its key group's used keys when it has one (the codes of the keys the
    /// rows use, each at the last position of any of its keys), else off
    /// the column.
    fn scan_values_or_keys(&mut self, f: usize) {
        let Some((g, j)) = self.keyed.iter().find_map(|g| g.features.iter().position(|&x| x == f).map(|j| (g, j))) else {
            return self.scan_values(f);
        };
        let w = g.features.len();
        let mut last = [u32::MAX; 256];
        for &(q, pos) in &g.used {
            let slot = &mut last[g.table[q as usize * w + j] as usize];
            if *slot == u32::MAX || pos > *slot {
                *slot = pos;
            }
        }
        self.cuts[f].set_present(&last);
    }

    /// Finds the present codes of feature `f` and the last position of
    /// each, reading the column from the end: once every code up to the
    /// largest has been met, no earlier row can add one (a 0/1 column is
    /// done after a few rows).
    fn scan_values(&mut self, f: usize) {
        let n = self.rows.len();
        let col = &self.codes[f * n..(f + 1) * n];
        let top = col.iter().copied().max().unwrap_or(0) as usize;
        let mut last = [u32::MAX; 256];
        let mut found = 0;
        for (i, &c) in col.iter().enumerate().rev() {
            if last[c as usize] == u32::MAX {
                last[c as usize] = i as u32;
                found += 1;
                if found == top + 1 {
                    break;
                }
            }
        }
        self.cuts[f].set_present(&last);
    }

    /// Places every feature's cut bits. Features with at most one cut (a
    /// one-hot level, say) share bytes one bit each and are counted by
    /// [`SPREAD`]; wider ones (a prior binned 0..=20) are counted through a
    /// histogram of their codes, and their bits are only the places of their
    /// sums, rounded up to whole bytes so that a permutation leaving a few
    /// more codes present rarely needs a new layout.
    fn layout_and_pack(&mut self) {
        // A feature once laid out wide stays wide (with at least the room it
        // had), so a prior whose present codes come and go between
        // permutations is laid out again at most a few times.
        let narrow = |c: &FeatureCuts| c.n_cuts() <= 1 && c.capacity <= 1;
        let mut bit = 0;
        for c in self.cuts.iter_mut().filter(|c| narrow(c)) {
            c.bit = bit;
            c.capacity = 1;
            bit += 1;
        }
        bit = bit.div_ceil(8) * 8;
        self.stride = bit / 8;
        self.wide.clear();
        for (f, c) in self.cuts.iter_mut().enumerate() {
            if !narrow(c) {
                c.bit = bit;
                c.capacity = (c.n_cuts().div_ceil(8) * 8).max(8).max(c.capacity);
                bit += c.capacity;
                self.wide.push(f);
            }
        }
        self.lanes = bit.div_ceil(8) * 8;
        self.pack_all();
        self.layout_hist();
    }

    /// Packs every narrow feature's cut bit, one packed byte (up to eight
    /// features) at a time: the byte is built for all rows in a contiguous
    /// buffer, one pass per feature, then written into each row once. The
    /// same bits as [`Self::pack_feature`] on every narrow feature.
    fn pack_all(&mut self) {
        let n = self.rows.len();
        let s = self.stride;
        self.packed.clear();
        self.packed.resize(n * s, 0);
        let mut byte_of_rows = vec![0u8; n];
        for byte in 0..s {
            byte_of_rows.iter_mut().for_each(|b| *b = 0);
            for (f, cuts) in self.cuts.iter().enumerate() {
                if cuts.capacity != 1 || cuts.bit / 8 != byte {
                    continue;
                }
                let lowest = cuts.values.first().copied().unwrap_or(0);
                let shift = cuts.bit % 8;
                for (b, &c) in byte_of_rows.iter_mut().zip(&self.codes[f * n..(f + 1) * n]) {
                    *b |= ((c > lowest) as u8) << shift;
                }
            }
            for (row, &b) in self.packed.chunks_exact_mut(s).zip(&byte_of_rows) {
                row[byte] = b;
            }
        }
    }

    /// Histogram slots of the wide features: codes 0 to the largest present.
    fn layout_hist(&mut self) {
        self.hist_base.clear();
        let mut at = 0;
        for &f in &self.wide {
            self.hist_base.push(at);
            at += *self.cuts[f].values.last().unwrap_or(&0) as usize + 1;
        }
        self.hist_len = at;
        for g in &mut self.keyed {
            g.wide.clear();
            for (j, f) in g.features.iter().enumerate() {
                if let Some(wi) = self.wide.iter().position(|w| w == f) {
                    g.wide.push((j, self.hist_base[wi]));
                }
            }
        }
    }

    /// Writes a narrow feature `f`'s cut bit into the packed rows (set when
    /// the row's code is above the lowest present code). A wide feature is
    /// counted from its code column, which needs no packing. A feature with
    /// one present code offers no cut, so its bit is never read (the split
    /// scan reads the bits of present cuts only) and is left as it was: a
    /// rewritten prior with one code on every training row (most of a
    /// refit's narrow priors) costs no pass over the rows; it is packed
    /// again once it has a cut.
    fn pack_feature(&mut self, f: usize) {
        let n = self.rows.len();
        let cuts = &self.cuts[f];
        let col = &self.codes[f * n..(f + 1) * n];
        if cuts.capacity == 1 && cuts.n_cuts() > 0 {
            let s = self.stride;
            let lowest = cuts.values.first().copied().unwrap_or(0);
            let (byte, mask) = (cuts.bit / 8, 1u8 << (cuts.bit % 8));
            for (row, &c) in self.packed.chunks_exact_mut(s).zip(col) {
                let set = (c > lowest) as u8;
                row[byte] = (row[byte] & !mask) | (set * mask);
            }
        }
    }

    // ---- growing ----

    fn min_leaf(&self) -> usize {
        self.settings.min_samples_leaf.max(1)
    }

    /// Whether linfa could split a node of `n` rows at `depth` with these
    /// class counts. A node too small for two leaves, or pure, has no split
    /// that linfa would keep (a pure node's best decrease is 0), so it gets
    /// no sums.
    fn splittable(&self, n: usize, depth: usize, counts: &[u32]) -> bool {
        depth < self.settings.max_depth
            && n >= self.settings.min_samples_split
            && n >= 2 * self.min_leaf()
            && counts.iter().filter(|&&c| c > 0).count() > 1
            && self.n_features > 0
    }

    fn slot_len(&self) -> usize {
        self.n_classes * self.lanes
    }

    fn ensure_slot(&mut self, slot: usize) {
        let need = (slot + 1) * self.slot_len();
        if self.sums.len() < need {
            self.sums.resize(need, 0);
        }
    }

    /// Column sums of the cut bits over `idx[lo..hi]`, per class, into `slot`.
    /// `counts`: the node's rows per class (its rows are grouped by class in
    /// that order).
    fn accumulate(&mut self, lo: usize, hi: usize, slot: usize, counts: &[u32]) {
        let s = self.stride;
        let lanes = self.lanes;
        let h = self.hist_len;
        let n = self.rows.len();
        let slot_len = self.slot_len();
        let out = &mut self.sums[slot * slot_len..(slot + 1) * slot_len];
        out.fill(0);
        let acc = &mut self.acc;
        let hist = &mut self.hist;
        hist.clear();
        hist.resize(self.n_classes * h, 0);
        let base = &self.hist_base;
        // A large node counts the keyed group's wide features per key (one
        // increment per row) and spreads the key counts to their codes; a
        // small one counts them per row like the other wide features.
        let k = self.n_classes;
        let keyed = self.keyed.iter().find(|g| g.count_by_key && !g.wide.is_empty() && hi - lo >= 2 * g.n_keys * k);
        // Each wide feature's code column, offset by its first histogram slot.
        let mut columns = std::mem::take(&mut self.wide_columns);
        columns.clear();
        // A wide feature with one present code offers no cut and needs no
        // sums (its column may be stale: `rewrite_keyed_features`).
        let cuts = &self.cuts;
        columns.extend(
            self.wide
                .iter()
                .zip(base)
                .filter(|(f, _)| cuts[**f].n_cuts() > 0)
                .filter(|(f, _)| keyed.is_none_or(|g| !g.wide.iter().any(|&(j, _)| g.features[j] == **f)))
                .map(|(&f, &b)| (f * n, b)),
        );
        // The checks the runs rely on, once per call: the buffers have a
        // stride (or histogram) per row and class (each run checks its rows
        // are below n).
        let (idx, packed, codes) = (&self.idx[lo..hi], &self.packed[..n * s], &self.codes[..]);
        assert!(acc.len() >= s && hist.len() >= self.n_classes * h);
        assert!(columns.iter().all(|&(col, _)| col + n <= codes.len()));
        let key_hist = &mut self.key_hist;
        let (keys, n_keys) = match keyed {
            Some(g) => {
                key_hist.clear();
                key_hist.resize(k * g.n_keys, 0);
                assert_eq!(g.keys.len(), n);
                (&g.keys[..], g.n_keys)
            }
            None => (&[][..], 0),
        };
        // One class run at a time, its bit sums in registers.
        let mut start = 0;
        for (l, &c) in counts.iter().enumerate() {
            let run = &idx[start..start + c as usize];
            start += c as usize;
            if run.is_empty() {
                continue;
            }
            let at = Run {
                rows: run,
                n,
                packed,
                out: &mut out[l * lanes..(l + 1) * lanes],
                hist: &mut hist[l * h..(l + 1) * h],
                columns: &columns,
                codes,
                key_hist: if n_keys > 0 { &mut key_hist[l * n_keys..(l + 1) * n_keys] } else { &mut [] },
                keys,
            };
            match s {
                0 => at.sum::<0>(),
                1 => at.sum::<1>(),
                2 => at.sum::<2>(),
                3 => at.sum::<3>(),
                4 => at.sum::<4>(),
                5 => at.sum::<5>(),
                6 => at.sum::<6>(),
                7 => at.sum::<7>(),
                8 => at.sum::<8>(),
                9 => at.sum_wide::<1>(),
                10 => at.sum_wide::<2>(),
                11 => at.sum_wide::<3>(),
                12 => at.sum_wide::<4>(),
                13 => at.sum_wide::<5>(),
                14 => at.sum_wide::<6>(),
                15 => at.sum_wide::<7>(),
                16 => at.sum_wide::<8>(),
                _ => at.sum_any(s, &mut acc[..s]),
            }
        }
        debug_assert_eq!(start, idx.len());
        self.wide_columns = columns;
        if let Some(g) = keyed {
            let w = g.features.len();
            for (class, counts) in key_hist.chunks_exact(n_keys).enumerate() {
                let hist_l = &mut hist[class * h..(class + 1) * h];
                for (codes, &c) in g.table.chunks_exact(w).zip(counts) {
                    if c != 0 {
                        for &(j, b) in &g.wide {
                            hist_l[b + codes[j] as usize] += c;
                        }
                    }
                }
            }
        }
        // A wide feature's right count at cut j: rows with a code above
        // values[j], a suffix sum of its histogram over the present codes.
        for (wi, &f) in self.wide.iter().enumerate() {
            let cuts = &self.cuts[f];
            for class in 0..self.n_classes {
                let hist_f = &hist[class * h + base[wi]..];
                let o = &mut out[class * lanes + cuts.bit..];
                let mut run = 0;
                for j in (0..cuts.n_cuts()).rev() {
                    run += hist_f[cuts.values[j + 1] as usize];
                    o[j] = run;
                }
            }
        }
    }

    /// `slot dst = slot parent - slot sub`.
    fn subtract(&mut self, parent: usize, sub: usize, dst: usize) {
        let len = self.slot_len();
        for i in 0..len {
            self.sums[dst * len + i] = self.sums[parent * len + i] - self.sums[sub * len + i];
        }
    }

    /// Grows the node over `idx[lo..hi]` (its sums, when it is splittable, in
    /// slot 0 for the root, else `2 * depth - 1 + side`, so that a node's
    /// children never overwrite its sibling's sums), appending it and its
    /// subtree in pre-order.
    #[allow(clippy::too_many_arguments)]
    fn grow(
        &mut self,
        nodes: &mut Vec<Node>,
        lo: usize,
        hi: usize,
        scored: (usize, usize),
        depth: usize,
        side: usize,
        id: u32,
        counts: Vec<u32>,
    ) -> usize {
        let me = nodes.len();
        let n_node = hi - lo;
        let splittable = self.splittable(n_node, depth, &counts);
        nodes.push(Node {
            class_counts: counts,
            split: None,
        });
        if !splittable {
            self.assign_scored(scored, me);
            return me;
        }
        let slot = if depth == 0 { 0 } else { 2 * depth - 1 + side };
        let Some((feature, cut_bit, threshold)) =
            self.best_split(lo, hi, slot, id, &nodes[me].class_counts)
        else {
            self.assign_scored(scored, me);
            return me;
        };
        let scored_mid = self.partition_scored(scored, feature, threshold);

        // The children's class counts are the parent's sums at the cut.
        let (left_id, right_id) = (self.next_id, self.next_id + 1);
        self.next_id += 2;
        let n = self.rows.len();
        let k = self.n_classes;
        let lanes = self.lanes;
        let parent_sums = &self.sums[slot * self.slot_len()..];
        let right_counts: Vec<u32> = (0..k).map(|c| parent_sums[c * lanes + cut_bit]).collect();
        let left_counts: Vec<u32> = nodes[me]
            .class_counts
            .iter()
            .zip(&right_counts)
            .map(|(t, r)| t - r)
            .collect();
        let mid = lo + left_counts.iter().sum::<u32>() as usize;
        let need_left = self.splittable(mid - lo, depth + 1, &left_counts);
        let need_right = self.splittable(hi - mid, depth + 1, &right_counts);

        // Partition stably (left rows stay in order in place, right rows go
        // through `spill`), unless neither child is split further: a leaf
        // needs only its class counts.
        if need_left || need_right {
            // Node ids are kept only for linfa's last-row rule.
            let col = &self.codes[feature * n..(feature + 1) * n];
            let w = if self.options.scan == ThresholdScan::Linfa {
                let node_id = &mut self.node_id;
                partition_stably(&mut self.idx, &mut self.spill, (lo, hi), |p| col[p], threshold, |p, left| {
                    node_id[p as usize] = if left { left_id } else { right_id };
                })
            } else {
                partition_stably(&mut self.idx, &mut self.spill, (lo, hi), |p| col[p], threshold, |_, _| {})
            };
            assert_eq!(w, mid, "the partition agrees with the cut's counts");
        }

        // Sums for the children that will be scanned: the smaller side is
        // counted, the other is the parent minus it.
        let (ls, rs) = (2 * depth + 1, 2 * depth + 2);
        if need_left || need_right {
            self.ensure_slot(rs);
            let left_smaller = mid - lo <= hi - mid;
            match (need_left, need_right) {
                (true, true) if left_smaller => {
                    self.accumulate(lo, mid, ls, &left_counts);
                    self.subtract(slot, ls, rs);
                }
                (true, true) => {
                    self.accumulate(mid, hi, rs, &right_counts);
                    self.subtract(slot, rs, ls);
                }
                (true, false) if !left_smaller => {
                    self.accumulate(mid, hi, rs, &right_counts);
                    self.subtract(slot, rs, ls);
                }
                (true, false) => self.accumulate(lo, mid, ls, &left_counts),
                (false, true) if left_smaller => {
                    self.accumulate(lo, mid, ls, &left_counts);
                    self.subtract(slot, ls, rs);
                }
                (false, true) => self.accumulate(mid, hi, rs, &right_counts),
                (false, false) => unreachable!(),
            }
        }

        let left = self.grow(nodes, lo, mid, (scored.0, scored_mid), depth + 1, 0, left_id, left_counts);
        let right = self.grow(nodes, mid, hi, (scored_mid, scored.1), depth + 1, 1, right_id, right_counts);
        nodes[me].split = Some(Split {
            feature,
            threshold,
            left,
            right,
        });
        if self.options.prune
            && nodes[left].split.is_none()
            && nodes[right].split.is_none()
            && nodes[left].modal_class() == nodes[right].modal_class()
        {
            // Pre-order keeps a subtree contiguous, so collapsing it is a
            // truncation.
            nodes.truncate(me + 1);
            nodes[me].split = None;
            self.assign_scored(scored, me);
        }
        me
    }

    /// The scored rows `sidx[lo..hi]` end in leaf `node`.
    fn assign_scored(&mut self, (lo, hi): (usize, usize), node: usize) {
        for &q in &self.sidx[lo..hi] {
            self.scored_leaf[q as usize] = node as u32;
        }
    }

    /// Splits the scored rows `sidx[lo..hi]` as their node splits: left
    /// (`code <= threshold`) first. Returns where the right ones start.
    fn partition_scored(&mut self, range: (usize, usize), feature: usize, threshold: u8) -> usize {
        let m = self.scored_rows.len();
        match self.scored_keyed.iter().find(|g| (g.first..g.first + g.width).contains(&feature)) {
            Some(g) => {
                let (keys, table, w, j) = (&g.keys, &g.table, g.width, feature - g.first);
                partition_stably(&mut self.sidx, &mut self.sspill, range, |q| table[keys[q] as usize * w + j], threshold, |_, _| {})
            }
            None => {
                let col = &self.scored_codes[feature * m..(feature + 1) * m];
                partition_stably(&mut self.sidx, &mut self.sspill, range, |q| col[q], threshold, |_, _| {})
            }
        }
    }

    /// linfa's split choice for the node over `idx[lo..hi]` with sums in
    /// `slot`: `(feature, cut bit, threshold)`, or `None` for a leaf.
    fn best_split(
        &mut self,
        lo: usize,
        hi: usize,
        slot: usize,
        id: u32,
        counts: &[u32],
    ) -> Option<(usize, usize, u8)> {
        let n_node = (hi - lo) as u32;
        let min_leaf = self.min_leaf() as u32;
        let k = self.n_classes;
        let lanes = self.lanes;
        let slot_len = self.slot_len();
        let sums = &self.sums[slot * slot_len..(slot + 1) * slot_len];
        let right_of = |bit: usize, class: usize| sums[class * lanes + bit];
        let every_node = self.options.scan == ThresholdScan::EveryNode;

        // Pass 1: exact weighted Gini of every candidate, in scan order. In
        // linfa's scan a cut is a candidate only when the last training row
        // with its code is in the node; that is checked first, so a deep
        // node, which holds the last row of few codes, scores few cuts.
        //
        // Each cut's rows on the right come first, summed over the classes
        // for every bit at once (a loop the compiler vectorises), so a cut
        // that would leave a side under the leaf size is passed over before
        // its class sums of squares are taken (with many classes, as the
        // location tasks' regions, those are most of a node's scan).
        self.right_n.clear();
        self.right_n.resize(lanes, 0);
        for c in 0..k {
            for (n, &r) in self.right_n.iter_mut().zip(&sums[c * lanes..(c + 1) * lanes]) {
                *n += r;
            }
        }
        self.candidates.clear();
        let mut best_exact = f64::INFINITY;
        for (f, cuts) in self.cuts.iter().enumerate() {
            let mut prev_right = n_node;
            for j in 0..cuts.n_cuts() {
                if !every_node && self.node_id[cuts.last_pos[j] as usize] != id {
                    continue;
                }
                let bit = cuts.bit + j;
                let n_right = self.right_n[bit];
                let n_left = n_node - n_right;
                if every_node {
                    let here = prev_right - n_right; // node rows with code values[j]
                    prev_right = n_right;
                    if here == 0 {
                        continue;
                    }
                }
                if n_left < min_leaf || n_right < min_leaf {
                    continue;
                }
                let (mut sq_left, mut sq_right) = (0u64, 0u64);
                for (c, &total) in counts.iter().enumerate() {
                    let r = right_of(bit, c);
                    let (r, l) = (r as u64, (total - r) as u64);
                    sq_left += l * l;
                    sq_right += r * r;
                }
                let score = 1.0
                    - (sq_left as f64 / n_left as f64 + sq_right as f64 / n_right as f64)
                        / n_node as f64;
                best_exact = best_exact.min(score);
                self.candidates.push((f, j, score));
            }
        }
        if self.candidates.is_empty() {
            return None;
        }

        // Pass 2: linfa's f32 score for the near-best, first lowest wins.
        let mut best: Option<(usize, usize, f32)> = None;
        let (left, right) = (&mut self.score_left, &mut self.score_right);
        left.resize(k, 0);
        right.resize(k, 0);
        for &(f, j, exact) in &self.candidates {
            if exact > best_exact + RESCORE_TOLERANCE {
                continue;
            }
            let bit = self.cuts[f].bit + j;
            for c in 0..k {
                right[c] = right_of(bit, c);
                left[c] = counts[c] - right[c];
            }
            let score = linfa_split_score(left, right, n_node);
            if best.is_none_or(|(_, _, b)| score < b) {
                best = Some((f, j, score));
            }
        }
        let (f, j, score) = best?;
        let decrease = linfa_gini(counts, n_node) as f64 - score as f64;
        if decrease < self.settings.min_impurity_decrease.max(f64::EPSILON) {
            return None;
        }

        let values = &self.cuts[f].values;
        let next = if every_node {
            // The next code present in the node.
            let bit = self.cuts[f].bit;
            let n_right_at = |j: usize| -> u32 {
                if j >= values.len() - 1 {
                    0
                } else {
                    (0..k).map(|c| right_of(bit + j, c)).sum()
                }
            };
            (j + 1..values.len())
                .find(|&i| n_right_at(i - 1) > n_right_at(i))
                .map(|i| values[i])
                .expect("a scored cut has a code on its right")
        } else {
            values[j + 1]
        };
        Some((f, self.cuts[f].bit + j, midpoint_floor(values[j], next)))
    }
}

/// Every feature of `x` at `rows` into `dst`, column after column
/// (`rows.len()` codes each): `dst[f · n + i] = x[f][rows[i]]`. The rows
/// are checked against the matrix once, not once per code.
fn gather_columns(x: &FeatureMatrix, rows: &[u32], dst: &mut [u8]) {
    let n = rows.len();
    assert_eq!(dst.len(), n * x.n_features(), "a column of codes per feature");
    let Some(max_row) = rows.iter().copied().max() else { return };
    assert!((max_row as usize) < x.n_rows, "rows within the matrix");
    // Rows in runs of consecutive indices (a fold's games, a rolling
    // fold's earlier pitches) are copied a run at a time.
    let mut runs: Vec<(usize, usize, usize)> = Vec::new();
    for (i, &r) in rows.iter().enumerate() {
        match runs.last_mut() {
            Some((start, at, len)) if *start + *len == r as usize && *at + *len == i => *len += 1,
            _ => runs.push((r as usize, i, 1)),
        }
    }
    if 8 * runs.len() <= n {
        for (f, dst) in dst.chunks_exact_mut(n).enumerate() {
            let col = x.column(f);
            for &(start, at, len) in &runs {
                dst[at..at + len].copy_from_slice(&col[start..start + len]);
            }
        }
        return;
    }
    for (f, dst) in dst.chunks_exact_mut(n).enumerate() {
        let col = x.column(f);
        for (d, &r) in dst.iter_mut().zip(rows) {
            // SAFETY: every row is at most max_row (the largest of `rows`,
            // found above), below the matrix's row count, the length of
            // each of its columns.
            *d = unsafe { *col.get_unchecked(r as usize) };
        }
    }
}

/// Splits `idx[lo..hi]` stably by `code(p) <= threshold` (left first, left
/// rows in place, right rows through `spill`), telling `side` each row's
/// side; returns where the right rows start. Branch-free: the side of a row
/// is as good as random.
fn partition_stably(
    idx: &mut [u32],
    spill: &mut [u32],
    (lo, hi): (usize, usize),
    code: impl Fn(usize) -> u8,
    threshold: u8,
    mut side: impl FnMut(u32, bool),
) -> usize {
    let spill = &mut spill[..hi - lo];
    assert!(hi <= idx.len());
    let (mut w, mut spilled) = (lo, 0);
    for i in lo..hi {
        // SAFETY: lo <= w <= i < hi <= idx.len() and spilled <= i - lo <
        // spill.len(), by counting; i is in range by the loop.
        unsafe {
            let p = *idx.get_unchecked(i);
            let goes_left = (code(p as usize) <= threshold) as usize;
            *idx.get_unchecked_mut(w) = p;
            *spill.get_unchecked_mut(spilled) = p;
            w += goes_left;
            spilled += 1 - goes_left;
            side(p, goes_left == 1);
        }
    }
    idx[w..hi].copy_from_slice(&spill[..spilled]);
    w
}

/// Floor of the midpoint of two codes, the threshold linfa's `f64` midpoint
/// becomes.
fn midpoint_floor(a: u8, b: u8) -> u8 {
    ((a as u16 + b as u16) / 2) as u8
}

/// linfa's `gini_impurity` (the CART Gini index `1 - sum_k p_k^2`), in
/// `f32`, summing in class-index order.
fn linfa_gini(counts: &[u32], n: u32) -> f32 {
    let m = n as f32;
    let mut purity = 0.0f32;
    for &c in counts {
        if c > 0 {
            let q = c as f32 / m;
            purity += q * q;
        }
    }
    1.0 - purity
}

/// linfa's weighted score of a split, bit for bit (two classes) or up to the
/// order of a sum (more).
fn linfa_split_score(left: &[u32], right: &[u32], n: u32) -> f32 {
    let n_right: u32 = right.iter().sum();
    let n_left = n - n_right;
    let w = n_right as f32 / n as f32;
    w * linfa_gini(right, n_right) + (1.0 - w) * linfa_gini(left, n_left)
}

#[cfg(test)]
mod keyed_tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// Rows whose first features are a function of a key (a table of codes
    /// per key), the rest free; labels that depend on both.
    fn data(n: usize, n_keys: usize, rng: &mut ChaCha8Rng) -> (FeatureMatrix, Vec<u32>, Vec<u8>, Vec<u8>) {
        let (keyed, free) = (4, 4);
        let table: Vec<u8> = (0..n_keys * keyed).map(|_| rng.random_range(0..21)).collect();
        let keys: Vec<u32> = (0..n).map(|_| rng.random_range(0..n_keys as u32)).collect();
        let mut x = FeatureMatrix::new(n, (0..keyed + free).map(|f| format!("f{f}")).collect());
        for j in 0..keyed {
            let col: Vec<u8> = keys.iter().map(|&q| table[q as usize * keyed + j]).collect();
            x.column_mut(j).copy_from_slice(&col);
        }
        for f in keyed..keyed + free {
            let top = if f % 2 == 0 { 2 } else { 12 };
            let col: Vec<u8> = (0..n).map(|_| rng.random_range(0..top)).collect();
            x.column_mut(f).copy_from_slice(&col);
        }
        let labels: Vec<u8> = (0..n)
            .map(|r| {
                let lean = (x.column(0)[r] > 10) as u8 + (x.column(5)[r] > 5) as u8;
                if rng.random_bool(0.6) { lean } else { rng.random_range(0..3) }
            })
            .collect();
        (x, keys, table, labels)
    }

    /// Gathering a run of consecutive rows at a time gives every code the
    /// row-by-row gather gives, for row sets of long runs (a rolling
    /// fold's prefix, a fold's games), short runs and single rows.
    #[test]
    fn gathering_runs_gives_each_rows_codes() {
        let mut rng = ChaCha8Rng::seed_from_u64(13);
        let (x, ..) = data(2000, 30, &mut rng);
        let prefix: Vec<u32> = (0..1500).collect();
        let games: Vec<u32> = (0..2000).filter(|r| (r / 90) % 5 != 2).collect();
        let scattered: Vec<u32> = (0..2000).filter(|r| r % 3 == 0).collect();
        for rows in [prefix, games, scattered, vec![7], Vec::new()] {
            let mut got = vec![0u8; rows.len() * x.n_features()];
            gather_columns(&x, &rows, &mut got);
            let x = &x;
            let want: Vec<u8> = (0..x.n_features()).flat_map(|f| rows.iter().map(move |&r| x.column(f)[r as usize])).collect();
            assert_eq!(got, want, "{} rows", rows.len());
        }
    }

    /// A workspace told that some features are a function of a key grows
    /// the same trees as one that is not, whether the key group is counted
    /// per key or only scanned through its keys, and after rewrites of the
    /// keyed features (new tables), in both threshold scans.
    #[test]
    fn keyed_features_grow_the_same_trees() {
        let mut rng = ChaCha8Rng::seed_from_u64(7);
        for scan in [ThresholdScan::Linfa, ThresholdScan::EveryNode] {
            for count_by_key in [true, false] {
                let (mut x, keys, mut table, labels) = data(3000, 24, &mut rng);
                let rows: Vec<u32> = (0..3000).filter(|r| r % 7 != 0).collect();
                let row_keys: Vec<u32> = rows.iter().map(|&r| keys[r as usize]).collect();
                let row_labels: Vec<u8> = rows.iter().map(|&r| labels[r as usize]).collect();
                let options = GrowOptions { scan, prune: false };
                let settings = TreeSettings { max_depth: 6, min_samples_leaf: 5, min_samples_split: 10, min_impurity_decrease: 0.0 };
                let mut plain = FastTreeWorkspace::with_options(settings, options);
                let mut keyed = FastTreeWorkspace::with_options(settings, options);
                plain.prepare(&x, &rows);
                keyed.prepare(&x, &rows);
                let g = keyed.set_training_keys((0..4).collect(), &row_keys, 24, count_by_key);
                keyed.training_table(g).copy_from_slice(&table);
                assert!(keyed.keys_agree());
                assert_eq!(plain.fit(&row_labels, 3), keyed.fit(&row_labels, 3));
                for _ in 0..5 {
                    // New codes for the keyed features, from a new table
                    // with fewer codes (so the present codes change).
                    for t in table.iter_mut() {
                        *t = rng.random_range(0..6) * 3;
                    }
                    for j in 0..4 {
                        let col: Vec<u8> = keys.iter().map(|&q| table[q as usize * 4 + j]).collect();
                        x.column_mut(j).copy_from_slice(&col);
                    }
                    plain.refresh_features(&x, &[0, 1, 2, 3]);
                    keyed.training_table(g).copy_from_slice(&table);
                    keyed.refresh_features(&x, &[0, 1, 2, 3]);
                    assert!(keyed.keys_agree());
                    assert_eq!(plain.fit(&row_labels, 3), keyed.fit(&row_labels, 3));
                }
                // Keyed rewrites that write only the columns with a cut: a
                // feature with one code on every row (each round another,
                // its column left stale) grows the same trees; so does a
                // wide feature falling to one code and back.
                for round in 0..8 {
                    for (i, t) in table.iter_mut().enumerate() {
                        let j = i % 4;
                        *t = if j == round % 4 || (j + round) % 3 == 0 && round > 4 { 9 } else { rng.random_range(0..6) * 3 + (round % 2) as u8 };
                    }
                    for j in 0..4 {
                        let col: Vec<u8> = keys.iter().map(|&q| table[q as usize * 4 + j]).collect();
                        x.column_mut(j).copy_from_slice(&col);
                    }
                    plain.refresh_features(&x, &[0, 1, 2, 3]);
                    keyed.training_table(g).copy_from_slice(&table);
                    let mut written = [false; 4];
                    keyed.rewrite_keyed_features(0..4, |rows, dst, need| {
                        for (j, col) in dst.chunks_exact_mut(rows.len()).enumerate() {
                            if need[j] {
                                written[j] = true;
                                for (d, &r) in col.iter_mut().zip(rows) {
                                    *d = table[keys[r as usize] as usize * 4 + j];
                                }
                            }
                        }
                    });
                    assert!(!written[round % 4], "round {round}: a one-code feature is not asked for");
                    assert!(keyed.keys_agree() && keyed.matches(&x));
                    assert_eq!(plain.fit(&row_labels, 3), keyed.fit(&row_labels, 3), "round {round}");
                }
            }
        }
    }
}
