//! One complete fit of a pitcher's labels: for every fold, the usage prior,
//! the shrunk count and batter priors (training rows only), the tree, and
//! the held-out probabilities of both the prior and the model.

use super::task::{PitcherTask, OOF_FOLDS, PRIOR_BINS};
use crate::model::{AuditTree, Tree};
use crate::priors::{self, GroupCounts, UsagePrior};
use crate::settings::Settings;

/// Held-out output of one fit, in the order of the folds' test rows.
#[derive(Debug, Clone, Default)]
pub struct Scored {
    /// Local row index of each scored row.
    pub rows: Vec<u32>,
    /// `n_scored × n_classes` probabilities.
    pub model: Vec<f64>,
    pub prior: Vec<f64>,
    pub n_classes: usize,
    pub trees: Vec<Tree>,
    pub usage: Vec<UsagePrior>,
    pub strengths: Vec<(f64, f64)>,
    /// Running sums of the statistic, filled instead of the probability
    /// rows when a fit is a permutation refit.
    pub totals: StatTotals,
    /// Held-out pitches left unscored because their type never appeared in
    /// the fold's training rows (a new pitch: neither guess can know it).
    pub unseen: usize,
}

impl Scored {
    pub fn model_row(&self, i: usize) -> &[f64] {
        &self.model[i * self.n_classes..(i + 1) * self.n_classes]
    }
    pub fn prior_row(&self, i: usize) -> &[f64] {
        &self.prior[i * self.n_classes..(i + 1) * self.n_classes]
    }
}

/// Sums behind the permutation statistic.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct StatTotals {
    pub n: usize,
    pub bits: f64,
    pub bits_grown: f64,
    /// Held-out bits of the sheet over the plain mix (when the sheet is scored).
    pub sheet_bits: f64,
    pub acc: i64,
    pub acc_grown: i64,
}

impl StatTotals {
    /// The sums of two fits (of several tasks pooled).
    pub fn add(&mut self, u: &StatTotals) {
        self.n += u.n;
        self.bits += u.bits;
        self.bits_grown += u.bits_grown;
        self.sheet_bits += u.sheet_bits;
        self.acc += u.acc;
        self.acc_grown += u.acc_grown;
    }

    /// Held-out bits gained per pitch of the pruned model, the unpruned
    /// tree's as the tie-breaker (0 with no scored pitch).
    pub fn bits_stat(&self) -> Stat {
        if self.n == 0 {
            return Stat { primary: 0.0, secondary: 0.0 };
        }
        let n = self.n as f64;
        Stat { primary: self.bits / n, secondary: self.bits_grown / n }
    }
}

/// Reusable buffers for a pitcher's fits: the feature matrix whose prior
/// columns each fit rewrites, the count tables, and one prepared tree
/// learner per fold (the situation features are packed once; a refit only
/// repacks the prior features).
pub struct Workspace {
    pub x: crate::model::FeatureMatrix,
    trees: Vec<Option<crate::model::fast_tree::FastTreeWorkspace>>,
    count_codes: Vec<u8>,
    batter_codes: Vec<u8>,
    leaves: Vec<u32>,
    criticals: crate::model::prune::Criticals,
    collapsed: Vec<bool>,
    kept: Vec<usize>,
    row_slots: Vec<Vec<(u32, u32, u32)>>,
    /// Per fold, beside `row_slots`: each row's count- and batter-table
    /// entries (its places divided by the classes).
    row_entries: Vec<Vec<(u32, u32)>>,
    /// Per fold: the count- and batter-table entries (part · groups + group)
    /// some row uses.
    used_entries: Vec<(Vec<u32>, Vec<u32>)>,
    train_labels: Vec<u8>,
    /// Training counts of every game fold, `(fold · groups + group) · k + class`.
    flat_count: Vec<u32>,
    flat_batter: Vec<u32>,
    parent: Vec<usize>,
    grown_p: Vec<f64>,
    log_p: Vec<f64>,
    top: Vec<usize>,
    flat: crate::model::FlatTree,
    prior_features: Vec<usize>,
    /// Per fold: candidate splits among the situation features on its
    /// training rows (at least 1), read off the fold's learner when it is
    /// prepared (the situation features never change between fits).
    situational_candidates: Vec<usize>,
    count_all: GroupCounts,
    batter_all: GroupCounts,
    count_oof: Vec<GroupCounts>,
    batter_oof: Vec<GroupCounts>,
    /// The sheet's counts (24 cells) of the fold's training rows.
    sheet: GroupCounts,
    sheet_log: Vec<f64>,
    /// Score the sheet in refits too (the beyond-the-sheet test).
    pub want_sheet: bool,
    /// Every refit's labels keep each game's class counts in each cell
    /// (count × batter side): the beyond-the-sheet shuffles, within game ×
    /// cell, do. A game lies wholly on one side of every fold and in one
    /// game-fold part, so each fold's sheet and its count table (counts by
    /// part, count and class) are the same in every refit: the sheet's logs
    /// and the count prior's strength and codes are worked out once per
    /// fold, and the count-prior features are not rewritten.
    pub cells_fixed: bool,
    sheet_cache: Vec<Vec<f64>>,
    /// Per fold, when cells are fixed: the count prior's strength and code
    /// table of the first fit.
    count_cache: Vec<Option<(f64, Vec<u8>)>>,
}

