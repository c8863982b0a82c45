//! `index.html`: one self-contained page rendered by minijinja with HTML
//! autoescaping on (the template's name ends in `.html`), so every name and
//! sentence from the data is escaped; only our own SVG charts are inserted
//! unescaped.

use crate::domain::numbers::{self, p_text};
use crate::audit::summary::{PitcherSummary, Summary};
use crate::audit::wording;
use crate::error::{Error, Result};
use crate::tells::TellTest;
use serde::Serialize;
use std::collections::BTreeMap;

const TEMPLATE: &str = include_str!("templates/index.html");
/// The staff table's click-to-sort script, shared by both report pages.
const SORT_TABLE: &str = include_str!("templates/sort_table.html");

/// A template environment holding `name` and the shared pieces it includes.
/// Names end in `.html`, so minijinja escapes every value for HTML.
pub fn environment(name: &'static str, source: &'static str) -> Result<minijinja::Environment<'static>> {
    let mut env = minijinja::Environment::new();
    for (n, text) in [("sort_table.html", SORT_TABLE), (name, source)] {
        env.add_template(n, text).map_err(|e| Error::Internal(format!("template {n}: {e}")))?;
    }
    // Counts grouped by thousands (`numbers::fmt_n`); anything else as it is.
    env.add_filter("thousands", |v: minijinja::Value| match u64::try_from(v.clone()) {
        Ok(n) => numbers::fmt_n(n),
        Err(_) => v.to_string(),
    });
    Ok(env)
}

/// Inline SVG of each chart: the staff chart and each pitcher's charts.
#[derive(Default)]
pub struct ChartSvgs {
    pub staff: Option<String>,
    /// Do predictable pitches cost them? (with results only)
    pub called: Option<String>,
    /// The staff's percentiles against the league (or the staff).
    pub league: Option<String>,
    pub per_pitcher: BTreeMap<String, Vec<String>>,
    /// Where each pitcher's pitches go (small multiples), by pitcher.
    pub location: BTreeMap<String, String>,
    /// Some pitchers' charts are in charts/ only (a large staff).
    pub omitted: bool,
    /// Pitchers whose charts the page shows.
    pub shown: usize,
}

#[derive(Serialize)]
struct CountRow {
    count: String,
    n: usize,
    top_pitch: String,
    share: String,
    interval: String,
    prior: String,
    model: String,
    q: String,
    more_predictable: bool,
}

#[derive(Serialize)]
struct TypeRow {
    pitch_type: String,
    train_share: String,
    prior: String,
    model: String,
    bits: String,
}

#[derive(Serialize)]
struct PitcherView {
    pitcher: String,
    location_chart: Option<String>,
    location_text: String,
    location_tells: Vec<String>,
    location_types: Vec<LocationTypeRow>,
    scheme_text: String,
    headline: Vec<String>,
    sheet_lines: Vec<String>,
    league_lines: Vec<String>,
    league_text: String,
    sheet_tells: Vec<String>,
    layers_text: String,
    beyond_significant: bool,
    anchor: String,
    /// His latest season, when it is older than the log's (a former member
    /// of the staff, scored on his own last season).
    last_pitched: Option<i32>,
    /// With --team: the club he was traded to.
    now_with: Option<String>,
    throws: String,
    n_train: usize,
    n_test: usize,
    prior_pitch: String,
    prior_accuracy: f64,
    model_accuracy: f64,
    lift: f64,
    bits_gained: f64,
    p_value: f64,
    q_value: f64,
    prior_text: String,
    model_text: String,
    lift_text: String,
    bits_text: String,
    p_text: String,
    q_text: String,
    permutations: usize,
    significant: bool,
    n_tells: usize,
    tells: Vec<String>,
    narrow: Vec<String>,
    advice: Vec<String>,
    rules: Vec<String>,
    cautions: Vec<String>,
    charts: Vec<String>,
    counts: Vec<CountRow>,
    types: Vec<TypeRow>,
}

#[derive(Serialize)]
struct Insufficient {
    pitcher: String,
    n_train: usize,
    n_test: usize,
    why: String,
}

/// The mix of a pitcher's pitch types in a tell's situation, from the tell
/// tests of that situation (every type he throws is tested there).
pub fn situation_mix(his: &[&TellTest], t: &TellTest) -> Vec<(String, f64)> {
    let mut mix: BTreeMap<String, f64> = BTreeMap::new();
    for o in his.iter().filter(|o| o.pitcher == t.pitcher && o.situation == t.situation) {
        mix.insert(o.pitch_type.clone(), o.share);
    }
    mix.into_iter().collect()
}

