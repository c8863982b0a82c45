//! Words for the comparison: one sentence per change and the plain-words
//! summary of each pitcher, every figure read from the same [`Change`]
//! values that `summary.json` carries.

use super::summary::{Change, PitcherChanges};
use crate::audit::wording::{q_text, situation_phrase};
use crate::situations::levels::Factor;
use crate::tells::Situation;

/// A share as a coach reads it: whole percent, one decimal below 1%.
pub fn share_text(x: f64) -> String {
    if x > 0.0 && x < 0.0095 {
        format!("{:.1}%", 100.0 * x)
    } else {
        format!("{:.0}%", 100.0 * x)
    }
}

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

pub fn bits_text(x: f64) -> String {
    let s = format!("{x:+.3}");
    if s == "-0.000" {
        "+0.000".into()
    } else {
        s.replace('-', "−")
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

/// The sentence of one change (q-value included).
pub fn change_text(c: &Change, before: &str, after: &str) -> String {
    let t = c.pitch_type.clone().unwrap_or_default();
    let q = q_text(c.q);
    match c.kind.as_str() {
        "new_pitch" => {
            let (sb, sa) = pair_text(c.before, c.after);
            format!("Added {} {t}: {sb} → {sa} of pitches ({q}).", article(&t))
        }
        "dropped_pitch" => {
            let (sb, sa) = pair_text(c.before, c.after);
            format!("Dropped the {t}: {sb} → {sa} of pitches ({q}).")
        }
        "mix_shift" => match c.situation.get("count") {
            Some(count) => format!(
                "{count} counts: {} (n = {} and {}), {q}.",
                share_move(&t, c.before, c.after),
                c.n_before,
                c.n_after
            ),
            None => format!(
                "Overall mix: {} of pitches (in all, {:.0} of every 100 pitches changed type), {q}.",
                share_move(&t, c.before, c.after),
                100.0 * c.effect
            ),
        },
        "kept_mix_shift" => format!(
            "Among the pitches he threw in both periods, the {} ({q}).",
            share_move(&t, c.before, c.after)
        ),
        "predictability" => {
            let which = if c.effect < 0.0 { "Less" } else { "More" };
            let iv = c.interval.map(|i| format!(", 95% interval {} to {}", bits_text(i.low), bits_text(i.high))).unwrap_or_default();
            format!(
                "{which} predictable from the situation in {after}: held-out bits gained per pitch went from {} in {before} to {} (difference {}{iv}), {q}.",
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
            format!(
                "{lead}: {} his {t} share was {sb} in {before} (n = {}; {} otherwise) and {sa} in {after} (n = {}; {} otherwise), {q}.",
                situation_phrase(&situation_of(c)),
                c.n_before,
                share_text(c.baseline_before.unwrap_or(0.0)),
                c.n_after,
                share_text(c.baseline_after.unwrap_or(0.0)),
            )
        }
    }
}

fn is_count_shift(c: &Change) -> bool {
    c.kind == "mix_shift" && c.situation.contains_key("count")
}

/// The plain-words summary of one pitcher: significant changes first (new
/// and dropped pitches, with the mix shifts they explain folded in; the
/// overall mix; counts; predictability; tells), then what held.
pub fn summary_lines(p: &PitcherChanges, before: &str, after: &str, fdr: f64) -> Vec<String> {
    let mut lines = Vec::new();
    let tested_counts = p.changes.iter().filter(|c| is_count_shift(c)).count();
    let arsenal: Vec<&Change> = p.changes.iter().filter(|c| c.kind == "new_pitch" || c.kind == "dropped_pitch").collect();
    for c in arsenal.iter().filter(|c| c.significant) {
        let t = c.pitch_type.clone().unwrap_or_default();
        let tag = format!("{} {t}", if c.kind == "new_pitch" { "new pitch" } else { "dropped pitch" });
        let explained: Vec<&Change> =
            p.changes.iter().filter(|x| x.significant && x.explained_by.as_deref() == Some(tag.as_str())).collect();
        let mut line = c.text.clone();
        if !explained.is_empty() {
            let overall = explained.iter().any(|x| x.situation.is_empty());
            let n_counts = explained.iter().filter(|x| is_count_shift(x)).count();
            let mut parts = Vec::new();
            if overall {
                parts.push("his overall mix".to_string());
            }
            if n_counts > 0 {
                parts.push(format!("{n_counts} of the {tested_counts} counts tested"));
            }
            line.push_str(&format!(" It accounts for the shift in {}.", parts.join(" and in ")));
        }
        if c.kind == "new_pitch" {
            // Where he throws the new pitch, count by count.
            let by_count: Vec<(String, f64)> = p
                .counts
                .iter()
                .filter(|k| k.tested)
                .map(|k| (k.count.clone(), k.mix_after.get(&t).copied().unwrap_or(0.0)))
                .collect();
            if let (Some(lo), Some(hi)) = (
                by_count.iter().min_by(|a, b| a.1.total_cmp(&b.1)),
                by_count.iter().max_by(|a, b| a.1.total_cmp(&b.1)),
            ) {
                line.push_str(&format!(
                    " In {after} he threw it {} of the time at {} (his least) up to {} at {} (his most).",
                    share_text(lo.1),
                    lo.0,
                    share_text(hi.1),
                    hi.0
                ));
            }
        }
        lines.push(line);
    }
    if let Some(k) = p.changes.iter().find(|c| c.kind == "kept_mix_shift") {
        if k.significant {
            lines.push(k.text.clone());
        } else if arsenal.iter().any(|c| c.significant) {
            let kept: Vec<String> = k
                .mix_before
                .iter()
                .flatten()
                .map(|(t, b)| {
                    let a = k.mix_after.as_ref().and_then(|m| m.get(t)).copied().unwrap_or(0.0);
                    format!("{t} {} → {}", share_text(*b), share_text(a))
                })
                .collect();
            lines.push(format!(
                "Apart from that, the mix of the pitches he threw in both periods held ({}, as shares of those pitches; {}).",
                kept.join(", "),
                q_text(k.q)
            ));
        }
    }
    let count_sig: Vec<&Change> = p.changes.iter().filter(|c| is_count_shift(c) && c.significant && c.explained_by.is_none()).collect();
    if let Some(c) = p.changes.iter().find(|c| c.kind == "mix_shift" && c.situation.is_empty() && c.significant && c.explained_by.is_none()) {
        let mut line = c.text.trim_end_matches('.').to_string();
        if count_sig.is_empty() {
            line.push_str("; no single count changed enough to pass the test on its own.");
        } else {
            let names: Vec<&str> = count_sig.iter().filter_map(|x| x.situation.get("count").map(String::as_str)).collect();
            line.push_str(&format!(
                "; count by count, the change is at {}.",
                names.join(", ")
            ));
        }
        lines.push(line);
    }
    lines.extend(count_sig.iter().map(|c| c.text.clone()));
    for c in p.changes.iter().filter(|c| c.kind == "predictability" && c.significant) {
        lines.push(c.text.clone());
    }
    for c in p.changes.iter().filter(|c| c.kind.starts_with("tell_") && c.significant) {
        lines.push(c.text.clone());
    }
    if lines.is_empty() {
        lines.push(format!(
            "No change between {before} and {after} passed the test (q ≤ {fdr}): his pitch mix, overall and count by count, his predictability and his tells are the same within chance."
        ));
    }
    let held: Vec<String> = p
        .changes
        .iter()
        .filter(|c| c.kind == "tell_held" && !c.significant)
        .map(|c| {
            format!(
                "{} the {} ({} in {before}, {} in {after})",
                situation_phrase(&situation_of(c)),
                c.pitch_type.clone().unwrap_or_default(),
                share_text(c.before),
                share_text(c.after)
            )
        })
        .collect();
    if !held.is_empty() {
        let shown: Vec<String> = held.iter().take(4).cloned().collect();
        let more = if held.len() > 4 { format!("; and {} more (see the table)", held.len() - 4) } else { String::new() };
        lines.push(format!("Tells that held in both periods: {}{more}.", shown.join("; ")));
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shares_read_well() {
        assert_eq!(share_text(0.0), "0%");
        assert_eq!(share_text(0.004), "0.4%");
        assert_eq!(share_text(0.851), "85%");
        assert_eq!(pair_text(0.501, 0.497), ("50.1%".to_string(), "49.7%".to_string()));
        assert_eq!(bits_text(-0.0001), "+0.000");
        assert_eq!(bits_text(-0.0612), "−0.061");
        assert_eq!(article("cutter"), "a");
        assert_eq!(article("eephus"), "an");
    }
}