impl Workspace {
    pub fn new(task: &PitcherTask) -> Workspace {
        let k = task.n_classes;
        Workspace {
            x: task.x.clone(),
            trees: (0..task.folds.len()).map(|_| None).collect(),
            count_codes: Vec::new(),
            batter_codes: Vec::new(),
            leaves: Vec::new(),
            criticals: crate::model::prune::Criticals::new(0.0),
            collapsed: Vec::new(),
            kept: Vec::new(),
            row_slots: vec![Vec::new(); task.folds.len()],
            row_entries: vec![Vec::new(); task.folds.len()],
            used_entries: vec![(Vec::new(), Vec::new()); task.folds.len()],
            train_labels: Vec::new(),
            flat_count: Vec::new(),
            flat_batter: Vec::new(),
            parent: Vec::new(),
            grown_p: Vec::new(),
            log_p: Vec::new(),
            top: Vec::new(),
            flat: crate::model::FlatTree::default(),
            prior_features: (task.n_situational..task.x.n_features()).collect(),
            situational_candidates: vec![0; task.folds.len()],
            count_all: GroupCounts::new(12, k),
            batter_all: GroupCounts::new(if task.prior_features { task.n_batters } else { 1 }, k),
            count_oof: (0..OOF_FOLDS).map(|_| GroupCounts::new(12, k)).collect(),
            batter_oof: (0..OOF_FOLDS).map(|_| GroupCounts::new(if task.prior_features { task.n_batters } else { 1 }, k)).collect(),
            sheet: GroupCounts::new(24, k),
            sheet_log: Vec::new(),
            want_sheet: false,
            cells_fixed: false,
            sheet_cache: vec![Vec::new(); task.folds.len()],
            count_cache: vec![None; task.folds.len()],
        }
    }
}

/// A share already multiplied by the number of bins, rounded to its bin.
#[inline]
fn bin_scaled(x: f64) -> u8 {
    (x + 0.5).clamp(0.0, PRIOR_BINS as f64) as u8
}

/// Fit every fold on `labels` and score the held-out rows. Per fold: the
/// rows' table places, the training counts and usage, the prior features'
/// codes, the grown tree and its kept nodes' probabilities, the sheet, and
/// the held-out sums, and what `keep` asks for beyond them.
fn fit_and_score(task: &PitcherTask, labels: &[u8], settings: &Settings, ws: &mut Workspace, keep: Keep) -> Scored {
    let k = task.n_classes;
    let mut out = Scored { n_classes: k, ..Scored::default() };
    if ws.criticals.alpha() != settings.tree.split_alpha() {
        ws.criticals = crate::model::prune::Criticals::new(settings.tree.split_alpha());
    }
    for (fi, fold) in task.folds.iter().enumerate() {
        if fold.test.is_empty() {
            continue;
        }
        ws.place_rows(task, fi);
        let usage = ws.count_training(task, fi, labels);
        let strengths = ws.prior_code_tables(task, fi, &usage.probs, settings);
        let (grown, m) = ws.grow(task, fi, settings, keep);
        ws.node_probabilities(&grown, &usage.probs, m, settings);
        // The sheet an opponent keeps (scored for the observed fit and the
        // beyond-the-sheet test).
        let with_sheet = keep == Keep::Everything || ws.want_sheet;
        if with_sheet {
            ws.sheet_logs(task, fi, labels, &usage.probs, settings);
        }
        if keep == Keep::Everything {
            // The observed fit checks the leaves found while growing against
            // walking each held-out row down the finished tree.
            let leaves = ws.trees[fi].as_ref().expect("the fold's learner is prepared").scored_leaves();
            ws.flat.rebuild(&grown);
            ws.flat.leaves(&ws.x, &fold.test, &mut ws.leaves);
            assert_eq!(ws.leaves, leaves, "held-out leaves from growing disagree with the tree");
        }
        ws.score_fold(&mut out, task, fi, labels, &usage, settings, with_sheet, keep != Keep::Sums);
        if with_sheet && ws.cells_fixed {
            std::mem::swap(&mut ws.sheet_log, &mut ws.sheet_cache[fi]);
        }
        if keep == Keep::Everything {
            let tree = if settings.tree.split_alpha() < 1.0 {
                crate::model::prune::prune_fast(&grown, &mut ws.criticals, m).0
            } else {
                grown.clone()
            };
            out.trees.push(tree);
            out.usage.push(usage);
            out.strengths.push(strengths);
        }
    }
    out
}

/// The stages of a fit: a pitcher's [`Workspace`] is prepared once
/// (`Workspace::new`, label-independent); his observed labels are fitted
/// once with [`observe`], keeping every fold's tree, prior and row
/// probabilities; each permutation's labels are fitted with [`refit`],
/// which keeps only what the test statistics need.
pub fn observe(task: &PitcherTask, labels: &[u8], settings: &Settings, ws: &mut Workspace) -> Scored {
    fit_and_score(task, labels, settings, ws, Keep::Everything)
}