/// Pitches a season in a tell's situation: the held-out season's count when
/// there is one, else the discovery count spread over its seasons.
pub fn per_season(t: &TellTest, discovery_seasons: usize) -> f64 {
    if t.held_out_n > 0 {
        t.held_out_n as f64
    } else {
        t.n as f64 / discovery_seasons.max(1) as f64
    }
}

#[derive(Serialize)]
struct LocationTypeRow {
    pitch_type: String,
    n: usize,
    prior: String,
    model: String,
    bits: String,
}

/// His location figures in words, or why there are none.
fn location_text(p: &crate::audit::summary::PitcherSummary, fdr: f64) -> String {
    let Some(l) = &p.location else { return p.location_note.clone().unwrap_or_default() };
    let verdict = if l.q_value <= fdr {
        "where he puts a pitch depends on the situation beyond his usual spots for it."
    } else {
        "no evidence that the situation tells where a pitch goes beyond his usual spots for it."
    };
    let mut s = format!(
        "Held out, a guess of the plate region from the situation and the pitch was right {} of the time, against {} for always guessing each pitch's usual region ({:+.3} bits per pitch, {} located pitches). Permutation test, regions shuffled within each pitch type's blocks of games: {} — {verdict}",
        numbers::pct(l.model_accuracy),
        numbers::pct(l.prior_accuracy),
        l.bits_gained,
        numbers::fmt_n(l.n),
        numbers::p_and_q_text(l.p_value, l.q_value, l.permutations, l.ruled_out)
    );
    if !l.left_out.is_empty() {
        let names: Vec<String> = l.left_out.iter().map(|t| format!("{} ({} located)", t.pitch_type, numbers::fmt_n(t.located_pitches))).collect();
        s.push_str(&format!(" Too few located pitches to include: {}.", names.join(", ")));
    }
    s
}

