//! Significance pruning: a split is kept only when its two children's pitch
//! mixes differ by more than chance, judged by a G-test on the 2 × K table
//! of their class counts with a Bonferroni correction for the number of
//! candidate splits the learner chose among (the stopping rule of CHAID,
//! Kass 1980, "An exploratory technique for investigating large quantities
//! of categorical data", Applied Statistics 29). Pruning runs bottom-up, so
//! a split is judged once its own children are leaves. A pitcher whose
//! choices do not depend on the situation is left with the root alone, and
//! his model is then exactly his usage prior.

use super::{FeatureMatrix, Node, Tree};
use crate::significance::contingency::{table_test, TableStatistic};

/// Candidate splits among some features of a matrix on some rows: for each
/// feature, one fewer than its number of distinct codes on those rows.
pub fn candidate_splits(x: &FeatureMatrix, features: &[usize], rows: &[u32]) -> usize {
    let mut total = 0;
    for &f in features {
        let col = x.column(f);
        let mut seen = [0u8; 256];
        for &r in rows {
            seen[col[r as usize] as usize] = 1;
        }
        let distinct: usize = seen.iter().map(|&b| b as usize).sum();
        total += distinct.saturating_sub(1);
    }
    total
}

/// The Bonferroni-adjusted p-value of a split's two children.
pub fn split_p_value(left: &Node, right: &Node, candidates: usize) -> f64 {
    let table = [
        left.class_counts.iter().map(|&c| c as u64).collect::<Vec<_>>(),
        right.class_counts.iter().map(|&c| c as u64).collect::<Vec<_>>(),
    ];
    let p = table_test(&table, TableStatistic::LogLikelihoodRatio, false).map(|t| t.p_value).unwrap_or(1.0);
    (p * candidates as f64).min(1.0)
}

/// The G statistic (2 Σ O ln(O/E)) of a split's 2 × K table and its
/// degrees of freedom (classes present − 1).
pub fn split_g(left: &Node, right: &Node) -> (f64, usize) {
    let nl: u64 = left.class_counts.iter().map(|&c| c as u64).sum();
    let nr: u64 = right.class_counts.iter().map(|&c| c as u64).sum();
    let n = (nl + nr) as f64;
    if nl == 0 || nr == 0 {
        return (0.0, 0);
    }
    let mut g = 0.0;
    let mut cols = 0usize;
    for (&l, &r) in left.class_counts.iter().zip(&right.class_counts) {
        let c = (l + r) as f64;
        if c == 0.0 {
            continue;
        }
        cols += 1;
        for (o, row) in [(l as f64, nl as f64), (r as f64, nr as f64)] {
            if o > 0.0 {
                g += o * (o * n / (row * c)).ln();
            }
        }
    }
    (2.0 * g, cols.saturating_sub(1))
}

/// Critical values of the G-test, χ²(dof) upper quantiles at α/m, cached by
/// (dof, m): comparing G with them decides a split exactly as comparing the
/// Bonferroni-adjusted p-value with α does, without a gamma function per node.
#[derive(Debug, Default, Clone)]
pub struct Criticals {
    alpha: f64,
    cache: std::collections::BTreeMap<(usize, usize), f64>,
}

impl Criticals {
    pub fn new(alpha: f64) -> Self {
        Criticals { alpha, cache: Default::default() }
    }

    pub fn alpha(&self) -> f64 {
        self.alpha
    }

    pub fn get(&mut self, dof: usize, candidates: usize) -> f64 {
        use statrs::distribution::{ChiSquared, ContinuousCDF};
        let alpha = self.alpha;
        *self.cache.entry((dof, candidates)).or_insert_with(|| {
            let tail = (alpha / candidates as f64).min(1.0);
            if dof == 0 || tail >= 1.0 {
                return if dof == 0 { f64::INFINITY } else { 0.0 };
            }
            ChiSquared::new(dof as f64).map(|d| d.inverse_cdf(1.0 - tail)).unwrap_or(f64::INFINITY)
        })
    }
}

/// [`prune_with_map`] deciding each split by its G statistic against the
/// cached critical value (the fast path used by every refit).
pub fn prune_fast(tree: &Tree, crit: &mut Criticals, candidates: usize) -> (Tree, Vec<usize>) {
    let mut nodes = tree.nodes.clone();
    fn visit(nodes: &mut Vec<Node>, i: usize, crit: &mut Criticals, m: usize) {
        if let Some(s) = nodes[i].split {
            visit(nodes, s.left, crit, m);
            visit(nodes, s.right, crit, m);
            let (l, r) = (&nodes[s.left], &nodes[s.right]);
            if l.split.is_none() && r.split.is_none() {
                let (g, dof) = split_g(l, r);
                if !(g >= crit.get(dof, m)) {
                    nodes[i].split = None;
                }
            }
        }
    }
    if !nodes.is_empty() {
        visit(&mut nodes, 0, crit, candidates);
    }
    let mut map = vec![0usize; tree.nodes.len()];
    let t = compact(&tree.nodes, &nodes, tree.n_classes, &mut map);
    (t, map)
}

