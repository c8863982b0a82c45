//! Predictability across periods for one pitcher: held-out bits gained per
//! pitch with its interval, one point per period; with more than two periods
//! (e.g. seasons) the points are joined in the order given.

use crate::domain::numbers;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

use super::{
    category_ticks_x, check_finite, file_stem, fmt_n, font, header, legend_row, palette,
    render, text, Chart, ChartError, Mark, Painter, AXIS_TITLE_SIZE, MARGIN, TICK_SIZE,
};

#[derive(Debug, Clone, PartialEq)]
pub struct PeriodPredictability {
    /// Period name, e.g. `"2024"`.
    pub label: String,
    /// Held-out pitches behind the estimate.
    pub n: u64,
    pub bits_gained: f64,
    /// Interval ends, `lower <= bits_gained <= upper`.
    pub lower: f64,
    pub upper: f64,
}

#[derive(Debug, Clone, PartialEq)]
pub struct ComparePredictabilityInput {
    pub pitcher: String,
    /// In the order to draw (oldest first).
    pub periods: Vec<PeriodPredictability>,
    /// What the error bars are, for the legend, e.g. "95% bootstrap interval".
    pub interval_label: String,
}

const W: u32 = 720;
const H: u32 = 480;

/// Renders the predictability comparison. Name: `compare-predictability-<pitcher>`.
pub fn compare_predictability(input: &ComparePredictabilityInput) -> Result<Chart, ChartError> {
    if input.periods.is_empty() {
        return Err(ChartError::InvalidInput("no periods to draw".into()));
    }
    for p in &input.periods {
        check_finite(&format!("bits gained in {}", p.label), p.bits_gained)?;
        check_finite(&format!("interval lower end in {}", p.label), p.lower)?;
        check_finite(&format!("interval upper end in {}", p.label), p.upper)?;
        if !(p.lower <= p.bits_gained && p.bits_gained <= p.upper) {
            return Err(ChartError::InvalidInput(format!(
                "interval for {} is {}..{}, which does not contain the estimate {}",
                p.label, p.lower, p.upper, p.bits_gained
            )));
        }
    }
    let title = format!("Predictability by period: {}", input.pitcher);
    let painter = PredPainter {
        input,
        title: title.clone(),
    };
    render(
        file_stem("compare-predictability", &input.pitcher),
        title,
        &painter,
    )
}

struct PredPainter<'a> {
    input: &'a ComparePredictabilityInput,
    title: String,
}

impl Painter for PredPainter<'_> {
    fn size(&self) -> (u32, u32) {
        (W, H)
    }

    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
        let periods = &self.input.periods;
        let k = periods.len();
        let top = header(
            root,
            &self.title,
            &["Held-out bits gained per pitch over a usage-only guess; above 0 the situation gives his pitch away.".to_string()],
        )?;
        // Two periods: the comparison colours of the other charts. Otherwise
        // one colour, the line carrying the order.
        let colour = |i: usize| match (k, i) {
            (2, 0) => palette::PERIOD_BEFORE,
            (2, _) => palette::PERIOD_AFTER,
            _ => palette::SIGNIFICANT,
        };
        let legend = [
            (Mark::Dot(palette::MUTED), "estimate".to_string()),
            (
                Mark::Rule(palette::MUTED),
                self.input.interval_label.clone(),
            ),
        ];
        legend_row(root, &legend, (MARGIN, top + 6))?;

        let (lo, hi) = periods.iter().fold((0.0f64, 0.0f64), |(lo, hi), p| {
            (lo.min(p.lower), hi.max(p.upper))
        });
        let span = if hi > lo { hi - lo } else { 0.01 };
        let y_range = (lo - 0.1 * span, hi + 0.16 * span);

        let plot = root.margin(top + 22, 10, MARGIN, 24);
        let mut chart = ChartBuilder::on(&plot)
            .margin_top(10)
            .x_label_area_size(62)
            .y_label_area_size(70)
            .build_cartesian_2d(-0.5f64..(k as f64 - 0.5), y_range.0..y_range.1)?;
        chart
            .configure_mesh()
            .disable_x_mesh()
            .x_labels(0)
            .y_labels(7)
            .y_label_formatter(&|v| format!("{:.3}", v))
            .x_desc("period (n = held-out pitches)")
            .y_desc("bits gained per pitch (held-out)")
            .label_style(font::regular(TICK_SIZE).color(&palette::INK))
            .axis_desc_style(font::regular(AXIS_TITLE_SIZE).color(&palette::INK))
            .bold_line_style(palette::GRID.stroke_width(1))
            .light_line_style(TRANSPARENT)
            .axis_style(palette::INK.stroke_width(1))
            .draw()?;
        let labels: Vec<String> = periods
            .iter()
            .map(|p| format!("{}\nn = {}", p.label, fmt_n(p.n)))
            .collect();
        category_ticks_x(root, &labels, |i| {
            chart.backend_coord(&(i as f64, y_range.0))
        })?;

        // Zero: no gain over guessing his usage.
        chart.draw_series(std::iter::once(PathElement::new(
            vec![(-0.5, 0.0), (k as f64 - 0.5, 0.0)],
            palette::INK.stroke_width(1),
        )))?;
        let (zx, zy) = chart.backend_coord(&(k as f64 - 0.5, 0.0));
        text(
            root,
            "no gain",
            (zx - 4, zy - 3),
            &font::regular(12.0),
            palette::MUTED,
            HPos::Right,
            VPos::Bottom,
        )?;

        if k > 2 {
            chart.draw_series(std::iter::once(PathElement::new(
                periods
                    .iter()
                    .enumerate()
                    .map(|(i, p)| (i as f64, p.bits_gained))
                    .collect::<Vec<_>>(),
                palette::SIGNIFICANT.stroke_width(2),
            )))?;
        }
        let value_font = font::regular(12.0);
        for (i, p) in periods.iter().enumerate() {
            let x = i as f64;
            let c = colour(i);
            let (px, py_lo) = chart.backend_coord(&(x, p.lower));
            let (_, py_hi) = chart.backend_coord(&(x, p.upper));
            // Error bar: 2-px rule with 8-px caps.
            root.draw(&Rectangle::new(
                [(px - 1, py_hi), (px + 1, py_lo)],
                c.filled(),
            ))?;
            for y in [py_lo, py_hi] {
                root.draw(&Rectangle::new(
                    [(px - 8, y - 1), (px + 8, y + 1)],
                    c.filled(),
                ))?;
            }
            let (_, py) = chart.backend_coord(&(x, p.bits_gained));
            root.draw(&Circle::new((px, py), 7, palette::BACKGROUND.filled()))?;
            root.draw(&Circle::new((px, py), 6, c.filled()))?;
            // Value above the upper cap, clear of the joining line.
            text(
                root,
                &numbers::bits(p.bits_gained),
                (px, py_hi - 5),
                &value_font,
                palette::INK,
                HPos::Center,
                VPos::Bottom,
            )?;
        }
        Ok(())
    }
}