/// A fit whose held-out rows' probabilities are wanted (compare's
/// cross-fitted periods and their label swaps), without the trees, priors
/// and sheet of [`observe`] or its checks of the shortcuts (which every
/// audited pitcher's observed fit runs). Its row probabilities and sums
/// are [`observe`]'s.
pub fn score_rows(task: &PitcherTask, labels: &[u8], settings: &Settings, ws: &mut Workspace) -> Scored {
    fit_and_score(task, labels, settings, ws, Keep::Rows)
}

/// A permutation's fit: the held-out sums of the test statistics (and the
/// sheet's, when the workspace asks for them), nothing kept per row.
pub fn refit(task: &PitcherTask, labels: &[u8], settings: &Settings, ws: &mut Workspace) -> Scored {
    fit_and_score(task, labels, settings, ws, Keep::Sums)
}

/// What a fit keeps beyond the held-out sums.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Keep {
    /// The sums only (a permutation).
    Sums,
    /// Each held-out row's probabilities too.
    Rows,
    /// Rows, each fold's pruned tree, usage prior and prior strengths, the
    /// sheet's sums, and the checks of the shortcuts.
    Everything,
}

/// The OOF parts, then "all training rows".
const PARTS: usize = OOF_FOLDS + 1;

impl Workspace {
    /// Each row's place in the two code tables depends only on its game
    /// fold, count and batter, so it is worked out once per fold, with the
    /// table entries some row uses (only those are computed).
    fn place_rows(&mut self, task: &PitcherTask, fi: usize) {
        if !self.row_slots[fi].is_empty() {
            return;
        }
        let fold = &task.folds[fi];
        let k = task.n_classes;
        let (gc, gb) = (self.count_all.n_groups, self.batter_all.n_groups);
        let entry = |r: u32, train: bool| {
            let r = r as usize;
            let part = if train { task.oof[r] as usize } else { OOF_FOLDS };
            ((part * gc + task.count[r] as usize) as u32, (part * gb + task.batter[r] as usize) as u32)
        };
        let entries: Vec<(u32, u32)> =
            fold.train.iter().map(|&r| entry(r, true)).chain(fold.test.iter().map(|&r| entry(r, false))).collect();
        let slots: Vec<(u32, u32, u32)> =
            fold.train.iter().chain(&fold.test).zip(&entries).map(|(&r, &(c, b))| (r, c * k as u32, b * k as u32)).collect();
        let used = |at: &dyn Fn(&(u32, u32)) -> u32, g: usize| {
            let mut seen = vec![false; PARTS * g];
            for e in &entries {
                seen[at(e) as usize] = true;
            }
            (0..PARTS * g).filter(|&e| seen[e]).map(|e| e as u32).collect::<Vec<u32>>()
        };
        let used_b = if task.prior_features { used(&|e| e.1, gb) } else { Vec::new() };
        self.used_entries[fi] = (used(&|e| e.0, gc), used_b);
        self.row_slots[fi] = slots;
        self.row_entries[fi] = entries;
    }

    /// The fold's training counts, per game fold (the training totals are
    /// their sums), and his usage on the training rows. A training row's
    /// table place is also its place in the flat counts of all game folds;
    /// the same pass gathers the labels for the tree. Without prior
    /// features the batter table feeds nothing: it is neither counted nor
    /// shrunk.
    fn count_training(&mut self, task: &PitcherTask, fi: usize, labels: &[u8]) -> UsagePrior {
        let k = task.n_classes;
        let n_train = task.folds[fi].train.len();
        let (gc, gb) = (self.count_all.n_groups, self.batter_all.n_groups);
        let priors_on = task.prior_features;
        self.train_labels.clear();
        self.flat_count.clear();
        self.flat_count.resize(OOF_FOLDS * gc * k, 0);
        if priors_on {
            self.flat_batter.clear();
            self.flat_batter.resize(OOF_FOLDS * gb * k, 0);
        }
        for &(r, cb, bb) in &self.row_slots[fi][..n_train] {
            let y = labels[r as usize];
            self.flat_count[cb as usize + y as usize] += 1;
            if priors_on {
                self.flat_batter[bb as usize + y as usize] += 1;
            }
            self.train_labels.push(y);
        }
        for (o, (c, b)) in self.count_oof.iter_mut().zip(&mut self.batter_oof).enumerate() {
            c.counts.copy_from_slice(&self.flat_count[o * gc * k..(o + 1) * gc * k]);
            c.fill_totals();
            if priors_on {
                b.counts.copy_from_slice(&self.flat_batter[o * gb * k..(o + 1) * gb * k]);
                b.fill_totals();
            }
        }
        self.count_all.set_sum(&self.count_oof);
        if priors_on {
            self.batter_all.set_sum(&self.batter_oof);
        }
        // His usage: the count table's class sums.
        UsagePrior::from_counts(self.count_all.class_totals())
    }

