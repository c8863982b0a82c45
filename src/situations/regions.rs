//! Where a pitch crosses the plate, in regions of our own named the way a
//! coach says them, relative to the batter: inside the zone, three columns
//! (in, middle, away) by three rows (up, middle, down); outside it, four
//! chase regions (high, low, in, away).
//!
//! Where the edges come from:
//! - **Width.** The plate is 17 inches wide (the rule book's definition of
//!   home plate), so 8.5 in = 0.708 ft either side of its centre. A pitch is
//!   a strike when any part of the ball passes over the zone, and the ball's
//!   radius is about 1.45 in (the rule book's 9 to 9.25 in circumference,
//!   so about 2.9 in across): the zone's side edges are 0.708 + 0.121 ≈
//!   0.83 ft from the centre line (common practice).
//! - **Height.** The rule book's zone runs from the hollow below the kneecap
//!   to the midpoint between the top of the shoulders and the top of the
//!   uniform pants, which varies by batter and stance; the log carries no
//!   batter's own bounds, so the zone is the usual 1.5 to 3.5 ft above the
//!   ground (common practice, the figure the issue gives).
//! - **Thirds.** Each direction of the zone is cut into equal thirds (our
//!   choice: plain and symmetric).
//! - **Which side is in.** `loc_side_ft` is seen from the catcher (CONTRACT
//!   §1), positive toward the catcher's right, the first-base side. A
//!   right-handed batter stands on the third-base side (the catcher's left),
//!   so for him "in" is negative side; for a left-handed batter, positive.
//! - **A pitch outside the zone** is in the chase region of the edge it
//!   misses by most (high, low, in, away; ties in that order).

use crate::domain::levels::Hand;

/// Half the width of the zone, ft: half the plate (8.5 in) plus a ball's
/// radius (about 1.45 in).
pub const ZONE_HALF_WIDTH: f64 = (8.5 + 1.45) / 12.0;
/// Bottom and top of the zone when the batter's own bounds are unknown, ft.
pub const ZONE_BOTTOM: f64 = 1.5;
pub const ZONE_TOP: f64 = 3.5;

/// A region of the plate, relative to the batter.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Region {
    UpIn,
    Up,
    UpAway,
    In,
    Middle,
    Away,
    DownIn,
    Down,
    DownAway,
    ChaseHigh,
    ChaseLow,
    ChaseIn,
    ChaseAway,
}

/// Number of regions (label codes 0..REGIONS).
pub const REGIONS: usize = 13;

impl Region {
    /// Every region, in code order: the zone row by row from the top
    /// (in to away), then the chase regions.
    pub const ALL: [Region; REGIONS] = [
        Region::UpIn,
        Region::Up,
        Region::UpAway,
        Region::In,
        Region::Middle,
        Region::Away,
        Region::DownIn,
        Region::Down,
        Region::DownAway,
        Region::ChaseHigh,
        Region::ChaseLow,
        Region::ChaseIn,
        Region::ChaseAway,
    ];

    /// The region's words, as a coach says them.
    pub fn name(self) -> &'static str {
        match self {
            Region::UpIn => "up and in",
            Region::Up => "up",
            Region::UpAway => "up and away",
            Region::In => "in",
            Region::Middle => "middle",
            Region::Away => "away",
            Region::DownIn => "down and in",
            Region::Down => "down",
            Region::DownAway => "down and away",
            Region::ChaseHigh => "chase high",
            Region::ChaseLow => "chase low",
            Region::ChaseIn => "chase in",
            Region::ChaseAway => "chase away",
        }
    }

    pub fn from_name(name: &str) -> Option<Region> {
        Region::ALL.iter().copied().find(|r| r.name() == name)
    }

    pub fn code(self) -> u8 {
        self as u8
    }

    pub fn from_code(code: u8) -> Option<Region> {
        Region::ALL.get(code as usize).copied()
    }

    /// Inside the rule-book zone?
    pub fn in_zone(self) -> bool {
        (self as usize) < 9
    }

    /// The region's box in batter terms: (toward-batter from, to; height
    /// from, to), ft; chase regions reach 1.5 ft past the zone (for drawing
    /// and for the simulator's planted spots).
    pub fn bounds(self) -> (f64, f64, f64, f64) {
        let w = ZONE_HALF_WIDTH;
        let third_w = 2.0 * w / 3.0;
        let third_h = (ZONE_TOP - ZONE_BOTTOM) / 3.0;
        let out = 1.5;
        match self {
            Region::ChaseHigh => (-w, w, ZONE_TOP, ZONE_TOP + out),
            Region::ChaseLow => (-w, w, (ZONE_BOTTOM - out).max(0.0), ZONE_BOTTOM),
            Region::ChaseIn => (w, w + out, ZONE_BOTTOM, ZONE_TOP),
            Region::ChaseAway => (-w - out, -w, ZONE_BOTTOM, ZONE_TOP),
            zone => {
                let i = zone as usize;
                let (row, col) = (i / 3, i % 3);
                // Column 0 is "in": toward the batter, the high end.
                let t_hi = w - col as f64 * third_w;
                let h_hi = ZONE_TOP - row as f64 * third_h;
                (t_hi - third_w, t_hi, h_hi - third_h, h_hi)
            }
        }
    }
}

/// How far toward the batter a pitch is, ft: the catcher's-view side turned
/// so that positive is toward the batter (in) whatever side he hits from.
pub fn toward_batter(side_ft: f64, bats: Hand) -> f64 {
    match bats {
        Hand::R => -side_ft,
        Hand::L => side_ft,
    }
}

/// The catcher's-view side of a point `toward` ft toward the batter.
pub fn side_from_toward(toward: f64, bats: Hand) -> f64 {
    toward_batter(toward, bats)
}

