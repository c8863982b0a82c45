//! Words for the comparison: one sentence per change and the plain-words
//! summary of each pitcher, every figure read from the same [`Change`]
//! values that `summary.json` carries.

use crate::domain::numbers::{bits_text, q_text, share_text};
use super::summary::{Change, PitcherChanges};
use crate::audit::wording::situation_phrase;
use crate::domain::levels::Factor;
use crate::tells::Situation;

/// Two shares that would print alike get a decimal, so a significant
/// change never reads "from 50% to 50%".
fn pair_text(b: f64, a: f64) -> (String, String) {
    let (tb, ta) = (share_text(b), share_text(a));
    if tb == ta && b != a {
        (format!("{:.1}%", 100.0 * b), format!("{:.1}%", 100.0 * a))
    } else {
        (tb, ta)
    }
}

fn moved(b: f64, a: f64) -> &'static str {
    if a > b {
        "rose"
    } else if a < b {
        "fell"
    } else {
        "stayed"
    }
}

/// The article for a pitch name: "a cutter", "an eephus".
fn article(t: &str) -> &'static str {
    match t.chars().next().map(|c| c.to_ascii_lowercase()) {
        Some('a' | 'e' | 'i' | 'o' | 'u') => "an",
        _ => "a",
    }
}

/// The situation of a change back in the audit's terms, for its phrase.
pub fn situation_of(c: &Change) -> Situation {
    c.situation.iter().filter_map(|(f, l)| Some((Factor::from_name(f)?, l.clone()))).collect()
}

fn share_move(t: &str, b: f64, a: f64) -> String {
    let (sb, sa) = pair_text(b, a);
    match moved(b, a) {
        "stayed" => format!("{t} share stayed at {sb}"),
        m => format!("{t} share {m} from {sb} to {sa}"),
    }
}

fn q_of(c: &Change) -> String {
    q_text(c.q.unwrap_or(1.0))
}

/// How a tell leans: "more often" or "less often".
fn lean(c: &Change) -> &'static str {
    if c.direction.as_deref() == Some("less") {
        "less often"
    } else {
        "more often"
    }
}