/// The pruning of [`prune_fast`] without building the pruned tree: for every
/// node of the grown tree, the grown-tree index of the node that holds it
/// after pruning (itself when it survives). A kept node's class counts and
/// ancestors are those of the grown tree, so its smoothed probabilities can
/// be read straight off the grown tree. `collapsed` is scratch space.
pub fn kept_nodes(tree: &Tree, crit: &mut Criticals, candidates: usize, collapsed: &mut Vec<bool>, map: &mut Vec<usize>) {
    let n = tree.nodes.len();
    collapsed.clear();
    collapsed.resize(n, false);
    map.clear();
    map.resize(n, 0);
    // A node "ends" when it is a leaf or its split is collapsed; children
    // come after their parent in pre-order, so a reverse sweep is bottom-up.
    for i in (0..n).rev() {
        if let Some(s) = tree.nodes[i].split {
            let ends = |j: usize| tree.nodes[j].split.is_none() || collapsed[j];
            if ends(s.left) && ends(s.right) {
                let (g, dof) = split_g(&tree.nodes[s.left], &tree.nodes[s.right]);
                collapsed[i] = !(g >= crit.get(dof, candidates));
            }
        }
    }
    // Top-down: a node inside a collapsed subtree belongs to its root.
    fn assign(tree: &Tree, collapsed: &[bool], i: usize, to: usize, map: &mut [usize]) {
        map[i] = to;
        if let Some(s) = tree.nodes[i].split {
            let next = |j: usize| if collapsed[i] || to != i { to } else { j };
            assign(tree, collapsed, s.left, next(s.left), map);
            assign(tree, collapsed, s.right, next(s.right), map);
        }
    }
    if n > 0 {
        assign(tree, collapsed, 0, 0, map);
    }
}

/// Collapse every split whose adjusted p-value is above `alpha`, bottom-up,
/// and renumber the surviving nodes in pre-order.
pub fn prune(tree: &Tree, alpha: f64, candidates: usize) -> Tree {
    prune_with_map(tree, alpha, candidates).0
}

/// [`prune`], also returning for every node of the grown tree the node of
/// the pruned tree that contains it (so a row's pruned leaf follows from its
/// grown leaf without walking the tree again).
pub fn prune_with_map(tree: &Tree, alpha: f64, candidates: usize) -> (Tree, Vec<usize>) {
    prune_fast(tree, &mut Criticals::new(alpha), candidates)
}

