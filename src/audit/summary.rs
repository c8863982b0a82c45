//! The audit's one results value. `summary.json` is this value serialised;
//! the HTML report, the CSV files and the terminal table are all read from
//! it, so they cannot disagree.

use crate::evaluate::TypeFigures;
use crate::settings::{FdrMethod, PriorStrength, Settings, Statistic};
use crate::tells::TellTest;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    pub tool: Tool,
    pub input: Input,
    pub settings: SettingsOut,
    pub evaluation: EvaluationOut,
    /// Plain-words cautions about the whole run.
    pub notes: Vec<String>,
    pub pitchers: Vec<PitcherSummary>,
    /// The staff's held-out pitches called by the model against the others
    /// (every pitcher's count × type strata pooled), when the log has results.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub staff_called_outcomes: Option<crate::outcomes::CalledFigure>,
    /// What the `league_share` and `league_percentile` figures compare
    /// with: `league` (the file holds more than one club) or `staff` (one
    /// club, so the other pitchers are his own staff).
    pub yardstick: String,
    /// Tell tests run, flagged, and the family size of the BH correction.
    pub tell_tests: usize,
    pub tells_flagged: usize,
}

#[derive(Debug, Clone, Serialize)]
pub struct Tool {
    pub name: String,
    pub version: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct Input {
    pub path: String,
    pub rows_read: usize,
    pub rows_rejected: usize,
    pub rows_kept: usize,
    pub sha256: String,
    pub optional_present: Vec<String>,
    pub optional_missing: Vec<String>,
    /// Optional columns in other units than the contract's (or a score
    /// taken from the other side), set aside whole (absent when none are).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub optional_set_aside: Vec<crate::ingest::units::SetAside>,
    /// Rows whose pitch label is not the pitcher's choice of pitch
    /// (pitchouts, intentional balls, unknown types; `set_aside.csv`).
    pub rows_set_aside: usize,
    /// Those rows by label: how many, and what the label is.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub pitch_labels_set_aside: Vec<crate::ingest::LabelSetAside>,
    /// The commonest reasons rows were rejected (at most three; absent
    /// when none were).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub rejected_reasons: Vec<crate::ingest::RejectedReason>,
    /// Optional columns the file lacks, worked out from the inning's half
    /// and each club's runs or name (absent when none were).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub columns_worked_out: Vec<crate::ingest::derive::WorkedOut>,
    pub seasons: Vec<i32>,
}

impl Tool {
    pub fn this() -> Tool {
        Tool { name: "tellscope".into(), version: env!("CARGO_PKG_VERSION").into() }
    }
}

impl Input {
    pub fn of(source: &crate::ingest::SourceInfo, log: &crate::ingest::PitchLog) -> Input {
        Input {
            path: source.path.display().to_string(),
            rows_read: source.rows_read,
            rows_rejected: source.rows_rejected,
            rows_kept: log.len(),
            sha256: source.sha256.clone(),
            optional_present: source.optional_present.clone(),
            optional_missing: source.optional_missing.clone(),
            optional_set_aside: source.optional_set_aside.clone(),
            rows_set_aside: source.rows_set_aside,
            pitch_labels_set_aside: source.pitch_labels_set_aside.clone(),
            rejected_reasons: source.rejected_reasons.clone(),
            columns_worked_out: source.worked_out.clone(),
            seasons: log.seasons(),
        }
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct SettingsOut {
    pub seed: u64,
    pub permutations: usize,
    pub fdr: f64,
    pub statistic: String,
    pub stop_after_exceedances: usize,
    pub min_train_pitches: usize,
    pub min_test_pitches: usize,
    /// Blocks of each pitcher's scored season (rolling scheme).
    pub forward_blocks: usize,
    /// Seasons before the scored one the rolling scheme's models learn from.
    pub history_seasons: usize,
    pub tree_max_depth: usize,
    pub tree_min_samples_leaf: usize,
    pub tree_min_samples_split: usize,
    pub leaf_smoothing: f64,
    pub split_alpha: f64,
    pub prior_strength: String,
    pub tell_min_effect: f64,
    pub tell_min_n: usize,
    pub tell_pairs: Vec<String>,
    pub tell_fdr_method: String,
}

impl SettingsOut {
    /// The settings a run used, as the summary records them.
    pub fn of(settings: &Settings) -> SettingsOut {
        SettingsOut {
            seed: settings.audit.seed(),
            permutations: settings.audit.permutations(),
            fdr: settings.audit.fdr(),
            statistic: match settings.audit.statistic() {
                Statistic::Bits => "bits_gained".into(),
                Statistic::Accuracy => "accuracy_gained".into(),
            },
            stop_after_exceedances: settings.audit.stop_after_exceedances(),
            min_train_pitches: settings.audit.min_train_pitches(),
            min_test_pitches: settings.audit.min_test_pitches(),
            forward_blocks: settings.audit.forward_blocks(),
            history_seasons: settings.audit.history_seasons(),
            tree_max_depth: settings.tree.growth().max_depth,
            tree_min_samples_leaf: settings.tree.growth().min_samples_leaf,
            tree_min_samples_split: settings.tree.growth().min_samples_split,
            leaf_smoothing: settings.tree.leaf_smoothing(),
            split_alpha: settings.tree.split_alpha(),
            prior_strength: match settings.tree.prior_strength() {
                PriorStrength::Auto => "auto".into(),
                PriorStrength::Fixed(s) => format!("{s}"),
            },
            tell_min_effect: settings.tells.min_effect(),
            tell_min_n: settings.tells.min_n(),
            tell_pairs: settings.tells.pairs().iter().map(|(a, b)| format!("{a} x {b}")).collect(),
            tell_fdr_method: match settings.tells.fdr_method() {
                FdrMethod::Hierarchical => "hierarchical".into(),
                FdrMethod::Pooled => "pooled".into(),
            },
        }
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct EvaluationOut {
    pub scheme: String,
    pub train: String,
    pub test: String,
    /// Where tells found on the training rows are checked.
    pub tells_checked_on: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct CountSummary {
    pub count: String,
    /// Held-out pitches in the count.
    pub n: usize,
    pub prior_accuracy: f64,
    pub model_accuracy: f64,
    pub lift: f64,
    pub bits_gained: f64,
    /// His most thrown pitch in the count, held out, with its share and a
    /// Wilson 95% interval.
    pub top_pitch: String,
    pub top_share: f64,
    pub top_share_low: f64,
    pub top_share_high: f64,
    /// Held-out mix in the count.
    pub mix: BTreeMap<String, f64>,
    /// The same on the discovery (training) rows.
    pub discovery_n: usize,
    pub discovery_top_pitch: String,
    pub discovery_top_share: f64,
    /// q-value of "his top pitch is thrown more in this count than in
    /// others" (discovery rows), when tested.
    pub q_value: Option<f64>,
    /// That test is flagged: he is more predictable in this count.
    pub more_predictable: bool,
}

#[derive(Debug, Clone, Serialize)]
pub struct RuleSummary {
    /// The conditions of a leaf of his tree, in words.
    pub conditions: Vec<String>,
    pub support: usize,
    pub top_pitch: String,
    pub top_share: f64,
    pub text: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct PitcherSummary {
    /// As shown: his `pitcher` value, or his name with a `pitcher_name`
    /// column.
    pub pitcher: String,
    /// His `pitcher` value when he is shown by name.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pitcher_id: Option<String>,
    pub throws: String,
    /// `ok` or `insufficient data`.
    pub status: String,
    pub n_train: usize,
    pub n_test: usize,
    /// His pitches in the log, by season.
    pub pitches_by_season: BTreeMap<i32, usize>,
    /// With `--team`: his pitches by season and club (a traded pitcher's
    /// pitches for other clubs are kept and used).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub pitches_by_team: Vec<TeamPitches>,
    /// With `--team`: the club his latest pitch was for, when it is not
    /// the audited one (traded away during the season).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub now_with: Option<String>,
    /// His own evaluation: scheme, what was trained on, what was scored.
    pub evaluation: crate::evaluate::split::PitcherEvaluation,
    /// Why he has no figures (insufficient data only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mix: Option<BTreeMap<String, f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub test_mix: Option<BTreeMap<String, f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub prior_pitch: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub prior_accuracy: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub model_accuracy: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub lift: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bits_gained: Option<f64>,
    /// The null-hypothesis margin for bits gained (see README).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bits_margin: Option<f64>,
    /// The same for lift (see README).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub lift_margin: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub p_value: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub q_value: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub permutations: Option<usize>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stopped_early: Option<bool>,
    /// Stopped as a clear effect: none of its first `permutations`
    /// reached the real statistic, at the size the other pitchers' pilots
    /// set (p = 1/(permutations + 1)).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub decided_early: Option<bool>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub significant: Option<bool>,
    /// The permutation test's statistic with the real labels, and under
    /// each permutation run (in order).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub observed_statistic: Option<f64>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub null_statistics: Vec<f64>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub counts: Vec<CountSummary>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub types: Vec<TypeFigures>,
    /// Flagged tells, strongest first.
    pub tells: Vec<TellTest>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub rules: Vec<RuleSummary>,
    /// Held-out pitches of a type unseen in training, left out of the figures.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub n_unseen_type: Option<usize>,
    /// Pitches added to or dropped from his arsenal between where his tells
    /// are found and where they are checked (`[compare] new_pitch_share` and
    /// `absent_share` decide).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub arsenal_changes: Vec<ArsenalChange>,
    /// Outcomes of each of his pitch types (with `result`): pitches, swings,
    /// whiff, called-plus-swinging-strike, ball and in-play rates.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub outcomes_by_type: Vec<crate::outcomes::TypeOutcomes>,
    /// Do his pitches fare worse when the held-out model called them?
    #[serde(skip_serializing_if = "Option::is_none")]
    pub called_outcomes: Option<crate::outcomes::CalledOutcomes>,
    /// His mix by count × batter side in his latest season (`sheet_season`).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub sheet: Vec<crate::audit::sheet::SheetCell>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sheet_season: Option<i32>,
    /// Held-out bits per pitch the sheet gains over his plain mix, and the
    /// full model over the sheet (the two add up to `bits_gained`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sheet_bits: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub beyond_bits: Option<f64>,
    /// Where his bits gained and beyond-the-sheet bits rank among the
    /// league's other pitchers with the audit's minimum sample (percentile
    /// rank, 0–100, ties averaged).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub league_percentile: Option<LeaguePercentile>,
    /// The beyond-the-sheet permutation test (labels shuffled within game ×
    /// count × batter side) and its BH q over pitchers.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub beyond_p_value: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub beyond_q_value: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub beyond_permutations: Option<usize>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub beyond_significant: Option<bool>,
    /// The beyond-the-sheet test stopped once no outcome of its remaining
    /// permutations could get it flagged: its p-value is that of the
    /// permutations drawn, an estimate; its flag is the full run's.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub beyond_ruled_out: Option<bool>,
    /// The beyond-the-sheet test stopped as a clear effect (as
    /// `decided_early`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub beyond_decided_early: Option<bool>,
    /// At most three findings in words, most pitches given away first.
    pub headline: Vec<String>,
    /// q-value of "he has some tell" (the first stage of the tell FDR control).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tell_family_q: Option<f64>,
    /// Plain-words cautions for this pitcher (small samples, a changed mix).
    pub cautions: Vec<String>,
    /// Where he throws it: held-out bits of his region given the situation
    /// and pitch type over his plain region mix per type, its permutation
    /// test and q-value (null without location columns or enough located
    /// pitches of any type; `location_note` says why).
    pub location: Option<crate::audit::location::LocationFigures>,
    /// His flagged location tells, most pitches given away first.
    pub location_tells: Vec<crate::audit::location::LocationTell>,
    /// Where each pitch type goes by count group (ahead, even, behind).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub location_mix: Vec<crate::audit::location::RegionMix>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub location_note: Option<String>,
}

/// A pitch added to or dropped from a pitcher's arsenal.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ArsenalChange {
    pub pitch_type: String,
    /// `added` or `dropped`.
    pub change: String,
    pub before: f64,
    pub after: f64,
    /// An added pitch of about the share (within 30%) of a pitch he
    /// dropped: that pitch, its share before and after. A renamed pitch
    /// looks like this; so can a real swap.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub in_place_of: Option<ReplacedLabel>,
}

/// The old label an added pitch took the place of.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReplacedLabel {
    pub pitch_type: String,
    pub before: f64,
    pub after: f64,
}

impl PitcherSummary {
    pub fn is_ok(&self) -> bool {
        self.status == "ok"
    }
}

/// His latest season in the log (`pitches_by_season`) when it is older
/// than `latest`, the log's: a former member of a staff, scored on his own
/// last season.
pub fn gone_since(pitches_by_season: &BTreeMap<i32, usize>, latest: i32) -> Option<i32> {
    let his = *pitches_by_season.keys().next_back()?;
    (his < latest).then_some(his)
}

impl Summary {
    /// [`gone_since`] for a pitcher of this run, under the rolling scheme
    /// (each pitcher on his own latest season); `None` otherwise.
    pub fn last_pitched(&self, p: &PitcherSummary) -> Option<i32> {
        let latest = *self.input.seasons.last()?;
        if self.evaluation.scheme != "rolling" {
            return None;
        }
        gone_since(&p.pitches_by_season, latest)
    }
}

/// Pitches of one pitcher for one club in one season.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TeamPitches {
    pub season: i32,
    pub team: String,
    pub pitches: usize,
}

/// Percentile ranks among the league's pitchers (`league::percentile_of_score`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LeaguePercentile {
    pub bits: f64,
    pub beyond_bits: f64,
    /// The pitchers he is ranked among.
    pub among: usize,
}
