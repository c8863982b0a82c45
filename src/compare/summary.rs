//! The comparison's one results value. `summary.json` is this value
//! serialised; the HTML report, `changes.csv`, the charts and the terminal
//! table are all read from it, so they cannot disagree.

use super::period::Period;
use crate::audit::summary::{Input, Tool};
use crate::settings::{FdrMethod, Settings, Statistic};
use crate::significance::Interval;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Debug, Clone, Serialize)]
pub struct CompareSummary {
    pub tool: Tool,
    pub input: Input,
    pub settings: CompareSettingsOut,
    pub periods: Periods,
    pub evaluation: CompareEvaluation,
    /// Plain-words cautions about the whole run.
    pub notes: Vec<String>,
    /// Tests in the run's one Benjamini–Hochberg family, and how many of
    /// them are at or below the false discovery rate.
    pub tests: usize,
    pub significant: usize,
    pub pitchers: Vec<PitcherChanges>,
}

#[derive(Debug, Clone, Serialize)]
pub struct Periods {
    pub before: Period,
    pub after: Period,
}

#[derive(Debug, Clone, Serialize)]
pub struct CompareSettingsOut {
    pub seed: u64,
    /// Label-swap permutations per pitcher for the predictability change.
    pub permutations: usize,
    /// Most shuffles of whole games in each mix, pitch and location test
    /// (`mix::mix_test_by_games`); it stops once `stop_after_exceedances`
    /// shuffles reach the observed G.
    pub mix_monte_carlo: usize,
    pub bootstrap: usize,
    pub fdr: f64,
    pub statistic: String,
    pub stop_after_exceedances: usize,
    pub new_pitch_share: f64,
    pub absent_share: f64,
    /// A count is tested when it has at least this many pitches in each period.
    pub min_count_pitches: usize,
    pub min_train_pitches: usize,
    pub min_test_pitches: usize,
    pub forward_blocks: usize,
    pub tell_min_effect: f64,
    pub tell_min_n: usize,
    pub tell_fdr_method: String,
}

