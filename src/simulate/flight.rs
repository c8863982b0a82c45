//! Release speed and plate location of a pitch: plausible values by pitch
//! type, with noise. They feed back into nothing, so they cannot disturb
//! the planted truth. `draw` gives the speed (its side and height, drawn
//! from the result, are no longer used but still drawn, so the game's
//! other draws stay as they were); `place` gives where the pitch goes, from
//! the game's location stream, independent of the result (results depend
//! on the count only).
//!
//! Averages are common practice (round figures of the trade, not tuned to
//! any data): four-seam fastball about 93-94 mph, sinker a mph slower,
//! cutter 88-89, slider about 85, changeup 8-9 mph below the fastball,
//! splitter about 86, curveball about 79. The strike zone spans the
//! plate's 17 inches (0.71 ft either side of centre, plus a ball's radius)
//! and roughly 1.5 to 3.5 ft in height.

use crate::domain::PitchResult;
use crate::domain::levels::Hand;
use rand::Rng;
use rand_chacha::ChaCha8Rng;

#[derive(Debug, Clone, Copy)]
pub(crate) struct PitchProfile {
    pub speed: f32,
    pub speed_sd: f32,
    /// How much of the pitcher's velocity offset carries over (soft pitches less).
    pub velo_share: f32,
    /// Mean height when not aimed at the zone's middle, ft.
    pub height: f32,
    /// Horizontal movement toward the pitcher's glove side (+) or arm side (-), ft.
    pub glove_side: f32,
}

pub(crate) fn profile(label: &str) -> PitchProfile {
    let p = |speed, speed_sd, velo_share, height, glove_side| PitchProfile {
        speed,
        speed_sd,
        velo_share,
        height,
        glove_side,
    };
    match label {
        "fastball" => p(93.5, 1.0, 1.0, 2.8, -0.1),
        "sinker" => p(92.6, 1.0, 1.0, 2.1, -0.35),
        "cutter" => p(88.6, 1.1, 0.9, 2.4, 0.25),
        "slider" => p(85.2, 1.3, 0.7, 1.9, 0.45),
        "curveball" => p(78.8, 1.5, 0.6, 1.7, 0.3),
        "changeup" => p(85.0, 1.3, 0.8, 1.8, -0.35),
        "splitter" => p(86.2, 1.3, 0.8, 1.6, -0.15),
        _ => p(87.0, 1.5, 0.8, 2.3, 0.0),
    }
}

/// Standard normal by the Box-Muller transform (Box & Muller, 1958, Ann.
/// Math. Statist. 29:610).
pub(crate) fn normal(rng: &mut ChaCha8Rng) -> f64 {
    let u1 = 1.0 - rng.random::<f64>(); // (0, 1]
    let u2 = rng.random::<f64>();
    (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
}

const ZONE_SIDE: f32 = 0.83;
const ZONE_LOW: f32 = 1.5;
const ZONE_HIGH: f32 = 3.5;

fn in_zone(side: f32, height: f32) -> bool {
    side.abs() < ZONE_SIDE && height > ZONE_LOW && height < ZONE_HIGH
}

/// Speed (mph), side and height (ft) of a pitch with this result.
pub(crate) fn draw(
    rng: &mut ChaCha8Rng,
    profile: &PitchProfile,
    velo_offset: f32,
    throws: Hand,
    bats: Hand,
    result: PitchResult,
) -> (f32, f32, f32) {
    let mut n = || normal(rng) as f32;
    let speed = profile.speed + profile.velo_share * velo_offset + profile.speed_sd * n();
    // The pitcher faces the catcher, so a right-hander's glove side is the
    // catcher's right (+).
    let glove = if throws == Hand::R { 1.0 } else { -1.0 };
    let drift = glove * profile.glove_side;
    let (side, height) = match result {
        PitchResult::CalledStrike => (
            (drift * 0.5 + 0.42 * n()).clamp(-0.8, 0.8),
            (2.5 + 0.4 * n()).clamp(1.55, 3.45),
        ),
        PitchResult::Ball => {
            let (mut s, mut h) = (drift + 0.85 * n(), profile.height + 0.75 * n());
            if in_zone(s, h) {
                // Push it off the nearest edge.
                let to_side = ZONE_SIDE - s.abs();
                let to_low = h - ZONE_LOW;
                let to_high = ZONE_HIGH - h;
                let out = 0.05 + 0.25 * n().abs();
                if to_side <= to_low && to_side <= to_high {
                    s = s.signum() * (ZONE_SIDE + out);
                } else if to_low <= to_high {
                    h = ZONE_LOW - out;
                } else {
                    h = ZONE_HIGH + out;
                }
            }
            (s, h)
        }
        PitchResult::SwingingStrike => (drift + 0.6 * n(), profile.height - 0.2 + 0.7 * n()),
        PitchResult::Foul | PitchResult::InPlay | PitchResult::Other => (
            drift * 0.7 + 0.5 * n(),
            0.5 * (profile.height + 2.5) + 0.5 * n(),
        ),
        PitchResult::HitByPitch => {
            // A right-handed batter stands on the third-base side, the
            // catcher's left (-).
            let toward = if bats == Hand::R { -1.0 } else { 1.0 };
            (toward * (1.6 + 0.2 * n().abs()), 2.6 + 0.6 * n())
        }
    };
    (speed, side, height.max(0.0))
}

/// Where a pitch type is aimed, in batter terms (ft toward the batter, ft
/// above the ground) inside the zone, and how its misses outside the zone
/// split between high, low, in and away. Round figures of the trade
/// (common practice, not tuned to any data): fastballs up, sinkers down and
/// in, sliders and curveballs down and away, changeups and splitters down.
/// They are in batter terms, so without a planted spot or the shared zone
/// habit where a pitch goes does not depend on the situation at all (not
/// even the batter's side): a true null for the location tests.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Aim {
    pub toward: f64,
    pub height: f64,
    /// Chase weights: high, low, in, away.
    pub chase: [f64; 4],
}

