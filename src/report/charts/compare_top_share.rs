//! Comparison of two periods for one pitcher: per count, the share of his
//! most-used pitch before and after, as a pair of markers joined by a segment.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::{
    share_mesh,
    category_ticks_x, check_share, count_index, file_stem, fmt_n, header, legend_row,
    palette, render, Chart, ChartError, Mark, Painter, COUNTS, MARGIN, };

/// One count in both periods. A share is `None` when he threw no pitch in
/// that count in that period.
#[derive(Debug, Clone, PartialEq)]
pub struct TopSharePair {
    /// `"B-S"`.
    pub count: String,
    /// Share 0..=1 of his most-used pitch in this count, before.
    pub before: Option<f64>,
    pub after: Option<f64>,
    pub n_before: u64,
    pub n_after: u64,
}

#[derive(Debug, Clone, PartialEq)]
pub struct CompareTopShareInput {
    pub pitcher: String,
    /// Period names, e.g. `"2023"` or `"2024-04-01..2024-06-30"`.
    pub before_label: String,
    pub after_label: String,
    /// Any subset of the twelve counts, each at most once.
    pub pairs: Vec<TopSharePair>,
    /// Markers backed by fewer pitches than this are drawn hollow.
    pub min_n: u64,
}

const W: u32 = 720;
const H: u32 = 480;

/// Renders the before/after top-share chart. Name: `compare-top-share-<pitcher>`.
pub fn compare_top_share(input: &CompareTopShareInput) -> Result<Chart, ChartError> {
    let mut slots: [Option<TopSharePair>; 12] = Default::default();
    for p in &input.pairs {
        let i = count_index(&p.count).ok_or_else(|| {
            ChartError::InvalidInput(format!(
                "count {:?} is not B-S with balls 0-3, strikes 0-2",
                p.count
            ))
        })?;
        for (which, v) in [("before", p.before), ("after", p.after)] {
            if let Some(v) = v {
                check_share(&format!("{which} share in count {}", p.count), v)?;
            }
        }
        if slots[i].replace(p.clone()).is_some() {
            return Err(ChartError::InvalidInput(format!(
                "count {} given twice",
                p.count
            )));
        }
    }
    let n_before = input.pairs.iter().map(|p| p.n_before).sum();
    let n_after = input.pairs.iter().map(|p| p.n_after).sum();
    let title = format!(
        "Top-pitch share by count, {} vs {}: {}",
        input.before_label, input.after_label, input.pitcher
    );
    let painter = TopSharePainter {
        input,
        slots,
        n_before,
        n_after,
        title: title.clone(),
    };
    render(
        file_stem("compare-top-share", &input.pitcher),
        title,
        &painter,
    )
}

struct TopSharePainter<'a> {
    input: &'a CompareTopShareInput,
    slots: [Option<TopSharePair>; 12],
    n_before: u64,
    n_after: u64,
    title: String,
}

impl Painter for TopSharePainter<'_> {
    fn size(&self) -> (u32, u32) {
        (W, H)
    }

    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
        let input = self.input;
        let top = header(
            root,
            &self.title,
            &[format!(
                "Share of his most-used pitch in each count; hollow markers: fewer than {} pitches.",
                fmt_n(input.min_n)
            )],
        )?;
        let legend = [
            (
                Mark::Dot(palette::PERIOD_BEFORE),
                format!("{} (n = {})", input.before_label, fmt_n(self.n_before)),
            ),
            (
                Mark::Triangle(palette::PERIOD_AFTER),
                format!("{} (n = {})", input.after_label, fmt_n(self.n_after)),
            ),
        ];
        legend_row(root, &legend, (MARGIN, top + 6))?;

        let plot = root.margin(top + 22, 10, MARGIN, 24);
        let mut chart = ChartBuilder::on(&plot)
            .margin_top(10)
            .x_label_area_size(50)
            .y_label_area_size(66)
            .build_cartesian_2d(-0.5f64..11.5f64, 0f64..1.0f64)?;
        share_mesh(&mut chart, "count (balls-strikes)", "share of his top pitch (%)")?;
        category_ticks_x(root, &COUNTS.map(String::from), |i| {
            chart.backend_coord(&(i as f64, 0.0))
        })?;

        for (i, slot) in self.slots.iter().enumerate() {
            let Some(p) = slot else { continue };
            let x = i as f64;
            if let (Some(a), Some(b)) = (p.before, p.after) {
                chart.draw_series(std::iter::once(PathElement::new(
                    vec![(x, a), (x, b)],
                    palette::MUTED.stroke_width(2),
                )))?;
            }
            if let Some(a) = p.before {
                let style = if p.n_before >= input.min_n {
                    palette::PERIOD_BEFORE.filled()
                } else {
                    palette::PERIOD_BEFORE.stroke_width(2)
                };
                if p.n_before < input.min_n {
                    chart.draw_series(std::iter::once(Circle::new(
                        (x, a),
                        6,
                        palette::BACKGROUND.filled(),
                    )))?;
                }
                chart.draw_series(std::iter::once(Circle::new((x, a), 6, style)))?;
            }
            if let Some(b) = p.after {
                // plotters' triangle marker is always filled; a hollow one is
                // a white triangle inside a coloured one.
                chart.draw_series(std::iter::once(TriangleMarker::new(
                    (x, b),
                    9,
                    palette::PERIOD_AFTER.filled(),
                )))?;
                if p.n_after < input.min_n {
                    chart.draw_series(std::iter::once(TriangleMarker::new(
                        (x, b),
                        4,
                        palette::BACKGROUND.filled(),
                    )))?;
                }
            }
        }
        Ok(())
    }
}
