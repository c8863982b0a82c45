//! Release speed and plate location of a pitch: plausible values by pitch
//! type, with noise. They are drawn after the pitch's result and feed back
//! into nothing, so they cannot disturb the planted truth.
//!
//! Averages are common practice (round figures of the trade, not tuned to
//! any data): four-seam fastball about 93-94 mph, sinker a mph slower,
//! cutter 88-89, slider about 85, changeup 8-9 mph below the fastball,
//! splitter about 86, curveball about 79. The strike zone spans the
//! plate's 17 inches (0.71 ft either side of centre, plus a ball's radius)
//! and roughly 1.5 to 3.5 ft in height.

use super::PitchResult;
use crate::situations::levels::Hand;
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
        PitchResult::Foul | PitchResult::InPlay => (
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