impl CompareSettingsOut {
    /// The settings a comparison used, as its summary records them.
    pub fn of(settings: &Settings, permutations: usize) -> CompareSettingsOut {
        CompareSettingsOut {
            seed: settings.audit.seed(),
            permutations,
            mix_monte_carlo: super::mix::MONTE_CARLO_PERMUTATIONS,
            bootstrap: settings.compare.bootstrap(),
            fdr: settings.audit.fdr(),
            statistic: match settings.audit.statistic() {
                Statistic::Bits => "bits_gained".into(),
                Statistic::Accuracy => "accuracy_gained".into(),
            },
            stop_after_exceedances: settings.audit.stop_after_exceedances(),
            new_pitch_share: settings.compare.new_pitch_share(),
            absent_share: settings.compare.absent_share(),
            min_count_pitches: settings.tells.min_n(),
            min_train_pitches: settings.audit.min_train_pitches(),
            min_test_pitches: settings.audit.min_test_pitches(),
            forward_blocks: settings.audit.forward_blocks(),
            tell_min_effect: settings.tells.min_effect(),
            tell_min_n: settings.tells.min_n(),
            tell_fdr_method: match settings.tells.fdr_method() {
                FdrMethod::Hierarchical => "hierarchical".into(),
                FdrMethod::Pooled => "pooled".into(),
            },
        }
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct CompareEvaluation {
    pub scheme: String,
    pub blocks: usize,
    /// How each period is scored, in words.
    pub description: String,
}

/// One change: a test of the run's BH family (mix shift, new or dropped
/// pitch, predictability), or a tell's status across the periods.
#[derive(Debug, Clone, Serialize)]
pub struct Change {
    /// `new_pitch`, `dropped_pitch`, `mix_shift`, `predictability`,
    /// `tell_appeared`, `tell_disappeared`, `tell_held`.
    #[serde(rename = "type")]
    pub kind: String,
    /// `{}` for the whole period, `{"count": "0-0"}` for a count, a tell's
    /// situation for a tell.
    pub situation: BTreeMap<String, String>,
    /// The pitch concerned: the new or dropped pitch, the type whose share
    /// moved most in a mix shift, the tell's pitch.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pitch_type: Option<String>,
    /// A tell's direction, `more` or `less`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub direction: Option<String>,
    /// A mix shift of a pitcher with a new or dropped pitch is tested on the
    /// pitches he threw in both periods (`kept pitches`), shares taken over
    /// those pitches; the new pitch has its own test.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub among: Option<String>,
    /// The share of `pitch_type` (in the situation, among `among`) in each
    /// period; for `predictability`, held-out bits gained per pitch.
    pub before: f64,
    pub after: f64,
    /// Total variation distance for a mix shift; `after − before` otherwise.
    pub effect: f64,
    /// `total_variation`, `share_difference` or `bits_difference`.
    pub effect_measure: String,
    pub n_before: usize,
    pub n_after: usize,
    /// 95% interval of the effect (predictability: the observed change ±
    /// the 95% point of the change over the label-swap deals, each
    /// refitted).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub interval: Option<Interval>,
    /// `game_permutation_g` (mix, pitch and location changes: whole games
    /// shuffled between the periods), `label_swap_permutation`; for a tell, the
    /// test its p and q come from (`mix_shift count 0-0`) or `none`.
    pub test: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub statistic: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dof: Option<usize>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub permutations: Option<usize>,
    /// p-value and Benjamini–Hochberg q-value within the test's `family`.
    /// A tell in a single count carries those of that count's mix shift;
    /// other tells have none (see `tells_change`).
    pub p: Option<f64>,
    pub q: Option<f64>,
    /// The BH family the q-value belongs to: `predictability` (one test
    /// per pitcher) or `mix and pitches` (every other test of the run).
    pub family: String,
    /// q at or below the run's false discovery rate.
    pub significant: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mix_before: Option<BTreeMap<String, f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mix_after: Option<BTreeMap<String, f64>>,
    /// A tell: his share of its pitch outside the situation, and the tell's
    /// q-value in each period's own tell search (when tested there).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub baseline_before: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub baseline_after: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tell_q_before: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tell_q_after: Option<f64>,
    /// A location shift: the region whose share moved most.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub region: Option<String>,
    /// The change in one sentence.
    pub text: String,
}

impl Change {
    /// Part of the run's BH family.
    pub fn is_test(&self) -> bool {
        !self.kind.starts_with("tell_")
    }
}

/// One count in both periods.
#[derive(Debug, Clone, Serialize)]
pub struct CountChange {
    pub count: String,
    pub n_before: usize,
    pub n_after: usize,
    /// His most thrown pitch in the count in each period, and its share.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub top_pitch_before: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub top_share_before: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub top_pitch_after: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub top_share_after: Option<f64>,
    pub mix_before: BTreeMap<String, f64>,
    pub mix_after: BTreeMap<String, f64>,
    /// Enough pitches in both periods for the mix test (its entry in `changes`).
    pub tested: bool,
}

/// Held-out figures of one period (or season), cross-fitted over its games.
#[derive(Debug, Clone, Serialize)]
pub struct PeriodFigures {
    pub label: String,
    /// Pitches in the period, those that trained the last fold, and those scored.
    pub pitches: usize,
    pub n_train: usize,
    pub n_test: usize,
    pub prior_accuracy: f64,
    pub model_accuracy: f64,
    pub lift: f64,
    pub bits_gained: f64,
    /// 95% bootstrap interval of bits gained (games resampled).
    pub bits_interval: Interval,
    /// Held-out pitches of a type not yet seen in their fold's training,
    /// left out of the figures.
    pub n_unseen_type: usize,
}

#[derive(Debug, Clone, Serialize)]
pub struct Predictability {
    pub before: PeriodFigures,
    pub after: PeriodFigures,
    pub bits_difference: f64,
    pub bits_difference_interval: Interval,
    pub lift_difference: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub lift_difference_interval: Option<Interval>,
    pub p: f64,
    pub q: f64,
    pub permutations: usize,
    pub stopped_early: bool,
    /// No label swap reached the observed change.
    #[serde(skip)]
    pub reached_none: bool,
    /// Stopped as a clear change, at the early decision's size (no label
    /// swap among the first `permutations` reached it).
    pub decided_early: bool,
    /// Stopped once no outcome of its remaining label swaps could get it
    /// flagged among the predictability changes: `p` is that of the swaps
    /// drawn, an estimate; its flag is the full run's.
    pub ruled_out: bool,
    /// The studentised change the label-swap test ranks.
    pub studentised_statistic: f64,
    /// The before period's model on the after games, carried onto his
    /// after mix, against that mix (bits per pitch; `None` when nothing
    /// could be scored).
    pub transfer_bits: Option<f64>,
    /// The BH family of `q`.
    pub family: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct PitcherChanges {
    /// As shown: his `pitcher` value, or his name with a `pitcher_name`
    /// column.
    pub pitcher: String,
    /// His `pitcher` value when he is shown by name.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pitcher_id: Option<String>,
    pub throws: String,
    /// `ok` or `insufficient data`.
    pub status: String,
    pub n_before: usize,
    pub n_after: usize,
    pub games_before: usize,
    pub games_after: usize,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mix_before: Option<BTreeMap<String, f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mix_after: Option<BTreeMap<String, f64>>,
    /// Total variation distance between the two whole mixes (new and
    /// dropped pitches included): pitches in every one that changed type.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mix_shift: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub predictability: Option<Predictability>,
    /// Held-out figures per season, when the log has more than two seasons.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub seasons: Vec<PeriodFigures>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub counts: Vec<CountChange>,
    /// Every tested change, in report order.
    pub changes: Vec<Change>,
    pub significant_changes: usize,
    /// His most telling significant change in one sentence, or "no change".
    pub headline: String,
    /// The plain-words summary: one line per significant change, then what
    /// held.
    pub summary_lines: Vec<String>,
    pub cautions: Vec<String>,
}

impl PitcherChanges {
    pub fn is_ok(&self) -> bool {
        self.status == "ok"
    }

    /// The strongest evidence of a changed mix: the smallest q of a new or
    /// dropped pitch or of the overall mix test (`None` without one).
    pub fn mix_q(&self) -> Option<f64> {
        let q = self
            .changes
            .iter()
            .filter(|c| c.kind == "new_pitch" || c.kind == "dropped_pitch" || (c.kind == "mix_shift" && c.situation.is_empty()))
            .filter_map(|c| c.q)
            .fold(f64::NAN, f64::min);
        (!q.is_nan()).then_some(q)
    }
}