/// The sentence of one change (q-value included).
pub fn change_text(c: &Change, before: &str, after: &str) -> String {
    let t = c.pitch_type.clone().unwrap_or_default();
    let q = q_of(c);
    let kept = c.among.is_some();
    match c.kind.as_str() {
        "new_pitch" => {
            let (sb, sa) = pair_text(c.before, c.after);
            format!("Added {} {t}: {sb} → {sa} of pitches ({q}).", article(&t))
        }
        "dropped_pitch" => {
            let (sb, sa) = pair_text(c.before, c.after);
            format!("Dropped the {t}: {sb} → {sa} of pitches ({q}).")
        }
        "mix_shift" => match (c.situation.get("count"), kept) {
            (Some(count), false) => format!(
                "{count} counts: {} (n = {} and {}), {q}.",
                share_move(&t, c.before, c.after),
                crate::domain::numbers::fmt_n(c.n_before),
                crate::domain::numbers::fmt_n(c.n_after)
            ),
            (Some(count), true) => format!(
                "{count} counts, among the pitches he threw in both periods: {} (n = {} and {}), {q}.",
                share_move(&t, c.before, c.after),
                crate::domain::numbers::fmt_n(c.n_before),
                crate::domain::numbers::fmt_n(c.n_after)
            ),
            (None, false) => format!(
                "Overall mix: {} of pitches (in all, {:.0} of every 100 pitches changed type), {q}.",
                share_move(&t, c.before, c.after),
                100.0 * c.effect
            ),
            (None, true) => format!(
                "Among the pitches he threw in both periods, the {} (in all, {:.0} of every 100 of those pitches changed type), {q}.",
                share_move(&t, c.before, c.after),
                100.0 * c.effect
            ),
        },
        "location_shift" => {
            let region = c.region.clone().unwrap_or_default();
            let (sb, sa) = pair_text(c.before, c.after);
            format!(
                "Where his {t} goes: the share thrown {} went from {sb} to {sa} (in all, {:.0} of every 100 went to a different region; n = {} and {}), {q} among the run's location tests.",
                crate::audit::wording::region_phrase(&region),
                100.0 * c.effect,
                crate::domain::numbers::fmt_n(c.n_before),
                crate::domain::numbers::fmt_n(c.n_after)
            )
        }
        "predictability" => {
            let which = if c.effect < 0.0 { "Less" } else { "More" };
            let iv = c.interval.map(|i| format!(", 95% interval {} to {}", bits_text(i.low), bits_text(i.high))).unwrap_or_default();
            format!(
                "{which} predictable from the situation in {after}: held-out bits gained per pitch went from {} in {before} to {} (difference {}{iv}), {q} among the run's predictability tests.",
                bits_text(c.before),
                bits_text(c.after),
                bits_text(c.effect)
            )
        }
        kind => {
            let lead = match kind {
                "tell_disappeared" => format!("Tell gone in {after}"),
                "tell_appeared" => format!("New tell in {after}"),
                _ => "Tell in both periods".to_string(),
            };
            let (sb, sa) = pair_text(c.before, c.after);
            let tq = |x: Option<f64>| x.map(q_text).unwrap_or_else(|| "not tested".into());
            let evidence = match (c.q, kind) {
                (Some(_), _) if c.significant => format!("his mix in that count changed, {q}"),
                (Some(_), _) => format!("his mix in that count did not change beyond chance ({q})"),
                (None, "tell_held") => format!("tell search {} in {before}, {} in {after}", tq(c.tell_q_before), tq(c.tell_q_after)),
                (None, _) => format!(
                    "tell search {} in {before}, {} in {after}; not tested as a change",
                    tq(c.tell_q_before),
                    tq(c.tell_q_after)
                ),
            };
            format!(
                "{lead}: {} he threw the {t} {} — {sb} in {before} (n = {}; {} otherwise), {sa} in {after} (n = {}; {} otherwise); {evidence}.",
                situation_phrase(&situation_of(c)),
                lean(c),
                crate::domain::numbers::fmt_n(c.n_before),
                share_text(c.baseline_before.unwrap_or(0.0)),
                crate::domain::numbers::fmt_n(c.n_after),
                share_text(c.baseline_after.unwrap_or(0.0)),
            )
        }
    }
}