    /// The prior features' code tables of the fold: out-of-fold for
    /// training rows, full training counts for scored rows (they are never
    /// in the training counts). A feature's code depends only on (fold
    /// part, group, class), so the codes are tabled per used (part, group)
    /// and rows only look them up. Returns the count and batter tables'
    /// strengths (both 0 without prior features: a task that learns from
    /// the situation only, a location task, has no table to shrink).
    fn prior_code_tables(&mut self, task: &PitcherTask, fi: usize, mix: &[f64], settings: &Settings) -> (f64, f64) {
        let k = task.n_classes;
        if !task.prior_features {
            return (0.0, 0.0);
        }
        let cached = if self.cells_fixed { self.count_cache[fi].as_ref() } else { None };
        let reused = cached.is_some();
        let s_count = match cached {
            Some((s, codes)) => {
                self.count_codes.clear();
                self.count_codes.extend_from_slice(codes);
                *s
            }
            None => priors::strength(&self.count_all, mix, settings.tree.prior_strength()),
        };
        let s_batter = priors::strength(&self.batter_all, mix, settings.tree.prior_strength());
        let code_table = |all: &GroupCounts, oof: &[GroupCounts], s: f64, used: &[u32], table: &mut Vec<u8>| {
            let g = all.n_groups;
            table.resize(PARTS * g * k, 0);
            let sm: Vec<f64> = mix.iter().map(|m| s * m).collect();
            for &e in used {
                let (part, grp) = (e as usize / g, e as usize % g);
                // Shrunk share (c + s·m) / (n + s), binned: one division
                // per group and part, not per class.
                let (n, base) = match oof.get(part) {
                    Some(o) => (all.totals[grp] - o.totals[grp], Some(o)),
                    None => (all.totals[grp], None),
                };
                let scale = PRIOR_BINS as f64 / (n as f64 + s);
                let row = &mut table[e as usize * k..(e as usize + 1) * k];
                for cls in 0..k {
                    let i = grp * k + cls;
                    let c = all.counts[i] - base.map_or(0, |o| o.counts[i]);
                    row[cls] = bin_scaled((c as f64 + sm[cls]) * scale);
                }
            }
        };
        let (used_c, used_b) = &self.used_entries[fi];
        if !reused {
            code_table(&self.count_all, &self.count_oof, s_count, used_c, &mut self.count_codes);
            if self.cells_fixed {
                self.count_cache[fi] = Some((s_count, self.count_codes.clone()));
            }
        }
        code_table(&self.batter_all, &self.batter_oof, s_batter, used_b, &mut self.batter_codes);
        (s_count, s_batter)
    }

