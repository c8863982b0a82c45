//! The config file and command-line flags, validated once into [`Settings`].
//! Later stages only ever see a validated value, so they cannot meet a bad one.

use crate::error::{Error, Result};
use crate::model::TreeSettings;
use crate::domain::columns::{NAME_COLUMNS, OPTIONAL_COLUMNS, REQUIRED_COLUMNS, SOURCE_COLUMNS};
use crate::domain::defaults::*;
use crate::domain::levels::Factor;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::Path;

/// The config file as written by a user. Every key is optional.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ConfigFile {
    /// Contract column name = the file's own header name.
    #[serde(default)]
    pub columns: BTreeMap<String, String>,
    /// Group name = the labels merged into it.
    #[serde(default)]
    pub pitch_groups: BTreeMap<String, Vec<String>>,
    /// Contract result (`ball`, `called_strike`, ...) = the file's own
    /// values that count as it ("foul_tip", "ball_in_dirt").
    #[serde(default)]
    pub result_groups: BTreeMap<String, Vec<String>>,
    #[serde(default)]
    pub audit: AuditConfig,
    #[serde(default)]
    pub model: ModelConfig,
    #[serde(default)]
    pub tells: TellConfig,
    #[serde(default)]
    pub compare: CompareConfig,
    #[serde(default)]
    pub location: LocationConfig,
    #[serde(default)]
    pub set_aside: SetAsideConfig,
}

/// Pitch labels that are not the pitcher's choice of pitch, set aside
/// before the audit (`crate::domain::labels`).
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SetAsideConfig {
    /// Replaces the default list; `[]` sets none aside.
    pub pitch_labels: Option<Vec<String>>,
}

/// Where he throws it (crate::location): how many located pitches of one
/// type the location model needs.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LocationConfig {
    pub min_train_pitches: Option<usize>,
    pub min_test_pitches: Option<usize>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AuditConfig {
    pub seed: Option<u64>,
    pub permutations: Option<usize>,
    pub fdr: Option<f64>,
    /// `bits` (default) or `accuracy`.
    pub statistic: Option<String>,
    /// Besag–Clifford h: stop a pitcher's permutations after this many null
    /// values at or above the observed one.
    pub stop_after_exceedances: Option<usize>,
    pub min_train_pitches: Option<usize>,
    pub min_test_pitches: Option<usize>,
    /// Blocks of games: of each pitcher's latest season in the rolling
    /// scheme, of a period in compare's forward-chaining.
    pub forward_blocks: Option<usize>,
    /// Seasons before the scored one the rolling scheme's models learn
    /// from (older ones only while these hold too few pitches).
    pub history_seasons: Option<usize>,
    /// A held-out pitch of a type under this share of the training pitches
    /// is new to him: counted and explained, left out of the figures.
    pub new_type_share: Option<f64>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ModelConfig {
    pub max_depth: Option<usize>,
    pub min_samples_leaf: Option<usize>,
    pub min_samples_split: Option<usize>,
    pub min_impurity_decrease: Option<f64>,
    /// A split is kept when its Bonferroni-adjusted G-test p-value is at or
    /// below this (1 keeps every split).
    pub split_alpha: Option<f64>,
    /// Pseudo-count pulling a leaf's pitch mix toward the pitcher's mix.
    pub leaf_smoothing: Option<f64>,
    /// Weight of his usage prior blended into every node's mix, so no pitch
    /// gets a held-out probability far below his plain mix's.
    pub prior_blend: Option<f64>,
    /// Pseudo-count of the shrunk count and batter priors; "auto" (the
    /// default) estimates it by empirical Bayes.
    pub prior_strength: Option<toml::Value>,
    /// A pitch type needs this many training pitches for its one-vs-rest figures.
    pub min_type_pitches: Option<usize>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TellConfig {
    pub min_effect: Option<f64>,
    pub min_n: Option<usize>,
    /// Two-factor situations tested besides every single level.
    pub pairs: Option<Vec<[String; 2]>>,
    /// `hierarchical` (default) or `pooled`; see the README.
    pub fdr_method: Option<String>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CompareConfig {
    /// A type at or above this share in one period ...
    pub new_pitch_share: Option<f64>,
    /// ... and below this share in the other is new (or dropped).
    pub absent_share: Option<f64>,
    pub bootstrap: Option<usize>,
    /// Label-swap permutations per pitcher for the predictability change
    /// (default 1999, enough to pass a false-discovery bar over ~150 tests).
    pub permutations: Option<usize>,
}

/// Which held-out statistic the permutation test scores.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Statistic {
    Bits,
    Accuracy,
}

/// How the run's tell tests are corrected for multiplicity.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FdrMethod {
    Hierarchical,
    Pooled,
}

/// How strong the shrunk priors' pseudo-count is.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum PriorStrength {
    Auto,
    Fixed(f64),
}

