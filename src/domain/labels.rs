//! Pitch labels that do not name a pitch the pitcher chose: pitchouts and
//! intentional balls (the bench's call), pickoff throws (not a pitch),
//! automatic balls and strikes (a clock or rule violation, no pitch thrown)
//! and unknown types (the tracking could not tell). A model that learns them learns the manager's
//! decisions and the tracker's gaps, and reads them as tells: a run's
//! labels matching [`NOT_CHOSEN`] (by [`loose_name`]) are set aside by
//! default (`[set_aside] pitch_labels`). The spellings are common practice
//! in club and league exports, not taken from any one source.

/// A name as a loose key: its letters and digits, lower-cased, so names
/// that differ only in case, spaces or punctuation ("Pitch_Type" and
/// "pitch type", "Wren Alder" and "wren  alder") share it.
pub fn loose_name(name: &str) -> String {
    name.chars().filter(|c| c.is_alphanumeric()).flat_map(char::to_lowercase).collect()
}

const PITCHOUT: &str = "a pitchout";
const INTENTIONAL: &str = "an intentional ball";
const PICKOFF: &str = "a pickoff throw";
const AUTO_BALL: &str = "an automatic ball (a clock or rule violation, no pitch thrown)";
const AUTO_STRIKE: &str = "an automatic strike (a clock or rule violation, no pitch thrown)";
const UNKNOWN: &str = "an unknown pitch type";

/// Whether a set-aside description is the unknown pitch type's (which
/// names a pitch label only: an unknown result is a missing value).
pub fn is_unknown_pitch(what: &str) -> bool {
    what == UNKNOWN
}

/// The labels set aside by default, each with what it is. A label of
/// punctuation only ("?", "-") has an empty loose key and reads as unknown.
pub const NOT_CHOSEN: &[(&str, &str)] = &[
    ("pitchout", PITCHOUT),
    ("PO", PITCHOUT),
    ("intentional ball", INTENTIONAL),
    ("intentional", INTENTIONAL),
    ("intent ball", INTENTIONAL),
    ("IN", INTENTIONAL),
    ("IB", INTENTIONAL),
    ("pickoff", PICKOFF),
    ("pickoff attempt", PICKOFF),
    ("PK", PICKOFF),
    ("automatic ball", AUTO_BALL),
    ("AB", AUTO_BALL),
    ("automatic strike", AUTO_STRIKE),
    ("AS", AUTO_STRIKE),
    ("unknown", UNKNOWN),
    ("UN", UNKNOWN),
    ("UNK", UNKNOWN),
    ("unidentified", UNKNOWN),
    ("unclassified", UNKNOWN),
    ("NA", UNKNOWN),
    ("null", UNKNOWN),
    ("none", UNKNOWN),
    ("?", UNKNOWN),
];

/// What a label listed to be set aside is, in words: the default's
/// description when its loose key is a default's, else `None`.
pub fn what_it_is(label: &str) -> Option<&'static str> {
    let key = loose_name(label);
    NOT_CHOSEN.iter().find(|(l, _)| loose_name(l) == key).map(|(_, what)| *what)
}

