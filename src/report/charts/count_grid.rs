//! Count grid: for one pitcher, balls 0–3 (rows) by strikes 0–2 (columns);
//! each cell names his most-used pitch in that count, its share and n, and is
//! shaded by that share (the higher, the easier his pitch is to call).

use crate::domain::numbers;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

use super::{
    check_share, file_stem, fmt_n, font, hatch, header, palette, parse_count, render,
    text, thick_outline, Chart, ChartError, Painter, AXIS_TITLE_SIZE, MARGIN, NOTE_SIZE, TICK_SIZE,
};

/// One count of one pitcher.
#[derive(Debug, Clone, PartialEq)]
pub struct CountCell {
    /// `"B-S"`, e.g. `"3-1"`.
    pub count: String,
    /// Pitches he threw in this count.
    pub n: u64,
    /// His most-used pitch type in this count.
    pub top_pitch: String,
    /// Its share of the count's pitches, 0..=1.
    pub top_share: f64,
    /// A flagged tell involves this count.
    pub flagged: bool,
    /// His share is well above the yardstick's (the league's, or the rest
    /// of the staff's) in this cell: a triangle in the corner.
    pub above_league: bool,
}

#[derive(Debug, Clone, PartialEq)]
pub struct CountGridInput {
    pub pitcher: String,
    /// Any subset of the twelve counts, each at most once; a count left out is
    /// drawn as "no pitches".
    pub cells: Vec<CountCell>,
    /// Cells with fewer pitches than this are greyed, hatched and labelled
    /// "few pitches" instead of being coloured.
    pub min_n: u64,
    /// False-discovery rate behind the flags, named in the legend.
    pub fdr: f64,
    /// For one panel of a pitcher's sheet: the batters' side it shows
    /// (`"L"` or `"R"`); the title and the marker's key say so.
    pub side: Option<String>,
}

const W: u32 = 720;
const H: u32 = 480;

/// Renders the count grid. Name: `count-grid-<pitcher>`.
pub fn count_grid(input: &CountGridInput) -> Result<Chart, ChartError> {
    let mut cells: [Option<CountCell>; 12] = Default::default();
    for c in &input.cells {
        let (b, s) = parse_count(&c.count).ok_or_else(|| {
            ChartError::InvalidInput(format!(
                "count {:?} is not B-S with balls 0-3, strikes 0-2",
                c.count
            ))
        })?;
        check_share(&format!("top_share of count {}", c.count), c.top_share)?;
        let slot = &mut cells[b as usize * 3 + s as usize];
        if slot.is_some() {
            return Err(ChartError::InvalidInput(format!(
                "count {} given twice",
                c.count
            )));
        }
        *slot = Some(c.clone());
    }
    let total: u64 = cells.iter().flatten().map(|c| c.n).sum();
    let title = match input.side.as_deref() {
        Some("L") => format!("His sheet vs left-handed batters: {}", input.pitcher),
        Some(_) => format!("His sheet vs right-handed batters: {}", input.pitcher),
        None => format!("Top pitch by count: {}", input.pitcher),
    };
    let painter = Grid {
        input,
        cells,
        total,
        title: title.clone(),
    };
    let kind = match input.side.as_deref() {
        Some("L") => "sheet-left",
        Some(_) => "sheet-right",
        None => "count-grid",
    };
    render(file_stem(kind, &input.pitcher), title, &painter)
}

struct Grid<'a> {
    input: &'a CountGridInput,
    cells: [Option<CountCell>; 12],
    total: u64,
    title: String,
}

// Layout, in pixels.
const GRID_X0: i32 = 92;
const COL_W: i32 = 146;
const ROW_H: i32 = 80;
const GRID_Y0: i32 = 132;
const PANEL_X: i32 = GRID_X0 + 3 * COL_W + 26;

