//! The reference learner: linfa-trees' `DecisionTree` (Gini), converted into
//! our [`Tree`].
//!
//! It exists to check `tellscope::model::fast_tree` against an outside implementation;
//! the audit itself uses the fast learner, because linfa breaks some ties by
//! hash-map order and so is not reproducible run to run (see "Ties" below).
//!
//! # How linfa-trees 0.8.1 grows a tree (read from its `algorithm.rs`)
//!
//! * **Sorting.** Each feature column of the whole training set is sorted once,
//!   ascending, by a stable sort, so rows with equal codes keep their order in
//!   `rows`. These global orders are reused at every node.
//! * **Stopping.** A node becomes a leaf when it has fewer rows than
//!   `min_weight_split`, or when its depth (root 0) is `>= max_depth`.
//! * **Scan.** For each feature in index order, linfa walks the *global*
//!   sorted order, skipping rows outside the node, moving each node row from
//!   the right side to the left. A split is scored after a row only if the
//!   *next row of the global order* (which may lie outside the node) has a
//!   different value. So the threshold "code <= v" is scored in a node only
//!   when the last training row with code `v` (last in `rows` order) is in
//!   that node. A threshold that would be valid in the node is therefore
//!   missed when that row went elsewhere; for a 0/1 feature this means only
//!   one node per depth can split on it, and the tree depends on the order
//!   of `rows`. This is how linfa 0.8.1 behaves, and
//!   the fast learner copies it so the two trees stay equal. The largest code
//!   of a feature is never a threshold, and a feature with one value (in the
//!   whole training set) yields no candidate at all.
//! * **Leaf size.** A candidate with fewer than `min_weight_leaf` rows on
//!   either side is skipped.
//! * **Score.** Weighted Gini, in `f32`:
//!   `w = n_right / n; score = w * gini(right) + (1 - w) * gini(left)`, with
//!   `gini = 1 - sum_k (c_k / m)^2` summed over a `HashMap` of class counts.
//! * **Choice and ties.** The best candidate is replaced only when a later one
//!   scores strictly lower (`score < best`), so among candidates with equal
//!   `f32` scores the first in scan order wins: lowest feature index, then
//!   lowest threshold. Splits of equal exact Gini can still round to
//!   different `f32` scores (a mirrored 0/1 column gives the same partition
//!   with the sides swapped, and `w` and `1 - w` round differently); then the
//!   lower rounding wins, whatever its place in the scan. The sums inside `gini` run in `HashMap` order, which
//!   is random per map; with three or more classes present the rounding, and
//!   so the winner among exactly or nearly tied candidates, can change from
//!   run to run. With two classes the sums are order-free and linfa is
//!   deterministic.
//! * **min_impurity_decrease.** After the scan, `decrease = gini(node) - best`
//!   (both `f32`, subtracted in `f64`); the node becomes a leaf if
//!   `decrease < min_impurity_decrease`. The decrease is *not* scaled by the
//!   node's share of the training rows (scikit-learn scales it), and linfa
//!   refuses values below `f64::EPSILON`, so a split that lowers nothing is
//!   never made.
//! * **Pruning.** After growing, any split whose two children are leaves with
//!   the same predicted (modal) class is collapsed into a leaf, bottom up.
//!   The modal class of a tie is the last maximal class in `HashMap` order,
//!   random again; so with a tie for the mode a collapse may or may not happen.
//!
//! # Mapping of [`TreeSettings`]
//!
//! | ours | linfa |
//! |---|---|
//! | `max_depth` | `max_depth(Some(max_depth))`, same meaning (root depth 0) |
//! | `min_samples_leaf` | `min_weight_leaf`, same meaning with unit weights; 0 is taken as 1, since linfa would score an empty side and panic |
//! | `min_samples_split` | `min_weight_split`, same meaning |
//! | `min_impurity_decrease` | `min_impurity_decrease(max(v, f64::EPSILON))`; linfa's unscaled rule above, not scikit-learn's scaled one |
//!
//! # Conversion
//!
//! linfa splits on an `f64` value halfway between the split code `v` and the
//! next code present in the training rows, sending `value <= split` left. Our
//! threshold is the floor of that midpoint, so every training row goes the
//! same way, and a code unseen in training is sent to the nearer side (an
//! exact middle goes left, as linfa's fitting rule does). Nodes are numbered
//! in pre-order (a node, then its left subtree, then its right subtree); the
//! class counts of every node are counted afresh from the training rows.