    /// Grow the fold's tree on the training labels: the prior codes go
    /// straight into the prepared learner (training and held-out rows),
    /// except on a workspace's first fit, which prepares the learner from
    /// the matrix, and on the observed fit, whose checks read the matrix.
    /// Returns the grown tree and its candidate splits (for pruning).
    fn grow(&mut self, task: &PitcherTask, fi: usize, settings: &Settings, keep: Keep) -> (Tree, usize) {
        let fold = &task.folds[fi];
        let k = task.n_classes;
        let prior_col0 = task.n_situational;
        let priors_on = task.prior_features;
        let n_rows = task.x.n_rows;
        let n_train = fold.train.len();
        let (gc, gb) = (self.count_all.n_groups, self.batter_all.n_groups);
        let (cc, bc) = (&self.count_codes, &self.batter_codes);
        if priors_on && (self.trees[fi].is_none() || keep != Keep::Sums) {
            let codes = &mut self.x.codes;
            for cls in 0..k {
                let (fc, fb) = (prior_col0 + cls, prior_col0 + k + cls);
                let (head, tail) = codes.split_at_mut(fb * n_rows);
                let col_c = &mut head[fc * n_rows..(fc + 1) * n_rows];
                let col_b = &mut tail[..n_rows];
                for &(r, cb, bb) in &self.row_slots[fi] {
                    col_c[r as usize] = cc[cb as usize + cls];
                    col_b[r as usize] = bc[bb as usize + cls];
                }
            }
        }
        // The held-out rows' prior codes are read through the code tables
        // themselves (a held-out row's key is its table entry).
        let train = &self.row_slots[fi][..n_train];
        let cells_fixed = self.cells_fixed;
        let learner = match &mut self.trees[fi] {
            Some(t) => {
                if priors_on && cells_fixed {
                    // The learner has fitted this fold before, so the count
                    // prior it holds is the one kept since that first fit
                    // (`prior_code_tables`): only the batter prior changes.
                    t.training_table(1).copy_from_slice(bc);
                    t.rewrite_keyed_features(prior_col0 + k..prior_col0 + 2 * k, |_, dst, need| prior_codes(None, bc, k, train, dst, need));
                } else if priors_on {
                    // The tables first: the rewrite reads present codes off them.
                    fill_training_tables(t, cc, bc, k);
                    t.rewrite_keyed_features(prior_col0..prior_col0 + 2 * k, |_, dst, need| prior_codes(Some(cc), bc, k, train, dst, need));
                }
                t
            }
            slot @ None => {
                let mut t = crate::model::fast_tree::FastTreeWorkspace::with_options(settings.tree.growth(), AuditTree::options());
                t.prepare(&self.x, &fold.train);
                t.prepare_scored(&self.x, &fold.test);
                if priors_on {
                    let (train_entries, test_entries) = self.row_entries[fi].split_at(n_train);
                    let keys = |at: fn(&(u32, u32)) -> u32| test_entries.iter().map(at).collect::<Vec<u32>>();
                    let g = t.set_scored_keys(prior_col0..prior_col0 + k, &keys(|e| e.0), PARTS * gc);
                    debug_assert_eq!(g, 0);
                    let g = t.set_scored_keys(prior_col0 + k..prior_col0 + 2 * k, &keys(|e| e.1), PARTS * gb);
                    debug_assert_eq!(g, 1);
                    // A training row's prior codes are a function of its
                    // table entries: the count prior's (and its balls and
                    // strikes) of its game-fold part and count, counted per
                    // entry at large nodes; the batter prior's of its part
                    // and batter. The trees are the same.
                    let keys = |at: fn(&(u32, u32)) -> u32| train_entries.iter().map(at).collect::<Vec<u32>>();
                    let rows: Vec<u32> = train.iter().map(|s| s.0).collect();
                    let count_keys = keys(|e| e.0);
                    let (features, fixed) = count_keyed_features(task, &rows, &count_keys, PARTS * gc);
                    let extra = features.len() - k;
                    let g = t.set_training_keys(features, &count_keys, PARTS * gc, true);
                    debug_assert_eq!(g, 0);
                    if extra > 0 {
                        for (row, fixed) in t.training_table(0).chunks_exact_mut(k + extra).zip(fixed.chunks_exact(extra)) {
                            row[k..].copy_from_slice(fixed);
                        }
                    }
                    let g = t.set_training_keys((prior_col0 + k..prior_col0 + 2 * k).collect(), &keys(|e| e.1), PARTS * gb, false);
                    debug_assert_eq!(g, 1);
                    fill_training_tables(&mut t, cc, bc, k);
                }
                // Candidate splits among the situation features: one fewer
                // than their distinct codes over the training rows, as the
                // learner found them.
                self.situational_candidates[fi] = (0..prior_col0).map(|f| t.cuts_of(f)).sum::<usize>().max(1);
                slot.insert(t)
            }
        };
        if priors_on {
            learner.scored_table(0).copy_from_slice(cc);
            learner.scored_table(1).copy_from_slice(bc);
        }
        if keep == Keep::Everything {
            assert!(learner.keys_agree(), "the count-keyed codes disagree with the rows");
        }
        let grown = learner.fit(&self.train_labels, k);
        // Candidate splits among the prior features: one fewer than their
        // distinct codes over the training rows, as the learner found them.
        let m = self.situational_candidates[fi] + self.prior_features.iter().map(|&f| learner.cuts_of(f)).sum::<usize>();
        if keep == Keep::Everything {
            // The observed fit checks the shortcuts against the plain count.
            let situational: Vec<usize> = (0..prior_col0).collect();
            assert_eq!(
                m,
                crate::model::prune::candidate_splits(&self.x, &situational, &fold.train).max(1)
                    + crate::model::prune::candidate_splits(&self.x, &self.prior_features, &fold.train),
                "candidate splits from the learner disagree with the rows"
            );
        }
        (grown, m)
    }

    /// The grown tree's kept node for each node (pruning is read off the
    /// grown tree: a kept node's smoothed probabilities are the same on
    /// either tree), each node's probabilities smoothed and blended toward
    /// his mix, their logs and top class. The statistic is summed the same
    /// way for the real labels and every permutation (logs of each node's
    /// probabilities taken once), so a refit that reproduces the observed
    /// model ties with it exactly.
    fn node_probabilities(&mut self, grown: &Tree, mix: &[f64], m: usize, settings: &Settings) {
        let k = grown.n_classes;
        if settings.tree.split_alpha() < 1.0 {
            crate::model::prune::kept_nodes(grown, &mut self.criticals, m, &mut self.collapsed, &mut self.kept);
        } else {
            self.kept.clear();
            self.kept.extend(0..grown.nodes.len());
        }
        smoothed_node_probs_into(grown, mix, settings.tree.leaf_smoothing(), &mut self.parent, &mut self.grown_p);
        blend_toward(&mut self.grown_p, mix, settings.tree.prior_blend());
        let nn = grown.nodes.len();
        // Logs only where a held-out row can read them: a grown leaf and
        // the kept node it collapses to (NaN elsewhere, never read).
        self.log_p.clear();
        self.log_p.resize(nn * k, f64::NAN);
        for (g, node) in grown.nodes.iter().enumerate() {
            if node.split.is_some() {
                continue;
            }
            for i in [g, self.kept[g]] {
                if self.log_p[i * k].is_nan() {
                    for (l, p) in self.log_p[i * k..(i + 1) * k].iter_mut().zip(&self.grown_p[i * k..(i + 1) * k]) {
                        *l = p.log2();
                    }
                }
            }
        }
        self.top.clear();
        self.top.extend((0..nn).map(|i| argmax(&self.grown_p[i * k..(i + 1) * k])));
    }