impl Painter for Grid<'_> {
    fn size(&self) -> (u32, u32) {
        (W, H)
    }

    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
        let input = self.input;
        header(
            root,
            &self.title,
            &[format!(
                "n = {} pitches. Each cell: his most-used pitch in that count, its share, and n.",
                fmt_n(self.total)
            )],
        )?;

        let axis_font = font::regular(AXIS_TITLE_SIZE);
        let tick_font = font::bold(TICK_SIZE + 1.0);
        let grid_x1 = GRID_X0 + 3 * COL_W;
        let grid_y1 = GRID_Y0 + 4 * ROW_H;

        // Column (strikes) headings above the grid, row (balls) headings left.
        text(
            root,
            "strikes before the pitch",
            ((GRID_X0 + grid_x1) / 2, GRID_Y0 - 42),
            &axis_font,
            palette::INK,
            HPos::Center,
            VPos::Center,
        )?;
        for s in 0..3 {
            let cx = GRID_X0 + s * COL_W + COL_W / 2;
            text(
                root,
                &s.to_string(),
                (cx, GRID_Y0 - 16),
                &tick_font,
                palette::INK,
                HPos::Center,
                VPos::Center,
            )?;
        }
        let rotated = axis_font.transform(FontTransform::Rotate270);
        text(
            root,
            "balls before the pitch",
            (MARGIN + 8, (GRID_Y0 + grid_y1) / 2),
            &rotated,
            palette::INK,
            HPos::Center,
            VPos::Center,
        )?;
        for b in 0..4 {
            let cy = GRID_Y0 + b * ROW_H + ROW_H / 2;
            text(
                root,
                &b.to_string(),
                (GRID_X0 - 14, cy),
                &tick_font,
                palette::INK,
                HPos::Right,
                VPos::Center,
            )?;
        }

        for b in 0..4i32 {
            for s in 0..3i32 {
                let x0 = GRID_X0 + s * COL_W;
                let y0 = GRID_Y0 + b * ROW_H;
                self.cell(
                    root,
                    self.cells[(b * 3 + s) as usize].as_ref(),
                    (x0, y0),
                    (x0 + COL_W, y0 + ROW_H),
                )?;
            }
        }
        // Flag borders last so neighbouring cells cannot paint over them.
        for b in 0..4i32 {
            for s in 0..3i32 {
                if let Some(c) = &self.cells[(b * 3 + s) as usize] {
                    if c.flagged && c.n > 0 {
                        let x0 = GRID_X0 + s * COL_W;
                        let y0 = GRID_Y0 + b * ROW_H;
                        thick_outline(root, (x0, y0), (x0 + COL_W, y0 + ROW_H), 4, palette::INK)?;
                        let star = font::bold(26.0);
                        let fg = if c.n >= input.min_n {
                            palette::text_on(palette::sequential(c.top_share))
                        } else {
                            palette::INK
                        };
                        text(
                            root,
                            "*",
                            (x0 + COL_W - 10, y0 + 8),
                            &star,
                            fg,
                            HPos::Right,
                            VPos::Top,
                        )?;
                    }
                    if c.above_league && c.n > 0 {
                        let x0 = GRID_X0 + s * COL_W;
                        let y0 = GRID_Y0 + b * ROW_H;
                        let fg = if c.n >= input.min_n { palette::text_on(palette::sequential(c.top_share)) } else { palette::INK };
                        root.draw(&Polygon::new(vec![(x0 + 7, y0 + 21), (x0 + 21, y0 + 21), (x0 + 14, y0 + 8)], fg.filled()))?;
                    }
                }
            }
        }

        self.side_panel(root)
    }
}