/// One audited pitcher's section of the page.
fn pitcher_view(
    p: &PitcherSummary,
    summary: &Summary,
    tests_of: &crate::tells::ByPitcher,
    discovery_seasons: usize,
    charts: &ChartSvgs,
    stems: &BTreeMap<String, String>,
) -> PitcherView {
    // Tells beyond the sheet are listed; the sheet's own count and side
    // tells fold away under the sheet (its cells say the same).
    let g = |x: Option<f64>| x.unwrap_or(0.0);
    let (beyond, sheet_layer): (Vec<&TellTest>, Vec<&TellTest>) =
        p.tells.iter().partition(|t| t.layer == crate::tells::Layer::Beyond);
    let (main, narrow): (Vec<&TellTest>, Vec<&TellTest>) = beyond.into_iter().partition(|t| t.within.is_none());
    let mut leaning: Vec<&crate::audit::sheet::SheetCell> = p.sheet.iter().filter(|c| c.leans).collect();
    leaning.sort_by(|a, b| b.given_away.total_cmp(&a.given_away).then(a.count.cmp(&b.count)).then(a.bats.cmp(&b.bats)));
    let layers_text = match (p.sheet_bits, p.beyond_bits, p.beyond_p_value, p.beyond_q_value) {
        (Some(sb), Some(bb), Some(bp), Some(bq)) => format!(
            "Of his {:+.3} bits per pitch, his sheet (mix by count and batter side, what every opponent charts) gives {:+.3}; everything beyond it {:+.3} (beyond-the-sheet test, labels shuffled within each game's count and side: {}).",
            g(p.bits_gained),
            sb,
            bb,
            numbers::p_and_q_text(bp, bq, p.beyond_permutations.unwrap_or(0), p.beyond_ruled_out.unwrap_or(false))
        ),
        _ => String::new(),
    };
    // "What to change": tells that cost him first (beyond the sheet or
    // on it), then the rest beyond the sheet, most pitches given away
    // first (a faded tell by what is left of it, as in the headline); a
    // tell that is predictable but still works says so and is left alone.
    // A tell that restates a stronger one (mostly the same pitches) is
    // weighed once, under the stronger.
    let mut to_weigh: Vec<&TellTest> = main.iter().copied().filter(|t| t.restates.is_none()).collect();
    to_weigh.extend(sheet_layer.iter().copied().filter(|t| t.within.is_none() && t.cost.as_ref().is_some_and(|c| c.costly)));
    to_weigh.sort_by(|a, b| {
        let costly = |t: &TellTest| t.cost.as_ref().is_some_and(|c| c.costly);
        costly(b).cmp(&costly(a)).then(b.strength_now().total_cmp(&a.strength_now()))
    });
    let advice = to_weigh
        .iter()
        .map(|t| {
            let base = wording::advice(t, &situation_mix(tests_of.of(&t.pitcher), t), per_season(t, discovery_seasons));
            match &t.cost {
                Some(c) if c.costly => format!("{} {}", wording::cost_sentence(t, c), base),
                Some(c) => wording::cost_sentence(t, c),
                None => base,
            }
        })
        .collect();
    PitcherView {
        pitcher: p.pitcher.clone(),
        headline: p.headline.clone(),
        sheet_lines: leaning.iter().take(6).map(|c| crate::audit::sheet::cell_phrase(c)).collect(),
        league_lines: wording::league_lines(p, &summary.yardstick),
        league_text: wording::league_sentence(p, &summary.yardstick),
        sheet_tells: sheet_layer
            .iter()
            .filter(|t| t.within.is_none())
            .map(|t| wording::tell_sentence(t, &p.evaluation.tells_checked_on))
            .collect(),
        layers_text,
        beyond_significant: p.beyond_significant.unwrap_or(false),
        anchor: stems.get(&p.pitcher).cloned().unwrap_or_default(),
        last_pitched: summary.last_pitched(p),
        now_with: p.now_with.clone(),
        throws: p.throws.clone(),
        n_train: p.n_train,
        n_test: p.n_test,
        prior_pitch: p.prior_pitch.clone().unwrap_or_default(),
        prior_accuracy: g(p.prior_accuracy),
        model_accuracy: g(p.model_accuracy),
        lift: g(p.lift),
        bits_gained: g(p.bits_gained),
        p_value: g(p.p_value),
        q_value: g(p.q_value),
        prior_text: numbers::pct(g(p.prior_accuracy)),
        model_text: numbers::pct(g(p.model_accuracy)),
        lift_text: numbers::lift_text(g(p.lift), g(p.prior_accuracy)),
        bits_text: format!("{:+.3}", g(p.bits_gained)),
        p_text: p_text(g(p.p_value)),
        q_text: p_text(g(p.q_value)),
        permutations: p.permutations.unwrap_or(0),
        significant: p.significant.unwrap_or(false),
        // Every flagged tell of his own (on the sheet or beyond it, not the
        // narrower ones inside another), as the terminal's table counts.
        n_tells: p.tells.iter().filter(|t| t.within.is_none()).count(),
        tells: main.iter().map(|t| wording::tell_sentence(t, &p.evaluation.tells_checked_on)).collect(),
        narrow: narrow.iter().map(|t| wording::tell_sentence(t, &p.evaluation.tells_checked_on)).collect(),
        scheme_text: wording::evaluation_sentence(&p.evaluation),
        advice,
        rules: p.rules.iter().map(|r| r.text.clone()).collect(),
        cautions: p.cautions.clone(),
        charts: charts.per_pitcher.get(&p.pitcher).cloned().unwrap_or_default(),
        location_chart: charts.location.get(&p.pitcher).cloned(),
        location_text: location_text(p, summary.settings.fdr),
        location_tells: p.location_tells.iter().map(|t| t.text.clone()).collect(),
        location_types: location_type_rows(p),
        counts: count_rows(p),
        types: type_rows(p),
    }
}

/// His count-by-count table.
fn count_rows(p: &PitcherSummary) -> Vec<CountRow> {
    p.counts
        .iter()
        .map(|c| CountRow {
            count: c.count.clone(),
            n: c.n,
            top_pitch: c.top_pitch.clone(),
            share: numbers::pct(c.top_share),
            interval: format!("{}–{}", numbers::pct(c.top_share_low), numbers::pct(c.top_share_high)),
            prior: numbers::pct(c.prior_accuracy),
            model: numbers::pct(c.model_accuracy),
            q: c.q_value.map(p_text).unwrap_or_else(|| "—".into()),
            more_predictable: c.more_predictable,
        })
        .collect()
}

/// His pitch-type table.
fn type_rows(p: &PitcherSummary) -> Vec<TypeRow> {
    p.types
        .iter()
        .map(|t| TypeRow {
            pitch_type: t.pitch_type.clone(),
            train_share: numbers::pct(t.train_share),
            prior: numbers::pct(t.prior_accuracy),
            model: numbers::pct(t.model_accuracy),
            bits: format!("{:+.3}", t.bits_gained),
        })
        .collect()
}

