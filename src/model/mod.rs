//! Per-pitcher classifiers behind one trait.
//!
//! Every feature is a small ordinal code (`u8`): a one-hot situation level is
//! 0/1, balls and strikes are 0..=3 and 0..=2, a shrunk prior probability is
//! binned on a fixed grid. A split sends `code <= threshold` left. Both
//! learners grow the same [`Tree`], so they can be compared node by node.

pub mod fast_tree;
pub mod prune;
pub mod reference_tree;
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
    /// is never made. See `reference_tree` for the full rule set.
    pub min_impurity_decrease: f64,
}

impl Default for TreeSettings {
    fn default() -> Self {
        TreeSettings {
            max_depth: 6,
            min_samples_leaf: 20,
            min_samples_split: 40,
            min_impurity_decrease: 0.0,
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

    pub fn n_leaves(&self) -> usize {
        self.nodes.iter().filter(|n| n.split.is_none()).count()
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
