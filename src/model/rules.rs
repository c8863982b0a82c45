//! The leaves of a fitted [`Tree`] as rules: the conditions on the way from
//! the root, merged into one code range per feature, with the leaf's class
//! counts, ranked most telling first. Turning them into sentences, with
//! feature and pitch names, is the report's job.
//!
//! # Ranking
//!
//! A leaf tells on a pitch when that pitch's share in the leaf is above its
//! share at the root (the pitcher's overall mix). Its *tell class* is the
//! class with the largest excess `leaf share - root share` (lowest class index
//! on a tie) and its *excess* is that difference. Rules are sorted by
//! `support * excess`, the number of training pitches of the tell class in the
//! leaf beyond what the overall mix predicts, largest first, then by leaf
//! index. The key is compared exactly as the integer
//! `count * n_root - support * root_count` (`n_root` times it), so the order
//! has no rounding.

use serde::Serialize;

use super::Tree;

/// One step from a node to its child.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct PathStep {
    pub feature: usize,
    pub threshold: u8,
    /// `code <= threshold` when true, `code > threshold` when false.
    pub went_left: bool,
}

/// All the steps on one feature merged: `above < code <= at_most`, a missing
/// bound being open.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct CodeRange {
    pub feature: usize,
    /// The code is greater than this.
    pub above: Option<u8>,
    /// The code is at most this.
    pub at_most: Option<u8>,
}

impl CodeRange {
    pub fn contains(&self, code: u8) -> bool {
        self.above.is_none_or(|a| code > a) && self.at_most.is_none_or(|b| code <= b)
    }
}

/// One leaf as a rule.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LeafRule {
    /// Index of the leaf in [`Tree::nodes`].
    pub leaf: usize,
    /// The splits from the root down, in order.
    pub path: Vec<PathStep>,
    /// One range per feature on the path, in order of first use.
    pub conditions: Vec<CodeRange>,
    pub class_counts: Vec<u32>,
    /// Training rows in the leaf.
    pub support: u32,
    /// Most frequent class in the leaf (lowest index on a tie) and its share.
    pub top_class: usize,
    pub top_share: f64,
    /// Class whose share most exceeds its root share, and by how much.
    pub tell_class: usize,
    pub tell_excess: f64,
}

/// Every leaf of `tree` as a rule, most telling first (see the module doc).
pub fn leaf_rules(tree: &Tree) -> Vec<LeafRule> {
    let Some(root) = tree.nodes.first() else {
        return Vec::new();
    };
    let root_counts = &root.class_counts;
    let n_root: u64 = root_counts.iter().map(|&c| c as u64).sum();

    let mut out: Vec<(i128, LeafRule)> = Vec::new();
    let mut stack: Vec<(usize, Vec<PathStep>)> = vec![(0, Vec::new())];
    while let Some((i, path)) = stack.pop() {
        let node = &tree.nodes[i];
        if let Some(s) = node.split {
            let step = |went_left| PathStep {
                feature: s.feature,
                threshold: s.threshold,
                went_left,
            };
            let mut right_path = path.clone();
            right_path.push(step(false));
            let mut left_path = path;
            left_path.push(step(true));
            stack.push((s.right, right_path));
            stack.push((s.left, left_path));
            continue;
        }
        let counts = node.class_counts.clone();
        let support: u32 = counts.iter().sum();
        let top_class = node.modal_class();
        // Excess of class c, times support * n_root: c_leaf * n_root - support * c_root.
        let excess_key = |c: usize| -> i128 {
            counts[c] as i128 * n_root as i128 - support as i128 * root_counts[c] as i128
        };
        let tell_class =
            (0..counts.len()).fold(0, |b, c| if excess_key(c) > excess_key(b) { c } else { b });
        let share =
            |c: usize, of: &[u32], n: u64| if n == 0 { 0.0 } else { of[c] as f64 / n as f64 };
        let rule = LeafRule {
            leaf: i,
            conditions: merge(&path),
            path,
            top_share: share(top_class, &counts, support as u64),
            tell_excess: if counts.is_empty() {
                0.0
            } else {
                share(tell_class, &counts, support as u64) - share(tell_class, root_counts, n_root)
            },
            class_counts: counts.clone(),
            support,
            top_class,
            tell_class,
        };
        let key = if counts.is_empty() {
            0
        } else {
            excess_key(tell_class)
        };
        out.push((key, rule));
    }
    out.sort_by(|(ka, a), (kb, b)| kb.cmp(ka).then(a.leaf.cmp(&b.leaf)));
    out.into_iter().map(|(_, r)| r).collect()
}

/// Merges the steps of a path into one range per feature.
fn merge(path: &[PathStep]) -> Vec<CodeRange> {
    let mut ranges: Vec<CodeRange> = Vec::new();
    for step in path {
        let pos = match ranges.iter().position(|r| r.feature == step.feature) {
            Some(p) => p,
            None => {
                ranges.push(CodeRange {
                    feature: step.feature,
                    above: None,
                    at_most: None,
                });
                ranges.len() - 1
            }
        };
        let r = &mut ranges[pos];
        if step.went_left {
            r.at_most = Some(r.at_most.map_or(step.threshold, |b| b.min(step.threshold)));
        } else {
            r.above = Some(r.above.map_or(step.threshold, |a| a.max(step.threshold)));
        }
    }
    ranges
}