/// His location table, pitch type by pitch type (empty without figures).
fn location_type_rows(p: &PitcherSummary) -> Vec<LocationTypeRow> {
    p.location
        .as_ref()
        .map(|l| {
            l.by_type
                .iter()
                .map(|t| LocationTypeRow {
                    pitch_type: t.pitch_type.clone(),
                    n: t.n,
                    prior: numbers::pct(t.prior_accuracy),
                    model: numbers::pct(t.model_accuracy),
                    bits: format!("{:+.3}", t.bits_gained),
                })
                .collect()
        })
        .unwrap_or_default()
}

pub fn render(summary: &Summary, all_tests: &[TellTest], charts: &ChartSvgs, stems: &BTreeMap<String, String>) -> Result<String> {
    let discovery_seasons = summary.input.seasons.len().saturating_sub(1).max(1);
    let tests_of = crate::tells::ByPitcher::new(all_tests);
    let mut staff = Vec::new();
    let mut insufficient = Vec::new();
    for p in &summary.pitchers {
        if !p.is_ok() {
            // The rule is said once above the table; each row says which
            // side he falls short on (a pitcher without figures is short on
            // one at least: `audit::enough`).
            let short = match (p.n_train < summary.settings.min_train_pitches, p.n_test < summary.settings.min_test_pitches) {
                (true, true) => "too few to learn from and to score",
                (true, false) => "too few to learn from",
                _ => "too few to score",
            };
            let by_season: Vec<String> = p.pitches_by_season.iter().map(|(y, n)| format!("{} in {y}", numbers::fmt_n(*n))).collect();
            insufficient.push(Insufficient {
                pitcher: p.pitcher.clone(),
                n_train: p.n_train,
                n_test: p.n_test,
                why: format!("{}: {short}.", by_season.join(", ")),
            });
            continue;
        }
        staff.push(pitcher_view(p, summary, &tests_of, discovery_seasons, charts, stems));
    }
    // Most predictable first; the table can be re-sorted in the page.
    staff.sort_by(|a, b| b.bits_gained.partial_cmp(&a.bits_gained).unwrap().then(a.pitcher.cmp(&b.pitcher)));
    let env = environment("index.html", TEMPLATE)?;
    let tmpl = env.get_template("index.html").map_err(|e| Error::Internal(format!("template: {e}")))?;
    let ctx = minijinja::context! {
        title => summary.input.path.clone(),
        input_path => summary.input.path.clone(),
        rows_kept => summary.input.rows_kept,
        rows_read => summary.input.rows_read,
        train => summary.evaluation.train.clone(),
        test => summary.evaluation.test.clone(),
        scheme => summary.evaluation.scheme.clone(),
        permutations => summary.settings.permutations,
        fdr => summary.settings.fdr,
        fdr_pct => format!("{:.0}%", summary.settings.fdr * 100.0),
        min_effect => format!("{:.0} points", summary.settings.tell_min_effect * 100.0),
        min_effect_pct => format!("{:.0} points", summary.settings.tell_min_effect * 100.0),
        min_n => summary.settings.tell_min_n,
        version => summary.tool.version.clone(),
        notes => summary.notes.clone(),
        staff => staff,
        insufficient => insufficient,
        min_train => summary.settings.min_train_pitches,
        min_test => summary.settings.min_test_pitches,
        staff_chart => charts.staff.clone(),
        called_chart => charts.called.clone(),
        league_chart => charts.league.clone(),
        league_heading => if summary.yardstick == "league" { "Against the league" } else { "Against the rest of the staff" },
        league_note => if summary.yardstick == "league" {
            "Each pitcher's percentile among the league's other pitchers with the minimum sample, from the same file."
        } else {
            "The file holds one club, so the yardstick is the staff, not a league: each pitcher is ranked among his own staff's other pitchers."
        },
        called_text => summary.staff_called_outcomes.as_ref().map(|c| format!(
            "Across the staff, swings at pitches the held-out model called drew whiffs {} of the time, against {} for the same pitch types in the same counts when it guessed otherwise (difference {:+.1} points, 95% interval {:+.1} to {:+.1}; {} called swings in counts where both happened). These are associations in past games: the log never says what the hitter was sitting on.",
            numbers::pct(c.whiff_rate_called),
            numbers::pct(c.expected_whiff_rate),
            100.0 * (c.whiff_rate_called - c.expected_whiff_rate),
            100.0 * c.diff_low,
            100.0 * c.diff_high,
            numbers::fmt_n(c.called_swings)
        )),
        charts_omitted => charts.omitted,
        charts_shown => charts.shown,
    };
    tmpl.render(ctx).map_err(|e| Error::Internal(format!("rendering index.html: {e}")))
}
