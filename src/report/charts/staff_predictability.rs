//! Staff overview: one horizontal bar per pitcher of how much the game
//! situation tells about his next pitch (bits gained per pitch, or lift),
//! sorted, coloured by whether his model test is significant.

use crate::domain::numbers;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

use super::{
    category_ticks_y, check_finite, file_stem, fmt_n, font, header, legend_row, palette,
    render, text, Chart, ChartError, Mark, Painter, AXIS_TITLE_SIZE, MARGIN, TICK_SIZE,
};

/// Which figure the bars show.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StaffMetric {
    /// Held-out log-loss of the usage-only guess minus the model's, in bits
    /// per pitch.
    BitsGained,
    /// (model accuracy - usage-only accuracy) / usage-only accuracy, drawn in
    /// percent.
    Lift,
}

#[derive(Debug, Clone, PartialEq)]
pub struct StaffPitcher {
    pub pitcher: String,
    /// Held-out pitches behind his figures.
    pub n: u64,
    pub bits_gained: f64,
    /// As a fraction (0.12 = 12%).
    pub lift: f64,
    /// His model test is significant after the FDR correction.
    pub significant: bool,
}

#[derive(Debug, Clone, PartialEq)]
pub struct StaffPredictabilityInput {
    /// Staff (team) name for the title; may be empty.
    pub staff: String,
    pub pitchers: Vec<StaffPitcher>,
    pub metric: StaffMetric,
    /// False-discovery rate behind `significant`, named in the legend.
    pub fdr: f64,
}

const W: u32 = 720;
const ROW_H: i32 = 30;
const MAX_LABEL_W: u32 = 250;

/// Renders the staff chart. 720 pixels wide; 480 high, or taller when more
/// than ten pitchers need a row each (height depends only on the number of
/// pitchers). Name: `staff-bits-gained` or `staff-lift`.
pub fn staff_predictability(input: &StaffPredictabilityInput) -> Result<Chart, ChartError> {
    if input.pitchers.is_empty() {
        return Err(ChartError::InvalidInput("no pitchers to draw".into()));
    }
    let value = |p: &StaffPitcher| match input.metric {
        StaffMetric::BitsGained => p.bits_gained,
        StaffMetric::Lift => p.lift * 100.0,
    };
    for p in &input.pitchers {
        check_finite(&format!("value for {}", p.pitcher), value(p))?;
    }
    let mut rows: Vec<Row> = input
        .pitchers
        .iter()
        .map(|p| Row {
            pitcher: p.pitcher.clone(),
            n: p.n,
            value: value(p),
            significant: p.significant,
        })
        .collect();
    // Highest first; ties by name, then n, so the order never depends on
    // input order.
    rows.sort_by(|a, b| {
        b.value
            .total_cmp(&a.value)
            .then_with(|| a.pitcher.cmp(&b.pitcher))
            .then(a.n.cmp(&b.n))
    });

    let (what, stem) = match input.metric {
        StaffMetric::BitsGained => ("Bits gained per pitch", "staff-bits-gained"),
        StaffMetric::Lift => ("Lift in accuracy", "staff-lift"),
    };
    let title = if input.staff.is_empty() {
        format!("{what}, by pitcher")
    } else {
        format!("{what}, by pitcher: {}", input.staff)
    };
    let n = rows.len() as i32;
    let h = (190 + n * ROW_H).max(480) as u32;
    let total: u64 = input.pitchers.iter().map(|p| p.n).sum();
    let painter = StaffPainter {
        rows,
        metric: input.metric,
        fdr: input.fdr,
        total,
        title: title.clone(),
        h,
    };
    render(file_stem(stem, ""), title, &painter)
}

struct Row {
    pitcher: String,
    n: u64,
    value: f64,
    significant: bool,
}

struct StaffPainter {
    rows: Vec<Row>,
    metric: StaffMetric,
    fdr: f64,
    total: u64,
    title: String,
    h: u32,
}

impl StaffPainter {
    fn fmt_value(&self, v: f64) -> String {
        match self.metric {
            StaffMetric::BitsGained => numbers::bits(v),
            StaffMetric::Lift => format!("{:+.0}%", v),
        }
    }
}

