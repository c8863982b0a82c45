//! Words for the report: situations, tells, advice and the model's rules,
//! each sentence built from the same values that `summary.json` carries.

use crate::domain::numbers::{fmt_n, pct, q_text};
use crate::audit::summary::RuleSummary;
use crate::evaluate::fit::Scored;
use crate::evaluate::task::{FeatureKind, PitcherTask};
use crate::model::rules::leaf_rules;
use crate::domain::levels::Factor;
use crate::tells::{Direction, Situation, TellTest};

/// The situation as a phrase: "in 0-2 counts with a runner on first".
pub fn situation_phrase(s: &Situation) -> String {
    let mut parts = Vec::new();
    for (f, l) in s {
        parts.push(level_phrase(*f, l));
    }
    parts.join(" ")
}

pub fn level_phrase(f: Factor, l: &str) -> String {
    match f {
        Factor::Count => format!("in {l} counts"),
        Factor::Bats => format!("against {}-handed batters", if l == "L" { "left" } else { "right" }),
        Factor::Platoon => format!("against {}-side batters", if l == "same" { "same" } else { "opposite" }),
        Factor::Bases => match l {
            "---" => "with the bases empty".into(),
            "1--" => "with a runner on first".into(),
            "-2-" => "with a runner on second".into(),
            "--3" => "with a runner on third".into(),
            "12-" => "with runners on first and second".into(),
            "1-3" => "with runners on first and third".into(),
            "-23" => "with runners on second and third".into(),
            _ => "with the bases loaded".into(),
        },
        Factor::Outs => match l {
            "0" => "with nobody out".into(),
            "1" => "with one out".into(),
            _ => "with two outs".into(),
        },
        Factor::PrevPitch => {
            if l == "none" {
                "on the first pitch of a plate appearance".into()
            } else {
                format!("right after a {l}")
            }
        }
        Factor::TimesThrough => match l {
            "1" => "the first time through the order".into(),
            "2" => "the second time through the order".into(),
            _ => "the third time through the order or later".into(),
        },
        Factor::Inning => format!("in innings {l}"),
        Factor::Score => match l {
            "behind" => "when his side is behind".into(),
            "tied" => "in a tied game".into(),
            _ => "when his side is ahead".into(),
        },
    }
}