impl Grid<'_> {
    fn cell<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
        cell: Option<&CountCell>,
        (x0, y0): (i32, i32),
        (x1, y1): (i32, i32),
    ) -> Result<(), ChartError> {
        let cx = (x0 + x1) / 2;
        let cy = (y0 + y1) / 2;
        let main_font = font::bold(17.0);
        let n_font = font::regular(NOTE_SIZE);
        match cell {
            Some(c) if c.n >= self.input.min_n && c.n > 0 => {
                let fill = palette::sequential(c.top_share);
                let fg = palette::text_on(fill);
                root.draw(&Rectangle::new([(x0, y0), (x1, y1)], fill.filled()))?;
                let pct = numbers::pct(c.top_share);
                let room = (x1 - x0 - 16) as u32;
                let one_line = format!("{} {pct}", c.top_pitch);
                let n_text = format!("n = {}", fmt_n(c.n));
                if font::text_width(&one_line, &main_font)? <= room {
                    text(
                        root,
                        &one_line,
                        (cx, cy - 10),
                        &main_font,
                        fg,
                        HPos::Center,
                        VPos::Center,
                    )?;
                    text(
                        root,
                        &n_text,
                        (cx, cy + 16),
                        &n_font,
                        fg,
                        HPos::Center,
                        VPos::Center,
                    )?;
                } else {
                    // Label too long to share a line: label, then share, then n.
                    let label_font = font::bold(15.0);
                    let label = font::fit(&c.top_pitch, &label_font, room)?;
                    text(
                        root,
                        &label,
                        (cx, cy - 20),
                        &label_font,
                        fg,
                        HPos::Center,
                        VPos::Center,
                    )?;
                    text(
                        root,
                        &pct,
                        (cx, cy + 1),
                        &main_font,
                        fg,
                        HPos::Center,
                        VPos::Center,
                    )?;
                    text(
                        root,
                        &n_text,
                        (cx, cy + 23),
                        &n_font,
                        fg,
                        HPos::Center,
                        VPos::Center,
                    )?;
                }
            }
            other => {
                // Too few pitches to colour, or none at all.
                let n = other.map_or(0, |c| c.n);
                self.few(root, (x0, y0), (x1, y1))?;
                text(
                    root,
                    if n > 0 { "few pitches" } else { "no pitches" },
                    (cx, cy - 10),
                    &font::regular(15.0),
                    palette::INK,
                    HPos::Center,
                    VPos::Center,
                )?;
                text(
                    root,
                    &format!("n = {}", fmt_n(n)),
                    (cx, cy + 14),
                    &n_font,
                    palette::INK,
                    HPos::Center,
                    VPos::Center,
                )?;
            }
        }
        root.draw(&Rectangle::new(
            [(x0, y0), (x1, y1)],
            palette::BACKGROUND.stroke_width(1),
        ))?;
        Ok(())
    }

    fn few<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
        (x0, y0): (i32, i32),
        (x1, y1): (i32, i32),
    ) -> Result<(), ChartError> {
        root.draw(&Rectangle::new(
            [(x0, y0), (x1, y1)],
            palette::FEW_PITCHES.filled(),
        ))?;
        hatch(root, (x0, y0), (x1, y1), 12, palette::HATCH)?;
        Ok(())
    }

    /// Colour scale and the key to hatching and the flag marker.
    fn side_panel<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<(), ChartError> {
        let f = font::regular(NOTE_SIZE);
        let fb = font::bold(NOTE_SIZE);
        let x = PANEL_X;
        let max_w = (W as i32 - MARGIN - x) as u32;
        text(
            root,
            "top-pitch share",
            (x, GRID_Y0 - 16),
            &fb,
            palette::INK,
            HPos::Left,
            VPos::Center,
        )?;
        // Vertical colour bar, 100% at the top (darkest = most predictable).
        let (bar_y0, bar_h, bar_w) = (GRID_Y0, 150, 18);
        for i in 0..bar_h {
            let t = 1.0 - (i as f64 + 0.5) / bar_h as f64;
            root.draw(&Rectangle::new(
                [(x, bar_y0 + i), (x + bar_w, bar_y0 + i + 1)],
                palette::sequential(t).filled(),
            ))?;
        }
        root.draw(&Rectangle::new(
            [(x, bar_y0), (x + bar_w, bar_y0 + bar_h)],
            palette::INK.stroke_width(1),
        ))?;
        for k in 0..=4 {
            let y = bar_y0 + bar_h - k * bar_h / 4;
            root.draw(&PathElement::new(
                vec![(x + bar_w, y), (x + bar_w + 4, y)],
                palette::INK.stroke_width(1),
            ))?;
            text(
                root,
                &format!("{}%", k * 25),
                (x + bar_w + 8, y),
                &f,
                palette::INK,
                HPos::Left,
                VPos::Center,
            )?;
        }
        text(
            root,
            "darker = easier",
            (x + bar_w + 48, bar_y0 + 34),
            &f,
            palette::MUTED,
            HPos::Left,
            VPos::Center,
        )?;
        text(
            root,
            "to call",
            (x + bar_w + 48, bar_y0 + 52),
            &f,
            palette::MUTED,
            HPos::Left,
            VPos::Center,
        )?;

        // Key to grey cells.
        let y = bar_y0 + bar_h + 26;
        super::draw_mark(root, super::Mark::Hatched, (x + 9, y + 9))?;
        root.draw(&Rectangle::new(
            [(x, y), (x + 18, y + 18)],
            palette::INK.stroke_width(1),
        ))?;
        text(
            root,
            "few pitches:",
            (x + 26, y + 9),
            &f,
            palette::INK,
            HPos::Left,
            VPos::Center,
        )?;
        let few = format!("n < {}, not shaded", fmt_n(self.input.min_n));
        text(
            root,
            &font::fit(&few, &f, max_w)?,
            (x, y + 30),
            &f,
            palette::INK,
            HPos::Left,
            VPos::Center,
        )?;

        // Key to the flag marker.
        let y = y + 58;
        root.draw(&Rectangle::new(
            [(x, y), (x + 18, y + 18)],
            palette::sequential(0.3).filled(),
        ))?;
        thick_outline(root, (x, y), (x + 18, y + 18), 3, palette::INK)?;
        text(
            root,
            "*",
            (x + 26, y + 2),
            &font::bold(20.0),
            palette::INK,
            HPos::Left,
            VPos::Top,
        )?;
        let (key, note) = match self.input.side {
            Some(_) => ("leans on it:".to_string(), "above his season share".to_string()),
            None => ("flagged tell".to_string(), format!("in this count (q ≤ {})", self.input.fdr)),
        };
        text(
            root,
            &key,
            (x + 40, y + 9),
            &f,
            palette::INK,
            HPos::Left,
            VPos::Center,
        )?;
        let q = note;
        text(
            root,
            &font::fit(&q, &f, max_w)?,
            (x, y + 30),
            &f,
            palette::INK,
            HPos::Left,
            VPos::Center,
        )?;
        // A sheet's leaning cells are tested together (BH over his cells).
        if self.input.side.is_some() {
            let q = format!("(q ≤ {} over his cells)", self.input.fdr);
            text(root, &font::fit(&q, &f, max_w)?, (x, y + 48), &f, palette::INK, HPos::Left, VPos::Center)?;
        }
        // Key to the yardstick's triangle (sheet panels only).
        if self.input.side.is_some() && self.cells.iter().flatten().any(|c| c.above_league) {
            let y = y + 74;
            root.draw(&Polygon::new(vec![(x + 2, y + 16), (x + 16, y + 16), (x + 9, y + 3)], palette::INK.filled()))?;
            text(root, "well above", (x + 26, y + 9), &f, palette::INK, HPos::Left, VPos::Center)?;
            text(root, &font::fit("the others' habit", &f, max_w)?, (x, y + 30), &f, palette::INK, HPos::Left, VPos::Center)?;
        }
        Ok(())
    }
}
