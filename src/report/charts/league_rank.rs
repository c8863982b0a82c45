//! The staff against the league: one row per pitcher, his percentile among
//! the league's pitchers (or the rest of the staff, in a one-club file) for
//! how much the situation gives his pitch away (a dot) and for how much it
//! does beyond his count and side habits (a second, coloured dot). 50 is the typical
//! pitcher; right of it, more predictable than most.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

use super::{
    category_ticks_y, check_finite, file_stem, font, header, legend_row, palette, render, Chart, ChartError,
    Mark, Painter, AXIS_TITLE_SIZE, MARGIN, TICK_SIZE,
};

/// One pitcher's row.
#[derive(Debug, Clone, PartialEq)]
pub struct RankRow {
    pub pitcher: String,
    /// Held-out pitches behind his figures.
    pub n: u64,
    /// Percentile ranks, 0–100.
    pub bits: f64,
    pub beyond_bits: f64,
}

#[derive(Debug, Clone, PartialEq)]
pub struct LeagueRankInput {
    /// Rows in the order to draw.
    pub rows: Vec<RankRow>,
    /// Who the ranks are among, for the subtitle ("412 league pitchers").
    pub among: String,
}

const W: u32 = 720;
const ROW_H: i32 = 28;
const MAX_LABEL_W: u32 = 250;

/// Renders the chart. Name: `staff-league-rank`.
pub fn league_rank(input: &LeagueRankInput) -> Result<Chart, ChartError> {
    if input.rows.is_empty() {
        return Err(ChartError::InvalidInput("no rows to draw".into()));
    }
    for r in &input.rows {
        check_finite(&format!("percentile for {}", r.pitcher), r.bits)?;
        check_finite(&format!("percentile for {}", r.pitcher), r.beyond_bits)?;
    }
    let title = "Where each pitcher ranks: predictability against the others".to_string();
    let n = input.rows.len() as i32;
    let painter = RankPainter { input: input.clone(), title: title.clone(), h: (220 + n * ROW_H).max(480) as u32 };
    render(file_stem("staff-league-rank", ""), title, &painter)
}

struct RankPainter {
    input: LeagueRankInput,
    title: String,
    h: u32,
}

impl Painter for RankPainter {
    fn size(&self) -> (u32, u32) {
        (W, self.h)
    }

    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
        let top = header(
            root,
            &self.title,
            &[
                format!("Percentile among {} (held-out bits gained per pitch).", self.input.among),
                "50 is the typical pitcher; right of it, his next pitch is easier to guess than most.".to_string(),
            ],
        )?;
        legend_row(
            root,
            &[
                (Mark::Dot(palette::INK), "from the whole situation".to_string()),
                (Mark::Dot(palette::PERIOD_AFTER), "beyond his count and side habits".to_string()),
            ],
            (MARGIN, top + 6),
        )?;
        let top = top + 18;
        let tick_font = font::regular(TICK_SIZE);
        let rows = &self.input.rows;
        let (labels, label_w) = super::n_labels(rows.iter().map(|r| (r.pitcher.as_str(), r.n)), &tick_font, MAX_LABEL_W)?;
        let n = rows.len();
        let plot = root.margin(top + 8, 10, MARGIN, 24);
        let mut chart = ChartBuilder::on(&plot)
            .margin_top(6)
            .x_label_area_size(50)
            .y_label_area_size(label_w + 14)
            .build_cartesian_2d(0.0f64..100.0, -0.5f64..(n as f64 - 0.5))?;
        chart
            .configure_mesh()
            .disable_y_mesh()
            .y_labels(0)
            .x_labels(6)
            .x_label_formatter(&|v| format!("{:.0}", v))
            .x_desc("percentile (0 = least predictable, 100 = most)")
            .label_style(tick_font.color(&palette::INK))
            .axis_desc_style(font::regular(AXIS_TITLE_SIZE).color(&palette::INK))
            .bold_line_style(palette::GRID.stroke_width(1))
            .light_line_style(TRANSPARENT)
            .axis_style(palette::INK.stroke_width(1))
            .draw()?;
        let y_of = |k: usize| (n - 1 - k) as f64;
        category_ticks_y(root, &labels, |k| chart.backend_coord(&(0.0, y_of(k))))?;
        let (x50, y_bottom) = chart.backend_coord(&(50.0, -0.5));
        let (_, y_top) = chart.backend_coord(&(50.0, n as f64 - 0.5));
        root.draw(&PathElement::new(vec![(x50, y_top), (x50, y_bottom)], palette::INK.stroke_width(1)))?;
        let small = font::regular(11.0);
        super::text(root, "typical", (x50 + 4, y_top + 2), &small, palette::INK, HPos::Left, VPos::Top)?;
        for (k, r) in rows.iter().enumerate() {
            let y = y_of(k);
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(r.bits.min(r.beyond_bits), y), (r.bits.max(r.beyond_bits), y)],
                palette::NOT_SIGNIFICANT.stroke_width(2),
            )))?;
            chart.draw_series(std::iter::once(Circle::new((r.beyond_bits, y), 5, palette::PERIOD_AFTER.filled())))?;
            chart.draw_series(std::iter::once(Circle::new((r.bits, y), 6, palette::INK.filled())))?;
        }
        Ok(())
    }
}