/// Keep only nodes reachable from the root, in pre-order; `map` gets, for
/// every original node, the kept node that contains it.
fn compact(original: &[Node], nodes: &[Node], n_classes: usize, map: &mut [usize]) -> Tree {
    let mut out: Vec<Node> = Vec::new();
    fn mark(original: &[Node], i: usize, to: usize, map: &mut [usize]) {
        map[i] = to;
        if let Some(s) = original[i].split {
            mark(original, s.left, to, map);
            mark(original, s.right, to, map);
        }
    }
    fn copy(original: &[Node], nodes: &[Node], i: usize, out: &mut Vec<Node>, map: &mut [usize]) -> usize {
        let me = out.len();
        out.push(Node { class_counts: nodes[i].class_counts.clone(), split: None });
        map[i] = me;
        match nodes[i].split {
            Some(s) => {
                let left = copy(original, nodes, s.left, out, map);
                let right = copy(original, nodes, s.right, out, map);
                out[me].split = Some(super::Split { left, right, ..s });
            }
            None => {
                if let Some(s) = original[i].split {
                    mark(original, s.left, me, map);
                    mark(original, s.right, me, map);
                }
            }
        }
        me
    }
    if !nodes.is_empty() {
        copy(original, nodes, 0, &mut out, map);
    }
    Tree { nodes: out, n_classes }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Split;

    fn leaf(c: Vec<u32>) -> Node {
        Node { class_counts: c, split: None }
    }

    /// A root split into two leaves with these class counts.
    fn stump(l: Vec<u32>, r: Vec<u32>) -> Tree {
        let root: Vec<u32> = l.iter().zip(&r).map(|(a, b)| a + b).collect();
        let n_classes = root.len();
        Tree {
            nodes: vec![
                Node { class_counts: root, split: Some(Split { feature: 0, threshold: 0, left: 1, right: 2 }) },
                leaf(l),
                leaf(r),
            ],
            n_classes,
        }
    }

    #[test]
    fn a_clear_split_survives_and_a_noise_split_goes() {
        // Root 200 = left 100 (90/10) + right 100 (10/90): G is huge.
        let strong = stump(vec![90, 10], vec![10, 90]);
        assert_eq!(prune(&strong, 0.05, 50).nodes.len(), 3);
        // 52/48 vs 48/52: G ≈ 0.32, p ≈ 0.57 before any correction.
        let weak = stump(vec![52, 48], vec![48, 52]);
        let p = prune(&weak, 0.05, 1);
        assert_eq!(p.nodes.len(), 1);
        assert_eq!(p.nodes[0].class_counts, vec![100, 100]);
    }

    #[test]
    fn bonferroni_counts_the_candidates() {
        // 60/40 vs 40/60 on 100 + 100: G-test p ≈ 0.0045 (scipy
        // chi2_contingency(lambda_="log-likelihood", correction=False) on
        // [[60,40],[40,60]] gives G = 8.05, p = 0.00455; from memory).
        let t = stump(vec![60, 40], vec![40, 60]);
        assert_eq!(prune(&t, 0.05, 5).nodes.len(), 3);
        assert_eq!(prune(&t, 0.05, 20).nodes.len(), 1);
    }

    // Comparing G with a cached χ² quantile decides every split as comparing
    // the Bonferroni-adjusted p-value of significance::contingency (checked
    // against scipy's chi2_contingency) with α does.
    #[test]
    fn critical_values_decide_as_p_values_do() {
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(4);
        let mut crit = Criticals::new(0.05);
        for _ in 0..300 {
            let k = rng.random_range(2..5);
            let mk = |rng: &mut rand_chacha::ChaCha8Rng| (0..k).map(|_| rng.random_range(0..60)).collect::<Vec<u32>>();
            let t = stump(mk(&mut rng), mk(&mut rng));
            let m = rng.random_range(1..40);
            let by_p = split_p_value(&t.nodes[1], &t.nodes[2], m) <= 0.05;
            let (g, dof) = split_g(&t.nodes[1], &t.nodes[2]);
            assert_eq!(by_p, g >= crit.get(dof, m), "G = {g}, dof = {dof}, m = {m}");
            assert_eq!(prune(&t, 0.05, m).nodes.len() == 3, by_p);
        }
    }

    // The kept-node map agrees with the pruned tree: every grown node's kept
    // node has the class counts of the pruned node the grown node maps to.
    #[test]
    fn kept_nodes_agree_with_the_pruned_tree() {
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(9);
        let mut crit = Criticals::new(0.05);
        let (mut collapsed, mut map) = (Vec::new(), Vec::new());
        for case in 0..100 {
            let n = 300 + case * 5;
            let mut x = crate::model::FeatureMatrix::new(n, (0..5).map(|f| format!("f{f}")).collect());
            for c in x.codes.iter_mut() {
                *c = rng.random_range(0..4);
            }
            // Labels lean on feature 0 now and then, so some splits survive.
            let labels: Vec<u8> = (0..n).map(|r| if case % 2 == 0 && x.get(r, 0) == 0 && rng.random::<f64>() < 0.6 { 0 } else { rng.random_range(0..3) }).collect();
            let rows: Vec<u32> = (0..n as u32).collect();
            let settings = crate::model::TreeSettings { max_depth: 4, min_samples_leaf: 10, min_samples_split: 20, min_impurity_decrease: 0.0 };
            use crate::model::Learner;
            let grown = crate::model::AuditTree(settings).fit(&x, &rows, &labels, 3);
            let (pruned, to_pruned) = prune_fast(&grown, &mut crit, 20);
            kept_nodes(&grown, &mut crit, 20, &mut collapsed, &mut map);
            for g in 0..grown.nodes.len() {
                assert_eq!(grown.nodes[map[g]].class_counts, pruned.nodes[to_pruned[g]].class_counts, "case {case} node {g}");
            }
        }
    }

    #[test]
    fn the_node_map_sends_every_grown_node_to_its_pruned_node() {
        let t = Tree {
            nodes: vec![
                Node { class_counts: vec![200, 200], split: Some(Split { feature: 0, threshold: 0, left: 1, right: 4 }) },
                Node { class_counts: vec![180, 20], split: Some(Split { feature: 1, threshold: 0, left: 2, right: 3 }) },
                leaf(vec![91, 9]),
                leaf(vec![89, 11]),
                leaf(vec![20, 180]),
            ],
            n_classes: 2,
        };
        let (p, map) = prune_with_map(&t, 0.05, 10);
        assert_eq!(p.nodes.len(), 3);
        assert_eq!(map, vec![0, 1, 1, 1, 2]);
    }

    #[test]
    fn pruning_renumbers_in_pre_order() {
        // A split whose left child is itself a noise split.
        let t = Tree {
            nodes: vec![
                Node { class_counts: vec![200, 200], split: Some(Split { feature: 0, threshold: 0, left: 1, right: 4 }) },
                Node { class_counts: vec![180, 20], split: Some(Split { feature: 1, threshold: 0, left: 2, right: 3 }) },
                leaf(vec![91, 9]),
                leaf(vec![89, 11]),
                leaf(vec![20, 180]),
            ],
            n_classes: 2,
        };
        let p = prune(&t, 0.05, 10);
        assert_eq!(p.nodes.len(), 3);
        assert_eq!(p.nodes[0].split.unwrap().left, 1);
        assert_eq!(p.nodes[0].split.unwrap().right, 2);
        assert_eq!(p.nodes[1].class_counts, vec![180, 20]);
    }
}
