//! Pitch mix by count: one stacked bar per count (0-0 … 3-2), each the
//! pitcher's pitch-type shares in that count, n above the bar.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

use super::{
    share_mesh,
    category_ticks_x, check_share, count_index, file_stem, fmt_n, font, header, legend_column,
    palette, render, text, Chart, ChartError, Mark, Painter, COUNTS, MARGIN,
    NOTE_SIZE, };

/// One count's pitch mix.
#[derive(Debug, Clone, PartialEq)]
pub struct CountMix {
    /// `"B-S"`, e.g. `"0-2"`.
    pub count: String,
    /// Pitches thrown in this count.
    pub n: u64,
    /// (pitch type, share 0..=1). Shares should sum to 1; they are rescaled
    /// to exactly 1 so rounding in the input cannot leave a gap at the top.
    pub shares: Vec<(String, f64)>,
}

#[derive(Debug, Clone, PartialEq)]
pub struct MixByCountInput {
    pub pitcher: String,
    /// Any subset of the twelve counts, each at most once; missing counts are
    /// drawn as empty bars with n = 0.
    pub counts: Vec<CountMix>,
    /// Every pitch label used on the staff; fixes each label's colour.
    pub staff_labels: Vec<String>,
}

const W: u32 = 720;
const H: u32 = 480;
const LEGEND_W: i32 = 150;

/// Renders the pitch mix by count. Name: `mix-by-count-<pitcher>`.
pub fn mix_by_count(input: &MixByCountInput) -> Result<Chart, ChartError> {
    let colours = palette::PitchColours::new(&input.staff_labels);
    let mut bars: Vec<Bar> = (0..12)
        .map(|_| Bar {
            n: 0,
            segments: Vec::new(),
        })
        .collect();
    let mut seen = [false; 12];
    let mut used: Vec<String> = Vec::new();
    for cm in &input.counts {
        let i = count_index(&cm.count).ok_or_else(|| {
            ChartError::InvalidInput(format!(
                "count {:?} is not B-S with balls 0-3, strikes 0-2",
                cm.count
            ))
        })?;
        if std::mem::replace(&mut seen[i], true) {
            return Err(ChartError::InvalidInput(format!(
                "count {} given twice",
                cm.count
            )));
        }
        let mut shares = cm.shares.clone();
        for (label, s) in &shares {
            check_share(&format!("share of {label} in count {}", cm.count), *s)?;
        }
        // Stack in staff order (labels missing from the staff list last, by
        // name) so a pitch sits at the same height rank in every bar.
        shares.sort_by(|a, b| {
            let ka = (colours.index(&a.0).unwrap_or(usize::MAX), &a.0);
            let kb = (colours.index(&b.0).unwrap_or(usize::MAX), &b.0);
            ka.cmp(&kb)
        });
        let total: f64 = shares.iter().map(|(_, s)| s).sum();
        if cm.n > 0 && total <= 0.0 {
            return Err(ChartError::InvalidInput(format!(
                "count {} has n = {} but no shares",
                cm.count, cm.n
            )));
        }
        let mut acc = 0.0;
        let mut segments = Vec::new();
        if cm.n > 0 {
            for (label, s) in shares {
                if s <= 0.0 {
                    continue;
                }
                let lo = acc;
                acc += s / total;
                segments.push(Segment {
                    colour: colours.colour(&label),
                    lo,
                    hi: acc,
                });
                if !used.contains(&label) {
                    used.push(label);
                }
            }
        }
        bars[i] = Bar { n: cm.n, segments };
    }
    used.sort_by(|a, b| {
        (colours.index(a).unwrap_or(usize::MAX), a)
            .cmp(&(colours.index(b).unwrap_or(usize::MAX), b))
    });
    let legend: Vec<(Mark, String)> = used
        .iter()
        .rev()
        .map(|l| (Mark::Swatch(colours.colour(l)), l.clone()))
        .collect();
    let total: u64 = bars.iter().map(|b| b.n).sum();
    let title = format!("Pitch mix by count: {}", input.pitcher);
    let painter = MixPainter {
        bars,
        legend,
        total,
        title: title.clone(),
    };
    render(file_stem("mix-by-count", &input.pitcher), title, &painter)
}

struct Segment {
    colour: RGBColor,
    lo: f64,
    hi: f64,
}

struct Bar {
    n: u64,
    segments: Vec<Segment>,
}

