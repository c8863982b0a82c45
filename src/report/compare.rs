//! The files of a `compare` report, every one rendered from the
//! comparison's one results value: `index.html` (minijinja, HTML
//! autoescaping on; only our own SVG charts are inserted unescaped),
//! `summary.json`, `changes.csv`, `rejected.csv` and the charts under
//! `charts/` as SVG and PNG.

use crate::domain::numbers::{self, bits_text, fmt_n, p_text, points, q_text, share_text};
use super::charts::{self, Chart, ChartError};
use super::csv::{rejected_csv, Table};
use super::export::{Csv, Exporter, Html, Json, Sink};
use super::{unique_stems, ReportFile};

use crate::compare::summary::{Change, CompareSummary, PeriodFigures, PitcherChanges, Predictability};

use crate::compare::Comparison;
use crate::error::{Error, Result};
use serde::Serialize;
use std::collections::BTreeMap;

const TEMPLATE: &str = include_str!("templates/compare.html");

fn chart_err(e: ChartError) -> Error {
    Error::Internal(format!("drawing a chart: {e:?}"))
}

/// `summary.json`: the results value, serialised.
pub fn summary_json(s: &CompareSummary) -> Result<String> {
    super::export::json_text(s)
}

fn situation_text(c: &Change) -> String {
    let s = if c.situation.is_empty() {
        "all pitches".to_string()
    } else {
        c.situation.iter().map(|(f, l)| format!("{f} {l}")).collect::<Vec<_>>().join(", ")
    };
    match &c.among {
        Some(a) if c.situation.is_empty() => a.clone(),
        Some(a) => format!("{s} ({a})"),
        None => s,
    }
}

/// `changes.csv`: one row per test of the run, significant or not.
pub fn changes_csv(s: &CompareSummary) -> Result<Vec<u8>> {
    let rows: Vec<(&PitcherChanges, &Change)> = s.pitchers.iter().flat_map(|p| p.changes.iter().map(move |c| (p, c))).collect();
    let ids = super::csv::pitcher_ids(s.pitchers.iter().map(|p| (p.pitcher.as_str(), p.pitcher_id.as_deref())));
    Table::default()
        .str("pitcher", rows.iter().map(|(p, _)| p.pitcher.clone()).collect())
        .ids(&ids, rows.iter().map(|(p, _)| p.pitcher.as_str()))
        .str("type", rows.iter().map(|(_, c)| c.kind.clone()).collect())
        .str("situation", rows.iter().map(|(_, c)| situation_text(c)).collect())
        .opt_str("pitch_type", rows.iter().map(|(_, c)| c.pitch_type.clone()).collect())
        .opt_str("direction", rows.iter().map(|(_, c)| c.direction.clone()).collect())
        .f64("before", rows.iter().map(|(_, c)| c.before).collect())
        .f64("after", rows.iter().map(|(_, c)| c.after).collect())
        .f64("effect", rows.iter().map(|(_, c)| c.effect).collect())
        .str("effect_measure", rows.iter().map(|(_, c)| c.effect_measure.clone()).collect())
        .opt_f64("effect_low_95", rows.iter().map(|(_, c)| c.interval.map(|i| i.low)).collect())
        .opt_f64("effect_high_95", rows.iter().map(|(_, c)| c.interval.map(|i| i.high)).collect())
        .u64("n_before", rows.iter().map(|(_, c)| c.n_before as u64).collect())
        .u64("n_after", rows.iter().map(|(_, c)| c.n_after as u64).collect())
        .str("test", rows.iter().map(|(_, c)| c.test.clone()).collect())
        .opt_f64("statistic", rows.iter().map(|(_, c)| c.statistic).collect())
        .opt_f64("p", rows.iter().map(|(_, c)| c.p).collect())
        .opt_f64("q", rows.iter().map(|(_, c)| c.q).collect())
        .bool("significant", rows.iter().map(|(_, c)| c.significant).collect())
        .str("family", rows.iter().map(|(_, c)| c.family.clone()).collect())
        .opt_str("among", rows.iter().map(|(_, c)| c.among.clone()).collect())
        .opt_f64("tell_q_before", rows.iter().map(|(_, c)| c.tell_q_before).collect())
        .opt_f64("tell_q_after", rows.iter().map(|(_, c)| c.tell_q_after).collect())
        .str("text", rows.iter().map(|(_, c)| c.text.clone()).collect())
        .opt_str("region", rows.iter().map(|(_, c)| c.region.clone()).collect())
        .to_csv(rows.len())
}

