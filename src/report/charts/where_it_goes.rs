//! Where his pitches go: small multiples, one row per pitch type and one
//! column per count group (pitcher ahead, even, behind). Each panel is the
//! plate seen from the catcher, drawn for a right-handed batter (in on the
//! left): the zone's nine regions and the four chase regions around it,
//! each shaded by the share of that pitch type's pitches that went there.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

use super::{file_stem, fmt_n, font, header, palette, render, text, Chart, ChartError, Painter, MARGIN, NOTE_SIZE};
use crate::situations::regions::Region;

/// One panel: a pitch type in a count group.
#[derive(Debug, Clone, PartialEq)]
pub struct RegionPanel {
    pub pitch_type: String,
    /// `ahead`, `even` or `behind`.
    pub count_group: String,
    pub n: u64,
    /// Share of the panel's pitches in each region, `Region::ALL` order.
    pub shares: [f64; 13],
}

#[derive(Debug, Clone, PartialEq)]
pub struct WhereItGoesInput {
    pub pitcher: String,
    /// Panels; rows are the pitch types in first-seen order.
    pub panels: Vec<RegionPanel>,
    /// A panel with fewer pitches is drawn grey, its shares unprinted.
    pub min_n: u64,
}

const GROUPS: [&str; 3] = ["ahead", "even", "behind"];
const CELL: i32 = 36;
const BAND: i32 = 26;
const PANEL: i32 = 3 * CELL + 2 * BAND;
const GAP: i32 = 22;
const LABEL_W: i32 = 110;
const PANEL_TOP: i32 = 20;
/// A share at or above this takes the darkest shade.
const FULL: f64 = 0.5;

/// Renders the chart. Name: `where-it-goes-<pitcher>`.
pub fn where_it_goes(input: &WhereItGoesInput) -> Result<Chart, ChartError> {
    let mut types: Vec<String> = Vec::new();
    for p in &input.panels {
        if !GROUPS.contains(&p.count_group.as_str()) {
            return Err(ChartError::InvalidInput(format!("count group {:?} is not ahead, even or behind", p.count_group)));
        }
        for (i, s) in p.shares.iter().enumerate() {
            super::check_share(&format!("share of {} for {} {}", Region::ALL[i].name(), p.pitch_type, p.count_group), *s)?;
        }
        if !types.contains(&p.pitch_type) {
            types.push(p.pitch_type.clone());
        }
    }
    if types.is_empty() {
        return Err(ChartError::InvalidInput("no panel to draw".into()));
    }
    let title = format!("Where his pitches go: {}", input.pitcher);
    let h = (150 + types.len() as i32 * (PANEL + PANEL_TOP + GAP) + 30) as u32;
    let painter = WherePainter { input: input.clone(), types, title: title.clone(), h };
    render(file_stem("where-it-goes", &input.pitcher), title, &painter)
}

struct WherePainter {
    input: WhereItGoesInput,
    types: Vec<String>,
    title: String,
    h: u32,
}

impl Painter for WherePainter {
    fn size(&self) -> (u32, u32) {
        ((MARGIN + LABEL_W + 3 * (PANEL + GAP) + MARGIN) as u32, self.h)
    }

    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
        let top = header(
            root,
            &self.title,
            &[
                "Share of each pitch's pitches in each region, by count.".to_string(),
                "Catcher's view for a right-handed batter (in on the left); the middle square is the zone.".to_string(),
            ],
        )?;
        let head_font = font::bold(14.0);
        let label_font = font::bold(14.0);
        let x0 = MARGIN + LABEL_W;
        for (c, g) in GROUPS.iter().enumerate() {
            let name = match *g {
                "ahead" => "pitcher ahead",
                "even" => "even count",
                _ => "pitcher behind",
            };
            text(root, name, (x0 + c as i32 * (PANEL + GAP) + PANEL / 2, top + 4), &head_font, palette::INK, HPos::Center, VPos::Top)?;
        }
        let mut y = top + 26;
        for t in &self.types {
            let label = font::fit(t, &label_font, (LABEL_W - 8) as u32)?;
            text(root, &label, (MARGIN, y + PANEL_TOP + PANEL / 2), &label_font, palette::INK, HPos::Left, VPos::Center)?;
            for (c, g) in GROUPS.iter().enumerate() {
                let px = x0 + c as i32 * (PANEL + GAP);
                let panel = self.input.panels.iter().find(|p| &p.pitch_type == t && p.count_group == *g);
                self.panel(root, panel, (px, y))?;
            }
            y += PANEL + PANEL_TOP + GAP;
        }
        let note = font::regular(NOTE_SIZE);
        text(
            root,
            &format!("Grey: fewer than {} pitches. Zone: 17-inch plate plus a ball's width, 1.5-3.5 ft high.", self.input.min_n),
            (MARGIN, y),
            &note,
            palette::MUTED,
            HPos::Left,
            VPos::Top,
        )?;
        Ok(())
    }
}

