//! The factors of a game situation and the spelling of their levels
//! (CONTRACT §2). Pure functions of the game state: the simulator, the
//! situation builder and the report all spell levels through this module, so
//! a level can never be written two ways.

use serde::{Deserialize, Serialize};
use std::fmt;

/// One factor of the game situation a pitch is thrown in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Factor {
    Count,
    Bats,
    Platoon,
    Bases,
    Outs,
    PrevPitch,
    TimesThrough,
    Inning,
    Score,
}

impl Factor {
    /// Every factor, in report order.
    pub const ALL: [Factor; 9] = [
        Factor::Count,
        Factor::Bats,
        Factor::Platoon,
        Factor::Bases,
        Factor::Outs,
        Factor::PrevPitch,
        Factor::TimesThrough,
        Factor::Inning,
        Factor::Score,
    ];

    /// The contract's name of the factor (`count`, `prev_pitch`, ...).
    pub fn name(self) -> &'static str {
        match self {
            Factor::Count => "count",
            Factor::Bats => "bats",
            Factor::Platoon => "platoon",
            Factor::Bases => "bases",
            Factor::Outs => "outs",
            Factor::PrevPitch => "prev_pitch",
            Factor::TimesThrough => "times_through",
            Factor::Inning => "inning",
            Factor::Score => "score",
        }
    }

    pub fn from_name(name: &str) -> Option<Factor> {
        Factor::ALL.iter().copied().find(|f| f.name() == name)
    }

    /// The fixed levels of the factor, in display order. `prev_pitch` has
    /// no fixed levels (they are the pitcher's own pitch types plus `none`).
    pub fn fixed_levels(self) -> &'static [&'static str] {
        match self {
            Factor::Count => &COUNTS,
            Factor::Bats => &["L", "R"],
            Factor::Platoon => &["same", "opposite"],
            Factor::Bases => &BASES,
            Factor::Outs => &["0", "1", "2"],
            Factor::PrevPitch => &[],
            Factor::TimesThrough => &["1", "2", "3+"],
            Factor::Inning => &["1-3", "4-6", "7-9", "10+"],
            Factor::Score => &["behind", "tied", "ahead"],
        }
    }
}

impl fmt::Display for Factor {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// The twelve counts, balls-strikes, in grid order (balls major).
pub const COUNTS: [&str; 12] = [
    "0-0", "0-1", "0-2", "1-0", "1-1", "1-2", "2-0", "2-1", "2-2", "3-0", "3-1", "3-2",
];

/// The eight base states, runners on first, second, third.
pub const BASES: [&str; 8] = ["---", "1--", "-2-", "--3", "12-", "1-3", "-23", "123"];

/// The `prev_pitch` level for the first pitch of a plate appearance.
pub const NO_PREV_PITCH: &str = "none";

/// A throwing or batting side.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum Hand {
    L,
    R,
}

impl Hand {
    pub fn as_str(self) -> &'static str {
        match self {
            Hand::L => "L",
            Hand::R => "R",
        }
    }

    /// The other side.
    pub fn other(self) -> Hand {
        match self {
            Hand::L => Hand::R,
            Hand::R => Hand::L,
        }
    }

    /// A pitcher's usual throwing hand, the one of most of his pitches:
    /// `first` is the hand of his first pitch in the log, thrown on `same`
    /// of his pitches and the other hand on `other`; a tie goes to `first`.
    pub fn usual(first: Hand, same: usize, other: usize) -> Hand {
        if other > same {
            first.other()
        } else {
            first
        }
    }

    /// Case-insensitive, trimmed.
    pub fn parse(s: &str) -> Option<Hand> {
        match s.trim() {
            "L" | "l" => Some(Hand::L),
            "R" | "r" => Some(Hand::R),
            _ => None,
        }
    }
}

/// Index of a count in [`COUNTS`]; balls 0..=3, strikes 0..=2.
pub fn count_index(balls: u8, strikes: u8) -> usize {
    debug_assert!(balls <= 3 && strikes <= 2);
    balls as usize * 3 + strikes as usize
}

/// The sheet's cell of a pitch: count × batter side, `count · 2 + side`
/// (side 0 left, 1 right), 24 cells.
pub fn sheet_cell(balls: u8, strikes: u8, bats: Hand) -> usize {
    count_index(balls, strikes) * 2 + (bats == Hand::R) as usize
}

/// `B-S`, e.g. `3-1`.
pub fn count_level(balls: u8, strikes: u8) -> &'static str {
    COUNTS[count_index(balls, strikes)]
}

/// Index of a base state in [`BASES`].
pub fn bases_index(on_first: bool, on_second: bool, on_third: bool) -> usize {
    match (on_first, on_second, on_third) {
        (false, false, false) => 0,
        (true, false, false) => 1,
        (false, true, false) => 2,
        (false, false, true) => 3,
        (true, true, false) => 4,
        (true, false, true) => 5,
        (false, true, true) => 6,
        (true, true, true) => 7,
    }
}

pub fn bases_level(on_first: bool, on_second: bool, on_third: bool) -> &'static str {
    BASES[bases_index(on_first, on_second, on_third)]
}

/// `same` when batter and pitcher share a side, else `opposite`.
pub fn platoon_index(throws: Hand, bats: Hand) -> usize {
    if throws == bats {
        0
    } else {
        1
    }
}

pub fn platoon_level(throws: Hand, bats: Hand) -> &'static str {
    ["same", "opposite"][platoon_index(throws, bats)]
}

/// Outs before the pitch, 0..=2.
pub fn outs_level(outs: u8) -> &'static str {
    ["0", "1", "2"][outs.min(2) as usize]
}