/// Bits for a chart: values that print as ±0.000 are drawn at 0, so a label
/// never reads "-0.000" (monotone, so an interval still holds its estimate).
fn tidy(x: f64) -> f64 {
    if x.abs() < 5e-4 {
        0.0
    } else {
        x
    }
}

/// The charts of one pitcher, named by his unique stem.
fn pitcher_charts(s: &CompareSummary, p: &PitcherChanges, stem: &str) -> Result<Vec<Chart>> {
    let (bl, al) = (s.periods.before.label.clone(), s.periods.after.label.clone());
    let mut out = Vec::new();
    let top = charts::compare_top_share(&charts::CompareTopShareInput {
        pitcher: p.pitcher.clone(),
        before_label: bl.clone(),
        after_label: al.clone(),
        pairs: p
            .counts
            .iter()
            .filter(|c| c.n_before + c.n_after > 0)
            .map(|c| charts::TopSharePair {
                count: c.count.clone(),
                before: c.top_share_before,
                after: c.top_share_after,
                n_before: c.n_before as u64,
                n_after: c.n_after as u64,
            })
            .collect(),
        min_n: s.settings.min_count_pitches as u64,
    })
    .map_err(chart_err)?;
    out.push(Chart { name: format!("compare-top-share-{stem}"), ..top });
    let as_vec = |m: &Option<BTreeMap<String, f64>>| m.iter().flatten().map(|(k, v)| (k.clone(), *v)).collect::<Vec<_>>();
    let mix = charts::compare_mix_shift(&charts::MixShiftInput {
        pitcher: p.pitcher.clone(),
        before_label: bl.clone(),
        after_label: al.clone(),
        n_before: p.n_before as u64,
        n_after: p.n_after as u64,
        before: as_vec(&p.mix_before),
        after: as_vec(&p.mix_after),
    })
    .map_err(chart_err)?;
    out.push(Chart { name: format!("compare-mix-shift-{stem}"), ..mix });
    if let Some(pr) = &p.predictability {
        let period = |f: &crate::compare::summary::PeriodFigures| charts::PeriodPredictability {
            label: f.label.clone(),
            n: f.n_test as u64,
            bits_gained: tidy(f.bits_gained),
            lower: tidy(f.bits_interval.low),
            upper: tidy(f.bits_interval.high),
        };
        let c = charts::compare_predictability(&charts::ComparePredictabilityInput {
            pitcher: p.pitcher.clone(),
            periods: vec![period(&pr.before), period(&pr.after)],
            interval_label: "95% interval, games resampled with the models held fixed (scoring noise only)".into(),
        })
        .map_err(chart_err)?;
        out.push(Chart { name: format!("compare-predictability-{stem}"), ..c });
    }
    if p.seasons.len() > 2 {
        let c = charts::compare_predictability(&charts::ComparePredictabilityInput {
            pitcher: p.pitcher.clone(),
            periods: p
                .seasons
                .iter()
                .map(|f| charts::PeriodPredictability {
                    label: f.label.clone(),
                    n: f.n_test as u64,
                    bits_gained: tidy(f.bits_gained),
                    lower: tidy(f.bits_interval.low),
                    upper: tidy(f.bits_interval.high),
                })
                .collect(),
            interval_label: "95% interval, games resampled with the models held fixed; each season cross-fitted on its own".into(),
        })
        .map_err(chart_err)?;
        out.push(Chart { name: format!("compare-predictability-by-season-{stem}"), ..c });
    }
    Ok(out)
}

#[derive(Serialize)]
struct MixRow {
    pitch: String,
    before: String,
    after: String,
    change: String,
}

#[derive(Serialize)]
struct CountRow {
    count: String,
    n_before: usize,
    n_after: usize,
    top_before: String,
    top_after: String,
    mover: String,
    shift: String,
    test: String,
    q: String,
    significant: bool,
    explained: String,
}

#[derive(Serialize)]
struct PeriodRow {
    label: String,
    pitches: usize,
    n_test: usize,
    prior: String,
    model: String,
    lift: String,
    bits: String,
    interval: String,
}