    /// The sheet an opponent keeps: his training mix by count × batter
    /// side, each cell shrunk toward his mix by the empirical-Bayes
    /// Dirichlet strength (as the count prior), logs tabled per cell; taken
    /// from the cache when the sheet is fixed across refits.
    fn sheet_logs(&mut self, task: &PitcherTask, fi: usize, labels: &[u8], mix: &[f64], settings: &Settings) {
        if self.cells_fixed && !self.sheet_cache[fi].is_empty() {
            std::mem::swap(&mut self.sheet_log, &mut self.sheet_cache[fi]);
            return;
        }
        self.sheet.clear();
        for &r in &task.folds[fi].train {
            self.sheet.add(task.cell[r as usize] as usize, labels[r as usize] as usize);
        }
        let s_sheet = priors::strength(&self.sheet, mix, settings.tree.prior_strength());
        self.sheet_log.clear();
        for g in 0..24 {
            for cls in 0..task.n_classes {
                self.sheet_log.push(self.sheet.shrunk(g, cls, mix, s_sheet).log2());
            }
        }
    }

    /// Add the fold's held-out rows to `out`'s sums (row order, on from the
    /// earlier folds'). A type he threw under `new_type_share` of the
    /// training pitches is new to him: neither guess can know it, so its
    /// held-out pitches are counted (`unseen`) and left out of the figures,
    /// the same way for the real labels and every permutation.
    #[allow(clippy::too_many_arguments)]
    fn score_fold(
        &self,
        out: &mut Scored,
        task: &PitcherTask,
        fi: usize,
        labels: &[u8],
        usage: &UsagePrior,
        settings: &Settings,
        with_sheet: bool,
        keep_rows: bool,
    ) {
        let fold = &task.folds[fi];
        let k = task.n_classes;
        let mix = &usage.probs;
        let lp: Vec<f64> = mix.iter().map(|x| x.log2()).collect();
        let top = argmax(mix);
        let leaves = self.trees[fi].as_ref().expect("the fold's learner is prepared").scored_leaves();
        let new_below = ((settings.audit.new_type_share() * fold.train.len() as f64).ceil() as u32).max(1);
        let mut t = out.totals;
        for (&r, &g) in fold.test.iter().zip(leaves) {
            let g = g as usize;
            let y = labels[r as usize] as usize;
            if usage.counts[y] < new_below {
                out.unseen += 1;
                continue;
            }
            let leaf = self.kept[g];
            t.n += 1;
            t.bits += self.log_p[leaf * k + y] - lp[y];
            t.bits_grown += self.log_p[g * k + y] - lp[y];
            if with_sheet {
                t.sheet_bits += self.sheet_log[task.cell[r as usize] as usize * k + y] - lp[y];
            }
            let pr = (top == y) as i64;
            t.acc += (self.top[leaf] == y) as i64 - pr;
            t.acc_grown += (self.top[g] == y) as i64 - pr;
            if keep_rows {
                out.rows.push(r);
                out.model.extend_from_slice(&self.grown_p[leaf * k..(leaf + 1) * k]);
                out.prior.extend_from_slice(mix);
            }
        }
        out.totals = t;
    }
}

/// The training key tables of a fold's learner: the count prior's codes
/// (the group's first `k` features; its balls and strikes after them are
/// left as they are) and the batter prior's, from the code tables.
fn fill_training_tables(t: &mut crate::model::fast_tree::FastTreeWorkspace, cc: &[u8], bc: &[u8], k: usize) {
    let width = t.training_width(0);
    for (row, codes) in t.training_table(0).chunks_exact_mut(width).zip(cc.chunks_exact(k)) {
        row[..k].copy_from_slice(codes);
    }
    t.training_table(1).copy_from_slice(bc);
}

/// The features keyed by a training row's count-table entry (game-fold
/// part and count; `rows[i]` has entry `keys[i]`): the `k` count-prior
/// columns, then the situation features that are a function of the entry
/// on these rows (balls and strikes), with those features' codes per entry
/// (`n_keys` rows of them, 0 for an entry no row has).
fn count_keyed_features(task: &PitcherTask, rows: &[u32], keys: &[u32], n_keys: usize) -> (Vec<usize>, Vec<u8>) {
    use crate::evaluate::task::FeatureKind;
    let k = task.n_classes;
    let mut features: Vec<usize> = (task.n_situational..task.n_situational + k).collect();
    let mut fixed: Vec<Vec<u8>> = Vec::new();
    for (f, kind) in task.kinds.iter().enumerate().take(task.n_situational) {
        if !matches!(kind, FeatureKind::Ordinal { name: "balls" | "strikes", .. }) {
            continue;
        }
        let col = task.x.column(f);
        let mut table: Vec<Option<u8>> = vec![None; n_keys];
        let agrees = keys.iter().zip(rows).all(|(&q, &r)| {
            let c = col[r as usize];
            *table[q as usize].get_or_insert(c) == c
        });
        if agrees {
            features.push(f);
            fixed.push(table.into_iter().map(|c| c.unwrap_or(0)).collect());
        }
    }
    let w = features.len() - k;
    let mut flat = vec![0u8; n_keys * w];
    for (j, col) in fixed.iter().enumerate() {
        for (q, &c) in col.iter().enumerate() {
            flat[q * w + j] = c;
        }
    }
    (features, flat)
}