/// `times` is this batter's plate appearances against this pitcher in the
/// game so far, this one included (so >= 1).
pub fn times_through_index(times: u32) -> usize {
    match times {
        0 | 1 => 0,
        2 => 1,
        _ => 2,
    }
}

pub fn times_through_level(times: u32) -> &'static str {
    ["1", "2", "3+"][times_through_index(times)]
}

pub fn inning_index(inning: u32) -> usize {
    match inning {
        0..=3 => 0,
        4..=6 => 1,
        7..=9 => 2,
        _ => 3,
    }
}

pub fn inning_level(inning: u32) -> &'static str {
    ["1-3", "4-6", "7-9", "10+"][inning_index(inning)]
}

/// `score_diff` is the pitcher's team's runs minus the opponent's.
pub fn score_index(score_diff: i32) -> usize {
    match score_diff.signum() {
        -1 => 0,
        0 => 1,
        _ => 2,
    }
}

pub fn score_level(score_diff: i32) -> &'static str {
    ["behind", "tied", "ahead"][score_index(score_diff)]
}

#[cfg(test)]
mod tests {
    use super::*;

    // Level spellings are those of CONTRACT §2; the bucket edges are the
    // contract's (common practice for inning thirds and the score state).
    #[test]
    fn levels_follow_the_contract() {
        assert_eq!(count_level(3, 1), "3-1");
        assert_eq!(count_level(0, 2), "0-2");
        assert_eq!(bases_level(true, false, true), "1-3");
        assert_eq!(bases_level(false, true, true), "-23");
        assert_eq!(bases_level(false, false, false), "---");
        assert_eq!(platoon_level(Hand::R, Hand::R), "same");
        assert_eq!(platoon_level(Hand::L, Hand::R), "opposite");
        assert_eq!(times_through_level(1), "1");
        assert_eq!(times_through_level(3), "3+");
        assert_eq!(times_through_level(5), "3+");
        assert_eq!(inning_level(3), "1-3");
        assert_eq!(inning_level(4), "4-6");
        assert_eq!(inning_level(9), "7-9");
        assert_eq!(inning_level(12), "10+");
        assert_eq!(score_level(-2), "behind");
        assert_eq!(score_level(0), "tied");
        assert_eq!(score_level(5), "ahead");
        assert_eq!(Factor::from_name("prev_pitch"), Some(Factor::PrevPitch));
        assert_eq!(Hand::parse(" l "), Some(Hand::L));
        assert_eq!(Hand::parse("S"), None);
    }

    #[test]
    fn every_count_and_base_state_has_one_spelling() {
        let mut seen = std::collections::HashSet::new();
        for b in 0..4 {
            for s in 0..3 {
                assert!(seen.insert(count_level(b, s)));
            }
        }
        assert_eq!(seen.len(), 12);
        let mut bases = std::collections::HashSet::new();
        for i in 0..8u8 {
            bases.insert(bases_level(i & 1 != 0, i & 2 != 0, i & 4 != 0));
        }
        assert_eq!(bases.len(), 8);
    }
}

/// A pitcher's pitches by throwing hand, in log order: the hand of his
/// first pitch, and how many of his pitches are thrown with it and with
/// the other. The one count behind his usual hand wherever it is needed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct HandTally {
    pub first: Hand,
    pub same: usize,
    pub other: usize,
}

impl HandTally {
    /// A tally of one pitch.
    pub fn new(first: Hand) -> HandTally {
        HandTally { first, same: 1, other: 0 }
    }

    /// One more pitch, thrown with `hand`.
    pub fn add(&mut self, hand: Hand) {
        if hand == self.first {
            self.same += 1;
        } else {
            self.other += 1;
        }
    }

    /// The tally of these pitches' hands, in log order (None for none).
    pub fn of(hands: impl IntoIterator<Item = Hand>) -> Option<HandTally> {
        let mut it = hands.into_iter();
        let mut t = HandTally::new(it.next()?);
        it.for_each(|h| t.add(h));
        Some(t)
    }

    /// His usual hand ([`Hand::usual`]).
    pub fn usual(&self) -> Hand {
        Hand::usual(self.first, self.same, self.other)
    }

    /// Pitches thrown with his usual hand and with the other.
    pub fn split(&self) -> (usize, usize) {
        if self.usual() == self.first {
            (self.same, self.other)
        } else {
            (self.other, self.same)
        }
    }
}

#[cfg(test)]
mod hand_tests {
    use super::Hand;

    /// The usual hand is the one of most pitches; a tie keeps his first
    /// pitch's hand (worked by hand).
    #[test]
    fn usual_hand_is_the_one_of_most_pitches() {
        assert_eq!(Hand::usual(Hand::R, 10, 0), Hand::R);
        assert_eq!(Hand::usual(Hand::R, 4, 6), Hand::L);
        assert_eq!(Hand::usual(Hand::L, 5, 5), Hand::L);
        assert_eq!(Hand::usual(Hand::L, 1, 2), Hand::R);
    }

    /// A tally counts each hand against the first pitch's (worked by hand).
    #[test]
    fn a_tally_counts_hands_in_log_order() {
        use super::HandTally;
        use Hand::{L, R};
        assert_eq!(HandTally::of([]), None);
        let t = HandTally::of([L, R, R, L, R]).unwrap();
        assert_eq!((t.first, t.same, t.other), (L, 2, 3));
        assert_eq!((t.usual(), t.split()), (R, (3, 2)));
        let t = HandTally::of([R, L]).unwrap();
        assert_eq!((t.usual(), t.split()), (R, (1, 1)));
    }
}