#[derive(Serialize)]
struct TellRow {
    status: String,
    situation: String,
    pitch: String,
    before: String,
    after: String,
    q: String,
    tell_q: String,
    significant: bool,
}

#[derive(Serialize)]
struct TestRow {
    kind: String,
    situation: String,
    pitch: String,
    before: String,
    after: String,
    effect: String,
    test: String,
    p: String,
    q: String,
    significant: bool,
}

#[derive(Serialize)]
struct PitcherView {
    pitcher: String,
    anchor: String,
    throws: String,
    n_before: usize,
    n_after: usize,
    games_before: usize,
    games_after: usize,
    lines: Vec<String>,
    cautions: Vec<String>,
    charts: Vec<String>,
    mix: Vec<MixRow>,
    mix_q: String,
    mix_kept: bool,
    mix_shift: String,
    counts: Vec<CountRow>,
    periods: Vec<PeriodRow>,
    seasons: Vec<PeriodRow>,
    difference: String,
    tells: Vec<TellRow>,
    tests: Vec<TestRow>,
    significant: usize,
}

#[derive(Serialize)]
struct StaffRow {
    pitcher: String,
    anchor: String,
    throws: String,
    n_before: usize,
    n_after: usize,
    mix_shift: String,
    mix_shift_v: f64,
    mix_q: String,
    mix_q_v: f64,
    bits_before: String,
    bits_before_v: f64,
    bits_after: String,
    bits_after_v: f64,
    pred_q: String,
    pred_q_v: f64,
    significant: usize,
    headline: String,
}

#[derive(Serialize)]
struct Insufficient {
    pitcher: String,
    n_before: usize,
    n_after: usize,
    why: String,
}

fn kind_text(k: &str) -> &'static str {
    match k {
        "new_pitch" => "new pitch",
        "dropped_pitch" => "dropped pitch",
        "mix_shift" => "mix shift",
        "predictability" => "predictability",
        "tell_appeared" => "tell appeared",
        "tell_disappeared" => "tell gone",
        _ => "tell held",
    }
}

fn test_text(t: &str) -> &'static str {
    match t {
        "g_test" => "G-test",
        "monte_carlo_g" => "Monte Carlo",
        "game_permutation_g" => "games shuffled",
        "label_swap_permutation" => "label swap",
        t if t.starts_with("mix_shift count") => "count's mix test",
        _ => "—",
    }
}

fn shares_or_bits(c: &Change, x: f64) -> String {
    if c.kind == "predictability" {
        bits_text(x)
    } else {
        share_text(x)
    }
}

fn effect_text(c: &Change) -> String {
    match c.effect_measure.as_str() {
        "total_variation" => format!("shift {:.0} / 100", 100.0 * c.effect),
        "bits_difference" => bits_text(c.effect),
        _ => points(c.effect),
    }
}

fn pitcher_view(s: &CompareSummary, p: &PitcherChanges, anchor: &str, svgs: Vec<String>) -> PitcherView {
    let mb = p.mix_before.clone().unwrap_or_default();
    let ma = p.mix_after.clone().unwrap_or_default();
    let mut types: Vec<&String> = mb.keys().chain(ma.keys()).collect();
    types.sort();
    types.dedup();
    let mix = types
        .iter()
        .map(|t| {
            let (b, a) = (mb.get(*t).copied().unwrap_or(0.0), ma.get(*t).copied().unwrap_or(0.0));
            MixRow { pitch: t.to_string(), before: share_text(b), after: share_text(a), change: points(a - b) }
        })
        .collect();
    let overall = p.changes.iter().find(|c| c.kind == "mix_shift" && c.situation.is_empty());
    let counts = count_rows(p);
    let (periods, difference) = match &p.predictability {
        Some(pr) => (vec![period_row(&pr.before), period_row(&pr.after)], difference_text(s, pr)),
        None => (Vec::new(), String::new()),
    };
    let seasons = p.seasons.iter().map(period_row).collect();
    let tells = tell_rows(p);
    let tests = test_rows(p);
    PitcherView {
        pitcher: p.pitcher.clone(),
        anchor: anchor.to_string(),
        throws: p.throws.clone(),
        n_before: p.n_before,
        n_after: p.n_after,
        games_before: p.games_before,
        games_after: p.games_after,
        lines: p.summary_lines.clone(),
        cautions: p.cautions.clone(),
        charts: svgs,
        mix,
        mix_q: overall.and_then(|c| c.q).map(q_text).unwrap_or_default(),
        mix_kept: overall.map(|c| c.among.is_some()).unwrap_or(false),
        mix_shift: p.mix_shift.map(|x| format!("{:.0}", 100.0 * x)).unwrap_or_default(),
        counts,
        periods,
        seasons,
        difference,
        tells,
        tests,
        significant: p.significant_changes,
    }
}