/// The prior features' codes of the training rows at `slots` (row,
/// count-table place, batter-table place) into `dst`: the `k` count-prior
/// columns when `count_codes` is given, then the `k` batter-prior columns,
/// `slots.len()` codes each, each column only where `need` says the
/// learner reads it (a prior with one code on every row offers no cut).
fn prior_codes(count_codes: Option<&[u8]>, batter_codes: &[u8], k: usize, slots: &[(u32, u32, u32)], dst: &mut [u8], need: &[bool]) {
    // The k columns of one table from `first` on, each row's place in it
    // read by `place`.
    let n = slots.len();
    let mut columns = |codes: &[u8], first: usize, place: fn(&(u32, u32, u32)) -> u32| {
        for cls in (0..k).filter(|&cls| need[first + cls]) {
            let column = first + cls;
            for (d, s) in dst[column * n..(column + 1) * n].iter_mut().zip(slots) {
                *d = codes[place(s) as usize + cls];
            }
        }
    };
    let first_batter = match count_codes {
        Some(cc) => {
            columns(cc, 0, |s| s.1);
            k
        }
        None => 0,
    };
    columns(batter_codes, first_batter, |s| s.2);
}

/// Every node's probabilities blended with the usage prior:
/// p ← (1 − w)·p + w·mix. With the root equal to the prior, a model that
/// keeps only its root is exactly the prior; in any leaf no pitch falls
/// below w times his plain-mix probability, so a pitch that grows into his
/// arsenal can cost the model at most log2(1/w) bits against the prior
/// (the default w = 0.3: 1.7 bits), whatever the tree learned from older
/// games. Why 0.3: a pitch he adds makes the previous pitch a marker of
/// time (only this season's games follow the new pitch), and the splits on
/// it drag the other leaves' share of the new pitch below the prior; at 0.1
/// pitchers with an added pitch and no habit fell just outside their
/// margin (tests/audit_rolling.rs), at 0.3 they sit inside it, at a cost of
/// 5-10% of a real tell's bits.
pub fn blend_toward(p: &mut [f64], mix: &[f64], w: f64) {
    if w == 0.0 {
        return;
    }
    let k = mix.len();
    // Node 0 is the root (pre-order) and already the prior; it is left
    // as it is so that it stays the prior to the last bit.
    for node in p.chunks_mut(k).skip(1) {
        for (x, m) in node.iter_mut().zip(mix) {
            *x = (1.0 - w) * *x + w * m;
        }
    }
}

/// Class probabilities of every node, each node's counts pulled toward its
/// parent's probabilities by `a` pseudo-pitches; the root is the usage
/// prior itself: p(root) = mix, p(node) = (c(node) + a·p(parent)) / (n(node) + a).
/// Smoothing toward the parent rather than straight to the prior keeps what
/// the upper splits learned in small leaves and keeps every probability off
/// 0 and 1 (Ferri, Flach & Hernández-Orallo 2003, "Improving the AUC of
/// probabilistic estimation trees", the m-estimate smoothed along the path).
pub fn smoothed_node_probs_into(tree: &Tree, mix: &[f64], a: f64, parent: &mut Vec<usize>, p: &mut Vec<f64>) {
    // Nodes are numbered in pre-order (a parent before its children), so
    // one forward sweep smooths every node after its parent.
    let k = mix.len();
    let n = tree.nodes.len();
    parent.clear();
    parent.resize(n, usize::MAX);
    for (i, node) in tree.nodes.iter().enumerate() {
        if let Some(s) = node.split {
            parent[s.left] = i;
            parent[s.right] = i;
        }
    }
    p.clear();
    p.resize(n * k, 0.0);
    for i in 0..n {
        let node = &tree.nodes[i];
        let total: u32 = node.class_counts.iter().sum();
        if parent[i] == usize::MAX {
            // The root is his usage prior exactly, so a tree pruned to its
            // root scores exactly 0 bits gained (its ties are exact).
            p[i * k..(i + 1) * k].copy_from_slice(mix);
            continue;
        }
        for c in 0..k {
            let up = p[parent[i] * k + c];
            p[i * k + c] = (node.class_counts[c] as f64 + a * up) / (total as f64 + a);
        }
    }
}

/// [`smoothed_node_probs_into`] into a new vector.
pub fn smoothed_node_probs(tree: &Tree, mix: &[f64], a: f64) -> Vec<f64> {
    let (mut parent, mut p) = (Vec::new(), Vec::new());
    smoothed_node_probs_into(tree, mix, a, &mut parent, &mut p);
    p
}

