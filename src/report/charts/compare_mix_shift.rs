//! Comparison of two periods for one pitcher: his overall pitch mix, one
//! group per pitch type, a bar for each period.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

use super::{
    share_mesh,
    category_ticks_x, check_share, file_stem, fmt_n, font, header, legend_row, palette, render,
    text, Chart, ChartError, Mark, Painter, MARGIN, };

#[derive(Debug, Clone, PartialEq)]
pub struct MixShiftInput {
    pub pitcher: String,
    pub before_label: String,
    pub after_label: String,
    /// Pitches behind each period's mix.
    pub n_before: u64,
    pub n_after: u64,
    /// (pitch type, share 0..=1) per period; a type missing from one period
    /// counts as 0 there.
    pub before: Vec<(String, f64)>,
    pub after: Vec<(String, f64)>,
}

const W: u32 = 720;
const H: u32 = 480;

/// Renders the mix-shift chart. Pitch types run left to right in sorted
/// label order (the staff order). Name: `compare-mix-shift-<pitcher>`.
pub fn compare_mix_shift(input: &MixShiftInput) -> Result<Chart, ChartError> {
    let mut labels: Vec<String> = input
        .before
        .iter()
        .chain(&input.after)
        .map(|(l, _)| l.clone())
        .collect();
    labels.sort();
    labels.dedup();
    if labels.is_empty() {
        return Err(ChartError::InvalidInput("no pitch types to draw".into()));
    }
    let lookup = |side: &[(String, f64)], what: &str| -> Result<Vec<f64>, ChartError> {
        let mut out = vec![0.0; labels.len()];
        let mut seen = vec![false; labels.len()];
        for (l, s) in side {
            check_share(&format!("{what} share of {l}"), *s)?;
            let i = labels.binary_search(l).expect("label collected above");
            if std::mem::replace(&mut seen[i], true) {
                return Err(ChartError::InvalidInput(format!(
                    "{l} given twice for {what}"
                )));
            }
            out[i] = *s;
        }
        Ok(out)
    };
    let before = lookup(&input.before, &input.before_label)?;
    let after = lookup(&input.after, &input.after_label)?;
    let title = format!(
        "Pitch mix, {} vs {}: {}",
        input.before_label, input.after_label, input.pitcher
    );
    let painter = ShiftPainter {
        input,
        labels,
        before,
        after,
        title: title.clone(),
    };
    render(
        file_stem("compare-mix-shift", &input.pitcher),
        title,
        &painter,
    )
}

struct ShiftPainter<'a> {
    input: &'a MixShiftInput,
    labels: Vec<String>,
    before: Vec<f64>,
    after: Vec<f64>,
    title: String,
}

impl Painter for ShiftPainter<'_> {
    fn size(&self) -> (u32, u32) {
        (W, H)
    }

    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
        let input = self.input;
        let top = header(
            root,
            &self.title,
            &["Share of all his pitches thrown as each pitch type, by period.".to_string()],
        )?;
        let legend = [
            (
                Mark::Swatch(palette::PERIOD_BEFORE),
                format!("{} (n = {})", input.before_label, fmt_n(input.n_before)),
            ),
            (
                Mark::Swatch(palette::PERIOD_AFTER),
                format!("{} (n = {})", input.after_label, fmt_n(input.n_after)),
            ),
        ];
        legend_row(root, &legend, (MARGIN, top + 6))?;

        let k = self.labels.len();
        let max = self
            .before
            .iter()
            .chain(&self.after)
            .fold(0.0f64, |m, &v| m.max(v));
        // Headroom for the share labels above the bars, in steps of 10%.
        let y_max = ((max * 1.15) * 10.0).ceil().clamp(1.0, 10.0) / 10.0;
        let plot = root.margin(top + 22, 10, MARGIN, 24);
        let mut chart = ChartBuilder::on(&plot)
            .margin_top(10)
            .x_label_area_size(62)
            .y_label_area_size(66)
            .build_cartesian_2d(-0.5f64..(k as f64 - 0.5), 0f64..y_max)?;
        share_mesh(&mut chart, "pitch type", "share of his pitches (%)")?;
        category_ticks_x(root, &self.labels, |i| {
            chart.backend_coord(&(i as f64, 0.0))
        })?;

        // Two bars per group, each 0.38 of a category wide, a small gap between.
        let (bar, gap) = (0.38, 0.02);
        let value_font = font::regular(12.0);
        let (w0, _) = chart.backend_coord(&(0.0, 0.0));
        let (w1, _) = chart.backend_coord(&(bar, 0.0));
        let show_values = font::text_width("100%", &value_font)? as i32 <= w1 - w0 + 4;
        for i in 0..k {
            let x = i as f64;
            for (x0, x1, v, c) in [
                (
                    x - gap - bar,
                    x - gap,
                    self.before[i],
                    palette::PERIOD_BEFORE,
                ),
                (x + gap, x + gap + bar, self.after[i], palette::PERIOD_AFTER),
            ] {
                chart.draw_series(std::iter::once(Rectangle::new(
                    [(x0, 0.0), (x1, v)],
                    c.filled(),
                )))?;
                if show_values {
                    let (px, py) = chart.backend_coord(&((x0 + x1) / 2.0, v));
                    text(
                        root,
                        &format!("{:.0}%", v * 100.0),
                        (px, py - 4),
                        &value_font,
                        palette::INK,
                        HPos::Center,
                        VPos::Bottom,
                    )?;
                }
            }
        }
        Ok(())
    }
}
