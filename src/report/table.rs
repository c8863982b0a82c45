//! The terminal tables: what `audit`, `compare` and `demo` print when they
//! are done (the report folder holds everything; this is the glance).

use super::export::{Exporter, Sink, Table};
use crate::audit::{wording, Audit};
use crate::compare::Comparison;
use crate::domain::numbers::{fmt_n, p_cell};
use crate::error::Result;

/// ", N set aside" after the rejected count, when any row was set aside.
fn set_aside_text(n: usize) -> String {
    if n == 0 {
        String::new()
    } else {
        format!(", {} set aside", fmt_n(n))
    }
}

/// The lines, each ending in a newline, as one output.
fn put_lines(sink: &mut dyn Sink, lines: Vec<String>) -> Result<()> {
    let mut text = lines.join("\n");
    text.push('\n');
    sink.put("table", text.as_bytes())
}

/// The compact staff table and the top tells.
impl Exporter<Audit> for Table<'_> {
    fn export(&self, audit: &Audit, sink: &mut dyn Sink) -> Result<()> {
        let s = &audit.summary;
        let mut o: Vec<String> = Vec::new();
        if s.evaluation.scheme == "rolling" {
            o.push(format!(
                "{} pitches ({} rejected{}); scored: {}; {} permutations, FDR {}",
                fmt_n(s.input.rows_kept),
                fmt_n(s.input.rows_rejected),
                set_aside_text(s.input.rows_set_aside),
                s.evaluation.test,
                fmt_n(s.settings.permutations),
                s.settings.fdr
            ));
        } else {
            o.push(format!(
                "{} pitches ({} rejected{}); trained on {}, held out {}; {} permutations, FDR {}",
                fmt_n(s.input.rows_kept),
                fmt_n(s.input.rows_rejected),
                set_aside_text(s.input.rows_set_aside),
                s.evaluation.train,
                s.evaluation.test,
                fmt_n(s.settings.permutations),
                s.settings.fdr
            ));
        }
        o.push(String::new());
        o.push(format!("{:<22} {:>6} {:>6} {:>7} {:>7} {:>7} {:>7} {:>7} {:>6} {:>6}", "pitcher", "train", "test", "prior", "model", "lift", "bits", "q", "tells", "where"));
        let mut rows: Vec<_> = s.pitchers.iter().filter(|p| p.is_ok()).collect();
        rows.sort_by(|a, b| b.bits_gained.partial_cmp(&a.bits_gained).unwrap().then(a.pitcher.cmp(&b.pitcher)));
        for p in rows {
            let g = |x: Option<f64>| x.unwrap_or(0.0);
            let name: String = p.pitcher.chars().take(22).collect();
            let line = format!(
                "{:<22} {:>6} {:>6} {:>6.1}% {:>6.1}% {:>7} {:>+7.3} {:>7} {:>6} {:>6}{}{}{}",
                name,
                p.n_train,
                p.n_test,
                100.0 * g(p.prior_accuracy),
                100.0 * g(p.model_accuracy),
                crate::domain::numbers::lift_text(g(p.lift), g(p.prior_accuracy)),
                g(p.bits_gained),
                p_cell(g(p.q_value)),
                p.tells.iter().filter(|t| t.within.is_none()).count(),
                if p.location.is_some() { p.location_tells.len().to_string() } else { "-".to_string() },
                if p.significant == Some(true) { "  *" } else { "   " },
                if p.location.as_ref().is_some_and(|l| l.significant) { " +" } else { "  " },
                s.last_pitched(p)
                    .map(|y| format!("  last pitched {y}"))
                    .or_else(|| p.now_with.as_ref().map(|c| format!("  now with {c}")))
                    .unwrap_or_default()
            );
            o.push(line.trim_end().to_string());
        }
        for p in s.pitchers.iter().filter(|p| !p.is_ok()) {
            o.push(format!("{:<22} {:>6} {:>6}  insufficient data", p.pitcher.chars().take(22).collect::<String>(), p.n_train, p.n_test));
        }
        o.push(format!("  * the situation predicts his pitch beyond his mix (q <= {})", s.settings.fdr));
        if s.pitchers.iter().any(|p| p.location.is_some()) {
            o.push(format!("  where: his location tells; + the situation predicts where a pitch goes beyond his usual spots for it (q <= {})", s.settings.fdr));
        }
        // Each pitcher's first headline finding, in table order.
        let mut heads: Vec<_> = s.pitchers.iter().filter(|p| p.is_ok() && !p.headline.is_empty()).collect();
        heads.sort_by(|a, b| b.bits_gained.partial_cmp(&a.bits_gained).unwrap().then(a.pitcher.cmp(&b.pitcher)));
        if !heads.is_empty() {
            o.push(String::new());
            o.push("Headlines (the most pitches given away; the report lists up to three per pitcher):".to_string());
            for p in heads {
                o.push(format!("  {}: {}", p.pitcher, p.headline[0]));
            }
        }
        // Tells beyond the sheet (count and side tells are the headlines' sheet cells).
        let mut top: Vec<_> = s
            .pitchers
            .iter()
            .flat_map(|p| p.tells.iter().filter(|t| t.within.is_none() && t.layer == crate::tells::Layer::Beyond))
            .collect();
        // Tells that held in the held-out games first, then the strongest.
        top.sort_by(|a, b| {
            let ha = wording::held(a) == Some(true);
            let hb = wording::held(b) == Some(true);
            hb.cmp(&ha).then(b.strength().partial_cmp(&a.strength()).unwrap()).then(a.pitcher.cmp(&b.pitcher))
        });
        if !top.is_empty() {
            o.push(String::new());
            o.push("Top tells beyond the sheet:".to_string());
            for t in top.iter().take(8) {
                let checked = s
                    .pitchers
                    .iter()
                    .find(|p| p.pitcher == t.pitcher)
                    .map_or(s.evaluation.tells_checked_on.as_str(), |p| p.evaluation.tells_checked_on.as_str());
                o.push(format!("  {}: {}", t.pitcher, wording::tell_sentence(t, checked)));
            }
        }
        o.push(String::new());
        o.push(format!("Report: {}", self.report.join("index.html").display()));
        put_lines(sink, o)
    }
}