pub(crate) fn aim(label: &str) -> Aim {
    let a = |toward, height, chase| Aim { toward, height, chase };
    match label {
        "fastball" => a(0.0, 2.85, [0.45, 0.10, 0.20, 0.25]),
        "sinker" => a(0.15, 2.1, [0.05, 0.45, 0.30, 0.20]),
        "cutter" => a(0.05, 2.45, [0.15, 0.30, 0.30, 0.25]),
        "slider" | "sweeper" => a(-0.3, 2.0, [0.03, 0.47, 0.05, 0.45]),
        "curveball" => a(-0.1, 1.9, [0.03, 0.72, 0.05, 0.20]),
        "changeup" => a(-0.2, 1.9, [0.03, 0.60, 0.05, 0.32]),
        "splitter" => a(-0.05, 1.8, [0.02, 0.78, 0.05, 0.15]),
        _ => a(0.0, 2.4, [0.25, 0.25, 0.25, 0.25]),
    }
}

/// A normal draw kept inside `lo..hi` by redrawing (at most 20 times, then
/// the nearer bound's inside edge).
fn normal_within(rng: &mut ChaCha8Rng, mean: f64, sd: f64, lo: f64, hi: f64) -> f64 {
    for _ in 0..20 {
        let x = mean + sd * normal(rng);
        if x > lo && x < hi {
            return x;
        }
    }
    mean.clamp(lo + 1e-3, hi - 1e-3)
}

/// Side (catcher's view) and height, ft, of a pitch aimed by `aim`: inside
/// the zone with probability `zone_share`, else a miss to one of the chase
/// sides; `spot` (a planted region, when its situation holds) wins with its
/// own probability, placed uniformly in the region's box.
pub(crate) fn place(
    rng: &mut ChaCha8Rng,
    aim: &Aim,
    zone_share: f64,
    spot: Option<(crate::situations::regions::Region, f64)>,
    bats: Hand,
) -> (f32, f32) {
    use crate::situations::regions::{side_from_toward, ZONE_BOTTOM, ZONE_HALF_WIDTH as W, ZONE_TOP};
    let u: f64 = rng.random();
    let (toward, height) = match spot {
        Some((region, rate)) if u < rate => {
            let (t0, t1, h0, h1) = region.bounds();
            (t0 + (t1 - t0) * rng.random::<f64>(), h0 + (h1 - h0) * rng.random::<f64>())
        }
        _ => {
            if rng.random::<f64>() < zone_share {
                (normal_within(rng, aim.toward, 0.45, -W, W), normal_within(rng, aim.height, 0.5, ZONE_BOTTOM, ZONE_TOP))
            } else {
                let total: f64 = aim.chase.iter().sum();
                let mut v = rng.random::<f64>() * total;
                let mut side = 3;
                for (i, w) in aim.chase.iter().enumerate() {
                    if v < *w {
                        side = i;
                        break;
                    }
                    v -= w;
                }
                let miss = 0.05 + 0.35 * normal(rng).abs();
                match side {
                    0 => (normal_within(rng, aim.toward, 0.4, -W, W), ZONE_TOP + miss),
                    1 => (normal_within(rng, aim.toward, 0.4, -W, W), (ZONE_BOTTOM - miss).max(0.05)),
                    2 => (W + miss, normal_within(rng, aim.height, 0.45, ZONE_BOTTOM, ZONE_TOP)),
                    _ => (-W - miss, normal_within(rng, aim.height, 0.45, ZONE_BOTTOM, ZONE_TOP)),
                }
            }
        }
    };
    (side_from_toward(toward, bats) as f32, height as f32)
}
