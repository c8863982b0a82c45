//! The log's column names (CONTRACT §1), in the order the reader checks them.

/// The contract's column names (CONTRACT §1).
pub const REQUIRED_COLUMNS: [&str; 14] = [
    "game", "date", "pitcher", "throws", "batter", "bats", "inning", "outs", "balls", "strikes",
    "on_first", "on_second", "on_third", "pitch_type",
];
pub const OPTIONAL_COLUMNS: [&str; 9] = [
    "season", "pa", "pitch_no", "score_diff", "result", "speed_mph", "loc_side_ft",
    "loc_height_ft", "team",
];

/// Columns a log may carry instead of `score_diff` and `team` (the
/// inning's half, `top`/`bottom`, each club's runs before the pitch and
/// each club's name) or instead of `balls` and `strikes` (`count`, written
/// `B-S`). Read only to work out contract columns the file lacks
/// (`ingest::derive`); mappable through `[columns]` like the others.
pub const SOURCE_COLUMNS: [&str; 6] = ["half", "home_score", "away_score", "home_team", "away_team", "count"];

/// Columns read only to show a pitcher: `pitcher_name`, the name of a
/// pitcher whose `pitcher` column holds an id (as many club and league
/// exports write them). Pitchers are still told apart by `pitcher`; the
/// report shows the name (`ingest::names`). Mappable through `[columns]`.
pub const NAME_COLUMNS: [&str; 1] = ["pitcher_name"];