/// The staff table and each pitcher's summary lines.
impl Exporter<Comparison> for Table<'_> {
    fn export(&self, cmp: &Comparison, sink: &mut dyn Sink) -> Result<()> {
        let s = &cmp.summary;
        let mut o: Vec<String> = Vec::new();
        let (b, a) = (&s.periods.before, &s.periods.after);
        o.push(format!(
            "{} ({} pitches in {} games) vs {} ({} pitches in {} games); {} tests, {} significant at FDR {}",
            b.label,
            fmt_n(b.pitches),
            fmt_n(b.games),
            a.label,
            fmt_n(a.pitches),
            fmt_n(a.games),
            fmt_n(s.tests),
            s.significant,
            s.settings.fdr
        ));
        o.push(String::new());
        o.push(format!("{:<22} {:>7} {:>7} {:>6} {:>7} {:>8} {:>8} {:>7} {:>7}", "pitcher", "before", "after", "shift", "q", "bits B", "bits A", "q", "changes"));
        for p in s.pitchers.iter().filter(|p| p.is_ok()) {
            let pr = p.predictability.as_ref();
            o.push(format!(
                "{:<22} {:>7} {:>7} {:>6.0} {:>7} {:>+8.3} {:>+8.3} {:>7} {:>7}",
                p.pitcher.chars().take(22).collect::<String>(),
                p.n_before,
                p.n_after,
                100.0 * p.mix_shift.unwrap_or(0.0),
                p.mix_q().map(p_cell).unwrap_or_default(),
                pr.map(|x| x.before.bits_gained).unwrap_or(0.0),
                pr.map(|x| x.after.bits_gained).unwrap_or(0.0),
                pr.map(|x| p_cell(x.q)).unwrap_or_default(),
                p.significant_changes
            ));
        }
        for p in s.pitchers.iter().filter(|p| !p.is_ok()) {
            // A pitcher new in the later period (or gone from it) has nothing
            // to compare, however many pitches he threw: said so, not
            // "insufficient data" beside a starter's 2,900 pitches.
            let why = match (p.n_before, p.n_after) {
                (0, _) => format!("not in {}", b.label),
                (_, 0) => format!("not in {}", a.label),
                _ => "insufficient data".to_string(),
            };
            o.push(format!("{:<22} {:>7} {:>7}  {why}", p.pitcher.chars().take(22).collect::<String>(), p.n_before, p.n_after));
        }
        o.push("  shift: pitches in every 100 that changed type (total variation of the whole mix), q: its strongest test (overall mix, new or dropped pitch)".to_string());
        o.push("  bits: held-out bits gained per pitch in each period, q: the label-swap test of their difference".to_string());
        for p in s.pitchers.iter().filter(|p| p.is_ok() && p.significant_changes > 0) {
            o.push(String::new());
            o.push(format!("{}:", p.pitcher));
            for l in &p.summary_lines {
                o.push(format!("  - {l}"));
            }
        }
        o.push(String::new());
        o.push(format!("Report: {}", self.report.join("index.html").display()));
        put_lines(sink, o)
    }
}
