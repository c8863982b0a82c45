//! Pitchers shown by name. Many club and league exports key a pitcher by an
//! id and write his name in a column of its own; with that column mapped
//! to `pitcher_name`, pitchers are still told apart by `pitcher` (two
//! pitchers who share a name stay two), and the report shows each by the
//! name on most of his pitches, with his id beside it where two ids share
//! a name.

use crate::domain::numbers::fmt_n;

/// What the name column says of each pitcher (in the interner's order).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Named {
    /// The name on most of his rows (ties: the first in sorted order);
    /// `None` when none of his rows has one.
    pub name: Vec<Option<String>>,
    /// Each pitcher's other names and their rows, most rows first.
    pub others: Vec<Vec<(String, usize)>>,
}

/// Each pitcher's names from every kept row's pitcher and name code
/// (`None`: an empty cell or a missing-value marker); `dict` holds the
/// name column's values.
pub fn tally(pitcher: &[u32], n_pitchers: usize, name: &[Option<u32>], dict: &[String]) -> Named {
    // A pitcher has one name, or a few: a short list per pitcher.
    let mut seen: Vec<Vec<(u32, usize)>> = vec![Vec::new(); n_pitchers];
    for (&p, &c) in pitcher.iter().zip(name) {
        let Some(c) = c else { continue };
        let list = &mut seen[p as usize];
        match list.iter_mut().find(|(code, _)| *code == c) {
            Some((_, n)) => *n += 1,
            None => list.push((c, 1)),
        }
    }
    let mut out = Named::default();
    for list in seen {
        let mut names: Vec<(String, usize)> = list.into_iter().map(|(c, n)| (dict[c as usize].clone(), n)).collect();
        names.sort_by(|a, b| b.1.cmp(&a.1).then_with(|| a.0.cmp(&b.0)));
        let mut names = names.into_iter();
        out.name.push(names.next().map(|(s, _)| s));
        out.others.push(names.collect());
    }
    out
}

/// Each pitcher's shown label: his name, or his id without one; a name
/// two ids share is shown with the id, `"Wren Alder (600001)"`. Labels are
/// distinct, as ids are.
pub fn labels(ids: &[String], names: &[Option<String>]) -> Vec<String> {
    let plain: Vec<&str> = ids.iter().zip(names).map(|(id, n)| n.as_deref().unwrap_or(id)).collect();
    let shared = repeated(plain.iter().copied());
    let first: Vec<String> = ids
        .iter()
        .zip(names)
        .zip(&plain)
        .map(|((id, n), &p)| match n {
            Some(n) if shared.contains(p) => format!("{n} ({id})"),
            _ => p.to_string(),
        })
        .collect();
    // A label of "name (id)" could only meet another pitcher's id or name
    // written that way; then it reads "name (id: id)".
    let clash = repeated(first.iter().map(String::as_str));
    first
        .iter()
        .zip(ids)
        .zip(names)
        .map(|((l, id), n)| match n {
            Some(n) if clash.contains(l.as_str()) && l != id => format!("{n} (id: {id})"),
            _ => l.clone(),
        })
        .collect()
}

/// The values met more than once.
fn repeated<'a>(values: impl Iterator<Item = &'a str>) -> std::collections::BTreeSet<&'a str> {
    let mut seen = std::collections::BTreeSet::new();
    values.filter(|&v| !seen.insert(v)).collect()
}

/// The note on pitchers shown by name (one sentence without a final stop),
/// `None` when every label is its id (the name column repeats `pitcher`).
/// `refused`: distinct names not used, each holding a control character
/// or longer than a name may be.
pub fn note(ids: &[String], named: &Named, labels: &[String], refused: usize) -> Option<String> {
    if labels.iter().zip(ids).all(|(l, id)| l == id) {
        return None;
    }
    let mut parts = vec!["pitchers are told apart by `pitcher` and shown by `pitcher_name`, their ids kept as `pitcher_id` in summary.json and the CSV files".to_string()];
    let mut shared: Vec<&String> = labels.iter().zip(named.name.iter()).filter(|(l, n)| n.as_ref().is_some_and(|n| *l != n)).map(|(l, _)| l).collect();
    shared.sort();
    if !shared.is_empty() {
        parts.push(format!(
            "{} shown with {} id as {} name is shared by another pitcher ({})",
            count(shared.len(), "pitcher is", "pitchers are"),
            if shared.len() == 1 { "his" } else { "their" },
            if shared.len() == 1 { "his" } else { "each one's" },
            first_three(shared.iter().map(|s| s.to_string()))
        ));
    }
    let mut renamed: Vec<String> = labels
        .iter()
        .zip(&named.others)
        .filter(|(_, o)| !o.is_empty())
        .map(|(l, o)| {
            let also = o.iter().map(|(s, k)| format!("\"{s}\" on {}", count(*k, "pitch", "pitches"))).collect::<Vec<_>>().join(", ");
            format!("{l} (also {also})")
        })
        .collect();
    renamed.sort();
    if !renamed.is_empty() {
        parts.push(format!(
            "{} written under more than one name, each shown by the name on most of his pitches: {}",
            count(renamed.len(), "pitcher is", "pitchers are"),
            first_three(renamed.into_iter())
        ));
    }
    let mut nameless: Vec<&String> = ids.iter().zip(&named.name).filter(|(_, n)| n.is_none()).map(|(id, _)| id).collect();
    nameless.sort();
    if !nameless.is_empty() {
        parts.push(format!(
            "{} no name in `pitcher_name` and {} shown by id ({})",
            count(nameless.len(), "pitcher has", "pitchers have"),
            if nameless.len() == 1 { "is" } else { "are" },
            first_three(nameless.iter().map(|s| s.to_string()))
        ));
    }
    if refused > 0 {
        parts.push(format!(
            "{} in `pitcher_name` {} not used, holding a control character or longer than {} characters",
            count(refused, "name", "names"),
            if refused == 1 { "was" } else { "were" },
            crate::ingest::parse::MAX_TEXT_CHARS
        ));
    }
    let mut text = parts.join("; ");
    if let Some(c) = text.get(..1) {
        text = c.to_uppercase() + &text[1..];
    }
    Some(text)
}

