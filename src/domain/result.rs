//! The outcome of a pitch: the one spelling of CONTRACT §1's `result`
//! values, read by ingest and written by the simulator.

use serde::Serialize;

/// The outcome of a pitch (optional column `result`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum PitchResult {
    Ball,
    CalledStrike,
    SwingingStrike,
    Foul,
    InPlay,
    HitByPitch,
    Other,
}

impl PitchResult {
    pub const ALL: [PitchResult; 7] = [
        PitchResult::Ball,
        PitchResult::CalledStrike,
        PitchResult::SwingingStrike,
        PitchResult::Foul,
        PitchResult::InPlay,
        PitchResult::HitByPitch,
        PitchResult::Other,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            PitchResult::Ball => "ball",
            PitchResult::CalledStrike => "called_strike",
            PitchResult::SwingingStrike => "swinging_strike",
            PitchResult::Foul => "foul",
            PitchResult::InPlay => "in_play",
            PitchResult::HitByPitch => "hit_by_pitch",
            PitchResult::Other => "other",
        }
    }

    /// One of the seven, written in any case, spacing or punctuation
    /// ("called_strike", "Called Strike", "called-strike").
    pub fn parse(s: &str) -> Option<PitchResult> {
        let s = crate::domain::labels::loose_name(s);
        PitchResult::ALL.iter().copied().find(|r| crate::domain::labels::loose_name(r.as_str()) == s)
    }
}