impl WherePainter {
    fn panel<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>, panel: Option<&RegionPanel>, (px, py): (i32, i32)) -> Result<(), ChartError> {
        let n = panel.map_or(0, |p| p.n);
        let small = font::regular(11.0);
        text(root, &format!("n = {}", fmt_n(n)), (px + PANEL / 2, py + 2), &small, palette::MUTED, HPos::Center, VPos::Top)?;
        let oy = py + PANEL_TOP;
        let enough = n >= self.input.min_n && n > 0;
        // Boxes in pixels: (x0, y0, x1, y1). For a right-handed batter "in"
        // is the catcher's left.
        let zx = px + BAND;
        let zy = oy + BAND;
        let boxes: Vec<(Region, (i32, i32, i32, i32))> = Region::ALL
            .iter()
            .map(|&r| {
                let b = match r {
                    Region::ChaseHigh => (zx, oy, zx + 3 * CELL, zy),
                    Region::ChaseLow => (zx, zy + 3 * CELL, zx + 3 * CELL, oy + PANEL),
                    Region::ChaseIn => (px, zy, zx, zy + 3 * CELL),
                    Region::ChaseAway => (zx + 3 * CELL, zy, px + PANEL, zy + 3 * CELL),
                    zone => {
                        let i = zone as i32;
                        let (row, col) = (i / 3, i % 3);
                        (zx + col * CELL, zy + row * CELL, zx + (col + 1) * CELL, zy + (row + 1) * CELL)
                    }
                };
                (r, b)
            })
            .collect();
        for (r, (x0, y0, x1, y1)) in &boxes {
            let share = panel.map_or(0.0, |p| p.shares[*r as usize]);
            let fill = if enough { palette::sequential((share / FULL).min(1.0)) } else { palette::FEW_PITCHES };
            root.draw(&Rectangle::new([(*x0, *y0), (*x1, *y1)], fill.filled()))?;
            root.draw(&Rectangle::new([(*x0, *y0), (*x1, *y1)], palette::GRID.stroke_width(1)))?;
            if enough && share >= 0.005 {
                let fg = palette::text_on(fill);
                text(root, &format!("{:.0}", 100.0 * share), ((x0 + x1) / 2, (y0 + y1) / 2), &small, fg, HPos::Center, VPos::Center)?;
            }
        }
        super::thick_outline(root, (zx, zy), (zx + 3 * CELL, zy + 3 * CELL), 2, palette::INK)?;
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn panel(t: &str, g: &str, n: u64, hot: usize) -> RegionPanel {
        let mut shares = [0.0; 13];
        shares[hot] = 0.6;
        shares[4] += 0.4;
        RegionPanel { pitch_type: t.into(), count_group: g.into(), n, shares }
    }

    /// The chart draws one shaded box per region and panel, prints the
    /// shares of panels with enough pitches and greys out the others.
    #[test]
    fn draws_every_region_and_prints_shares() {
        let input = WhereItGoesInput {
            pitcher: "Invented Pitcher".into(),
            panels: vec![panel("slider", "ahead", 120, 8), panel("slider", "behind", 8, 8), panel("fastball", "even", 300, 0)],
            min_n: 20,
        };
        let c = where_it_goes(&input).unwrap();
        assert!(c.name.starts_with("where-it-goes-invented-pitcher"), "{}", c.name);
        // 2 rows × 3 panels × 13 regions filled boxes (plus the outlines).
        let filled = c.svg.matches("<rect").count();
        assert!(filled >= 2 * 3 * 13, "{filled} rects");
        // Shares printed as whole percentages: 60 and 40 in two panels; the
        // 8-pitch panel is grey with no figures.
        assert_eq!(c.svg.matches("\n60\n").count(), 2, "{}", c.svg.len());
        assert!(c.svg.contains("pitcher ahead") && c.svg.contains("n = 8"));
        assert!(!c.png.is_empty());
        assert!(where_it_goes(&WhereItGoesInput { pitcher: "x".into(), panels: vec![], min_n: 20 }).is_err());
    }
}
