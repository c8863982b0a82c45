//! The report's charts, each drawn once with plotters and rendered twice: as
//! SVG text (inlined in `index.html`, written as `charts/NAME.svg`) and as PNG
//! bytes (`charts/NAME.png`).
//!
//! Every chart is a function taking a plain input struct (defined in the
//! chart's own file, owned data, public fields) and returning a [`Chart`].
//! A chart's drawing code is written once, generic over the plotters backend,
//! and run against `SVGBackend::with_string` and `BitMapBackend::with_buffer`.
//! plotters' own bitmap encoder can only save to a file path, so the RGB
//! buffer is encoded to PNG in memory with the `image` crate (0.24, the same
//! version plotters' bitmap encoder already builds).
//!
//! Output is deterministic: no clocks, no randomness, no hash-map order; the
//! same input gives byte-identical SVG and PNG.
//!
//! Text in both formats uses the embedded DejaVu Sans (see [`font`]).

pub mod font;
pub mod palette;

pub mod compare_mix_shift;
pub mod compare_predictability;
pub mod compare_top_share;
pub mod count_grid;
pub mod mix_by_count;
pub mod null_distribution;
pub mod called_outcomes;
pub mod league_rank;
pub mod staff_predictability;
pub mod where_it_goes;

pub use compare_mix_shift::{compare_mix_shift, MixShiftInput};
pub use compare_predictability::{
    compare_predictability, ComparePredictabilityInput, PeriodPredictability,
};
pub use compare_top_share::{compare_top_share, CompareTopShareInput, TopSharePair};
pub use count_grid::{count_grid, CountCell, CountGridInput};
pub use mix_by_count::{mix_by_count, CountMix, MixByCountInput};
pub use null_distribution::{null_distribution, NullDistributionInput};
pub use called_outcomes::{called_outcomes, CalledOutcomesInput, CalledRow};
pub use league_rank::{league_rank, LeagueRankInput, RankRow};
pub use where_it_goes::{where_it_goes, RegionPanel, WhereItGoesInput};
pub use staff_predictability::{
    staff_predictability, StaffMetric, StaffPitcher, StaffPredictabilityInput,
};

use plotters::coord::Shift;
use plotters::drawing::DrawingAreaErrorKind;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// One rendered chart.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Chart {
    /// File stem for `charts/NAME.svg` / `.png`: only `a-z`, `0-9`, `-`, `_`.
    pub name: String,
    /// The chart's title as drawn (unescaped; escape it when writing HTML).
    pub title: String,
    /// A complete `<svg ...>...</svg>` document, text escaped for XML.
    pub svg: String,
    /// PNG file bytes (8-bit RGB).
    pub png: Vec<u8>,
}

#[derive(Debug, thiserror::Error)]
pub enum ChartError {
    #[error("chart input is not usable: {0}")]
    InvalidInput(String),
    #[error("chart font: {0}")]
    Font(String),
    #[error("drawing chart: {0}")]
    Draw(String),
    #[error("encoding chart PNG: {0}")]
    Encode(String),
}

impl<E: std::error::Error + Send + Sync> From<DrawingAreaErrorKind<E>> for ChartError {
    fn from(e: DrawingAreaErrorKind<E>) -> Self {
        ChartError::Draw(e.to_string())
    }
}

/// The twelve counts in report order (balls, then strikes), as the contract
/// spells them.
pub const COUNTS: [&str; 12] = [
    "0-0", "0-1", "0-2", "1-0", "1-1", "1-2", "2-0", "2-1", "2-2", "3-0", "3-1", "3-2",
];

/// `"B-S"` to (balls, strikes), for balls 0..=3 and strikes 0..=2.
pub fn parse_count(count: &str) -> Option<(u8, u8)> {
    let (b, s) = count.trim().split_once('-')?;
    let (b, s): (u8, u8) = (b.parse().ok()?, s.parse().ok()?);
    (b <= 3 && s <= 2).then_some((b, s))
}

/// Position of a count in [`COUNTS`].
pub fn count_index(count: &str) -> Option<usize> {
    parse_count(count).map(|(b, s)| b as usize * 3 + s as usize)
}

