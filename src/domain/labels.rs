//! Pitch labels that do not name a pitch the pitcher chose: pitchouts and
//! intentional balls (the bench's call), automatic balls and strikes (a
//! clock or rule violation, no pitch thrown) and unknown types (the
//! tracking could not tell). A model that learns them learns the manager's
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
const AUTO_BALL: &str = "an automatic ball (a clock or rule violation, no pitch thrown)";
const AUTO_STRIKE: &str = "an automatic strike (a clock or rule violation, no pitch thrown)";
const UNKNOWN: &str = "an unknown pitch type";

/// The labels set aside by default, each with what it is. A label of
/// punctuation only ("?", "-") has an empty loose key and reads as unknown.
pub const NOT_CHOSEN: &[(&str, &str)] = &[
    ("pitchout", PITCHOUT),
    ("PO", PITCHOUT),
    ("intentional ball", INTENTIONAL),
    ("intentional", INTENTIONAL),
    ("IN", INTENTIONAL),
    ("IB", INTENTIONAL),
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spellings_meet_by_loose_key() {
        assert_eq!(what_it_is("Pitch-Out"), Some(PITCHOUT), "case and punctuation do not matter");
        assert_eq!(what_it_is("PITCHOUT"), Some(PITCHOUT));
        assert_eq!(what_it_is("Intentional Ball"), Some(INTENTIONAL));
        assert_eq!(what_it_is("n/a"), Some(UNKNOWN));
        assert_eq!(what_it_is("--"), Some(UNKNOWN), "punctuation only is unknown");
        assert_eq!(what_it_is("slider"), None);
        assert_eq!(what_it_is("FF"), None);
    }
}