impl Painter for StaffPainter {
    fn size(&self) -> (u32, u32) {
        (W, self.h)
    }

    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
        let sub = match self.metric {
            StaffMetric::BitsGained => {
                "Held-out log-loss of a usage-only guess minus the situational model's."
            }
            StaffMetric::Lift => {
                "Held-out accuracy of the situational model over a usage-only guess."
            }
        };
        let top = header(
            root,
            &self.title,
            &[format!(
                "{sub} n = held-out pitches ({} in all).",
                fmt_n(self.total)
            )],
        )?;
        let legend = [
            (
                Mark::Swatch(palette::SIGNIFICANT),
                format!("significant (q ≤ {})", self.fdr),
            ),
            (
                Mark::Swatch(palette::NOT_SIGNIFICANT),
                "not significant".to_string(),
            ),
        ];
        legend_row(root, &legend, (MARGIN, top + 6))?;

        let tick_font = font::regular(TICK_SIZE);
        let (labels, label_w) = super::n_labels(self.rows.iter().map(|r| (r.pitcher.as_str(), r.n)), &tick_font, MAX_LABEL_W)?;

        let (lo, hi) = self.rows.iter().fold((0.0f64, 0.0f64), |(lo, hi), r| {
            (lo.min(r.value), hi.max(r.value))
        });
        let span = if hi > lo { hi - lo } else { 1.0 };
        // Room at the bar ends for the value labels.
        let x_range = (
            if lo < 0.0 { lo - 0.25 * span } else { 0.0 },
            if hi > 0.0 {
                hi + 0.2 * span
            } else {
                0.05 * span
            },
        );

        let n = self.rows.len();
        let plot = root.margin(top + 22, 10, MARGIN, 24);
        let mut chart = ChartBuilder::on(&plot)
            .margin_top(6)
            .x_label_area_size(50)
            .y_label_area_size(label_w + 14)
            .build_cartesian_2d(x_range.0..x_range.1, -0.5f64..(n as f64 - 0.5))?;
        let x_desc = match self.metric {
            StaffMetric::BitsGained => "bits gained per pitch (held-out)",
            StaffMetric::Lift => "lift in accuracy over a usage-only guess (%)",
        };
        let metric = self.metric;
        chart
            .configure_mesh()
            .disable_y_mesh()
            .y_labels(0)
            .x_labels(8)
            .x_label_formatter(&|v| match metric {
                StaffMetric::BitsGained => format!("{:.2}", v),
                StaffMetric::Lift => format!("{:.0}%", v),
            })
            .x_desc(x_desc)
            .label_style(tick_font.color(&palette::INK))
            .axis_desc_style(font::regular(AXIS_TITLE_SIZE).color(&palette::INK))
            .bold_line_style(palette::GRID.stroke_width(1))
            .light_line_style(TRANSPARENT)
            .axis_style(palette::INK.stroke_width(1))
            .draw()?;
        // Row k (k = 0 the highest value) sits at y = n - 1 - k, so the list
        // reads top to bottom.
        let y_of = |k: usize| (n - 1 - k) as f64;
        category_ticks_y(root, &labels, |k| {
            chart.backend_coord(&(x_range.0, y_of(k)))
        })?;

        let value_font = font::regular(12.0);
        for (k, r) in self.rows.iter().enumerate() {
            let y = y_of(k);
            let colour = if r.significant {
                palette::SIGNIFICANT
            } else {
                palette::NOT_SIGNIFICANT
            };
            chart.draw_series(std::iter::once(Rectangle::new(
                [(0.0, y - 0.34), (r.value, y + 0.34)],
                colour.filled(),
            )))?;
            let (px, py) = chart.backend_coord(&(r.value, y));
            let (anchor, dx) = if r.value >= 0.0 {
                (HPos::Left, 5)
            } else {
                (HPos::Right, -5)
            };
            text(
                root,
                &self.fmt_value(r.value),
                (px + dx, py),
                &value_font,
                palette::INK,
                anchor,
                VPos::Center,
            )?;
        }
        // Zero line: left of it the model does worse than the usage guess.
        let (x0, y_bottom) = chart.backend_coord(&(0.0, -0.5));
        let (_, y_top) = chart.backend_coord(&(0.0, n as f64 - 0.5));
        root.draw(&PathElement::new(
            vec![(x0, y_top), (x0, y_bottom)],
            palette::INK.stroke_width(1),
        ))?;
        Ok(())
    }
}