/// A file stem `KIND-SUBJECT` made of `a-z0-9-_` only. When the subject had to
/// be changed to fit (case, spaces, accents, punctuation, more than 32
/// characters), a short FNV-1a hash of the original is appended so that two
/// pitchers whose names differ only in such characters still get different
/// files.
pub fn file_stem(kind: &str, subject: &str) -> String {
    const MAX_SUBJECT: usize = 32;
    fn slug(s: &str) -> String {
        let mut out = String::new();
        for c in s.chars() {
            let c = c.to_ascii_lowercase();
            if c.is_ascii_lowercase() || c.is_ascii_digit() || c == '_' {
                out.push(c);
            } else if !out.ends_with('-') {
                out.push('-');
            }
        }
        out.trim_matches('-').to_string()
    }
    let kind = slug(kind);
    if subject.is_empty() {
        return kind;
    }
    let s = slug(subject);
    if s == subject && s.len() <= MAX_SUBJECT {
        return format!("{kind}-{s}");
    }
    // FNV-1a, 32 bit (Fowler, Noll & Vo; parameters from the authors' page
    // http://www.isthe.com/chongo/tech/comp/fnv/): stable across platforms
    // and releases, unlike std's hasher.
    let mut h: u32 = 0x811c_9dc5;
    for byte in subject.bytes() {
        h ^= byte as u32;
        h = h.wrapping_mul(0x0100_0193);
    }
    // The slug is ASCII, so cutting at a byte index is safe.
    let s = s[..s.len().min(MAX_SUBJECT)].trim_end_matches('-');
    if s.is_empty() {
        format!("{kind}-{h:08x}")
    } else {
        format!("{kind}-{s}-{:06x}", h & 0x00ff_ffff)
    }
}

pub use crate::domain::numbers::fmt_n;

/// Drawing code of one chart, written once for every backend.
pub(crate) trait Painter {
    fn size(&self) -> (u32, u32);
    fn paint<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), ChartError>;
}

/// Draws `painter` to SVG and PNG and packs both into a [`Chart`].
pub(crate) fn render<P: Painter>(
    name: String,
    title: String,
    painter: &P,
) -> Result<Chart, ChartError> {
    font::ensure_registered()?;
    let (w, h) = painter.size();

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (w, h)).into_drawing_area();
        root.fill(&palette::BACKGROUND)?;
        painter.paint(&root)?;
        root.present()?;
    }
    let svg = add_svg_title(strip_controls(svg), &strip_controls(title.clone()));

    let mut rgb = vec![0u8; w as usize * h as usize * 3];
    {
        let root = font::PngBackend::with_buffer(&mut rgb, (w, h)).into_drawing_area();
        root.fill(&palette::BACKGROUND)?;
        painter.paint(&root)?;
        root.present()?;
    }
    let png = encode_png(&rgb, w, h)?;

    Ok(Chart {
        name,
        title,
        svg,
        png,
    })
}

/// Fixed encoder settings so the bytes depend on the pixels only. The
/// fast deflate with the Paeth filter on every row: on the realistic
/// league's 3,388 charts it gives 403 MB of PNG and SVG where choosing
/// each row's best filter gave 391 MB for 1.4 s more of the report's
/// wall (the default deflate was 3.6 s dearer still, too dear for the
/// league's minute); the pixels are the same.
fn encode_png(rgb: &[u8], w: u32, h: u32) -> Result<Vec<u8>, ChartError> {
    use image024::codecs::png::{CompressionType, FilterType, PngEncoder};
    use image024::{ColorType, ImageEncoder};
    let mut out = Vec::new();
    PngEncoder::new_with_quality(&mut out, CompressionType::Fast, FilterType::Paeth)
        .write_image(rgb, w, h, ColorType::Rgb8)
        .map_err(|e| ChartError::Encode(e.to_string()))?;
    Ok(out)
}

/// Puts a `<title>` (the accessible name of an inline SVG) right after the
/// opening `<svg ...>` tag.
fn add_svg_title(svg: String, title: &str) -> String {
    match svg.find('>') {
        Some(end) if svg.starts_with("<svg") => {
            let mut out = String::with_capacity(svg.len() + title.len() + 20);
            out.push_str(&svg[..=end]);
            out.push_str("\n<title>");
            out.push_str(&escape_xml(title));
            out.push_str("</title>");
            out.push_str(&svg[end + 1..]);
            out
        }
        _ => svg,
    }
}

/// Row labels "name (n = 1,234)" fitted to `max_w` pixels (the name gives
/// way before the n does), and the widest label's width.
pub(crate) fn n_labels<'a>(
    rows: impl Iterator<Item = (&'a str, u64)>,
    tick_font: &FontDesc,
    max_w: u32,
) -> Result<(Vec<String>, u32), ChartError> {
    let mut width = 0;
    let mut labels = Vec::new();
    for (name, n) in rows {
        let n = format!(" (n = {})", fmt_n(n));
        let room = max_w.saturating_sub(font::text_width(&n, tick_font)?);
        let l = font::fit(name, tick_font, room)? + &n;
        width = width.max(font::text_width(&l, tick_font)?);
        labels.push(l);
    }
    Ok((labels, width))
}