/// His count-by-count table: top pitch each period and the count's test.
fn count_rows(p: &PitcherChanges) -> Vec<CountRow> {
    p.counts
        .iter()
        .map(|k| {
            let ch = p.changes.iter().find(|c| c.kind == "mix_shift" && c.situation.get("count") == Some(&k.count));
            let top = |t: &Option<String>, s: Option<f64>| match (t, s) {
                (Some(t), Some(s)) => format!("{t} {}", share_text(s)),
                _ => "—".into(),
            };
            CountRow {
                count: k.count.clone(),
                n_before: k.n_before,
                n_after: k.n_after,
                top_before: top(&k.top_pitch_before, k.top_share_before),
                top_after: top(&k.top_pitch_after, k.top_share_after),
                mover: ch
                    .map(|c| format!("{} {} → {}", c.pitch_type.clone().unwrap_or_default(), share_text(c.before), share_text(c.after)))
                    .unwrap_or_else(|| "too few pitches to test".into()),
                shift: ch.map(|c| format!("{:.0}", 100.0 * c.effect)).unwrap_or_default(),
                test: ch.map(|c| test_text(&c.test).to_string()).unwrap_or_default(),
                q: ch.and_then(|c| c.q).map(p_text).unwrap_or_else(|| "—".into()),
                significant: ch.map(|c| c.significant).unwrap_or(false),
                explained: ch.and_then(|c| c.among.as_ref()).map(|_| "among kept pitches".to_string()).unwrap_or_default(),
            }
        })
        .collect()
}

/// One period's (or season's) predictability figures as a table row.
fn period_row(f: &PeriodFigures) -> PeriodRow {
    PeriodRow {
        label: f.label.clone(),
        pitches: f.pitches,
        n_test: f.n_test,
        prior: share_text(f.prior_accuracy),
        model: share_text(f.model_accuracy),
        lift: numbers::lift_text(f.lift, f.prior_accuracy),
        bits: bits_text(f.bits_gained),
        interval: format!("{} to {}", bits_text(f.bits_interval.low), bits_text(f.bits_interval.high)),
    }
}

/// The change in predictability between the periods, in words.
fn difference_text(s: &CompareSummary, pr: &Predictability) -> String {
    let (bl, al) = (&s.periods.before.label, &s.periods.after.label);
    let lift_iv = pr
        .lift_difference_interval
        .map(|i| format!(" (95% interval {} to {})", points(i.low).trim_end_matches(" points"), points(i.high)))
        .unwrap_or_default();
    let test = if pr.ruled_out {
        format!("stopped after {} shuffles, once no further shuffle could bring it under the false-discovery bar", pr.permutations)
    } else if pr.stopped_early {
        format!("stopped early after {} shuffles", pr.permutations)
    } else {
        format!("{} shuffles", pr.permutations)
    };
    let iv = pr.bits_difference_interval;
    let caveat = if (iv.low > 0.0 || iv.high < 0.0) && pr.q > s.settings.fdr {
        " The interval leaves out 0, but it only counts which games happened to be scored, with the fitted models held fixed; the test also refits the models and is corrected for every test of the report, and it does not find the change beyond chance."
    } else {
        ""
    };
    format!(
        "Change from {bl} to {al}: {} bits per pitch (95% interval {} to {}); lift {}{lift_iv}. Label-swap test ({test}): {}.{caveat}",
        bits_text(pr.bits_difference),
        bits_text(iv.low),
        bits_text(iv.high),
        points(pr.lift_difference),
        // A test stopped once it could no longer pass gives estimates.
        numbers::p_and_q(pr.p, pr.q, pr.ruled_out),
    )
}