/// The recursive form, kept as the reference for the test below.
#[cfg(test)]
fn smoothed_node_probs_recursive(tree: &Tree, mix: &[f64], a: f64) -> Vec<f64> {
    let k = mix.len();
    let mut p = vec![0.0; tree.nodes.len() * k];
    let mut stack: Vec<(usize, Option<Vec<f64>>)> = vec![(0, None)];
    while let Some((i, parent)) = stack.pop() {
        let node = &tree.nodes[i];
        let n: u32 = node.class_counts.iter().sum();
        for c in 0..k {
            p[i * k + c] = match &parent {
                None => mix[c],
                Some(parent) => (node.class_counts[c] as f64 + a * parent[c]) / (n as f64 + a),
            };
        }
        if let Some(s) = node.split {
            let me = p[i * k..(i + 1) * k].to_vec();
            stack.push((s.right, Some(me.clone())));
            stack.push((s.left, Some(me)));
        }
    }
    p
}

/// The permutation test's statistic of a fit: held-out bits gained per
/// pitch (or held-out accuracy gained over the prior's guess) of the pruned
/// model, with the same figure of the unpruned tree as a tie-breaker.
///
/// Why the pair: a pitcher with no situational signal usually prunes to the
/// root, so the pruned statistic is exactly 0 for the real labels and most
/// shuffles alike. Those ties would make the test conservative (p-values
/// pile up at 1 instead of being uniform). Breaking them with the unpruned
/// tree, a fixed function of the same labels, keeps exchangeability and so
/// the test's validity, and makes its p-values close to uniform under the
/// null (checked in tests/calibration.rs).
pub fn statistic(scored: &Scored, which: crate::settings::Statistic) -> Stat {
    let t = &scored.totals;
    if t.n == 0 {
        return Stat { primary: 0.0, secondary: 0.0 };
    }
    let n = t.n as f64;
    match which {
        crate::settings::Statistic::Bits => t.bits_stat(),
        crate::settings::Statistic::Accuracy => Stat { primary: t.acc as f64 / n, secondary: t.acc_grown as f64 / n },
    }
}

/// The beyond-the-sheet test's statistic: held-out bits the situational
/// model gains over the sheet (his mix by count × batter side), with the
/// unpruned tree's as the tie-breaker. Needs the sheet scored
/// (`Workspace::want_sheet`, or an observed fit).
pub fn beyond_statistic(scored: &Scored) -> Stat {
    let t = &scored.totals;
    if t.n == 0 {
        return Stat { primary: 0.0, secondary: 0.0 };
    }
    let n = t.n as f64;
    Stat { primary: (t.bits - t.sheet_bits) / n, secondary: (t.bits_grown - t.sheet_bits) / n }
}

/// A permutation statistic: compared on `primary`, ties broken by `secondary`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stat {
    pub primary: f64,
    pub secondary: f64,
}

impl Stat {
    /// Is `self` (a null value) at least as extreme as `observed`? Values
    /// within scipy's relative tolerance count as equal
    /// (significance::permutation_p::reaches).
    pub fn reaches(&self, observed: &Stat) -> bool {
        use crate::significance::permutation_p::reaches;
        let tie = reaches(self.primary, observed.primary) && reaches(observed.primary, self.primary);
        if tie {
            reaches(self.secondary, observed.secondary)
        } else {
            self.primary > observed.primary
        }
    }
}

/// Index of the largest value; the lowest index wins ties.
pub fn argmax(v: &[f64]) -> usize {
    let mut best = 0;
    for (i, &x) in v.iter().enumerate() {
        if x > v[best] {
            best = i;
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Node, Split};

    #[test]
    fn smoothing_sweep_equals_the_recursive_form() {
        let leaf = |c: Vec<u32>| Node { class_counts: c, split: None };
        let t = Tree {
            nodes: vec![
                Node { class_counts: vec![60, 40], split: Some(Split { feature: 0, threshold: 0, left: 1, right: 4 }) },
                Node { class_counts: vec![50, 10], split: Some(Split { feature: 1, threshold: 0, left: 2, right: 3 }) },
                leaf(vec![30, 2]),
                leaf(vec![20, 8]),
                leaf(vec![10, 30]),
            ],
            n_classes: 2,
        };
        let mix = [0.6, 0.4];
        assert_eq!(smoothed_node_probs(&t, &mix, 10.0), smoothed_node_probs_recursive(&t, &mix, 10.0));
        // By hand for node 2: parent 1 = (50 + 10·0.6)/70 = 0.8; node 2 =
        // (30 + 10·0.8)/42 = 0.904762.
        let p = smoothed_node_probs(&t, &mix, 10.0);
        assert!((p[2] - 0.8).abs() < 1e-12 && (p[4] - 38.0 / 42.0).abs() < 1e-12);
        // The root is the usage prior itself, even when the prior is
        // smoothed differently from the root's counts.
        let prior = [0.55, 0.45];
        let q = smoothed_node_probs(&t, &prior, 10.0);
        assert_eq!(&q[..2], &prior);
        // Blended 0.1 toward the prior, node 2's first class is
        // 0.9 · (30 + 10·(50 + 5.5)/70)/42 + 0.1 · 0.55 (by hand).
        let mut b = q.clone();
        blend_toward(&mut b, &prior, 0.1);
        let node1 = (50.0 + 10.0 * 0.55) / 70.0;
        let node2 = (30.0 + 10.0 * node1) / 42.0;
        assert!((b[4] - (0.9 * node2 + 0.1 * 0.55)).abs() < 1e-12);
        assert_eq!(&b[..2], &prior);
    }
}