/// Control characters (a name holding a terminal escape, say) have no
/// place in XML 1.0 text: each becomes U+FFFD, so the SVG still parses.
/// Tabs and line ends are kept.
pub fn strip_controls(s: String) -> String {
    if !s.chars().any(|c| c.is_control() && !matches!(c, '\n' | '\t' | '\r')) {
        return s;
    }
    s.chars().map(|c| if c.is_control() && !matches!(c, '\n' | '\t' | '\r') { '\u{FFFD}' } else { c }).collect()
}

/// The same escaping plotters' SVG backend applies to text.
pub fn escape_xml(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            other => out.push(other),
        }
    }
    out
}

// ----- drawing helpers shared by the charts -------------------------------

pub(crate) const MARGIN: i32 = 16;
pub(crate) const TITLE_SIZE: f64 = 21.0;
pub(crate) const SUBTITLE_SIZE: f64 = 14.0;
pub(crate) const AXIS_TITLE_SIZE: f64 = 15.0;
pub(crate) const TICK_SIZE: f64 = 13.0;
pub(crate) const NOTE_SIZE: f64 = 13.0;

/// Text anchored at `pos` (`h`/`v`: which point of the text box sits there).
pub(crate) fn text<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    s: &str,
    pos: (i32, i32),
    font: &FontDesc,
    colour: RGBColor,
    h: HPos,
    v: VPos,
) -> Result<(), ChartError> {
    let style = font.color(&colour).pos(Pos::new(h, v));
    area.draw(&Text::new(s.to_string(), pos, style))?;
    Ok(())
}

/// Title and subtitle lines at the top left; returns the height used.
pub(crate) fn header<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    title: &str,
    subtitles: &[String],
) -> Result<i32, ChartError> {
    let (w, _) = area.dim_in_pixel();
    let max_w = w.saturating_sub(2 * MARGIN as u32);
    let title_font = font::bold(TITLE_SIZE);
    let t = font::fit(title, &title_font, max_w)?;
    text(
        area,
        &t,
        (MARGIN, 12),
        &title_font,
        palette::INK,
        HPos::Left,
        VPos::Top,
    )?;
    let mut y = 12 + 28;
    let sub_font = font::regular(SUBTITLE_SIZE);
    for line in subtitles {
        let line = font::fit(line, &sub_font, max_w)?;
        text(
            area,
            &line,
            (MARGIN, y),
            &sub_font,
            palette::MUTED,
            HPos::Left,
            VPos::Top,
        )?;
        y += 19;
    }
    Ok(y + 4)
}

/// Outline of a rectangle `width` pixels thick, drawn inwards as four filled
/// strips (a wide stroke would straddle the edge, and 1-px strokes on integer
/// coordinates come out half-grey in SVG renderers).
pub(crate) fn thick_outline<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    (x0, y0): (i32, i32),
    (x1, y1): (i32, i32),
    width: i32,
    colour: RGBColor,
) -> Result<(), ChartError> {
    let style = colour.filled();
    area.draw(&Rectangle::new([(x0, y0), (x1, y0 + width)], style))?;
    area.draw(&Rectangle::new([(x0, y1 - width), (x1, y1)], style))?;
    area.draw(&Rectangle::new([(x0, y0), (x0 + width, y1)], style))?;
    area.draw(&Rectangle::new([(x1 - width, y0), (x1, y1)], style))?;
    Ok(())
}

/// Diagonal hatching inside a rectangle: lines x + y = k every `gap` pixels,
/// clipped by hand to the rectangle.
pub(crate) fn hatch<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    (x0, y0): (i32, i32),
    (x1, y1): (i32, i32),
    gap: i32,
    colour: RGBColor,
) -> Result<(), ChartError> {
    let mut k = x0 + y0 + gap;
    while k < x1 + y1 {
        let xa = x0.max(k - y1);
        let xb = x1.min(k - y0);
        if xa < xb {
            area.draw(&PathElement::new(
                vec![(xa, k - xa), (xb, k - xb)],
                colour.stroke_width(1),
            ))?;
        }
        k += gap;
    }
    Ok(())
}

/// A legend entry's symbol.
#[derive(Debug, Clone, Copy)]
pub(crate) enum Mark {
    /// Filled square with a thin outline.
    Swatch(RGBColor),
    /// Hatched grey square (too few pitches).
    Hatched,
    /// Filled circle.
    Dot(RGBColor),
    /// Filled triangle.
    Triangle(RGBColor),
    /// Short vertical rule (an observed value).
    Rule(RGBColor),
}

