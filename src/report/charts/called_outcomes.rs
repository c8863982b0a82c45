//! Do predictable pitches cost him? One row per pitcher (and the staff on
//! top): the whiff rate of swings at pitches the held-out model called,
//! minus what the same pitch types got in the same counts when it guessed
//! otherwise, as a dot with its 95% interval. Left of zero: when he is
//! predictable, hitters miss less.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

use super::{
    category_ticks_y, check_finite, file_stem, font, header, palette, render, text, Chart,
    ChartError, Painter, AXIS_TITLE_SIZE, MARGIN, TICK_SIZE,
};

/// One row: a pitcher, or the whole staff.
#[derive(Debug, Clone, PartialEq)]
pub struct CalledRow {
    pub label: String,
    /// Swings at called pitches behind the figure.
    pub n: u64,
    /// Whiff-rate difference and its 95% interval, as fractions.
    pub diff: f64,
    pub low: f64,
    pub high: f64,
}

#[derive(Debug, Clone, PartialEq)]
pub struct CalledOutcomesInput {
    /// The staff's row first, then the pitchers in the order to draw.
    pub rows: Vec<CalledRow>,
}

const W: u32 = 720;
const ROW_H: i32 = 28;
const MAX_LABEL_W: u32 = 250;

/// Renders the chart. Name: `called-outcomes`.
pub fn called_outcomes(input: &CalledOutcomesInput) -> Result<Chart, ChartError> {
    if input.rows.is_empty() {
        return Err(ChartError::InvalidInput("no rows to draw".into()));
    }
    for r in &input.rows {
        for v in [r.diff, r.low, r.high] {
            check_finite(&format!("difference for {}", r.label), v)?;
        }
    }
    let title = "Do predictable pitches cost them? Whiffs when called".to_string();
    let n = input.rows.len() as i32;
    let painter = CalledPainter { rows: input.rows.clone(), title: title.clone(), h: (200 + n * ROW_H).max(360) as u32 };
    render(file_stem("called-outcomes", ""), title, &painter)
}

struct CalledPainter {
    rows: Vec<CalledRow>,
    title: String,
    h: u32,
}

impl Painter for CalledPainter {
    fn size(&self) -> (u32, u32) {
        (W, self.h)
    }

    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
        let top = header(
            root,
            &self.title,
            &[
                "Held-out swings: whiff rate at pitches his model made its likeliest guess, minus the same".to_string(),
                "types' rate in the same counts otherwise (points, 95% interval). Left of 0: hitters miss less.".to_string(),
                "Pitchers with fewer than 50 called and 50 other swings in comparable counts are left out.".to_string(),
            ],
        )?;
        let tick_font = font::regular(TICK_SIZE);
        let (labels, label_w) = super::n_labels(self.rows.iter().map(|r| (r.label.as_str(), r.n)), &tick_font, MAX_LABEL_W)?;
        let (lo, hi) = self.rows.iter().fold((0.0f64, 0.0f64), |(lo, hi), r| (lo.min(r.low * 100.0), hi.max(r.high * 100.0)));
        let pad = ((hi - lo) * 0.08).max(1.0);
        let x_range = (lo - pad, hi + pad);
        let n = self.rows.len();
        let plot = root.margin(top + 10, 10, MARGIN, 24);
        let mut chart = ChartBuilder::on(&plot)
            .margin_top(6)
            .x_label_area_size(50)
            .y_label_area_size(label_w + 14)
            .build_cartesian_2d(x_range.0..x_range.1, -0.5f64..(n as f64 - 0.5))?;
        chart
            .configure_mesh()
            .disable_y_mesh()
            .y_labels(0)
            .x_labels(8)
            .x_label_formatter(&|v| format!("{:+.0}", v))
            .x_desc("whiff rate when called minus otherwise (points)")
            .label_style(tick_font.color(&palette::INK))
            .axis_desc_style(font::regular(AXIS_TITLE_SIZE).color(&palette::INK))
            .bold_line_style(palette::GRID.stroke_width(1))
            .light_line_style(TRANSPARENT)
            .axis_style(palette::INK.stroke_width(1))
            .draw()?;
        let y_of = |k: usize| (n - 1 - k) as f64;
        category_ticks_y(root, &labels, |k| chart.backend_coord(&(x_range.0, y_of(k))))?;
        let (x0, y_bottom) = chart.backend_coord(&(0.0, -0.5));
        let (_, y_top) = chart.backend_coord(&(0.0, n as f64 - 0.5));
        root.draw(&PathElement::new(vec![(x0, y_top), (x0, y_bottom)], palette::INK.stroke_width(1)))?;
        let value_font = font::regular(12.0);
        for (k, r) in self.rows.iter().enumerate() {
            let y = y_of(k);
            // The interval excludes 0 on the costly side: drawn in the
            // significant colour; otherwise grey.
            let colour = if r.high < 0.0 { palette::SIGNIFICANT } else { palette::NOT_SIGNIFICANT };
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(r.low * 100.0, y), (r.high * 100.0, y)],
                colour.stroke_width(3),
            )))?;
            chart.draw_series(std::iter::once(Circle::new((r.diff * 100.0, y), 6, palette::INK.filled())))?;
            let (px, py) = chart.backend_coord(&(r.high * 100.0, y));
            text(root, &format!("{:+.0}", r.diff * 100.0), (px + 6, py), &value_font, palette::INK, HPos::Left, VPos::Center)?;
        }
        Ok(())
    }
}