/// A new label that took an old label's place: of `before`'s labels (label
/// → share) holding at least `new_share`, the one that lost the most share
/// beyond what a pitch added alongside would take from it, when that
/// excess is at least half of what it could be. A pitch he adds takes its
/// share from all of his pitches in proportion (a label of share `b` falls
/// by `b · rise`: excess 0); a renamed pitch (all of it, or some, now
/// written under the new label) hands its share across (it falls by the
/// whole rise: excess `rise · (1 − b)`, the most). An old label can hand
/// the new one no more than the new one gained, so its fall counts up to
/// the rise: when the log renames every label at once (each old label
/// falls to nothing), each new label meets the old one of its own share,
/// not the largest. An old label written the same but for case, spaces or
/// punctuation ([`loose_name`]) that passes is taken first. Returns the
/// old label and its shares before and after. For notes: the log's labels
/// are always read as written.
pub fn took_the_place_of<'a>(
    before: &'a std::collections::BTreeMap<String, f64>,
    after: &std::collections::BTreeMap<String, f64>,
    new: &str,
    new_share: f64,
) -> Option<(&'a str, f64, f64)> {
    let share = |m: &std::collections::BTreeMap<String, f64>, t: &str| m.get(t).copied().unwrap_or(0.0);
    let rise = share(after, new) - share(before, new);
    if rise <= 0.0 {
        return None;
    }
    let excess = |b: f64, a: f64| (b - a).min(rise) - b * rise;
    let key = loose_name(new);
    before
        .iter()
        .filter(|(t, &b)| t.as_str() != new && b >= new_share && b < 1.0)
        .map(|(t, &b)| (t.as_str(), b, share(after, t)))
        .filter(|&(_, b, a)| excess(b, a) >= 0.5 * rise * (1.0 - b))
        .max_by(|x, y| {
            (loose_name(x.0) == key)
                .cmp(&(loose_name(y.0) == key))
                .then(excess(x.1, x.2).total_cmp(&excess(y.1, y.2)))
                .then(y.0.cmp(x.0))
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn mix(pairs: &[(&str, f64)]) -> std::collections::BTreeMap<String, f64> {
        pairs.iter().map(|(t, s)| (t.to_string(), *s)).collect()
    }

    /// Worked by hand: a rename moves the share across (excess 0.207 of
    /// at most 0.217); half a slider written as sweeper moves half (0.098
    /// of 0.098); an added 20% cutter takes from all in proportion (0).
    #[test]
    fn a_rename_moves_the_share_across_an_added_pitch_takes_from_all() {
        let before = mix(&[("fastball", 0.5), ("slider", 0.3), ("changeup", 0.2)]);
        let renamed = mix(&[("fastball", 0.49), ("sweeper", 0.31), ("changeup", 0.2)]);
        assert_eq!(took_the_place_of(&before, &renamed, "sweeper", 0.05), Some(("slider", 0.3, 0.0)));
        let half = mix(&[("fastball", 0.5), ("slider", 0.16), ("sweeper", 0.14), ("changeup", 0.2)]);
        assert_eq!(took_the_place_of(&before, &half, "sweeper", 0.05), Some(("slider", 0.3, 0.16)));
        let added = mix(&[("fastball", 0.4), ("slider", 0.24), ("changeup", 0.16), ("cutter", 0.2)]);
        assert_eq!(took_the_place_of(&before, &added, "cutter", 0.05), None, "each gave in proportion: excess 0");
        // A 60% fastball renamed ("four-seam") hands over all of it.
        let heavy = mix(&[("fastball", 0.6), ("slider", 0.4)]);
        let four_seam = mix(&[("four-seam", 0.58), ("slider", 0.42)]);
        assert_eq!(took_the_place_of(&heavy, &four_seam, "four-seam", 0.05), Some(("fastball", 0.6, 0.0)));
        // The same pitcher adding a 20% cutter: the fastball gives 0.12.
        let cutter = mix(&[("fastball", 0.48), ("slider", 0.32), ("cutter", 0.2)]);
        assert_eq!(took_the_place_of(&heavy, &cutter, "cutter", 0.05), None);
        assert_eq!(took_the_place_of(&before, &before, "slider", 0.05), None, "no rise");
    }

    /// Worked by hand: every label renamed at once, each falling to
    /// nothing. Uncapped, every new label would meet the fastball (the
    /// largest fall: 0.5 − 0.5 · 0.19 = 0.405 for "CH"); capped at the
    /// rise, the excesses for "CH" are the fastball's 0.19 − 0.095 =
    /// 0.095, the slider's 0.19 − 0.057 = 0.133 and the changeup's
    /// 0.19 − 0.038 = 0.152.
    #[test]
    fn a_label_scheme_renamed_whole_pairs_each_label_with_its_own() {
        let before = mix(&[("fastball", 0.5), ("slider", 0.3), ("changeup", 0.2)]);
        let codes = mix(&[("FB", 0.52), ("SL", 0.29), ("CH", 0.19)]);
        assert_eq!(took_the_place_of(&before, &codes, "CH", 0.05), Some(("changeup", 0.2, 0.0)));
        assert_eq!(took_the_place_of(&before, &codes, "SL", 0.05), Some(("slider", 0.3, 0.0)));
        assert_eq!(took_the_place_of(&before, &codes, "FB", 0.05), Some(("fastball", 0.5, 0.0)));
        // Capitalised: the same loose name is taken first, even where the
        // shares alone would pair "Slider" with the changeup (0.24 moved:
        // the changeup's excess 0.24 − 0.0624 = 0.178 against the slider's
        // 0.24 − 0.072 = 0.168).
        let before = mix(&[("fastball", 0.44), ("slider", 0.3), ("changeup", 0.26)]);
        let capitals = mix(&[("Fastball", 0.5), ("Slider", 0.24), ("Changeup", 0.26)]);
        assert_eq!(took_the_place_of(&before, &capitals, "Slider", 0.05), Some(("slider", 0.3, 0.0)));
        assert_eq!(took_the_place_of(&before, &capitals, "Changeup", 0.05), Some(("changeup", 0.26, 0.0)));
    }

    #[test]
    fn spellings_meet_by_loose_key() {
        assert_eq!(what_it_is("Pitch-Out"), Some(PITCHOUT), "case and punctuation do not matter");
        assert_eq!(what_it_is("PITCHOUT"), Some(PITCHOUT));
        assert_eq!(what_it_is("Intentional Ball"), Some(INTENTIONAL));
        assert_eq!(what_it_is("n/a"), Some(UNKNOWN));
        assert_eq!(what_it_is("Pick-off"), Some(PICKOFF));
        assert_eq!(what_it_is("--"), Some(UNKNOWN), "punctuation only is unknown");
        assert_eq!(what_it_is("slider"), None);
        assert_eq!(what_it_is("FF"), None);
    }
}