pub(crate) fn draw_mark<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    mark: Mark,
    (cx, cy): (i32, i32),
) -> Result<(), ChartError> {
    let r = 7;
    match mark {
        Mark::Swatch(c) => {
            area.draw(&Rectangle::new(
                [(cx - r, cy - r), (cx + r, cy + r)],
                c.filled(),
            ))?;
            area.draw(&Rectangle::new(
                [(cx - r, cy - r), (cx + r, cy + r)],
                palette::INK.stroke_width(1),
            ))?;
        }
        Mark::Hatched => {
            area.draw(&Rectangle::new(
                [(cx - r, cy - r), (cx + r, cy + r)],
                palette::FEW_PITCHES.filled(),
            ))?;
            hatch(area, (cx - r, cy - r), (cx + r, cy + r), 5, palette::HATCH)?;
            area.draw(&Rectangle::new(
                [(cx - r, cy - r), (cx + r, cy + r)],
                palette::INK.stroke_width(1),
            ))?;
        }
        Mark::Dot(c) => {
            area.draw(&Circle::new((cx, cy), 6, c.filled()))?;
        }
        Mark::Triangle(c) => {
            area.draw(&TriangleMarker::new((cx, cy), 8, c.filled()))?;
        }
        Mark::Rule(c) => {
            area.draw(&Rectangle::new(
                [(cx - 1, cy - r - 1), (cx + 1, cy + r + 1)],
                c.filled(),
            ))?;
        }
    }
    Ok(())
}

/// Legend entries stacked downwards from `(x, y)` (top left of the first
/// symbol); returns the y below the last entry.
pub(crate) fn legend_column<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    entries: &[(Mark, String)],
    (x, y): (i32, i32),
    max_text_w: u32,
) -> Result<i32, ChartError> {
    let f = font::regular(NOTE_SIZE);
    let mut y = y;
    for (mark, label) in entries {
        draw_mark(area, *mark, (x + 7, y + 8))?;
        let label = font::fit(label, &f, max_text_w)?;
        text(
            area,
            &label,
            (x + 22, y + 8),
            &f,
            palette::INK,
            HPos::Left,
            VPos::Center,
        )?;
        y += 22;
    }
    Ok(y)
}

/// Legend entries in one row starting at `(x, y)` (vertical centre), each
/// entry as wide as it needs; returns the x after the last entry.
pub(crate) fn legend_row<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    entries: &[(Mark, String)],
    (x, y): (i32, i32),
) -> Result<i32, ChartError> {
    let f = font::regular(NOTE_SIZE);
    let mut x = x;
    for (mark, label) in entries {
        draw_mark(area, *mark, (x + 7, y))?;
        text(
            area,
            label,
            (x + 20, y),
            &f,
            palette::INK,
            HPos::Left,
            VPos::Center,
        )?;
        x += 20 + font::text_width(label, &f)? as i32 + 18;
    }
    Ok(x)
}

/// Labels of a categorical x axis drawn under the axis, one per category,
/// with a short tick; `at(i)` gives the backend pixel of category `i` on the
/// x axis line. (Categories sit at 0, 1, 2, ... on an f64 axis; plotters'
/// segmented integer axes misplace a single category.) A label may hold
/// explicit lines separated by `\n`; a one-line label too wide for its slot
/// is broken at the space or hyphen nearest its middle. Every line is then
/// cut to the slot width. Two lines need an x label area of about 62 px.
/// The mesh of a share chart: categories along x (their ticks are drawn by
/// [`category_ticks_x`]), shares 0–100% up the y axis, in our font and colours.
pub(crate) fn share_mesh<DB: DrawingBackend>(
    chart: &mut ChartContext<'_, DB, Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>>,
    x_desc: &str,
    y_desc: &str,
) -> Result<(), ChartError> {
    chart
        .configure_mesh()
        .disable_x_mesh()
        .x_labels(0)
        .y_labels(6)
        .y_label_formatter(&|v| format!("{:.0}%", v * 100.0))
        .x_desc(x_desc)
        .y_desc(y_desc)
        .label_style(font::regular(TICK_SIZE).color(&palette::INK))
        .axis_desc_style(font::regular(AXIS_TITLE_SIZE).color(&palette::INK))
        .bold_line_style(palette::GRID.stroke_width(1))
        .light_line_style(TRANSPARENT)
        .axis_style(palette::INK.stroke_width(1))
        .draw()?;
    Ok(())
}