struct MixPainter {
    bars: Vec<Bar>,
    /// Top of the stack first, to match the bars.
    legend: Vec<(Mark, String)>,
    total: u64,
    title: String,
}

impl Painter for MixPainter {
    fn size(&self) -> (u32, u32) {
        (W, H)
    }

    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
        let top = header(
            root,
            &self.title,
            &[format!(
                "Share of each pitch type in each count; n = {} pitches, per count above each bar.",
                fmt_n(self.total)
            )],
        )?;
        let (plot, side) = root.split_horizontally(W as i32 - LEGEND_W);
        let plot = plot.margin(top, 8, MARGIN, 8);

        let mut chart = ChartBuilder::on(&plot)
            .margin_top(22)
            .x_label_area_size(50)
            .y_label_area_size(66)
            .build_cartesian_2d(-0.5f64..11.5f64, 0f64..1f64)?;
        share_mesh(&mut chart, "count (balls-strikes)", "share of pitches in the count (%)")?;
        category_ticks_x(root, &COUNTS.map(String::from), |i| {
            chart.backend_coord(&(i as f64, 0.0))
        })?;

        const HALF: f64 = 0.36;
        let slot = (chart.backend_coord(&(1.0, 0.0)).0 - chart.backend_coord(&(0.0, 0.0)).0 - 4)
            .max(0) as u32;
        let pct_font = font::regular(11.0);
        let n_font = font::regular(12.0);
        for (i, bar) in self.bars.iter().enumerate() {
            let x = i as f64;
            for s in &bar.segments {
                chart.draw_series(std::iter::once(Rectangle::new(
                    [(x - HALF, s.lo), (x + HALF, s.hi)],
                    s.colour.filled(),
                )))?;
            }
            // Thin white rules between segments keep adjacent colours apart.
            for s in bar.segments.iter().skip(1) {
                let (x0, y) = chart.backend_coord(&(x - HALF, s.lo));
                let (x1, _) = chart.backend_coord(&(x + HALF, s.lo));
                root.draw(&PathElement::new(
                    vec![(x0, y), (x1, y)],
                    palette::BACKGROUND.stroke_width(1),
                ))?;
            }
            // Share printed inside segments tall enough to hold it.
            for s in &bar.segments {
                let (cx, y_lo) = chart.backend_coord(&(x, s.lo));
                let (_, y_hi) = chart.backend_coord(&(x, s.hi));
                if y_lo - y_hi >= 17 {
                    let label = format!("{:.0}", (s.hi - s.lo) * 100.0);
                    text(
                        root,
                        &label,
                        (cx, (y_lo + y_hi) / 2),
                        &pct_font,
                        palette::text_on(s.colour),
                        HPos::Center,
                        VPos::Center,
                    )?;
                }
            }
            let (cx, y_top) = chart.backend_coord(&(x, 1.0));
            text(
                root,
                &n_label(bar.n, &n_font, slot)?,
                (cx, y_top - 5),
                &n_font,
                palette::INK,
                HPos::Center,
                VPos::Bottom,
            )?;
        }

        // Legend to the right, top entry = top of the stacks.
        let (_, y_top) = chart.backend_coord(&(0.0, 1.0));
        text(
            &side,
            "pitch type",
            (4, y_top),
            &font::bold(NOTE_SIZE),
            palette::INK,
            HPos::Left,
            VPos::Top,
        )?;
        let y = legend_column(&side, &self.legend, (4, y_top + 24), (LEGEND_W - 32) as u32)?;
        text(
            &side,
            "numbers in bars:",
            (4, y + 14),
            &font::regular(12.0),
            palette::MUTED,
            HPos::Left,
            VPos::Top,
        )?;
        text(
            &side,
            "share (%)",
            (4, y + 30),
            &font::regular(12.0),
            palette::MUTED,
            HPos::Left,
            VPos::Top,
        )?;
        Ok(())
    }
}

/// n for above a bar: in full when it fits the bar's slot, else in
/// thousands ("12.3k").
fn n_label(n: u64, f: &FontDesc, slot: u32) -> Result<String, ChartError> {
    let full = fmt_n(n);
    if font::text_width(&full, f)? <= slot || n < 1000 {
        Ok(full)
    } else if n < 100_000 {
        Ok(format!("{:.1}k", n as f64 / 1000.0))
    } else {
        Ok(format!("{}k", fmt_n((n as f64 / 1000.0).round() as u64)))
    }
}