fn count(n: usize, one: &str, many: &str) -> String {
    if n == 1 {
        format!("1 {one}")
    } else {
        format!("{} {many}", fmt_n(n))
    }
}

fn first_three(items: impl Iterator<Item = String>) -> String {
    let all: Vec<String> = items.collect();
    let more = if all.len() > 3 { format!(" and {} more", all.len() - 3) } else { String::new() };
    format!("{}{more}", all[..all.len().min(3)].join("; "))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn s(v: &[&str]) -> Vec<String> {
        v.iter().map(|x| x.to_string()).collect()
    }

    #[test]
    fn each_pitcher_takes_the_name_on_most_of_his_rows() {
        let dict = s(&["Wren Alder", "W. Alder", "Tobin Marsh"]);
        // Pitcher 0: "Wren Alder" twice, "W. Alder" once; pitcher 1: one
        // "Tobin Marsh" and an empty cell; pitcher 2: no name at all.
        let pitcher = [0, 0, 0, 1, 1, 2];
        let name = [Some(0), Some(1), Some(0), Some(2), None, None];
        let named = tally(&pitcher, 3, &name, &dict);
        assert_eq!(named.name, vec![Some("Wren Alder".to_string()), Some("Tobin Marsh".to_string()), None]);
        assert_eq!(named.others[0], vec![("W. Alder".to_string(), 1)]);
        assert!(named.others[1].is_empty());
        // A tie goes to the name first in sorted order, whatever the row order.
        let tied = tally(&[0, 0], 1, &[Some(0), Some(1)], &dict);
        assert_eq!(tied.name[0].as_deref(), Some("W. Alder"));
    }

    #[test]
    fn a_shared_name_is_shown_with_its_ids_and_labels_stay_distinct() {
        let ids = s(&["600001", "600002", "600003", "600004"]);
        let names = vec![Some("Wren Alder".to_string()), Some("Wren Alder".to_string()), Some("Tobin Marsh".to_string()), None];
        let l = labels(&ids, &names);
        assert_eq!(l, s(&["Wren Alder (600001)", "Wren Alder (600002)", "Tobin Marsh", "600004"]));
        // A name that is another pitcher's id is shown with its own id.
        let l = labels(&s(&["7", "8"]), &[Some("8".to_string()), None]);
        assert_eq!(l, s(&["8 (7)", "8"]));
        let mut sorted = l.clone();
        sorted.sort();
        sorted.dedup();
        assert_eq!(sorted.len(), 2);
    }

    #[test]
    fn the_note_names_shared_renamed_and_nameless_pitchers() {
        let ids = s(&["600001", "600002", "600003", "600004"]);
        let dict = s(&["Wren Alder", "W. Alder", "Tobin Marsh"]);
        let pitcher = [0, 0, 0, 1, 2];
        let name = [Some(0), Some(0), Some(1), Some(0), Some(2)];
        let named = tally(&pitcher, 4, &name, &dict);
        let l = labels(&ids, &named.name);
        let text = note(&ids, &named, &l, 1).expect("names differ from ids");
        assert!(text.starts_with("Pitchers are told apart by `pitcher`"), "{text}");
        assert!(text.contains("2 pitchers are shown with their id"), "{text}");
        assert!(text.contains("2 pitchers are shown with their id as each one's name is shared by another pitcher (Wren Alder (600001); Wren Alder (600002))"), "{text}");
        assert!(text.contains("1 pitcher is written under more than one name, each shown by the name on most of his pitches: Wren Alder (600001) (also \"W. Alder\" on 1 pitch)"), "{text}");
        assert!(text.contains("1 pitcher has no name in `pitcher_name` and is shown by id (600004)"), "{text}");
        assert!(text.contains("1 name in `pitcher_name` was not used, holding a control character or longer than 200 characters"), "{text}");
        // A name column that repeats the ids says nothing.
        let same = Named { name: ids.iter().cloned().map(Some).collect(), others: vec![Vec::new(); 4] };
        assert_eq!(note(&ids, &same, &labels(&ids, &same.name), 0), None);
    }
}