pub(crate) fn category_ticks_x<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    labels: &[String],
    at: impl Fn(usize) -> (i32, i32),
) -> Result<(), ChartError> {
    let f = font::regular(TICK_SIZE);
    let room = if labels.len() > 1 {
        (at(1).0 - at(0).0 - 6).max(10) as u32
    } else {
        400
    };
    for (i, label) in labels.iter().enumerate() {
        let (x, y) = at(i);
        root.draw(&PathElement::new(
            vec![(x, y), (x, y + 5)],
            palette::INK.stroke_width(1),
        ))?;
        let mut lines: Vec<String> = label.split('\n').map(str::to_string).collect();
        if lines.len() == 1 && font::text_width(label, &f)? > room {
            if let Some(cut) = break_near_middle(label) {
                lines = vec![
                    label[..cut].trim_end().to_string(),
                    label[cut..].trim_start().to_string(),
                ];
            }
        }
        for (k, line) in lines.iter().enumerate() {
            let l = font::fit(line, &f, room)?;
            text(
                root,
                &l,
                (x, y + 9 + 17 * k as i32),
                &f,
                palette::INK,
                HPos::Center,
                VPos::Top,
            )?;
        }
    }
    Ok(())
}

/// Byte index to break `s` at: after the space or hyphen nearest the middle.
fn break_near_middle(s: &str) -> Option<usize> {
    let mid = s.len() / 2;
    s.char_indices()
        .filter(|(_, c)| *c == ' ' || *c == '-')
        .map(|(i, c)| i + c.len_utf8())
        .filter(|&i| i < s.len())
        .min_by_key(|&i| (i as i64 - mid as i64).abs())
}

/// Labels of a categorical y axis, right-aligned left of the axis; `at(i)`
/// gives the backend pixel of category `i` on the y axis line. Labels are
/// assumed already fitted to the label area.
pub(crate) fn category_ticks_y<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    labels: &[String],
    at: impl Fn(usize) -> (i32, i32),
) -> Result<(), ChartError> {
    let f = font::regular(TICK_SIZE);
    for (i, label) in labels.iter().enumerate() {
        let (x, y) = at(i);
        root.draw(&PathElement::new(
            vec![(x - 5, y), (x, y)],
            palette::INK.stroke_width(1),
        ))?;
        text(
            root,
            label,
            (x - 9, y),
            &f,
            palette::INK,
            HPos::Right,
            VPos::Center,
        )?;
    }
    Ok(())
}

/// Rejects NaN and infinities in an input field with a message naming it.
pub(crate) fn check_finite(what: &str, v: f64) -> Result<(), ChartError> {
    if v.is_finite() {
        Ok(())
    } else {
        Err(ChartError::InvalidInput(format!(
            "{what} is {v}, not a finite number"
        )))
    }
}

/// Rejects a share outside 0..=1 (or not finite).
pub(crate) fn check_share(what: &str, v: f64) -> Result<(), ChartError> {
    check_finite(what, v)?;
    if (0.0..=1.0).contains(&v) {
        Ok(())
    } else {
        Err(ChartError::InvalidInput(format!(
            "{what} is {v}, outside 0..1"
        )))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_parse_and_order() {
        assert_eq!(parse_count("3-2"), Some((3, 2)));
        assert_eq!(parse_count("4-0"), None);
        assert_eq!(parse_count("0-3"), None);
        assert_eq!(parse_count("x"), None);
        for (i, c) in COUNTS.iter().enumerate() {
            assert_eq!(count_index(c), Some(i));
        }
    }

    #[test]
    fn file_stems_are_safe_and_distinct() {
        assert_eq!(file_stem("count_grid", "ridley"), "count_grid-ridley");
        let a = file_stem("count_grid", "A. Ridley");
        let b = file_stem("count_grid", "A Ridley");
        assert_ne!(a, b);
        for s in [
            &a,
            &b,
            &file_stem("x", "<script>&"),
            &file_stem("x", "Ñúñez"),
        ] {
            assert!(
                s.chars()
                    .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '-' || c == '_'),
                "{s}"
            );
        }
        assert_eq!(file_stem("staff", ""), "staff");
        let long = file_stem("x", &"a".repeat(100));
        assert!(long.len() < 50, "{long}");
        assert_ne!(long, file_stem("x", &"a".repeat(101)));
    }

    #[test]
    fn numbers_format() {
        assert_eq!(fmt_n(0), "0");
        assert_eq!(fmt_n(999), "999");
        assert_eq!(fmt_n(1000), "1,000");
        assert_eq!(fmt_n(1234567), "1,234,567");
    }
}