/// The region of a pitch at `side_ft` (catcher's view) and `height_ft` to a
/// batter hitting from `bats`.
pub fn region_of(side_ft: f64, height_ft: f64, bats: Hand) -> Region {
    let t = toward_batter(side_ft, bats);
    let w = ZONE_HALF_WIDTH;
    let misses = [height_ft - ZONE_TOP, ZONE_BOTTOM - height_ft, t - w, -t - w];
    let (mut worst, mut by) = (usize::MAX, 0.0);
    for (i, &m) in misses.iter().enumerate() {
        if m > by {
            worst = i;
            by = m;
        }
    }
    match worst {
        0 => return Region::ChaseHigh,
        1 => return Region::ChaseLow,
        2 => return Region::ChaseIn,
        3 => return Region::ChaseAway,
        _ => {}
    }
    let third_w = 2.0 * w / 3.0;
    let third_h = (ZONE_TOP - ZONE_BOTTOM) / 3.0;
    // Column 0 in, 1 middle, 2 away; row 0 up, 1 middle, 2 down. A pitch
    // on a cut goes to the middle third.
    let col = if t > w - third_w {
        0
    } else if t < -w + third_w {
        2
    } else {
        1
    };
    let row = if height_ft > ZONE_TOP - third_h {
        0
    } else if height_ft < ZONE_BOTTOM + third_h {
        2
    } else {
        1
    };
    Region::ALL[row * 3 + col]
}

/// The count group of a count, from the pitcher's side: ahead (more strikes
/// than balls), even, behind.
pub fn count_group(balls: u8, strikes: u8) -> CountGroup {
    match strikes.cmp(&balls) {
        std::cmp::Ordering::Greater => CountGroup::Ahead,
        std::cmp::Ordering::Equal => CountGroup::Even,
        std::cmp::Ordering::Less => CountGroup::Behind,
    }
}

/// Pitcher ahead, even or behind in the count.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum CountGroup {
    Ahead,
    Even,
    Behind,
}

impl CountGroup {
    pub const ALL: [CountGroup; 3] = [CountGroup::Ahead, CountGroup::Even, CountGroup::Behind];

    pub fn name(self) -> &'static str {
        match self {
            CountGroup::Ahead => "ahead",
            CountGroup::Even => "even",
            CountGroup::Behind => "behind",
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Hand-worked pitches (zone edges: 17-in plate plus a ball's radius,
    /// rule book; 1.5-3.5 ft height, common practice).
    #[test]
    fn hand_worked_regions_for_both_sides() {
        // Middle of the plate, belt high: middle for anyone.
        assert_eq!(region_of(0.0, 2.5, Hand::R), Region::Middle);
        assert_eq!(region_of(0.0, 2.5, Hand::L), Region::Middle);
        // 0.6 ft toward the catcher's left (third-base side), knee high:
        // in on a right-handed batter, away from a left-handed one.
        assert_eq!(region_of(-0.6, 1.7, Hand::R), Region::DownIn);
        assert_eq!(region_of(-0.6, 1.7, Hand::L), Region::DownAway);
        // Mirror image.
        assert_eq!(region_of(0.6, 1.7, Hand::L), Region::DownIn);
        assert_eq!(region_of(0.6, 1.7, Hand::R), Region::DownAway);
        // Letters high over the middle: up.
        assert_eq!(region_of(0.1, 3.3, Hand::R), Region::Up);
        // In the dirt: chase low, whichever side.
        assert_eq!(region_of(0.3, 0.6, Hand::R), Region::ChaseLow);
        // A foot off the plate toward the first-base side at the belt:
        // away from a right-hander, in on a left-hander.
        assert_eq!(region_of(1.3, 2.5, Hand::R), Region::ChaseAway);
        assert_eq!(region_of(1.3, 2.5, Hand::L), Region::ChaseIn);
        // Off the corner on both edges: the larger miss decides
        // (0.4 ft low against 0.17 ft away).
        assert_eq!(region_of(1.0, 1.1, Hand::R), Region::ChaseLow);
        // Just inside the side edge (0.83 ft) is still in the zone.
        assert_eq!(region_of(0.82, 2.5, Hand::R), Region::Away);
        assert_eq!(region_of(0.84, 2.5, Hand::R), Region::ChaseAway);
        // Height edges: thirds of 1.5-3.5 ft cut at 2.17 and 2.83.
        assert_eq!(region_of(0.0, 2.9, Hand::R), Region::Up);
        assert_eq!(region_of(0.0, 2.1, Hand::R), Region::Down);
        assert_eq!(region_of(0.0, 3.51, Hand::R), Region::ChaseHigh);
        assert!((ZONE_HALF_WIDTH - 0.8292).abs() < 1e-3);
    }

    /// Every region's own box maps back to it (its centre), so drawing and
    /// planting use the same geometry as the assignment.
    #[test]
    fn box_centres_map_back() {
        for r in Region::ALL {
            let (t0, t1, h0, h1) = r.bounds();
            for bats in [Hand::L, Hand::R] {
                let side = side_from_toward((t0 + t1) / 2.0, bats);
                assert_eq!(region_of(side, (h0 + h1) / 2.0, bats), r, "{r:?} {bats:?}");
            }
            assert_eq!(Region::from_name(r.name()), Some(r));
            assert_eq!(Region::from_code(r.code()), Some(r));
        }
    }

    #[test]
    fn count_groups() {
        assert_eq!(count_group(0, 0), CountGroup::Even);
        assert_eq!(count_group(0, 2), CountGroup::Ahead);
        assert_eq!(count_group(3, 1), CountGroup::Behind);
        assert_eq!(count_group(2, 2), CountGroup::Even);
    }
}