fn capitalize(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

/// Did the tell hold on the held-out rows: at least half its effect
/// still there?
pub fn held(t: &TellTest) -> Option<bool> {
    match t.verdict {
        crate::tells::Verdict::Held => Some(true),
        crate::tells::Verdict::Faded => Some(false),
        crate::tells::Verdict::TooFew => None,
    }
}

/// The tell as one sentence.
pub fn tell_sentence(t: &TellTest, test_label: &str) -> String {
    let sit = capitalize(&situation_phrase(&t.situation));
    if t.layer == crate::tells::Layer::Beyond {
        return beyond_sentence(t, &sit, test_label);
    }
    let main = match t.direction {
        Direction::More => format!(
            "{sit} he threw his {} {} of the time (n = {}) against {} otherwise; {}",
            t.pitch_type,
            pct(t.share),
            fmt_n(t.n),
            pct(t.baseline_share),
            q_text(t.q_value)
        ),
        Direction::Less if t.k == 0 => format!(
            "{sit} he never threw his {} (0 of {} pitches) against {} otherwise; {}",
            t.pitch_type,
            fmt_n(t.n),
            pct(t.baseline_share),
            q_text(t.q_value)
        ),
        Direction::Less => format!(
            "{sit} he threw his {} only {} of the time (n = {}) against {} otherwise; {}",
            t.pitch_type,
            pct(t.share),
            fmt_n(t.n),
            pct(t.baseline_share),
            q_text(t.q_value)
        ),
    };
    format!("{main}{}{}.", held_phrase(t, test_label), league_phrase(t))
}

/// What the held-out pitches say, with the held-out share's interval.
fn held_phrase(t: &TellTest, test_label: &str) -> String {
    let interval = match (t.held_out_low, t.held_out_high) {
        (Some(a), Some(b)) => format!(", 95% interval {}–{}", pct(a), pct(b)),
        _ => String::new(),
    };
    if t.pitch_gone() {
        return format!("; in {test_label} he threw no {} at all (n = {}), so the tell describes a pitch he no longer throws", t.pitch_type, fmt_n(t.held_out_n));
    }
    match (t.verdict, t.held_out_share) {
        (crate::tells::Verdict::Held, Some(h)) => format!("; in {test_label} it held at {} (n = {}{interval})", pct(h), fmt_n(t.held_out_n)),
        (crate::tells::Verdict::Faded, Some(h)) => format!("; in {test_label} it faded: {} (n = {}{interval})", pct(h), fmt_n(t.held_out_n)),
        (_, Some(h)) => format!("; in {test_label}: {} (n = {}{interval}), too few pitches to tell whether it held", pct(h), fmt_n(t.held_out_n)),
        _ => format!("; no pitches in this situation in {test_label} to check it"),
    }
}

/// A beyond tell: the share against what his count and side habits (his
/// sheet) predict for the same pitches.
fn beyond_sentence(t: &TellTest, sit: &str, test_label: &str) -> String {
    let expected = pct(t.expected_share.unwrap_or(t.baseline_share));
    let main = match t.direction {
        Direction::More => format!(
            "{sit} he threw his {} {} of the time (n = {}), where his count and batter-side habits alone would give {expected}; {}",
            t.pitch_type,
            pct(t.share),
            fmt_n(t.n),
            q_text(t.q_value)
        ),
        Direction::Less => format!(
            "{sit} he threw his {} only {} of the time (n = {}), where his count and batter-side habits alone would give {expected}; {}",
            t.pitch_type,
            pct(t.share),
            fmt_n(t.n),
            q_text(t.q_value)
        ),
    };
    let again = match (&t.restates, t.restates_share) {
        (Some(s), Some(share)) => {
            let how_many = if share >= 0.995 { "All of these pitches".to_string() } else { format!("Most of these pitches ({})", pct(share)) };
            format!(" {how_many} also came {}, his stronger tell: the log cannot say which of the two he keys on.", situation_phrase(s))
        }
        _ => String::new(),
    };
    format!("{main}{}{}.{again}", held_phrase(t, test_label), league_phrase(t))
}

/// Where a pitch went, in words: `region` (a `situations::regions` name).
pub fn region_phrase(region: &str) -> String {
    match region {
        "up" => "up in the zone".into(),
        "down" => "down in the zone".into(),
        "in" => "inside in the zone".into(),
        "away" => "away in the zone".into(),
        "middle" => "over the middle".into(),
        "chase high" => "high, out of the zone".into(),
        "chase low" => "low, out of the zone".into(),
        "chase in" => "inside, off the plate".into(),
        "chase away" => "away, off the plate".into(),
        corner => format!("to the {} corner of the zone", corner.replace(' ', "-")),
    }
}

/// A location tell in a sentence: where the pitch went in the situation
/// against elsewhere (sheet tells) or against what his count and side
/// habits give (beyond tells), its q-value and what the held-out pitches
/// say. `t.region` is set (crate::audit::location).
pub fn location_sentence(t: &TellTest, test_label: &str) -> String {
    let sit = capitalize(&situation_phrase(&t.situation));
    let place = region_phrase(t.region.as_deref().unwrap_or(""));
    let against = match t.layer {
        crate::tells::Layer::Sheet => format!("against {} otherwise", pct(t.baseline_share)),
        crate::tells::Layer::Beyond => {
            format!("where his count and batter-side habits alone would give {}", pct(t.expected_share.unwrap_or(t.baseline_share)))
        }
    };
    let main = match t.direction {
        Direction::More => format!("{sit} his {} went {place} {} of the time (n = {}) {against}; {}", t.pitch_type, pct(t.share), fmt_n(t.n), q_text(t.q_value)),
        Direction::Less => format!("{sit} his {} went {place} only {} of the time (n = {}) {against}; {}", t.pitch_type, pct(t.share), fmt_n(t.n), q_text(t.q_value)),
    };
    format!("{main}{}.", held_phrase(t, test_label))
}

/// Shares for the other pitches that add up to `total`. When they must grow
/// (the tell pitch gives up share), the least used grow first, up to a common
/// level ("water filling"), so the change never makes another pitch the
/// obvious guess; when they must shrink, they shrink in proportion.
pub fn rebalance(others: &[(String, f64)], total: f64) -> Vec<(String, f64)> {
    let have: f64 = others.iter().map(|x| x.1).sum();
    if others.is_empty() {
        return Vec::new();
    }
    if total <= have || have <= 0.0 {
        let f = if have > 0.0 { total / have } else { 0.0 };
        return others.iter().map(|(n, s)| (n.clone(), s * f)).collect();
    }
    let mut free = total - have;
    let mut sorted: Vec<f64> = others.iter().map(|x| x.1).collect();
    sorted.sort_by(f64::total_cmp);
    // Find the level L with Σ max(0, L − s_i) = free.
    let mut level = sorted[0];
    let mut k = 0;
    while k < sorted.len() {
        let next = if k + 1 < sorted.len() { sorted[k + 1] } else { f64::INFINITY };
        let need = (next - level) * (k + 1) as f64;
        if need >= free {
            level += free / (k + 1) as f64;
            free = 0.0;
            break;
        }
        free -= need;
        level = next;
        k += 1;
    }
    let _ = free;
    others.iter().map(|(n, s)| (n.clone(), s.max(level))).collect()
}

/// Advice for a flagged tell: the situation's mix that brings a hitter's
/// guess-right rate back toward the pitcher's baseline, and how many
/// pitches a season that means changing.
pub fn advice(t: &TellTest, situation_mix: &[(String, f64)], per_season: f64) -> String {
    let target = t.baseline_share;
    let change = (t.share - target).abs();
    let moved = (change * per_season).round() as i64;
    // The rest of the mix scales to fill what the tell pitch gives up or takes.
    let others: Vec<(String, f64)> = situation_mix.iter().filter(|(n, _)| *n != t.pitch_type).cloned().collect();
    let mut new_mix: Vec<(String, f64)> = vec![(t.pitch_type.clone(), target)];
    new_mix.extend(rebalance(&others, 1.0 - target));
    new_mix.sort_by(|a, b| b.1.partial_cmp(&a.1).unwrap().then(a.0.cmp(&b.0)));
    let guess_after = new_mix.first().map(|x| x.1).unwrap_or(0.0);
    let guess_now = situation_mix.iter().map(|x| x.1).fold(0.0, f64::max);
    let mix_text: Vec<String> = new_mix.iter().filter(|x| x.1 >= 0.005).map(|(n, s)| format!("{n} {}", pct(*s))).collect();
    let sit = situation_phrase(&t.situation);
    let faded = if held(t) == Some(false) { "It faded in the held-out games, so check it before acting. " } else { "" };
    let text = match t.direction {
        Direction::More => {
            // Say what a hitter gains only when the change lowers his best
            // single guess; a lean toward a pitch that is not the likeliest
            // still tells him what is coming, so the advice stands.
            let effect = if guess_after < guess_now - 0.005 {
                format!("takes a hitter sitting on his most likely pitch from {} to {} right", pct(guess_now), pct(guess_after))
            } else if guess_after <= guess_now + 0.005 {
                format!("removes the lean without making any pitch easier to sit on (best single guess {})", pct(guess_now))
            } else {
                format!("removes the lean, though a hitter's best single guess rises from {} to {}", pct(guess_now), pct(guess_after))
            };
            format!(
                "Throw the {} {sit} about {} of the time, his rate elsewhere, instead of {}: a mix near {} {effect}. That means changing about {} of every 100 such pitches, roughly {} pitches a season.",
                t.pitch_type,
                pct(target),
                pct(t.share),
                mix_text.join(", "),
                (change * 100.0).round(),
                fmt_n(moved.max(0))
            )
        }
        Direction::Less => format!(
            "Bring the {} back {sit}, at about {} (his rate elsewhere) instead of {}, so a hitter cannot rule it out: a mix near {}. That means changing about {} of every 100 such pitches, roughly {} pitches a season.",
            t.pitch_type,
            pct(target),
            pct(t.share),
            mix_text.join(", "),
            (change * 100.0).round(),
            fmt_n(moved.max(0))
        ),
    };
    format!("{faded}{text}")
}

fn condition_text(task: &PitcherTask, feature: usize, low: Option<u8>, high: Option<u8>) -> String {
    match &task.kinds[feature] {
        FeatureKind::Level { factor, level } => {
            // One-hot: `<= 0` means "not in the level"; for a two-level
            // factor that is the other level.
            let two = *factor == Factor::Bats || *factor == Factor::Platoon;
            if high == Some(0) && two {
                let other = match level.as_str() {
                    "L" => "R",
                    "R" => "L",
                    "same" => "opposite",
                    _ => "same",
                };
                level_phrase(*factor, other)
            } else if high == Some(0) {
                format!("not {}", level_phrase(*factor, level))
            } else {
                level_phrase(*factor, level)
            }
        }
        FeatureKind::Ordinal { name, offset } => {
            let v = |c: u8| c as i32 + offset;
            match (low, high) {
                (Some(l), Some(h)) if l == h => format!("{name} = {}", v(l)),
                (Some(l), Some(h)) => format!("{name} {}–{}", v(l), v(h)),
                (Some(l), None) => format!("{name} ≥ {}", v(l)),
                (None, Some(h)) => format!("{name} ≤ {}", v(h)),
                (None, None) => name.to_string(),
            }
        }
        FeatureKind::Prior { class, given } => {
            let t = &task.x.names[feature];
            let p = |c: u8| c as f64 / crate::evaluate::task::PRIOR_BINS as f64;
            let _ = class;
            match (low, high) {
                (Some(l), Some(h)) if l == h => format!("{t} at {}", pct(p(l))),
                (Some(l), Some(h)) => format!("{t} between {} and {}", pct(p(l)), pct(p(h))),
                (Some(l), None) => format!("{t} at least {}", pct(p(l))),
                (None, Some(h)) => format!("{t} at most {}", pct(p(h))),
                (None, None) => format!("{t} ({given})"),
            }
        }
    }
}

/// The tree's most telling leaves (last fold's tree) in words.
pub fn rules(task: &PitcherTask, scored: &Scored, names: &[String]) -> Vec<RuleSummary> {
    let Some(tree) = scored.trees.last() else { return Vec::new() };
    let mut out = Vec::new();
    for leaf in leaf_rules(tree).into_iter().take(5) {
        let support: u32 = leaf.class_counts.iter().sum();
        if support == 0 {
            continue;
        }
        let (top, &c) = leaf.class_counts.iter().enumerate().max_by(|a, b| a.1.cmp(b.1).then(b.0.cmp(&a.0))).unwrap();
        let conditions: Vec<String> =
            leaf.conditions.iter().map(|c| condition_text(task, c.feature, c.above.map(|a| a + 1), c.at_most)).collect();
        let share = c as f64 / support as f64;
        let top_pitch = names[task.class_types[top] as usize].clone();
        let when = if conditions.is_empty() { "in every situation".to_string() } else { conditions.join(", ") };
        out.push(RuleSummary {
            text: format!("When {when}: {top_pitch} {} of {} training pitches.", pct(share), fmt_n(support)),
            conditions,
            support: support as usize,
            top_pitch,
            top_share: share,
        });
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The note of unresolved tests gives the counts the budget module found
    /// and agrees in number with them.
    #[test]
    fn unresolved_note_counts_and_number() {
        use crate::significance::budget::Unresolved;
        let names: Vec<String> = (0..1668).map(|i| format!("P{i}")).collect();
        let names: Vec<&str> = names.iter().map(|s| s.as_str()).collect();
        let many = unresolved_note("The location test", "shuffle", &Unresolved { tests: 1668, at_floor: 9, p: 1.0 / 941.0, needed: 36, decided_early: 0, which: (0..9).collect() }, &names, 9999);
        assert!(many.starts_with("The location test: 9 of the 1,668 pitchers tested (P0, P1, P2, P3, P4, P5, P6, P7, P8) met no shuffle"), "{many}");
        assert!(many.contains("(p = 0.0011,") && many.contains("at least 36 tests") && many.contains("they are not flagged"), "{many}");
        assert!(many.contains("`--permutations 9999` or more") && many.ends_with("can settle them."), "{many}");
        let one = unresolved_note("The whole-model test", "shuffle", &Unresolved { tests: 40, at_floor: 1, p: 0.001, needed: 2, decided_early: 0, which: vec![7] }, &names, 9999);
        assert!(one.contains("1 of the 40 pitchers tested (P7) met") && one.contains("he is not flagged") && one.contains("Read him as") && one.ends_with("settle it."), "{one}");
        // Tests decided early are not sent to a larger budget.
        let early = unresolved_note("The predictability-change test", "label swap", &Unresolved { tests: 348, at_floor: 5, p: 1.0 / 1241.0, needed: 6, decided_early: 5, which: (0..5).collect() }, &names, 4999);
        assert!(!early.contains("--permutations") && early.ends_with("so more label swaps would not change them."), "{early}");
        let some = unresolved_note("The location test", "shuffle", &Unresolved { tests: 668, at_floor: 7, p: 0.001, needed: 14, decided_early: 2, which: (0..7).collect() }, &names, 4999);
        assert!(some.contains("2 of them stopped early") && some.contains("`--permutations 4999` or more"), "{some}");
        // More than a dozen are counted, not named.
        let crowd = unresolved_note("The location test", "shuffle", &Unresolved { tests: 668, at_floor: 13, p: 0.001, needed: 14, decided_early: 0, which: (0..13).collect() }, &names, 4999);
        assert!(crowd.contains("668 pitchers tested met") && !crowd.contains("P0"), "{crowd}");
        // Among 12 tests at 1/20, BH needs ⌈0.05 · 12 / 0.05⌉ = 13 > 12:
        // no count of tests can pass it, and the note says so.
        let few = unresolved_note("The predictability-change test", "label swap", &Unresolved { tests: 12, at_floor: 2, p: 0.05, needed: 13, decided_early: 0, which: vec![0, 1] }, &names, 1999);
        assert!(few.contains("cannot clear the false-discovery bar however many of them reach it") && !few.contains("at least 13"), "{few}");
    }

    // Worked by hand: others 0.10 and 0.30 must grow to 0.60 in all; the
    // smaller rises to meet the larger (0.30), then both rise to 0.30 each.
    /// The scored dates sit with the scored pitches' count when the plan's
    /// words give one (`scored_dated`, built in `evaluate::split`), and
    /// follow the words otherwise (worked by hand).
    #[test]
    fn scored_dates_go_with_the_scored_pitches() {
        let mut e = crate::evaluate::split::PitcherEvaluation {
            scheme: "rolling",
            train: "his earlier games of 2026".into(),
            scored: "his last 25 of 32 games of 2026 (2,262 pitches), in 4 blocks by date, each scored by a model fitted on his games before it; his first 7 games only trained the models".into(),
            n_scored: 2262,
            scored_from: Some("2026-05-10".into()),
            scored_to: Some("2026-09-27".into()),
            scored_games: 25,
            older_left_out: None,
            tells_checked_on: "his 2026 games".into(),
            scored_dated: Some("his last 25 of 32 games of 2026 (2,262 pitches, 2026-05-10 to 2026-09-27), in 4 blocks by date, each scored by a model fitted on his games before it; his first 7 games only trained the models".into()),
        };
        assert_eq!(
            evaluation_sentence(&e),
            "How he was scored: his last 25 of 32 games of 2026 (2,262 pitches, 2026-05-10 to 2026-09-27), in 4 blocks by date, each scored by a model fitted on his games before it; his first 7 games only trained the models; the models learned from his earlier games of 2026. An opponent could have done the same with the games he had seen."
        );
        // Words without a pitch count: the dates follow them.
        e.scored = "every game of 2026, each scored by a model fitted on his other games there (5 folds)".into();
        e.scored_dated = None;
        e.scored_to = e.scored_from.clone();
        assert!(evaluation_sentence(&e).starts_with("How he was scored: every game of 2026, each scored by a model fitted on his other games there (5 folds) (2026-05-10); the models"));
    }

    #[test]
    fn rebalance_fills_the_least_used_first() {
        let o = vec![("a".to_string(), 0.10), ("b".to_string(), 0.30)];
        let r = rebalance(&o, 0.60);
        assert!((r[0].1 - 0.30).abs() < 1e-12 && (r[1].1 - 0.30).abs() < 1e-12, "{r:?}");
        let r = rebalance(&o, 0.50);
        assert!((r[0].1 - 0.20).abs() < 1e-12 && (r[1].1 - 0.30).abs() < 1e-12, "{r:?}");
        let r = rebalance(&o, 0.20);
        assert!((r[0].1 - 0.05).abs() < 1e-12 && (r[1].1 - 0.15).abs() < 1e-12, "{r:?}");
    }
}

/// How a pitcher was scored, in a coach's words: "Scored on his 33 games of
/// 2026 (3,047 pitches, 2026-03-26 to 2026-09-28), in 5 blocks by date, each
/// from a model fitted on everything of his before it."
pub fn evaluation_sentence(e: &crate::evaluate::split::PitcherEvaluation) -> String {
    // The dates go with the scored pitches' count when the words give one
    // (`scored_dated`), so they never read as the dates of a clause after
    // it; otherwise after the words.
    let dates = e.date_span();
    let scored = match &e.scored_dated {
        Some(dated) => dated.clone(),
        None if !dates.is_empty() => format!("{} ({dates})", e.scored),
        None => e.scored.clone(),
    };
    // Older seasons left out (the rolling scheme's history window).
    let older = match &e.older_left_out {
        Some(o) => {
            let seasons = if o.from == o.to { o.from.to_string() } else { format!("{}-{}", o.from, o.to) };
            format!(
                "; his older games, of {seasons} ({} pitches), are left out, since habits move between seasons and an opponent reads his recent ones",
                fmt_n(o.pitches)
            )
        }
        None => String::new(),
    };
    format!(
        "How he was scored: {scored}; the models learned from {}{older}. An opponent could have done the same with the games he had seen.",
        e.train
    )
}

/// A family's tests left unflagged at the least p-value their permutations
/// allow (`significance::budget`), in words: `test` names the test ("The
/// location test"), `draw` one permutation ("shuffle"), `names` the
/// family's pitchers (the note names those at the floor, up to a dozen),
/// `more` a budget that would settle them.
pub fn unresolved_note(test: &str, draw: &str, u: &crate::significance::budget::Unresolved, names: &[&str], more: usize) -> String {
    let one = u.at_floor == 1;
    const NAMED: usize = 12;
    let who = if u.which.len() <= NAMED {
        let listed: Vec<&str> = u.which.iter().filter_map(|&i| names.get(i).copied()).collect();
        format!(" ({})", listed.join(", "))
    } else {
        String::new()
    };
    let (they, them) = if one { ("he is", "him") } else { ("they are", "them") };
    // A test decided early stopped at a size the other pitchers' first
    // draws set, below the budget: a larger budget would not move it.
    let advice = if u.decided_early == 0 {
        format!("a run with more {draw}s (`--permutations {more}` or more) can settle {}.", if one { "it" } else { "them" })
    } else if u.decided_early == u.at_floor {
        format!("{} stopped early, when the other pitchers' first {draw}s foretold more results that strong than there were, so more {draw}s would not change {them}.", if one { "His test" } else { "Their tests" })
    } else {
        format!(
            "{} of them stopped early, when the other pitchers' first {draw}s foretold more results that strong than there were; for the others, a run with more {draw}s (`--permutations {more}` or more) can settle them.",
            fmt_n(u.decided_early)
        )
    };
    // Among few tests the floor can lie above the bar even if every test
    // reached it.
    let bar = if u.needed > u.tests {
        format!("with {} tests at once, a p-value that small cannot clear the false-discovery bar however many of them reach it", fmt_n(u.tests))
    } else {
        format!("with {} tests at once, a p-value that small clears the false-discovery bar only when at least {} tests reach it", fmt_n(u.tests), fmt_n(u.needed))
    };
    format!(
        "{test}: {} of the {} pitchers tested{who} met no {draw} of their data as strong as the real one (p = {:.4}, the least the {draw}s drawn allow), yet {they} not flagged: {bar}. Read {them} as unresolved, not as showing nothing; {advice}",
        fmt_n(u.at_floor),
        fmt_n(u.tests),
        u.p,
    )
}

/// A tell beyond the sheet in a headline's few words: "The third time
/// through the order or later: curveball 47% where his count and side
/// habits give 24% (n = 641; held at 51% in his 2026 games)".
pub fn beyond_short(t: &TellTest, test_label: &str) -> String {
    let sit = capitalize(&situation_phrase(&t.situation));
    let expected = pct(t.expected_share.unwrap_or(t.baseline_share));
    let check = held_out_short(t, test_label);
    format!("{sit}: {} {} where his count and side habits give {expected} (n = {}{check})", t.pitch_type, pct(t.share), fmt_n(t.n))
}

/// A flagged count or side tell for the headline: "Against same-side
/// batters: slider 43% against 26% otherwise (n = 475; held at 40% in his
/// 2026 games)".
pub fn sheet_short(t: &TellTest, test_label: &str) -> String {
    let sit = capitalize(&situation_phrase(&t.situation));
    let check = held_out_short(t, test_label);
    format!("{sit}: {} {} against {} otherwise (n = {}{check})", t.pitch_type, pct(t.share), pct(t.baseline_share), fmt_n(t.n))
}

/// A headline tell's held-out check: "; held at 40% in his 2026 games",
/// "; faded to 22% in ...", or nothing when too few pitches say.
fn held_out_short(t: &TellTest, test_label: &str) -> String {
    if t.pitch_gone() {
        return format!("; no {} at all in {test_label}", t.pitch_type);
    }
    match (t.verdict, t.held_out_share) {
        (crate::tells::Verdict::Held, Some(h)) => format!("; held at {} in {test_label}", pct(h)),
        (crate::tells::Verdict::Faded, Some(h)) => format!("; faded to {} in {test_label}", pct(h)),
        _ => String::new(),
    }
}

/// Whether a tell costs him, in a coach's words, with the figures behind it.
pub fn cost_sentence(t: &TellTest, c: &crate::tells::TellCost) -> String {
    let sit = situation_phrase(&t.situation);
    let figures = format!(
        "whiffs {} of {} swings against {} expected from {} (difference {:+.0} points, 95% interval {:+.0} to {:+.0}); called and swinging strikes {} against {}; in play {} against {}",
        pct(c.whiff_rate),
        fmt_n(c.swings),
        pct(c.expected_whiff_rate),
        c.compared_with,
        100.0 * (c.whiff_rate - c.expected_whiff_rate),
        100.0 * c.whiff_diff_low,
        100.0 * c.whiff_diff_high,
        pct(c.csw_rate),
        pct(c.expected_csw_rate),
        pct(c.in_play_rate),
        pct(c.expected_in_play_rate)
    );
    let pitch = &t.pitch_type;
    let avoided = t.direction == crate::tells::Direction::Less;
    // Who the sentence is about: the pitch he leans on, or the one he avoids.
    let his = capitalize(&format!("his {pitch} {sit}"));
    let less_often = format!("He throws his {pitch} less often {sit}");
    if c.costly {
        let what = if avoided {
            format!("when he does throw his {pitch} {sit}, it fares worse than it does elsewhere")
        } else {
            format!("his {pitch} {sit} fares worse than it does elsewhere")
        };
        format!("It costs him: {what} — {figures}; {}.", q_text(c.q_value))
    } else if c.swings < MIN_COST_SWINGS {
        // A few swings say nothing either way, whatever their interval.
        let who = if avoided { less_often } else { his };
        format!(
            "{who}: too few swings there to say whether it costs him ({} swings, fewer than {MIN_COST_SWINGS}) — {figures}. No change is suggested on this evidence.",
            fmt_n(c.swings)
        )
    } else if c.whiff_diff_high < 0.0 || c.whiff_rate - c.expected_whiff_rate <= -0.03 {
        // Worse on the face of it, but not by enough to call it a cost
        // once every tell of the run is weighed (the FDR family).
        let who = if avoided { format!("{less_often}, and when he does it may fare worse") } else { format!("{his}: predictable, and it may be costing him") };
        format!(
            "{who}, but the evidence is thin ({}, {} swings) — {figures}. Worth watching; no change is suggested on this evidence yet.",
            q_text(c.q_value),
            fmt_n(c.swings)
        )
    } else if avoided {
        format!("{less_often}; when he does, it works as well as elsewhere — {figures}. No change is suggested on this evidence.")
    } else {
        format!("{his}: predictable, and it still works — {figures}. No change is suggested on this evidence.")
    }
}

/// Swings a tell's pitch needs in its situation before the advice weighs
/// what it costs him (as the staff chart of called pitches asks 50 of each).
pub const MIN_COST_SWINGS: u64 = 50;

/// Who the yardstick's pitchers are, in words.
fn yardstick_words(yardstick: &str, throws: &str) -> String {
    let hand = if throws == "L" { "left" } else { "right" };
    if yardstick == "league" {
        format!("{hand}-handed pitchers across the league")
    } else {
        format!("the staff's other {hand}-handed pitchers")
    }
}

/// Sheet cells where he is well above the yardstick (`above_league`), the
/// widest gap first, at most four: "3-1 vs left-handed batters: fastball
/// 88% (n = 41, 95% interval 74% to 95%); right-handed pitchers across the
/// league who have the pitch throw it 68% of the time there, which scaled
/// to how often he throws it overall is 61%".
pub fn league_lines(p: &crate::audit::summary::PitcherSummary, yardstick: &str) -> Vec<String> {
    let mut cells: Vec<&crate::audit::sheet::SheetCell> = p.sheet.iter().filter(|c| c.above_league).collect();
    let gap = |c: &crate::audit::sheet::SheetCell| c.top_share_low - c.league_expected_share.unwrap_or(0.0);
    cells.sort_by(|a, b| gap(b).total_cmp(&gap(a)));
    let who = yardstick_words(yardstick, &p.throws);
    cells
        .iter()
        .take(4)
        .map(|c| {
            let side = if c.bats == "L" { "left" } else { "right" };
            format!(
                "{} vs {side}-handed batters: {} {} (n = {}, 95% interval {} to {}); {who} who have the pitch throw it {} of the time there, which scaled to how often he throws it overall is {}",
                c.count,
                c.top_pitch,
                pct(c.top_share),
                fmt_n(c.n),
                pct(c.top_share_low),
                pct(c.top_share_high),
                pct(c.league_share.unwrap_or(0.0)),
                pct(c.league_expected_share.unwrap_or(0.0))
            )
        })
        .collect()
}

/// His percentiles in a sentence: "Against the league (412 other pitchers
/// with the minimum sample): more predictable from the situation than 80%
/// of them, and beyond his count and side habits than 65%."
pub fn league_sentence(p: &crate::audit::summary::PitcherSummary, yardstick: &str) -> String {
    let Some(l) = &p.league_percentile else { return String::new() };
    let whom = if yardstick == "league" { "the league" } else { "the rest of the staff" };
    format!(
        "Against {whom} ({} other pitchers with the minimum sample): more predictable from the situation than {:.0}% of them, and beyond his count and side habits than {:.0}%. A rank describes these games, not a grade of the pitcher.",
        l.among, l.bits, l.beyond_bits
    )
}

/// "; other pitchers of his hand who have the pitch throw it 27% there"
/// (the yardstick of `league::tell_shares`), or nothing.
fn league_phrase(t: &TellTest) -> String {
    match t.league_share {
        Some(l) => format!("; other pitchers of his hand who have the pitch throw it {} there", pct(l)),
        None => String::new(),
    }
}

/// "Not all his pitches were for T: 503 for T in 2025, 194 for U in 2025,
/// 504 for T in 2026." when some of `by_team` is for another club.
pub fn elsewhere_sentence(team: &str, by_team: &[crate::audit::summary::TeamPitches]) -> Option<String> {
    by_team.iter().any(|t| t.team != team).then(|| {
        let parts: Vec<String> = by_team.iter().map(|t| format!("{} for {} in {}", t.pitches, t.team, t.season)).collect();
        format!("Not all his pitches were for {team}: {}.", parts.join(", "))
    })
}
