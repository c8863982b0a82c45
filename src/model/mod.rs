//! Per-pitcher classifiers behind one trait.
//!
//! Every feature is a small ordinal code (`u8`): a one-hot situation level is
//! 0/1, balls and strikes are 0..=3 and 0..=2, a shrunk prior probability is
//! binned on a fixed grid. A split sends `code <= threshold` left. Both
//! learners grow the same [`Tree`], so they can be compared node by node.

pub mod fast_tree;
pub mod prune;

pub mod rules;

use serde::Serialize;

/// Settings of a classification tree, validated once (see `settings`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TreeSettings {
    /// Maximum depth; the root is depth 0.
    pub max_depth: usize,
    /// A leaf holds at least this many training rows (0 counts as 1).
    pub min_samples_leaf: usize,
    /// A node with fewer rows is not split.
    pub min_samples_split: usize,
    /// A split must lower the node's Gini impurity (the node's impurity
    /// minus the row-weighted impurity of its two children) by at least this
    /// much. As in linfa-trees, the decrease is *not* scaled by the node's
    /// share of all training rows (scikit-learn scales it), and values below
    /// `f64::EPSILON` count as `f64::EPSILON`, so a split that lowers nothing
    /// is never made. See `tests/common/reference_tree.rs` for the full rule set.
    pub min_impurity_decrease: f64,
}

impl Default for TreeSettings {
    fn default() -> Self {
        use crate::domain::defaults::{MAX_DEPTH, MIN_IMPURITY_DECREASE, MIN_SAMPLES_LEAF, MIN_SAMPLES_SPLIT};
        TreeSettings {
            max_depth: MAX_DEPTH,
            min_samples_leaf: MIN_SAMPLES_LEAF,
            min_samples_split: MIN_SAMPLES_SPLIT,
            min_impurity_decrease: MIN_IMPURITY_DECREASE,
        }
    }
}

/// A feature matrix of small ordinal codes, stored feature-major:
/// `codes[f * n_rows + r]` is feature `f` of row `r`.
#[derive(Debug, Clone, PartialEq)]
pub struct FeatureMatrix {
    pub n_rows: usize,
    pub names: Vec<String>,
    pub codes: Vec<u8>,
}

impl FeatureMatrix {
    pub fn new(n_rows: usize, names: Vec<String>) -> Self {
        let codes = vec![0; n_rows * names.len()];
        FeatureMatrix { n_rows, names, codes }
    }

    pub fn n_features(&self) -> usize {
        self.names.len()
    }

    #[inline]
    pub fn get(&self, row: usize, feature: usize) -> u8 {
        self.codes[feature * self.n_rows + row]
    }

    #[inline]
    pub fn set(&mut self, row: usize, feature: usize, code: u8) {
        self.codes[feature * self.n_rows + row] = code;
    }

    /// The codes of one feature, one per row.
    pub fn column(&self, feature: usize) -> &[u8] {
        &self.codes[feature * self.n_rows..(feature + 1) * self.n_rows]
    }

    pub fn column_mut(&mut self, feature: usize) -> &mut [u8] {
        let n = self.n_rows;
        &mut self.codes[feature * n..(feature + 1) * n]
    }
}

/// One node of a fitted tree.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Node {
    /// Training rows reaching the node, per class.
    pub class_counts: Vec<u32>,
    /// `None` for a leaf.
    pub split: Option<Split>,
}

impl Node {
    /// The most frequent class of the node's training rows; a tie goes to
    /// the lowest class index (the rule both learners prune by, and
    /// scikit-learn's `argmax`).
    pub fn modal_class(&self) -> usize {
        let c = &self.class_counts;
        (0..c.len()).fold(0, |best, k| if c[k] > c[best] { k } else { best })
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct Split {
    pub feature: usize,
    /// Rows with `code <= threshold` go to `left`.
    pub threshold: u8,
    pub left: usize,
    pub right: usize,
}

/// A fitted classification tree; node 0 is the root, and both learners
/// number the nodes in pre-order (a node, its left subtree, its right
/// subtree).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Tree {
    pub nodes: Vec<Node>,
    pub n_classes: usize,
}

impl Tree {
    /// Index of the leaf a row of `x` falls in.
    pub fn leaf_of(&self, x: &FeatureMatrix, row: usize) -> usize {
        let mut i = 0;
        while let Some(s) = self.nodes[i].split {
            i = if x.get(row, s.feature) <= s.threshold { s.left } else { s.right };
        }
        i
    }

    pub fn flat(&self) -> FlatTree {
        FlatTree::new(self)
    }