fn plural(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

fn is_count_shift(c: &Change) -> bool {
    c.kind == "mix_shift" && c.situation.contains_key("count")
}

/// "fastball more often, slider and curveball less often"
fn tell_list(tells: &[&Change]) -> String {
    let mut parts = Vec::new();
    for dir in ["more", "less"] {
        let names: Vec<String> =
            tells.iter().filter(|c| c.direction.as_deref() == Some(dir)).filter_map(|c| c.pitch_type.clone()).collect();
        if names.is_empty() {
            continue;
        }
        let joined = match names.len() {
            1 => names[0].clone(),
            n => format!("{} and {}", names[..n - 1].join(", "), names[n - 1]),
        };
        parts.push(format!("{joined} {}", if dir == "more" { "more often" } else { "less often" }));
    }
    parts.join(", ")
}

/// The one sentence for a staff table: his most telling significant change
/// (a new or dropped pitch, then a count, then his overall mix, then his
/// predictability), or "no change".
pub fn headline(p: &PitcherChanges) -> String {
    let sig = |f: &dyn Fn(&Change) -> bool| p.changes.iter().find(|c| c.is_test() && c.significant && f(c)).map(|c| c.text.clone());
    sig(&|c| c.kind == "new_pitch" || c.kind == "dropped_pitch")
        .or_else(|| sig(&is_count_shift))
        .or_else(|| sig(&|c| c.kind == "mix_shift"))
        .or_else(|| sig(&|c| c.kind == "predictability"))
        .unwrap_or_else(|| "no change".into())
}

/// The plain-words summary of one pitcher: significant changes first (new
/// and dropped pitches, the mix overall and count by count with the tells
/// of those counts folded in, predictability), then what held, then tells
/// seen in one period only.
pub fn summary_lines(p: &PitcherChanges, before: &str, after: &str, fdr: f64) -> Vec<String> {
    let mut lines = Vec::new();
    let arsenal: Vec<&Change> = p.changes.iter().filter(|c| c.kind == "new_pitch" || c.kind == "dropped_pitch").collect();
    arsenal_lines(p, &arsenal, before, after, &mut lines);
    let overall = p.changes.iter().find(|c| c.kind == "mix_shift" && c.situation.is_empty());
    let count_sig: Vec<&Change> = p.changes.iter().filter(|c| is_count_shift(c) && c.significant).collect();
    if let Some(c) = overall {
        if c.significant {
            let mut line = c.text.trim_end_matches('.').to_string();
            if count_sig.is_empty() {
                line.push_str("; no single count changed enough to pass the test on its own.");
            } else {
                let names: Vec<&str> = count_sig.iter().filter_map(|x| x.situation.get("count").map(String::as_str)).collect();
                line.push_str(&format!("; count by count, the change is at {}.", names.join(", ")));
            }
            lines.push(line);
        } else if c.among.is_some() && arsenal.iter().any(|a| a.significant) {
            let kept: Vec<String> = c
                .mix_before
                .iter()
                .flatten()
                .map(|(t, b)| {
                    let a = c.mix_after.as_ref().and_then(|m| m.get(t)).copied().unwrap_or(0.0);
                    format!("{t} {} → {}", share_text(*b), share_text(a))
                })
                .collect();
            lines.push(format!(
                "Apart from that, the mix of the pitches he threw in both periods held ({}, as shares of those pitches; {}), and so did his mix count by count.",
                kept.join(", "),
                q_of(c)
            ));
            if !count_sig.is_empty() {
                let last = lines.last_mut().expect("just pushed");
                *last = last.replace(", and so did his mix count by count.", ".");
            }
        }
    }
    for c in &count_sig {
        let count = c.situation.get("count").cloned().unwrap_or_default();
        let mut line = c.text.trim_end_matches('.').to_string();
        let here: Vec<&Change> = p
            .changes
            .iter()
            .filter(|t| t.kind.starts_with("tell_") && t.situation.len() == 1 && t.situation.get("count") == Some(&count))
            .collect();
        for (kind, words) in [
            ("tell_disappeared", format!("his tell there in {before} ({{}}) is gone")),
            ("tell_appeared", format!("a new tell there in {after} ({{}})")),
            ("tell_held", format!("his tell there ({{}}) still shows in {after}")),
        ] {
            let these: Vec<&Change> = here.iter().copied().filter(|t| t.kind == kind).collect();
            if !these.is_empty() {
                line.push_str(&format!("; {}", words.replace("{}", &tell_list(&these))));
            }
        }
        line.push('.');
        lines.push(line);
    }
    for c in p.changes.iter().filter(|c| c.kind == "predictability" && c.significant) {
        let mut line = c.text.clone();
        if let Some(t) = p.predictability.as_ref().and_then(|x| x.transfer_bits) {
            let verdict = if t <= 0.005 { "last period's tendencies no longer work" } else { "some of last period's tendencies still work" };
            line.push_str(&format!(
                " His {before} model guessing his {after} pitches: {} bits per pitch over his {after} mix — {verdict}.",
                bits_text(t)
            ));
        }
        lines.push(line);
    }
    for c in p.changes.iter().filter(|c| c.kind == "location_shift" && c.significant) {
        lines.push(c.text.clone());
    }
    if lines.is_empty() {
        lines.push(format!(
            "No change between {before} and {after} passed the test (q ≤ {fdr}): his pitch mix, overall and count by count, and his predictability are the same within chance."
        ));
    }
    tell_lines(p, &count_sig, before, after, &mut lines);
    lines
}

/// The significant new and dropped pitches, each with where he throws
/// (threw) it count by count.
fn arsenal_lines(p: &PitcherChanges, arsenal: &[&Change], before: &str, after: &str, lines: &mut Vec<String>) {
    for c in arsenal.iter().filter(|c| c.significant) {
        let t = c.pitch_type.clone().unwrap_or_default();
        let mut line = c.text.clone();
        // Where he throws (threw) it, count by count.
        let (when, side) = if c.kind == "new_pitch" { (after, true) } else { (before, false) };
        let by_count: Vec<(String, f64)> = p
            .counts
            .iter()
            .filter(|k| (if side { k.n_after } else { k.n_before }) >= 20)
            .map(|k| (k.count.clone(), (if side { &k.mix_after } else { &k.mix_before }).get(&t).copied().unwrap_or(0.0)))
            .collect();
        if let (Some(lo), Some(hi)) =
            (by_count.iter().min_by(|a, b| a.1.total_cmp(&b.1)), by_count.iter().max_by(|a, b| a.1.total_cmp(&b.1)))
        {
            line.push_str(&format!(
                " In {when} he threw it in every count, from {} of pitches at {} to {} at {}.",
                share_text(lo.1),
                lo.0,
                share_text(hi.1),
                hi.0
            ));
            if lo.1 == 0.0 {
                line = line.replace("in every count, from", "in some counts, from");
            }
        }
        lines.push(line);
    }
}

/// Tells that held in both periods, and those flagged in one period only
/// (not tested as changes), most marked first.
fn tell_lines(p: &PitcherChanges, count_sig: &[&Change], before: &str, after: &str, lines: &mut Vec<String>) {
    let item = |c: &Change| {
        format!(
            "{} the {} {} ({} in {before}, {} in {after})",
            situation_phrase(&situation_of(c)),
            c.pitch_type.clone().unwrap_or_default(),
            lean(c),
            share_text(c.before),
            share_text(c.after)
        )
    };
    let listed = |items: Vec<String>| -> String {
        let shown: Vec<String> = items.iter().take(3).cloned().collect();
        let more = if items.len() > 3 { format!("; and {} more (see the tells table)", items.len() - 3) } else { String::new() };
        format!("{}{more}", shown.join("; "))
    };
    // Held tells, most marked first (the shift from his baseline, averaged
    // over the two periods), so the tells that matter lead the line.
    let mut held: Vec<&Change> = p.changes.iter().filter(|c| c.kind == "tell_held" && !c.significant).collect();
    let lean_of = |c: &Change| ((c.before - c.baseline_before.unwrap_or(0.0)).abs() + (c.after - c.baseline_after.unwrap_or(0.0)).abs()) / 2.0;
    held.sort_by(|a, b| lean_of(b).total_cmp(&lean_of(a)));
    let held: Vec<String> = held.into_iter().map(item).collect();
    if !held.is_empty() {
        lines.push(format!("Tells that held in both periods: {}.", listed(held)));
    }
    // Tells flagged in one period only; those inside a count whose change is
    // already stated above are narrower echoes of it.
    let stated: Vec<&String> = count_sig.iter().filter_map(|c| c.situation.get("count")).collect();
    let mut one_sided: Vec<&Change> = p
        .changes
        .iter()
        .filter(|c| (c.kind == "tell_disappeared" || c.kind == "tell_appeared") && !c.significant)
        .filter(|c| !c.situation.get("count").map(|k| stated.contains(&k)).unwrap_or(false))
        .collect();
    // Strongest first: the tell's shift in the period where it was flagged.
    let strength = |c: &Change| {
        let (s, b) = if c.kind == "tell_disappeared" {
            (c.before, c.baseline_before.unwrap_or(0.0))
        } else {
            (c.after, c.baseline_after.unwrap_or(0.0))
        };
        (s - b).abs()
    };
    one_sided.sort_by(|a, b| strength(b).total_cmp(&strength(a)));
    if !one_sided.is_empty() {
        let gone = one_sided.iter().filter(|c| c.kind == "tell_disappeared").count();
        let new = one_sided.len() - gone;
        let strongest = one_sided.first().map(|c| format!("; the most marked: {}", item(c))).unwrap_or_default();
        let counted = match (gone, new) {
            (g, 0) => format!("{} flagged in {before} only", plural(g, "tell was", "tells were")),
            (0, n) => format!("{} flagged in {after} only", plural(n, "tell was", "tells were")),
            (g, n) => format!("{} flagged in {before} only and {n} in {after} only", plural(g, "tell was", "tells were")),
        };
        lines.push(format!(
            "{counted}{strongest}. A tell can miss the bar in a period by chance, so these are not tested as changes (see the tells table)."
        ));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shares_read_well() {
        assert_eq!(pair_text(0.501, 0.497), ("50.1%".to_string(), "49.7%".to_string()));
        assert_eq!(article("cutter"), "a");
        assert_eq!(article("eephus"), "an");
    }
}