/// His tells that appeared, disappeared or held.
fn tell_rows(p: &PitcherChanges) -> Vec<TellRow> {
    p.changes
        .iter()
        .filter(|c| c.kind.starts_with("tell_"))
        .map(|c| TellRow {
            status: kind_text(&c.kind).into(),
            situation: situation_text(c),
            pitch: format!("{}{}", c.pitch_type.clone().unwrap_or_default(), if c.direction.as_deref() == Some("less") { " (avoided)" } else { "" }),
            before: format!("{} (n = {}; {} otherwise)", share_text(c.before), fmt_n(c.n_before), share_text(c.baseline_before.unwrap_or(0.0))),
            after: format!("{} (n = {}; {} otherwise)", share_text(c.after), fmt_n(c.n_after), share_text(c.baseline_after.unwrap_or(0.0))),
            q: c.q.map(p_text).unwrap_or_else(|| "not tested".into()),
            tell_q: format!(
                "{} / {}",
                c.tell_q_before.map(p_text).unwrap_or_else(|| "—".into()),
                c.tell_q_after.map(p_text).unwrap_or_else(|| "—".into())
            ),
            significant: c.significant,
        })
        .collect()
}

/// Every tested change of his.
fn test_rows(p: &PitcherChanges) -> Vec<TestRow> {
    p.changes
        .iter()
        .filter(|c| c.is_test())
        .map(|c| TestRow {
            kind: kind_text(&c.kind).into(),
            situation: situation_text(c),
            pitch: c.pitch_type.clone().unwrap_or_default(),
            before: shares_or_bits(c, c.before),
            after: shares_or_bits(c, c.after),
            effect: effect_text(c),
            test: test_text(&c.test).into(),
            p: c.p.map(p_text).unwrap_or_default(),
            q: c.q.map(p_text).unwrap_or_default(),
            significant: c.significant,
        })
        .collect()
}

/// Every file of a comparison report, in memory.
pub fn compare_files(cmp: &Comparison) -> Result<Vec<ReportFile>> {
    super::export::report_files(cmp, &[&Html, &Json, &Csv])
}

/// Render and write a comparison's report folder.
pub fn write_compare_report(dir: &std::path::Path, cmp: &Comparison) -> Result<()> {
    super::export::write_report(dir, cmp, &Html, &[&Json, &Csv])
}

impl Exporter<Comparison> for Json {
    fn export(&self, cmp: &Comparison, sink: &mut dyn Sink) -> Result<()> {
        sink.put("summary.json", summary_json(&cmp.summary)?.as_bytes())
    }
}

impl Exporter<Comparison> for Csv {
    fn export(&self, cmp: &Comparison, sink: &mut dyn Sink) -> Result<()> {
        sink.put("changes.csv", &changes_csv(&cmp.summary)?)?;
        if !cmp.set_aside.is_empty() {
            sink.put("set_aside.csv", &rejected_csv(&cmp.set_aside)?)?;
        }
        sink.put("rejected.csv", &rejected_csv(&cmp.rejected)?)
    }
}

impl Exporter<Comparison> for Html {
    fn export(&self, cmp: &Comparison, sink: &mut dyn Sink) -> Result<()> {
        page(cmp, sink)
    }
}