    pub fn n_leaves(&self) -> usize {
        self.nodes.iter().filter(|n| n.split.is_none()).count()
    }
}

/// A tree laid out for assigning many rows at once: every node is
/// (feature, threshold, left, right) and a leaf points to itself, so a row
/// reaches its leaf after exactly `depth` branch-free steps, and several rows
/// can walk side by side (their memory latencies overlap).
#[derive(Debug, Clone, Default)]
pub struct FlatTree {
    feature: Vec<u32>,
    threshold: Vec<u8>,
    next: Vec<[u32; 2]>,
    depth: usize,
}

impl FlatTree {
    pub fn new(tree: &Tree) -> FlatTree {
        let mut f = FlatTree::default();
        f.rebuild(tree);
        f
    }

    /// Lay out `tree`, reusing this value's buffers.
    pub fn rebuild(&mut self, tree: &Tree) {
        let n = tree.nodes.len();
        let f = self;
        f.feature.clear();
        f.feature.resize(n, 0);
        f.threshold.clear();
        f.threshold.resize(n, u8::MAX);
        f.next.clear();
        f.next.resize(n, [0, 0]);
        let mut depth = vec![0usize; n];
        for (i, node) in tree.nodes.iter().enumerate() {
            match node.split {
                Some(s) => {
                    f.feature[i] = s.feature as u32;
                    f.threshold[i] = s.threshold;
                    f.next[i] = [s.left as u32, s.right as u32];
                    depth[s.left] = depth[i] + 1;
                    depth[s.right] = depth[i] + 1;
                }
                // code <= 255 always holds: a leaf steps to itself.
                None => f.next[i] = [i as u32, i as u32],
            }
        }
        f.depth = depth.into_iter().max().unwrap_or(0);
    }

    /// The leaf of every row of `rows`, in order, into `out`.
    pub fn leaves(&self, x: &FeatureMatrix, rows: &[u32], out: &mut Vec<u32>) {
        const LANES: usize = 8;
        out.clear();
        let n = x.n_rows;
        for chunk in rows.chunks(LANES) {
            let mut at = [0u32; LANES];
            for _ in 0..self.depth {
                for (lane, &r) in chunk.iter().enumerate() {
                    let i = at[lane] as usize;
                    let code = x.codes[self.feature[i] as usize * n + r as usize];
                    at[lane] = self.next[i][(code > self.threshold[i]) as usize];
                }
            }
            out.extend_from_slice(&at[..chunk.len()]);
        }
    }
}

/// A learner grows a [`Tree`] on the training rows `rows` of `x` with labels
/// `labels[i]` for `rows[i]` (class indices below `n_classes`).
pub trait Learner {
    fn fit(&self, x: &FeatureMatrix, rows: &[u32], labels: &[u8], n_classes: usize) -> Tree;
}

/// The learner the audit fits: the fast tree with every threshold between
/// the codes present in a node scored (textbook CART, as scikit-learn does)
/// and no collapsing of splits whose leaves share a modal class. linfa's
/// collapsing suits a label-only classifier; here the leaves' class shares
/// are the forecast, and a split that moves a fastball from 59% to 85%
/// matters to a hitter even when the fastball stays the likeliest pitch.
/// With `GrowOptions::default()` the same code reproduces linfa-trees
/// exactly (tests/tree_reference.rs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AuditTree(pub TreeSettings);

impl AuditTree {
    pub fn options() -> fast_tree::GrowOptions {
        fast_tree::GrowOptions { scan: fast_tree::ThresholdScan::EveryNode, prune: false }
    }
}

impl Learner for AuditTree {
    fn fit(&self, x: &FeatureMatrix, rows: &[u32], labels: &[u8], n_classes: usize) -> Tree {
        let mut ws = fast_tree::FastTreeWorkspace::with_options(self.0, AuditTree::options());
        ws.prepare(x, rows);
        ws.fit(labels, n_classes)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};

    // The flat layout must send every row to the leaf the plain walk finds.
    #[test]
    fn flat_tree_agrees_with_leaf_of() {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(11);
        for case in 0..50 {
            let n = 200 + case * 7;
            let mut x = FeatureMatrix::new(n, (0..6).map(|f| format!("f{f}")).collect());
            for c in x.codes.iter_mut() {
                *c = rng.random_range(0..5);
            }
            let labels: Vec<u8> = (0..n).map(|_| rng.random_range(0..3)).collect();
            let rows: Vec<u32> = (0..n as u32).collect();
            let settings = TreeSettings { max_depth: 1 + case % 6, min_samples_leaf: 5, min_samples_split: 10, min_impurity_decrease: 0.0 };
            let tree = AuditTree(settings).fit(&x, &rows, &labels, 3);
            let mut out = Vec::new();
            tree.flat().leaves(&x, &rows, &mut out);
            for (&r, &leaf) in rows.iter().zip(&out) {
                assert_eq!(leaf as usize, tree.leaf_of(&x, r as usize));
            }
        }
    }
}