/// Every validated setting of a run, one checked value per config section.
/// Each part's fields are private and it is built only by
/// [`Settings::resolve`], so later stages cannot hold a value that failed
/// validation; they read it through the part's getters.
#[derive(Debug, Clone, PartialEq)]
pub struct Settings {
    /// `[columns]`, `[pitch_groups]` and `--strict`: how the log is read.
    pub input: InputParams,
    /// `[audit]` and the run's flags: who is audited, how it is tested.
    pub audit: AuditParams,
    /// `[model]`: the tree and its probabilities.
    pub tree: TreeParams,
    /// `[tells]`.
    pub tells: TellParams,
    /// `[location]`.
    pub location: LocationParams,
    /// `[compare]`.
    pub compare: CompareParams,
}

/// Getters returning a copy of each named field.
macro_rules! copy_getters {
    ($t:ty { $($(#[$doc:meta])* $f:ident : $ty:ty),* $(,)? }) => {
        impl $t {
            $($(#[$doc])* pub fn $f(&self) -> $ty { self.$f })*
        }
    };
}

/// How the log is read.
#[derive(Debug, Clone, PartialEq)]
pub struct InputParams {
    columns: BTreeMap<String, String>,
    pitch_groups: BTreeMap<String, String>,
    /// Loose key of a file's own `result` value = the contract result it
    /// counts as (`[result_groups]`).
    result_groups: BTreeMap<String, crate::domain::result::PitchResult>,
    /// Loose key of each label set aside = what it is, in words.
    set_aside: BTreeMap<String, String>,
    strict: bool,
}

impl InputParams {
    /// The header name the file uses for a contract column.
    pub fn file_column<'a>(&'a self, contract: &'a str) -> &'a str {
        self.columns.get(contract).map(String::as_str).unwrap_or(contract)
    }

    /// The group a raw pitch label belongs to (itself when ungrouped).
    pub fn pitch_group<'a>(&'a self, label: &'a str) -> &'a str {
        self.pitch_groups.get(label).map(String::as_str).unwrap_or(label)
    }

    /// Why a raw pitch label's rows are set aside ("a pitchout"), or `None`
    /// when it names a pitch: a label in `[pitch_groups]` is always a pitch.
    pub fn set_aside_as(&self, label: &str) -> Option<&str> {
        let label = label.trim();
        if self.pitch_groups.contains_key(label) {
            return None;
        }
        self.set_aside.get(&crate::domain::labels::loose_name(label)).map(String::as_str)
    }

    /// Why a `result` value's rows are set aside ("a pitchout": the bench's
    /// call, not the pitcher's), by the same list as pitch labels, spelled
    /// out only (a two-letter code such as "IN" could be a result's own
    /// code, in play say); `None` for a value listed in `[result_groups]`
    /// or an unknown one.
    pub fn result_set_aside_as(&self, value: &str) -> Option<&str> {
        let key = crate::domain::labels::loose_name(value);
        if self.result_groups.contains_key(&key) || key.chars().count() < 5 {
            return None;
        }
        self.set_aside.get(&key).map(String::as_str).filter(|w| !crate::domain::labels::is_unknown_pitch(w))
    }

    /// A `result` value read as a contract result: one of the seven
    /// written in any case, spacing or punctuation ("Called Strike"), or a
    /// value listed in `[result_groups]`.
    pub fn result_of(&self, value: &str) -> Option<crate::domain::result::PitchResult> {
        let key = crate::domain::labels::loose_name(value);
        self.result_groups.get(&key).copied().or_else(|| crate::domain::result::PitchResult::parse(value))
    }

    /// The same reading with `--strict` off: to keep a failed run's
    /// rejected rows.
    pub fn lenient(&self) -> InputParams {
        InputParams { strict: false, ..self.clone() }
    }

    /// `--strict`: any rejected row fails the run.
    pub fn strict(&self) -> bool {
        self.strict
    }
}

/// Who is audited, on what, and how each pitcher's model is tested.
#[derive(Debug, Clone, PartialEq)]
pub struct AuditParams {
    seed: u64,
    permutations: usize,
    fdr: f64,
    statistic: Statistic,
    stop_after_exceedances: usize,
    min_train_pitches: usize,
    min_test_pitches: usize,
    forward_blocks: usize,
    history_seasons: usize,
    new_type_share: f64,
    test_season: Option<i32>,
    pitchers: Vec<String>,
    team: Option<String>,
}

copy_getters!(AuditParams {
    /// The random seed of every shuffle and resample.
    seed: u64,
    /// Permutations per pitcher (compare: label swaps).
    permutations: usize,
    /// False discovery rate of every flag.
    fdr: f64,
    /// Which held-out statistic the permutation test scores.
    statistic: Statistic,
    /// Besag–Clifford h: stop a pitcher's permutations after this many null
    /// values at or above the observed one.
    stop_after_exceedances: usize,
    min_train_pitches: usize,
    min_test_pitches: usize,
    /// Blocks of games: of each pitcher's latest season in the rolling
    /// scheme, of a period in compare's forward-chaining.
    forward_blocks: usize,
    /// Seasons before the scored one the rolling scheme's models learn
    /// from; older seasons join only while these hold fewer than
    /// `min_train_pitches`.
    history_seasons: usize,
    /// A held-out pitch of a type under this share of the training pitches
    /// is new to him.
    new_type_share: f64,
    /// `--test-season`: score this season from the ones before it.
    test_season: Option<i32>,
});

impl AuditParams {
    /// `--pitcher`: audit only these (empty: everyone).
    pub fn pitchers(&self) -> &[String] {
        &self.pitchers
    }

    /// `--team`: audit the pitchers who pitched for this club in the log's
    /// latest season; every other pitcher is the league.
    pub fn team(&self) -> Option<&str> {
        self.team.as_deref()
    }
}

/// The tree's growth rules and how its leaves' probabilities are smoothed.
#[derive(Debug, Clone, PartialEq)]
pub struct TreeParams {
    growth: TreeSettings,
    leaf_smoothing: f64,
    prior_blend: f64,
    split_alpha: f64,
    prior_strength: PriorStrength,
    min_type_pitches: usize,
}

copy_getters!(TreeParams {
    /// Depth and leaf-size rules of the learner.
    growth: TreeSettings,
    /// Pseudo-count pulling a leaf's pitch mix toward the pitcher's mix.
    leaf_smoothing: f64,
    /// Weight of his usage prior blended into every node's mix.
    prior_blend: f64,
    /// A split is kept when its Bonferroni-adjusted G-test p-value is at or
    /// below this.
    split_alpha: f64,
    /// Pseudo-count of the shrunk count and batter priors.
    prior_strength: PriorStrength,
    /// A pitch type needs this many training pitches for its one-vs-rest figures.
    min_type_pitches: usize,
});

/// What a tell must show to be tested and flagged.
#[derive(Debug, Clone, PartialEq)]
pub struct TellParams {
    min_effect: f64,
    min_n: usize,
    pairs: Vec<(Factor, Factor)>,
    fdr_method: FdrMethod,
}

copy_getters!(TellParams {
    /// The smallest change in a pitch's share worth flagging.
    min_effect: f64,
    /// The fewest pitches in a situation for it to be tested.
    min_n: usize,
    /// How the run's tell tests are corrected for multiplicity.
    fdr_method: FdrMethod,
});

impl TellParams {
    /// Two-factor situations tested besides every single level.
    pub fn pairs(&self) -> &[(Factor, Factor)] {
        &self.pairs
    }
}

/// How many located pitches of one type the location model needs.
#[derive(Debug, Clone, PartialEq)]
pub struct LocationParams {
    min_train: usize,
    min_test: usize,
}

copy_getters!(LocationParams {
    /// Located pitches of the type to learn from.
    min_train: usize,
    /// Located pitches of the type to score.
    min_test: usize,
});

/// The comparison of two periods.
#[derive(Debug, Clone, PartialEq)]
pub struct CompareParams {
    new_pitch_share: f64,
    absent_share: f64,
    bootstrap: usize,
    permutations: usize,
}

copy_getters!(CompareParams {
    /// A type at or above this share in one period ...
    new_pitch_share: f64,
    /// ... and below this share in the other is new (or dropped).
    absent_share: f64,
    /// Resamples of each bootstrap interval.
    bootstrap: usize,
    /// Label swaps per pitcher for the predictability change.
    permutations: usize,
});

/// Flags that override the config file.
#[derive(Debug, Clone, Default)]
pub struct Overrides {
    pub seed: Option<u64>,
    /// The audit's permutations per pitcher.
    pub permutations: Option<usize>,
    /// Compare's label swaps per pitcher.
    pub compare_permutations: Option<usize>,
    pub fdr: Option<f64>,
    pub strict: bool,
    pub test_season: Option<i32>,
    pub pitchers: Vec<String>,
    pub team: Option<String>,
}

fn known_column(name: &str) -> bool {
    REQUIRED_COLUMNS.contains(&name) || OPTIONAL_COLUMNS.contains(&name) || SOURCE_COLUMNS.contains(&name) || NAME_COLUMNS.contains(&name)
}

impl ConfigFile {
    pub fn load(path: &Path) -> Result<ConfigFile> {
        let text = std::fs::read_to_string(path).map_err(|e| {
            Error::Usage(format!("{}: cannot read the config file ({e}); check the --config path", path.display()))
        })?;
        toml::from_str(&text).map_err(|e| {
            let msg = e.message().replace('\n', " ");
            let line = e
                .span()
                .map(|s| format!(" line {}", text[..s.start].lines().count().max(1)))
                .unwrap_or_default();
            Error::Usage(format!("{}{line}: {msg}; fix the config file (see the README's config example)", path.display()))
        })
    }
}

fn check_range<T: PartialOrd + std::fmt::Display + Copy>(name: &str, v: T, lo: T, hi: T) -> Result<T> {
    // Written so that NaN (which compares false with everything) fails too.
    if !(v >= lo && v <= hi) {
        return Err(Error::Usage(format!("{name} = {v} is outside {lo}..{hi}; choose a value in that range")));
    }
    Ok(v)
}

impl Settings {
    /// Validate a config file and the command-line overrides into settings:
    /// each section checked into its own value.
    pub fn resolve(cfg: &ConfigFile, o: &Overrides) -> Result<Settings> {
        Ok(Settings {
            input: InputParams::check(cfg, o)?,
            audit: AuditParams::check(&cfg.audit, o)?,
            tree: TreeParams::check(&cfg.model)?,
            tells: TellParams::check(&cfg.tells)?,
            location: LocationParams::check(&cfg.location)?,
            compare: CompareParams::check(&cfg.compare, o)?,
        })
    }
}

impl InputParams {
    /// `[columns]` names contract columns, each read from its own header;
    /// `[pitch_groups]` puts each label in one group.
    fn check(cfg: &ConfigFile, o: &Overrides) -> Result<InputParams> {
        for (contract, file) in &cfg.columns {
            if !known_column(contract) {
                return Err(Error::Usage(format!(
                    "[columns] {contract} = \"{file}\": {contract} is not a contract column; the left side must be one of the names in CONTRACT §1 (e.g. pitcher = \"PitcherName\") or one the README lists for columns written another way (half, home_score, away_score, home_team, away_team, count) or for showing pitchers by name (pitcher_name)"
                )));
            }
        }
        // Two contract columns read from one header would read one column
        // twice, silently.
        let mut mapped: BTreeMap<&str, &str> = BTreeMap::new();
        for (contract, file) in &cfg.columns {
            if let Some(other) = mapped.insert(file.as_str(), contract.as_str()) {
                return Err(Error::Usage(format!(
                    "[columns] {other} and {contract} are both mapped to the header \"{file}\"; map each contract column to its own header"
                )));
            }
        }
        let mut groups = BTreeMap::new();
        for (group, members) in &cfg.pitch_groups {
            if group.trim().is_empty() {
                return Err(Error::Usage("[pitch_groups] has an empty group name; give each group a label".into()));
            }
            for m in members {
                if let Some(prev) = groups.insert(m.trim().to_string(), group.trim().to_string()) {
                    if prev != group.trim() {
                        return Err(Error::Usage(format!(
                            "[pitch_groups] puts \"{m}\" in both \"{prev}\" and \"{group}\"; list each label in one group only"
                        )));
                    }
                }
            }
        }
        let mut result_groups = BTreeMap::new();
        for (result, members) in &cfg.result_groups {
            let Some(r) = crate::domain::result::PitchResult::parse(result) else {
                return Err(Error::Usage(format!(
                    "[result_groups] {result}: not a contract result; each key must be one of {} (e.g. ball = [\"ball_in_dirt\"])",
                    crate::domain::result::PitchResult::ALL.map(|r| r.as_str()).join(", ")
                )));
            };
            for m in members {
                let key = crate::domain::labels::loose_name(m);
                if key.is_empty() {
                    return Err(Error::Usage(format!("[result_groups] {result} lists \"{m}\", which has no letter or digit; list the values as the log writes them")));
                }
                if let Some(prev) = result_groups.insert(key, r) {
                    if prev != r {
                        return Err(Error::Usage(format!(
                            "[result_groups] puts \"{m}\" under both {} and {}; list each value under one result only",
                            prev.as_str(),
                            r.as_str()
                        )));
                    }
                }
            }
        }
        let set_aside = match &cfg.set_aside.pitch_labels {
            None => crate::domain::labels::NOT_CHOSEN.iter().map(|(l, what)| (l.to_string(), Some(*what))).collect::<Vec<_>>(),
            Some(labels) => labels.iter().map(|l| (l.clone(), crate::domain::labels::what_it_is(l))).collect(),
        };
        let set_aside = set_aside
            .into_iter()
            .map(|(l, what)| {
                let what = what.map(str::to_string).unwrap_or_else(|| "a label listed in [set_aside] pitch_labels".to_string());
                (crate::domain::labels::loose_name(&l), what)
            })
            .collect();
        Ok(InputParams { columns: cfg.columns.clone(), pitch_groups: groups, result_groups, set_aside, strict: o.strict })
    }
}

impl AuditParams {
    fn check(a: &AuditConfig, o: &Overrides) -> Result<AuditParams> {
        let statistic = match a.statistic.as_deref().unwrap_or(STATISTIC) {
            "bits" => Statistic::Bits,
            "accuracy" => Statistic::Accuracy,
            other => {
                return Err(Error::Usage(format!(
                    "[audit] statistic = \"{other}\" is unknown; use \"bits\" or \"accuracy\""
                )))
            }
        };
        let fdr = o.fdr.or(a.fdr).unwrap_or(FDR);
        if !(fdr > 0.0 && fdr < 1.0) {
            return Err(Error::Usage(format!("--fdr {fdr} must lie strictly between 0 and 1, e.g. 0.05")));
        }
        let permutations = o.permutations.or(a.permutations).unwrap_or(AUDIT_PERMUTATIONS);
        check_range("--permutations", permutations, 0, 1_000_000)?;
        Ok(AuditParams {
            seed: o.seed.or(a.seed).unwrap_or(DEFAULT_SEED),
            permutations,
            fdr,
            statistic,
            stop_after_exceedances: check_range("[audit] stop_after_exceedances", a.stop_after_exceedances.unwrap_or(STOP_AFTER_EXCEEDANCES), 1, 1_000_000)?,
            min_train_pitches: check_range("[audit] min_train_pitches", a.min_train_pitches.unwrap_or(MIN_TRAIN_PITCHES), 50, 10_000_000)?,
            min_test_pitches: check_range("[audit] min_test_pitches", a.min_test_pitches.unwrap_or(MIN_TEST_PITCHES), 20, 10_000_000)?,
            forward_blocks: check_range("[audit] forward_blocks", a.forward_blocks.unwrap_or(FORWARD_BLOCKS), 2, 50)?,
            history_seasons: check_range("[audit] history_seasons", a.history_seasons.unwrap_or(HISTORY_SEASONS), 1, 100)?,
            new_type_share: check_range("[audit] new_type_share", a.new_type_share.unwrap_or(NEW_TYPE_SHARE), 0.0, 0.5)?,
            test_season: o.test_season,
            pitchers: o.pitchers.clone(),
            team: o.team.clone(),
        })
    }
}

impl TreeParams {
    fn check(m: &ModelConfig) -> Result<TreeParams> {
        let prior_strength = match &m.prior_strength {
            None => PriorStrength::Auto,
            Some(toml::Value::String(s)) if s == "auto" => PriorStrength::Auto,
            Some(toml::Value::Float(f)) => PriorStrength::Fixed(check_range("[model] prior_strength", *f, 0.0, 1e6)?),
            Some(toml::Value::Integer(i)) => PriorStrength::Fixed(check_range("[model] prior_strength", *i as f64, 0.0, 1e6)?),
            Some(v) => {
                return Err(Error::Usage(format!(
                    "[model] prior_strength = {v} is not understood; use \"auto\" or a number of pseudo-pitches"
                )))
            }
        };
        let growth = TreeSettings {
            max_depth: check_range("[model] max_depth", m.max_depth.unwrap_or(MAX_DEPTH), 1, 20)?,
            min_samples_leaf: check_range("[model] min_samples_leaf", m.min_samples_leaf.unwrap_or(MIN_SAMPLES_LEAF), 1, 100_000)?,
            min_samples_split: check_range("[model] min_samples_split", m.min_samples_split.unwrap_or(MIN_SAMPLES_SPLIT), 2, 100_000)?,
            min_impurity_decrease: check_range("[model] min_impurity_decrease", m.min_impurity_decrease.unwrap_or(MIN_IMPURITY_DECREASE), 0.0, 1.0)?,
        };
        Ok(TreeParams {
            growth,
            leaf_smoothing: check_range("[model] leaf_smoothing", m.leaf_smoothing.unwrap_or(LEAF_SMOOTHING), 0.01, 1e6)?,
            prior_blend: check_range("[model] prior_blend", m.prior_blend.unwrap_or(PRIOR_BLEND), 0.0, 1.0)?,
            split_alpha: check_range("[model] split_alpha", m.split_alpha.unwrap_or(SPLIT_ALPHA), 1e-12, 1.0)?,
            prior_strength,
            min_type_pitches: check_range("[model] min_type_pitches", m.min_type_pitches.unwrap_or(MIN_TYPE_PITCHES), 1, 1_000_000)?,
        })
    }
}

impl TellParams {
    fn check(t: &TellConfig) -> Result<TellParams> {
        let pairs = match &t.pairs {
            None => vec![
                (Factor::Count, Factor::Platoon),
                (Factor::Count, Factor::Bases),
                (Factor::Count, Factor::PrevPitch),
                (Factor::Count, Factor::Outs),
            ],
            Some(list) => {
                let mut out = Vec::new();
                for [x, y] in list {
                    let fx = Factor::from_name(x);
                    let fy = Factor::from_name(y);
                    match (fx, fy) {
                        (Some(fx), Some(fy)) if fx != fy => out.push((fx, fy)),
                        _ => {
                            return Err(Error::Usage(format!(
                                "[tells] pairs has [\"{x}\", \"{y}\"]; each pair needs two different factors from CONTRACT §2 (count, bats, platoon, bases, outs, prev_pitch, times_through, inning, score)"
                            )))
                        }
                    }
                }
                out
            }
        };
        Ok(TellParams {
            min_effect: check_range("[tells] min_effect", t.min_effect.unwrap_or(TELLS_MIN_EFFECT), 0.0, 1.0)?,
            min_n: check_range("[tells] min_n", t.min_n.unwrap_or(TELLS_MIN_N), 1, 1_000_000)?,
            pairs,
            fdr_method: match t.fdr_method.as_deref().unwrap_or(TELLS_FDR_METHOD) {
                "hierarchical" => FdrMethod::Hierarchical,
                "pooled" => FdrMethod::Pooled,
                other => {
                    return Err(Error::Usage(format!(
                        "[tells] fdr_method = \"{other}\" is unknown; use \"hierarchical\" or \"pooled\""
                    )))
                }
            },
        })
    }
}

impl LocationParams {
    fn check(l: &LocationConfig) -> Result<LocationParams> {
        Ok(LocationParams {
            min_train: check_range("[location] min_train_pitches", l.min_train_pitches.unwrap_or(LOCATION_MIN_TRAIN_PITCHES), 30, 10_000_000)?,
            min_test: check_range("[location] min_test_pitches", l.min_test_pitches.unwrap_or(LOCATION_MIN_TEST_PITCHES), 10, 10_000_000)?,
        })
    }
}

impl CompareParams {
    fn check(c: &CompareConfig, o: &Overrides) -> Result<CompareParams> {
        Ok(CompareParams {
            new_pitch_share: check_range("[compare] new_pitch_share", c.new_pitch_share.unwrap_or(COMPARE_NEW_PITCH_SHARE), 0.0, 1.0)?,
            absent_share: check_range("[compare] absent_share", c.absent_share.unwrap_or(COMPARE_ABSENT_SHARE), 0.0, 1.0)?,
            bootstrap: check_range("[compare] bootstrap", c.bootstrap.unwrap_or(COMPARE_BOOTSTRAP), 50, 100_000)?,
            permutations: check_range(
                if o.compare_permutations.is_some() { "--permutations" } else { "[compare] permutations" },
                o.compare_permutations.or(c.permutations).unwrap_or(COMPARE_PERMUTATIONS), 0, 1_000_000)?,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_validate() {
        let s = Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap();
        assert_eq!(s.audit.permutations(), 999);
        assert_eq!(s.audit.fdr(), 0.05);
        assert_eq!(s.tells.pairs().len(), 4);
        assert_eq!(s.compare.permutations(), 1999);
    }

    #[test]
    fn bad_values_are_usage_errors() {
        let cfg: ConfigFile = toml::from_str("[audit]\nfdr = 1.5\n").unwrap();
        let e = Settings::resolve(&cfg, &Overrides::default()).unwrap_err();
        assert_eq!(e.exit_code(), 2);
        let cfg: ConfigFile = toml::from_str("[columns]\npitcherz = \"P\"\n").unwrap();
        assert!(Settings::resolve(&cfg, &Overrides::default()).unwrap_err().to_string().contains("pitcherz"));
        let cfg: ConfigFile = toml::from_str("[columns]\npitcher = \"P\"\nbatter = \"P\"\n").unwrap();
        let e = Settings::resolve(&cfg, &Overrides::default()).unwrap_err();
        assert!(e.to_string().contains("pitcher") && e.to_string().contains("batter") && e.exit_code() == 2, "{e}");
        let cfg: ConfigFile = toml::from_str("[model]\nsplit_alpha = nan\n").unwrap();
        assert_eq!(Settings::resolve(&cfg, &Overrides::default()).unwrap_err().exit_code(), 2);
        let cfg: ConfigFile = toml::from_str("[pitch_groups]\nfastball = [\"FF\"]\ncutter = [\"FF\"]\n").unwrap();
        assert!(Settings::resolve(&cfg, &Overrides::default()).is_err());
        assert!(toml::from_str::<ConfigFile>("[audit]\nbogus = 1\n").is_err());
    }
}
