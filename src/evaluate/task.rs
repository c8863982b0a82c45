//! Everything about one pitcher that does not depend on his pitch labels:
//! his rows, the folds, the situation features. Built once and reused by
//! the observed fit and every permutation refit; only labels change.

use super::split::{PitcherEvaluation, PitcherPlan};
use crate::ingest::PitchLog;
use crate::model::FeatureMatrix;
use crate::domain::levels::Factor;
use crate::situations::Situations;

/// Bins of a shrunk prior probability feature: code = round(p · BINS).
pub const PRIOR_BINS: u8 = 20;

/// Which fold-local rows train and are scored.
#[derive(Debug, Clone)]
pub struct Fold {
    pub train: Vec<u32>,
    pub test: Vec<u32>,
}

/// What a feature means, for turning tree paths into words.
#[derive(Debug, Clone, PartialEq)]
pub enum FeatureKind {
    /// One-hot: the row is in this level of this factor.
    Level { factor: Factor, level: String },
    /// An ordinal game-state number (balls, strikes, ...).
    Ordinal { name: &'static str, offset: i32 },
    /// A binned shrunk prior of `class` given `given` (count or batter).
    Prior { class: usize, given: &'static str },
}

#[derive(Debug, Clone)]
pub struct PitcherTask {
    pub pitcher: u32,
    pub name: String,
    /// Global row indices, log order.
    pub rows: Vec<u32>,
    /// Class index → global pitch type index (his types, sorted).
    pub class_types: Vec<u16>,
    pub labels: Vec<u8>,
    pub n_classes: usize,
    /// Local rows per permutation stratum (season, or season x block of
    /// the rolling scheme): the units within which labels are exchangeable
    /// under the null.
    pub strata: Vec<Vec<u32>>,
    pub count: Vec<u8>,
    /// The sheet's cell of each row: count × batter side, `count · 2 + side`
    /// (side 0 left, 1 right), 24 cells.
    pub cell: Vec<u8>,
    /// Local rows per (game, cell), in the order the groups first appear:
    /// the units within which labels are exchangeable under "nothing beyond
    /// his sheet" (a game lies wholly in one stratum of `strata`, so these
    /// nest in them, and keep each outing's own mix in the null).
    pub beyond_strata: Vec<Vec<u32>>,
    pub batter: Vec<u32>,
    pub n_batters: usize,
    /// Game-based fold (0..OOF_FOLDS) used for out-of-fold prior features.
    pub oof: Vec<u8>,
    pub folds: Vec<Fold>,
    /// Features; the last `2 * n_classes` columns are the prior features,
    /// rewritten by every fit.
    pub x: FeatureMatrix,
    pub kinds: Vec<FeatureKind>,
    pub n_situational: usize,
    /// Whether the last `2 * n_classes` feature columns are the shrunk
    /// count and batter priors of each class (the audit's pitch types); a
    /// task without them learns from the situation features only.
    pub prior_features: bool,
    pub discovery: Vec<u32>,
    pub held_out: Vec<u32>,
    pub game: Vec<u32>,
    /// How he was evaluated, in words and figures.
    pub evaluation: PitcherEvaluation,
}

/// Folds for out-of-fold (target-encoded) prior features on training rows:
/// a training row's own label never shapes its own prior feature.
pub const OOF_FOLDS: usize = 5;

impl PitcherTask {
    pub fn build(log: &PitchLog, sit: &Situations, plan: &PitcherPlan, pitcher: u32, rows: Vec<u32>) -> PitcherTask {
        let mut types: Vec<u16> = rows.iter().map(|&r| log.pitch_type[r as usize]).collect();
        types.sort_unstable();
        types.dedup();
        let class_of = |t: u16| types.binary_search(&t).unwrap() as u8;
        let labels: Vec<u8> = rows.iter().map(|&r| class_of(log.pitch_type[r as usize])).collect();
        let n_classes = types.len();
        let n_strata = plan.stratum.iter().map(|&s| s as usize + 1).max().unwrap_or(0);
        let mut strata = vec![Vec::new(); n_strata];
        for (i, &s) in plan.stratum.iter().enumerate() {
            strata[s as usize].push(i as u32);
        }
        strata.retain(|s| !s.is_empty());
        let count: Vec<u8> = rows.iter().map(|&r| log.balls[r as usize] * 3 + log.strikes[r as usize]).collect();
        let cell: Vec<u8> = rows
            .iter()
            .map(|&r| {
                let r = r as usize;
                crate::domain::levels::sheet_cell(log.balls[r], log.strikes[r], log.bats[r]) as u8
            })
            .collect();
        // Each row's game as a dense index (games sorted by id), for the
        // tables below: a game × cell's stratum, a game's OOF fold.
        let mut game_ids: Vec<u32> = rows.iter().map(|&r| log.game[r as usize]).collect();
        game_ids.sort_unstable();
        game_ids.dedup();
        let game: Vec<u32> = rows.iter().map(|&r| log.game[r as usize]).collect();
        let game_at: Vec<usize> = game.iter().map(|g| game_ids.binary_search(g).expect("his own game")).collect();
        // Beyond-the-sheet strata: rows by game × sheet cell, numbered in
        // order of first appearance.
        let cells = cell.iter().map(|&c| c as usize + 1).max().unwrap_or(0);
        let mut stratum_of = vec![usize::MAX; game_ids.len() * cells];
        let mut beyond_strata: Vec<Vec<u32>> = Vec::new();
        for (i, &at) in game_at.iter().enumerate() {
            let slot = &mut stratum_of[at * cells + cell[i] as usize];
            if *slot == usize::MAX {
                *slot = beyond_strata.len();
                beyond_strata.push(Vec::new());
            }
            beyond_strata[*slot].push(i as u32);
        }
        let mut batters: Vec<u32> = rows.iter().map(|&r| log.batter[r as usize]).collect();
        batters.sort_unstable();
        batters.dedup();
        let batter: Vec<u32> =
            rows.iter().map(|&r| batters.binary_search(&log.batter[r as usize]).unwrap() as u32).collect();
        // Games in order of first appearance, dealt round-robin into OOF
        // folds.
        let mut game_fold = vec![u8::MAX; game_ids.len()];
        let mut next = 0usize;
        for &at in &game_at {
            if game_fold[at] == u8::MAX {
                game_fold[at] = (next % OOF_FOLDS) as u8;
                next += 1;
            }
        }
        let oof = game_at.iter().map(|&at| game_fold[at]).collect();

        let (folds, discovery, held_out) = plan_rows(plan, rows.len());

        let (x, kinds, n_situational) = features(log, sit, &rows, &types);
        PitcherTask {
            pitcher,
            name: log.pitchers[pitcher as usize].clone(),
            rows,
            class_types: types,
            labels,
            n_classes,
            strata,
            count,
            cell,
            beyond_strata,
            batter,
            n_batters: batters.len(),
            oof,
            folds,
            x,
            kinds,
            n_situational,
            prior_features: true,
            discovery,
            held_out,
            game,
            evaluation: plan.evaluation.clone(),
        }
    }

    /// The task of some of his rows (`keep`, local indices in order) with
    /// other labels: `labels` (one per kept row, classes 0..`class_types.len()`) standing for `class_types` of
    /// some other label set. Folds,
    /// permutation strata, discovery and held-out rows, games and the
    /// situation features are his own, restricted to the kept rows; the
    /// new task has no prior features (it learns from the situation only).
    /// Used for where his pitches of one type go (crate::audit::location).
    pub fn subset(&self, keep: &[u32], labels: Vec<u8>, class_types: Vec<u16>) -> PitcherTask {
        debug_assert_eq!(keep.len(), labels.len());
        let mut new_of = vec![u32::MAX; self.rows.len()];
        for (j, &i) in keep.iter().enumerate() {
            new_of[i as usize] = j as u32;
        }
        let remap = |v: &[u32]| -> Vec<u32> { v.iter().filter_map(|&i| Some(new_of[i as usize]).filter(|&j| j != u32::MAX)).collect() };
        let pick_u8 = |v: &[u8]| -> Vec<u8> { keep.iter().map(|&i| v[i as usize]).collect() };
        let mut strata: Vec<Vec<u32>> = self.strata.iter().map(|s| remap(s)).collect();
        strata.retain(|s| !s.is_empty());
        let mut beyond_strata: Vec<Vec<u32>> = self.beyond_strata.iter().map(|s| remap(s)).collect();
        beyond_strata.retain(|s| !s.is_empty());
        let folds = self.folds.iter().map(|f| Fold { train: remap(&f.train), test: remap(&f.test) }).collect();
        let k = class_types.len();
        let n = keep.len();
        let names: Vec<String> = self.x.names[..self.n_situational].to_vec();
        let kinds: Vec<FeatureKind> = self.kinds[..self.n_situational].to_vec();
        let mut x = FeatureMatrix::new(n, names);
        for f in 0..self.n_situational {
            let src = self.x.column(f);
            let dst = x.column_mut(f);
            for (d, &i) in dst.iter_mut().zip(keep) {
                *d = src[i as usize];
            }
        }

        PitcherTask {
            pitcher: self.pitcher,
            name: self.name.clone(),
            rows: keep.iter().map(|&i| self.rows[i as usize]).collect(),
            class_types,
            labels,
            n_classes: k,
            strata,
            count: pick_u8(&self.count),
            cell: pick_u8(&self.cell),
            beyond_strata,
            batter: keep.iter().map(|&i| self.batter[i as usize]).collect(),
            n_batters: self.n_batters,
            oof: pick_u8(&self.oof),
            folds,
            x,
            kinds,
            n_situational: self.n_situational,
            prior_features: false,
            discovery: remap(&self.discovery),
            held_out: remap(&self.held_out),
            game: keep.iter().map(|&i| self.game[i as usize]).collect(),
            evaluation: self.evaluation.clone(),
        }
    }

    pub fn n_train(&self) -> usize {
        self.folds.iter().map(|f| f.train.len()).max().unwrap_or(0)
    }

    pub fn n_test(&self) -> usize {
        self.folds.iter().map(|f| f.test.len()).sum()
    }
}

/// One 0/1 column per code of `wanted` (distinct codes): whether each
/// row's code is it, in one pass over the rows.
fn one_hot(codes: &[u8], rows: &[u32], wanted: &[u8]) -> Vec<Vec<u8>> {
    let mut column_of = [usize::MAX; 256];
    for (i, &c) in wanted.iter().enumerate() {
        debug_assert_eq!(column_of[c as usize], usize::MAX, "codes are distinct");
        column_of[c as usize] = i;
    }
    let mut cols = vec![vec![0u8; rows.len()]; wanted.len()];
    for (i, &r) in rows.iter().enumerate() {
        let j = column_of[codes[r as usize] as usize];
        if j != usize::MAX {
            cols[j][i] = 1;
        }
    }
    cols
}

/// A pitcher's feature matrix over `rows`: the situation features (a 0/1
/// column per level he meets, balls, strikes and the score margin as
/// ordinals), then one zeroed column per type for the count and batter
/// priors, which each fit fills. Returns it with each column's kind and
/// the number of situation features.
fn features(log: &PitchLog, sit: &Situations, rows: &[u32], types: &[u16]) -> (FeatureMatrix, Vec<FeatureKind>, usize) {
    // Situation features.
    let mut names = Vec::new();
    let mut kinds = Vec::new();
    let mut cols: Vec<Vec<u8>> = Vec::new();
    let one_hand = {
        let h0 = rows.first().map(|&r| log.throws[r as usize]);
        rows.iter().all(|&r| Some(log.throws[r as usize]) == h0)
    };
    for fc in &sit.factors {
        // For a pitcher with one throwing hand, batter side and platoon
        // are the same split; keep the platoon (the coach's word for it).
        if fc.factor == Factor::Bats && one_hand && sit.has(Factor::Platoon) {
            continue;
        }
        if fc.factor == Factor::PrevPitch {
            // Only levels he can produce: none and his own types.
            let mut lv = vec![0u8];
            lv.extend(types.iter().map(|&t| t as u8 + 1));
            for (code, col) in lv.iter().zip(one_hot(&fc.codes, rows, &lv)) {
                names.push(format!("{} = {}", fc.factor, fc.level(*code)));
                kinds.push(FeatureKind::Level { factor: fc.factor, level: fc.level(*code).to_string() });
                cols.push(col);
            }
            continue;
        }
        let codes: Vec<u8> = (0..fc.levels.len()).map(|c| c as u8).collect();
        for (level, col) in fc.levels.iter().zip(one_hot(&fc.codes, rows, &codes)) {
            if col.iter().all(|&c| c == col[0]) {
                continue; // constant for him (e.g. his own hand's platoon side)
            }
            names.push(format!("{} = {}", fc.factor, level));
            kinds.push(FeatureKind::Level { factor: fc.factor, level: level.clone() });
            cols.push(col);
        }
    }
    // Ordinal game state: lets a tree say "two strikes" in one split.
    names.push("balls".into());
    kinds.push(FeatureKind::Ordinal { name: "balls", offset: 0 });
    cols.push(rows.iter().map(|&r| log.balls[r as usize]).collect());
    names.push("strikes".into());
    kinds.push(FeatureKind::Ordinal { name: "strikes", offset: 0 });
    cols.push(rows.iter().map(|&r| log.strikes[r as usize]).collect());
    if let Some(sd) = &log.score_diff {
        names.push("score margin".into());
        kinds.push(FeatureKind::Ordinal { name: "score margin", offset: -5 });
        cols.push(rows.iter().map(|&r| (sd[r as usize].unwrap_or(0).clamp(-5, 5) + 5) as u8).collect());
    }
    let n_situational = names.len();
    for given in ["count", "batter"] {
        for (c, &t) in types.iter().enumerate() {
            let phrase = if given == "count" { "in this count" } else { "against this batter" };
            names.push(format!("his {} share {phrase}", log.pitch_types[t as usize]));
            kinds.push(FeatureKind::Prior { class: c, given });
            cols.push(vec![0; rows.len()]);
        }
    }
    let mut x = FeatureMatrix::new(rows.len(), names);
    for (f, col) in cols.into_iter().enumerate() {
        x.column_mut(f).copy_from_slice(&col);
    }
    (x, kinds, n_situational)
}

/// The plan's folds (training and scored rows of each), discovery rows
/// and held-out rows, as local indices over `n` rows.
fn plan_rows(plan: &PitcherPlan, n: usize) -> (Vec<Fold>, Vec<u32>, Vec<u32>) {
    let mut folds: Vec<Fold> = (0..plan.n_folds).map(|_| Fold { train: Vec::new(), test: Vec::new() }).collect();
    let mut discovery = Vec::new();
    let mut held_out = Vec::new();
    for i in 0..n {
        for (f, fold) in folds.iter_mut().enumerate() {
            if plan.trains(i, f) {
                fold.train.push(i as u32);
            }
        }
        if let Some(f) = plan.test_fold[i] {
            folds[f as usize].test.push(i as u32);
        }
        if plan.discovery[i] {
            discovery.push(i as u32);
        }
        if plan.held_out[i] {
            held_out.push(i as u32);
        }
    }
    (folds, discovery, held_out)
}

#[cfg(test)]
mod tests {
    use super::one_hot;

    /// The one-pass columns equal comparing every row with every wanted
    /// code, including codes no row has and rows whose code is not wanted.
    #[test]
    fn one_hot_equals_the_plain_comparison() {
        let codes: Vec<u8> = (0..500u32).map(|i| ((i * 7919) % 13) as u8).collect();
        let rows: Vec<u32> = (0..500).filter(|r| r % 3 != 1).collect();
        for wanted in [vec![0u8, 1, 2], vec![12, 3, 200, 5], vec![], (0..13).collect()] {
            let cols = one_hot(&codes, &rows, &wanted);
            assert_eq!(cols.len(), wanted.len());
            for (col, &w) in cols.iter().zip(&wanted) {
                let plain: Vec<u8> = rows.iter().map(|&r| (codes[r as usize] == w) as u8).collect();
                assert_eq!(*col, plain, "code {w}");
            }
        }
    }
}