use linfa::prelude::*;
use linfa_trees::{DecisionTree, SplitQuality};
use ndarray::{Array1, Array2};

use tellscope::model::{FeatureMatrix, Learner, Node, Split, Tree, TreeSettings};

/// linfa-trees' Gini decision tree behind our [`Learner`] trait.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReferenceTree(pub TreeSettings);

type LinfaNode = linfa_trees::TreeNode<f64, usize>;

impl Learner for ReferenceTree {
    fn fit(&self, x: &FeatureMatrix, rows: &[u32], labels: &[u8], n_classes: usize) -> Tree {
        assert_eq!(rows.len(), labels.len(), "one label per training row");
        let s = self.0;
        let n = rows.len();
        let n_features = x.n_features();
        let mut tree = Tree {
            nodes: Vec::new(),
            n_classes,
        };
        if n == 0 || n_features == 0 {
            // linfa panics on an empty training set (and has nothing to split
            // without features): the tree is the root leaf.
            tree.nodes.push(Node {
                class_counts: vec![0; n_classes],
                split: None,
            });
            fill_class_counts(&mut tree, x, rows, labels);
            return tree;
        }

        let records =
            Array2::from_shape_fn((n, n_features), |(i, f)| x.get(rows[i] as usize, f) as f64);
        let targets = Array1::from_iter(labels.iter().map(|&l| {
            assert!((l as usize) < n_classes, "label {l} outside 0..{n_classes}");
            l as usize
        }));
        let dataset = Dataset::new(records, targets);
        let fitted = DecisionTree::params()
            .split_quality(SplitQuality::Gini)
            .max_depth(Some(s.max_depth))
            .min_weight_leaf(s.min_samples_leaf.max(1) as f32)
            .min_weight_split(s.min_samples_split as f32)
            .min_impurity_decrease(s.min_impurity_decrease.max(f64::EPSILON))
            .fit(&dataset)
            .expect("linfa accepts these parameters");

        convert(fitted.root_node(), &mut tree.nodes, n_classes);
        fill_class_counts(&mut tree, x, rows, labels);
        tree
    }
}

/// Appends `node` and its subtree in pre-order; returns the node's index.
fn convert(node: &LinfaNode, out: &mut Vec<Node>, n_classes: usize) -> usize {
    let me = out.len();
    out.push(Node {
        class_counts: vec![0; n_classes],
        split: None,
    });
    if node.is_leaf() {
        return me;
    }
    let (feature, split_value, _) = node.split();
    let children = node.children();
    let (Some(l), Some(r)) = (children[0].as_deref(), children[1].as_deref()) else {
        // linfa marks a node with a missing child as a leaf, so this is
        // unreachable; keep the node a leaf if it ever happens.
        return me;
    };
    let left = convert(l, out, n_classes);
    let right = convert(r, out, n_classes);
    // The midpoint lies in [0.5, 254.5] for u8 codes.
    let threshold = split_value.floor() as u8;
    out[me].split = Some(Split {
        feature,
        threshold,
        left,
        right,
    });
    me
}

/// Sets every node's class counts from the training rows that reach it.
fn fill_class_counts(tree: &mut Tree, x: &FeatureMatrix, rows: &[u32], labels: &[u8]) {
    for node in &mut tree.nodes {
        node.class_counts.iter_mut().for_each(|c| *c = 0);
    }
    for (&r, &l) in rows.iter().zip(labels) {
        let mut i = 0;
        loop {
            tree.nodes[i].class_counts[l as usize] += 1;
            match tree.nodes[i].split {
                Some(s) => {
                    i = if x.get(r as usize, s.feature) <= s.threshold {
                        s.left
                    } else {
                        s.right
                    }
                }
                None => break,
            }
        }
    }
}