/// The comparison's page and its charts.
fn page(cmp: &Comparison, sink: &mut dyn Sink) -> Result<()> {
    let s = &cmp.summary;
    let names: Vec<String> = s.pitchers.iter().map(|p| p.pitcher.clone()).collect();
    let stems: BTreeMap<String, String> = names.iter().cloned().zip(unique_stems(&names)).collect();
    let mut staff = Vec::new();
    let mut views = Vec::new();
    let mut insufficient = Vec::new();
    for p in &s.pitchers {
        let stem = stems.get(&p.pitcher).cloned().unwrap_or_else(|| "pitcher".into());
        if !p.is_ok() {
            insufficient.push(Insufficient { pitcher: p.pitcher.clone(), n_before: p.n_before, n_after: p.n_after, why: p.cautions.join(" ") });
            continue;
        }
        let built = pitcher_charts(s, p, &stem)?;
        for c in &built {
            sink.put(&format!("charts/{}.svg", c.name), c.svg.as_bytes())?;
            sink.put(&format!("charts/{}.png", c.name), &c.png)?;
        }
        let mix_q = p.mix_q();
        let pr = p.predictability.as_ref();
        staff.push(StaffRow {
            pitcher: p.pitcher.clone(),
            anchor: stem.clone(),
            throws: p.throws.clone(),
            n_before: p.n_before,
            n_after: p.n_after,
            mix_shift: p.mix_shift.map(|x| format!("{:.0}", 100.0 * x)).unwrap_or_default(),
            mix_shift_v: p.mix_shift.unwrap_or(0.0),
            mix_q: mix_q.map(p_text).unwrap_or_default(),
            mix_q_v: mix_q.unwrap_or(1.0),
            bits_before: pr.map(|x| bits_text(x.before.bits_gained)).unwrap_or_default(),
            bits_before_v: pr.map(|x| x.before.bits_gained).unwrap_or(0.0),
            bits_after: pr.map(|x| bits_text(x.after.bits_gained)).unwrap_or_default(),
            bits_after_v: pr.map(|x| x.after.bits_gained).unwrap_or(0.0),
            pred_q: pr.map(|x| p_text(x.q)).unwrap_or_default(),
            pred_q_v: pr.map(|x| x.q).unwrap_or(1.0),
            significant: p.significant_changes,
            headline: p.headline.clone(),
        });
        views.push(pitcher_view(s, p, &stem, built.into_iter().map(|c| c.svg).collect()));
    }
    // Pitchers with significant changes first, then by name.
    let order = |a: &usize, an: &String, b: &usize, bn: &String| b.cmp(a).then(an.cmp(bn));
    staff.sort_by(|a, b| order(&a.significant, &a.pitcher, &b.significant, &b.pitcher));
    views.sort_by(|a, b| order(&a.significant, &a.pitcher, &b.significant, &b.pitcher));

    let env = super::html::environment("compare.html", TEMPLATE)?;
    let tmpl = env.get_template("compare.html").map_err(|e| Error::Internal(format!("template: {e}")))?;
    let (b, a) = (&s.periods.before, &s.periods.after);
    let ctx = minijinja::context! {
        input_path => s.input.path.clone(),
        rows_kept => s.input.rows_kept,
        rows_read => s.input.rows_read,
        before => b.label.clone(),
        after => a.label.clone(),
        // Column headings: a season reads well, a date range is too long.
        before_short => if b.label.len() <= 8 { b.label.clone() } else { "before".to_string() },
        after_short => if a.label.len() <= 8 { a.label.clone() } else { "after".to_string() },
        before_span => format!("{} to {}, {} games, {} pitches", b.first_date, b.last_date, fmt_n(b.games), fmt_n(b.pitches)),
        after_span => format!("{} to {}, {} games, {} pitches", a.first_date, a.last_date, fmt_n(a.games), fmt_n(a.pitches)),
        evaluation => s.evaluation.description.clone(),
        permutations => s.settings.permutations,
        bootstrap => s.settings.bootstrap,
        monte_carlo => s.settings.mix_monte_carlo,
        stop_after => s.settings.stop_after_exceedances,
        fdr => s.settings.fdr,
        fdr_pct => format!("{:.0}%", s.settings.fdr * 100.0),
        tests => s.tests,
        significant => s.significant,
        folds => s.settings.forward_blocks,
        predictability_tests => s.pitchers.iter().flat_map(|p| p.changes.iter()).filter(|c| c.is_test() && c.family == crate::compare::PREDICTABILITY_FAMILY).count(),
        mix_tests => s.pitchers.iter().flat_map(|p| p.changes.iter()).filter(|c| c.is_test() && c.family == crate::compare::MIX_FAMILY).count(),
        location_tests => s.pitchers.iter().flat_map(|p| p.changes.iter()).filter(|c| c.is_test() && c.family == crate::compare::LOCATION_FAMILY).count(),
        new_share => share_text(s.settings.new_pitch_share),
        absent_share => share_text(s.settings.absent_share),
        min_count => s.settings.min_count_pitches,
        version => s.tool.version.clone(),
        notes => s.notes.clone(),
        staff => staff,
        pitchers => views,
        insufficient => insufficient,
    };
    let html = tmpl.render(ctx).map_err(|e| Error::Internal(format!("rendering index.html: {e}")))?;
    sink.put("index.html", html.as_bytes())
}
