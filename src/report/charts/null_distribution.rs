//! Permutation null: histogram of the test statistic (held-out bits gained
//! per pitch) over permutations with shuffled pitch labels, and a rule at the
//! value the real labels gave.

use crate::domain::numbers;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

use super::{
    check_finite, file_stem, fmt_n, font, header, legend_row, palette, render,
    text, Chart, ChartError, Mark, Painter, AXIS_TITLE_SIZE, MARGIN, NOTE_SIZE, TICK_SIZE,
};

#[derive(Debug, Clone, PartialEq)]
pub struct NullDistributionInput {
    pub pitcher: String,
    /// The statistic under each permutation run (bits gained per pitch on
    /// held-out data); its length is reported as the permutations run.
    pub null_values: Vec<f64>,
    /// The statistic with the real labels.
    pub observed: f64,
    /// The permutation p-value as the significance stage computed it.
    pub p_value: f64,
}

const W: u32 = 720;
const H: u32 = 480;

/// Renders the null histogram. Name: `null-distribution-<pitcher>`.
pub fn null_distribution(input: &NullDistributionInput) -> Result<Chart, ChartError> {
    if input.null_values.is_empty() {
        return Err(ChartError::InvalidInput(
            "no permutation values to draw".into(),
        ));
    }
    for (i, v) in input.null_values.iter().enumerate() {
        check_finite(&format!("permutation value {i}"), *v)?;
    }
    check_finite("observed value", input.observed)?;
    check_finite("p-value", input.p_value)?;

    let (min, max) = input
        .null_values
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| {
            (lo.min(v), hi.max(v))
        });
    // Number of bins: the square-root choice, ceil(sqrt(N)), kept between 10
    // and 40 so small runs still show a shape and large ones stay legible
    // (common practice).
    let n = input.null_values.len();
    let k = ((n as f64).sqrt().ceil() as usize).clamp(10, 40);
    let span = if max > min { max - min } else { 1e-3 };
    let width = span / k as f64;
    let lo = if max > min { min } else { min - span / 2.0 };
    let mut counts = vec![0u64; k];
    for &v in &input.null_values {
        let b = (((v - lo) / width).floor() as isize).clamp(0, k as isize - 1) as usize;
        counts[b] += 1;
    }
    let bins: Vec<(f64, f64, u64)> = (0..k)
        .map(|b| {
            (
                lo + b as f64 * width,
                lo + (b + 1) as f64 * width,
                counts[b],
            )
        })
        .collect();

    let x_lo = lo.min(input.observed);
    let x_hi = (lo + k as f64 * width).max(input.observed);
    let pad = (x_hi - x_lo) * 0.06;
    let title = format!("Is the edge real? Permutation test: {}", input.pitcher);
    let painter = NullPainter {
        bins,
        x_range: (x_lo - pad, x_hi + pad),
        y_max: counts.iter().copied().max().unwrap_or(1).max(1) as f64 * 1.18,
        observed: input.observed,
        p_value: input.p_value,
        permutations: n as u64,
        exceed: input
            .null_values
            .iter()
            .filter(|&&v| v >= input.observed)
            .count() as u64,
        title: title.clone(),
    };
    render(
        file_stem("null-distribution", &input.pitcher),
        title,
        &painter,
    )
}

struct NullPainter {
    bins: Vec<(f64, f64, u64)>,
    x_range: (f64, f64),
    y_max: f64,
    observed: f64,
    p_value: f64,
    permutations: u64,
    exceed: u64,
    title: String,
}

const NULL_FILL: RGBColor = palette::NOT_SIGNIFICANT;
const OBSERVED: RGBColor = palette::PERIOD_AFTER;

impl Painter for NullPainter {
    fn size(&self) -> (u32, u32) {
        (W, H)
    }

    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
        let top = header(
            root,
            &self.title,
            &[format!(
                "{} permutations with shuffled pitch labels; {} at or above the observed value; p {}.",
                fmt_n(self.permutations),
                fmt_n(self.exceed),
                numbers::p_label(self.p_value)
            )],
        )?;
        let legend = [
            (
                Mark::Swatch(NULL_FILL),
                "shuffled labels (no situational signal)".to_string(),
            ),
            (Mark::Rule(OBSERVED), "real labels (observed)".to_string()),
        ];
        legend_row(root, &legend, (MARGIN, top + 6))?;

        let plot = root.margin(top + 22, 10, MARGIN, 24);
        let mut chart = ChartBuilder::on(&plot)
            .margin_top(8)
            .x_label_area_size(50)
            .y_label_area_size(66)
            .build_cartesian_2d(self.x_range.0..self.x_range.1, 0f64..self.y_max)?;
        chart
            .configure_mesh()
            .disable_x_mesh()
            .x_labels(8)
            .x_label_formatter(&|v| format!("{:.3}", v))
            .y_labels(6)
            .y_label_formatter(&|v| format!("{:.0}", v))
            .x_desc("bits gained per pitch (held-out)")
            .y_desc("permutations")
            .label_style(font::regular(TICK_SIZE).color(&palette::INK))
            .axis_desc_style(font::regular(AXIS_TITLE_SIZE).color(&palette::INK))
            .bold_line_style(palette::GRID.stroke_width(1))
            .light_line_style(TRANSPARENT)
            .axis_style(palette::INK.stroke_width(1))
            .draw()?;

        chart.draw_series(
            self.bins
                .iter()
                .filter(|b| b.2 > 0)
                .map(|&(a, b, c)| Rectangle::new([(a, 0.0), (b, c as f64)], NULL_FILL.filled())),
        )?;
        chart.draw_series(self.bins.iter().filter(|b| b.2 > 0).map(|&(a, b, c)| {
            Rectangle::new(
                [(a, 0.0), (b, c as f64)],
                palette::BACKGROUND.stroke_width(1),
            )
        }))?;

        // Observed value: a rule the full height, labelled on whichever side
        // has room.
        let (x, y0) = chart.backend_coord(&(self.observed, 0.0));
        let (_, y1) = chart.backend_coord(&(self.observed, self.y_max));
        root.draw(&Rectangle::new(
            [(x - 1, y1), (x + 1, y0)],
            OBSERVED.filled(),
        ))?;
        let f = font::bold(NOTE_SIZE);
        let label = format!("observed {}", numbers::bits(self.observed));
        let label_w = font::text_width(&label, &f)? as i32;
        let (px_right, _) = chart.backend_coord(&(self.x_range.1, 0.0));
        let (anchor, lx) = if x + 8 + label_w < px_right {
            (HPos::Left, x + 7)
        } else {
            (HPos::Right, x - 7)
        };
        text(
            root,
            &label,
            (lx, y1 + 12),
            &f,
            palette::INK,
            anchor,
            VPos::Center,
        )?;
        Ok(())
    }
}
