//! The one font every chart uses, embedded in the binary.
//!
//! PNG text is rasterised by plotters' `ab_glyph` feature from font bytes we
//! register ourselves, so a chart renders the same on a machine with no
//! system fonts at all. DejaVu Sans (Bitstream Vera licence, see
//! `assets/fonts/LICENSE-DejaVu.txt`) is embedded regular and bold.
//!
//! The family is registered under the name [`FAMILY`], which is also the text
//! the SVG backend writes into `font-family`; viewers of the SVG use DejaVu
//! Sans if installed and fall back to their sans-serif otherwise. plotters'
//! own default family ("sans-serif") is deliberately left unregistered: a
//! text element that forgets to name our family fails loudly in the PNG
//! instead of silently using some other font.

use std::sync::OnceLock;

use plotters::style::{register_font, FontDesc, FontFamily, FontStyle, IntoFont};

use super::ChartError;

/// Family name used by every text element (and written as-is to SVG).
pub const FAMILY: &str = "DejaVu Sans, sans-serif";

static REGULAR: &[u8] = include_bytes!(concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/assets/fonts/DejaVuSans.ttf"
));
static BOLD: &[u8] = include_bytes!(concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/assets/fonts/DejaVuSans-Bold.ttf"
));

/// Registers the embedded fonts with plotters once per process. Safe to call
/// from many threads; every chart function calls it before drawing.
pub fn ensure_registered() -> Result<(), ChartError> {
    static DONE: OnceLock<Result<(), String>> = OnceLock::new();
    DONE.get_or_init(|| {
        register_font(FAMILY, FontStyle::Normal, REGULAR)
            .map_err(|_| "embedded DejaVuSans.ttf could not be parsed".to_string())?;
        register_font(FAMILY, FontStyle::Bold, BOLD)
            .map_err(|_| "embedded DejaVuSans-Bold.ttf could not be parsed".to_string())?;
        Ok(())
    })
    .clone()
    .map_err(ChartError::Font)
}

/// Regular weight at `size` (plotters' size: pixel height of the font's
/// ascent-to-descent box, about 1.2 em).
pub fn regular(size: f64) -> FontDesc<'static> {
    (FAMILY, size).into_font()
}

/// Bold weight at `size`. Built with `FontDesc::new` because
/// `FontDesc::style` keeps the regular glyph data (plotters 0.3.7) and
/// would only make the SVG bold.
pub fn bold(size: f64) -> FontDesc<'static> {
    FontDesc::new(FontFamily::Name(FAMILY), size, FontStyle::Bold)
}

/// Width in pixels of `text` set in `font`, as the layout code of both
/// backends will measure it.
pub fn text_width(text: &str, font: &FontDesc) -> Result<u32, ChartError> {
    font.box_size(text)
        .map(|(w, _)| w)
        .map_err(|e| ChartError::Font(format!("measuring {text:?}: {e}")))
}

/// `text` cut to at most `max_width` pixels in `font`, ending in "…" when cut.
pub fn fit(text: &str, font: &FontDesc, max_width: u32) -> Result<String, ChartError> {
    if text_width(text, font)? <= max_width {
        return Ok(text.to_string());
    }
    let chars: Vec<char> = text.chars().collect();
    // Longest prefix that still fits with the ellipsis; binary search on the
    // prefix length since width grows with it.
    let (mut lo, mut hi) = (0usize, chars.len());
    while lo < hi {
        let mid = (lo + hi).div_ceil(2);
        let candidate: String = chars[..mid].iter().collect::<String>() + "…";
        if text_width(&candidate, font)? <= max_width {
            lo = mid;
        } else {
            hi = mid - 1;
        }
    }
    let prefix: String = chars[..lo].iter().collect();
    Ok(format!("{}…", prefix.trim_end()))
}

// ----- PNG text ------------------------------------------------------------
//
// plotters 0.3.7 rasterises ab_glyph text glyph by glyph with each glyph's
// ink box put at the pen position, dropping the glyph's left side bearing,
// so narrow glyphs drift ("1 00" for "100"); it also sets PNG glyphs about 7%
// larger than the SVG's `font-size` (size / 1.24) and on a different
// baseline. [`PngBackend`] wraps the bitmap backend and draws text itself
// with ab_glyph from the same embedded fonts: glyphs positioned by advance
// and kerning with their bearings, at the SVG's em size and with the SVG
// backend's baseline rules (`dy` 0.76em for top, +0.5ex for centre, -0.5ex
// for bottom anchors), so the PNG and the SVG set text alike. Everything
// else is passed straight to the bitmap backend.

use ab_glyph::{point, Font, FontRef, GlyphId, PxScale, ScaleFont};
use plotters::prelude::BitMapBackend;
use plotters::style::text_anchor::{HPos, VPos};
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
};

fn parsed(style: FontStyle) -> Option<&'static FontRef<'static>> {
    static FONTS: OnceLock<Option<(FontRef<'static>, FontRef<'static>)>> = OnceLock::new();
    let fonts = FONTS
        .get_or_init(|| {
            Some((
                FontRef::try_from_slice(REGULAR).ok()?,
                FontRef::try_from_slice(BOLD).ok()?,
            ))
        })
        .as_ref()?;
    Some(match style {
        FontStyle::Bold => &fonts.1,
        _ => &fonts.0,
    })
}

/// The bitmap backend with our own text rasteriser (see above).
pub(crate) struct PngBackend<'a> {
    inner: BitMapBackend<'a>,
}

impl<'a> PngBackend<'a> {
    pub(crate) fn with_buffer(buf: &'a mut [u8], size: (u32, u32)) -> Self {
        PngBackend {
            inner: BitMapBackend::with_buffer(buf, size),
        }
    }
}

type BackendResult<T, E> = Result<T, DrawingErrorKind<E>>;
type BitmapError<'a> = <BitMapBackend<'a> as DrawingBackend>::ErrorType;

impl<'a> DrawingBackend for PngBackend<'a> {
    type ErrorType = BitmapError<'a>;

    fn get_size(&self) -> (u32, u32) {
        self.inner.get_size()
    }
    fn ensure_prepared(&mut self) -> BackendResult<(), Self::ErrorType> {
        self.inner.ensure_prepared()
    }
    fn present(&mut self) -> BackendResult<(), Self::ErrorType> {
        self.inner.present()
    }
    fn draw_pixel(
        &mut self,
        point: BackendCoord,
        color: BackendColor,
    ) -> BackendResult<(), Self::ErrorType> {
        self.inner.draw_pixel(point, color)
    }
    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> BackendResult<(), Self::ErrorType> {
        self.inner.draw_line(from, to, style)
    }
    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> BackendResult<(), Self::ErrorType> {
        self.inner.draw_rect(upper_left, bottom_right, style, fill)
    }
    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> BackendResult<(), Self::ErrorType> {
        self.inner.draw_path(path, style)
    }
    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> BackendResult<(), Self::ErrorType> {
        self.inner.draw_circle(center, radius, style, fill)
    }
    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> BackendResult<(), Self::ErrorType> {
        self.inner.fill_polygon(vert, style)
    }
    fn blit_bitmap(
        &mut self,
        pos: BackendCoord,
        size: (u32, u32),
        src: &[u8],
    ) -> BackendResult<(), Self::ErrorType> {
        self.inner.blit_bitmap(pos, size, src)
    }
    fn estimate_text_size<T: BackendTextStyle>(
        &self,
        text: &str,
        style: &T,
    ) -> BackendResult<(u32, u32), Self::ErrorType> {
        // Layout (label areas, legend sizes) is measured exactly as for the
        // SVG, so both formats get the same geometry.
        self.inner.estimate_text_size(text, style)
    }

    fn draw_text<T: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &T,
        pos: BackendCoord,
    ) -> BackendResult<(), Self::ErrorType> {
        let colour = style.color();
        if colour.alpha == 0.0 {
            return Ok(());
        }
        let font = match (style.family().as_str() == FAMILY, parsed(style.style())) {
            (true, Some(f)) => f,
            // Not our family: let plotters draw it (and fail if unregistered).
            _ => return self.inner.draw_text(text, style, pos),
        };
        let key = Ink {
            text: text.to_string(),
            bold: matches!(style.style(), FontStyle::Bold),
            size: style.size().to_bits(),
            anchor: (h_code(style.anchor().h_pos), v_code(style.anchor().v_pos)),
        };
        let ink = INKS.with_borrow_mut(|inks| {
            if let Some(ink) = inks.get(&key) {
                return ink.clone();
            }
            let ink = std::rc::Rc::new(rasterise(font, text, style));
            if inks.len() >= INK_CACHE {
                inks.clear();
            }
            inks.insert(key, ink.clone());
            ink
        });
        let trans = style.transform();
        let (w, h) = self.get_size();
        for &(lx, ly, coverage) in ink.iter() {
            let (dx, dy) = trans.transform(lx, ly);
            let (px, py) = (pos.0 + dx, pos.1 + dy);
            if px >= 0 && py >= 0 && (px as u32) < w && (py as u32) < h {
                let c = BackendColor {
                    alpha: colour.alpha * coverage.min(1.0) as f64,
                    rgb: colour.rgb,
                };
                self.inner.draw_pixel((px, py), c)?;
            }
        }
        Ok(())
    }
}

/// A string's ink: each covered pixel relative to the text's anchor, before
/// any rotation, with its coverage, in drawing order. It depends only on the
/// text, weight, size and anchor, so a chart's repeated labels (tick values,
/// pitch names, axis titles) are rasterised once per thread ([`INKS`]) and
/// drawn from the list: the same pixels in the same order as rasterising
/// them again.
fn rasterise<T: BackendTextStyle>(font: &FontRef<'static>, text: &str, style: &T) -> Vec<(i32, i32, f32)> {
    let upem = font.units_per_em().unwrap_or(2048.0);
    // SVG backend: font-size = size / 1.24 (one em). ab_glyph scales by
    // the ascent-to-descent height, so convert.
    let em = (style.size() / 1.24) as f32;
    let scaled = font.as_scaled(PxScale::from(em * font.height_unscaled() / upem));
    let ids: Vec<GlyphId> = text.chars().map(|c| font.glyph_id(c)).collect();
    let mut pens = Vec::with_capacity(ids.len());
    let mut pen = 0.0f32;
    for (i, id) in ids.iter().enumerate() {
        if i > 0 {
            pen += scaled.kern(ids[i - 1], *id);
        }
        pens.push(pen);
        pen += scaled.h_advance(*id);
    }
    let width = pen;
    let x_start = match style.anchor().h_pos {
        HPos::Left => 0.0,
        HPos::Center => -width / 2.0,
        HPos::Right => -width,
    };
    // x-height from the ink of "x" (its bottom is the baseline), one way
    // up or the other whatever ab_glyph's y convention.
    let ex = font
        .outline(font.glyph_id('x'))
        .map(|o| (o.bounds.max.y - o.bounds.min.y).abs() * em / upem)
        .unwrap_or(0.55 * em);
    let baseline = match style.anchor().v_pos {
        VPos::Top => 0.76 * em,
        VPos::Center => 0.5 * ex,
        VPos::Bottom => -0.5 * ex,
    };
    let mut ink = Vec::new();
    for (id, x) in ids.iter().zip(&pens) {
        let glyph = id.with_scale_and_position(scaled.scale(), point(x_start + x, baseline));
        let Some(outlined) = font.outline_glyph(glyph) else {
            continue;
        };
        let b = outlined.px_bounds();
        outlined.draw(|gx, gy, coverage| {
            if coverage > 0.0 {
                ink.push((b.min.x as i32 + gx as i32, b.min.y as i32 + gy as i32, coverage));
            }
        });
    }
    ink
}

/// What a string's ink depends on.
#[derive(PartialEq, Eq, Hash)]
struct Ink {
    text: String,
    bold: bool,
    size: u64,
    anchor: (u8, u8),
}

fn h_code(h: HPos) -> u8 {
    match h {
        HPos::Left => 0,
        HPos::Center => 1,
        HPos::Right => 2,
    }
}

fn v_code(v: VPos) -> u8 {
    match v {
        VPos::Top => 0,
        VPos::Center => 1,
        VPos::Bottom => 2,
    }
}

/// Strings kept per thread before the cache starts over (a league's report
/// draws a few thousand distinct labels; a label is a few hundred pixels).
const INK_CACHE: usize = 4_096;

thread_local! {
    static INKS: std::cell::RefCell<std::collections::HashMap<Ink, std::rc::Rc<Vec<(i32, i32, f32)>>>> = Default::default();
}

#[cfg(test)]
mod tests {
    use super::*;
    use plotters::prelude::*;
    use plotters::style::text_anchor::Pos;

    /// A 120 × 60 white canvas with `text` drawn at `at` in dark ink.
    fn canvas(text: &str, at: (i32, i32), rotate: bool) -> Vec<u8> {
        ensure_registered().unwrap();
        let mut rgb = vec![255u8; 120 * 60 * 3];
        {
            let mut backend = PngBackend::with_buffer(&mut rgb, (120, 60));
            let mut style = regular(14.0).color(&RGBColor(20, 30, 40)).pos(Pos::new(HPos::Left, VPos::Top));
            if rotate {
                style = style.transform(FontTransform::Rotate90);
            }
            backend.draw_text(text, &style, at).unwrap();
        }
        rgb
    }

    fn ink_of(rgb: &[u8]) -> Vec<(i32, i32, [u8; 3])> {
        rgb.chunks_exact(3)
            .enumerate()
            .filter(|(_, p)| p != &[255, 255, 255])
            .map(|(i, p)| ((i % 120) as i32, (i / 120) as i32, [p[0], p[1], p[2]]))
            .collect()
    }

    /// The ink cache is keyed by what the ink depends on, not by where it
    /// goes: a label drawn with the cache cold, again warm, and elsewhere
    /// is the same pixels (shifted), and a turned label is the same ink
    /// turned (as many pixels, same colours).
    #[test]
    fn cached_ink_is_the_rasterised_ink() {
        INKS.with_borrow_mut(|inks| inks.clear());
        let cold = canvas("Sinker 0.25", (5, 10), false);
        assert!(INKS.with_borrow(|inks| inks.len()) == 1);
        let warm = canvas("Sinker 0.25", (5, 10), false);
        assert_eq!(cold, warm);
        assert!(ink_of(&cold).len() > 50, "the label left ink");
        let moved: Vec<_> = ink_of(&canvas("Sinker 0.25", (12, 17), false)).into_iter().map(|(x, y, c)| (x - 7, y - 7, c)).collect();
        assert_eq!(moved, ink_of(&cold));
        let mut turned: Vec<[u8; 3]> = ink_of(&canvas("Sinker", (60, 5), true)).into_iter().map(|(_, _, c)| c).collect();
        let mut flat: Vec<[u8; 3]> = ink_of(&canvas("Sinker", (5, 10), false)).into_iter().map(|(_, _, c)| c).collect();
        turned.sort();
        flat.sort();
        assert_eq!(turned, flat);
        // Another text is another entry.
        canvas("Sinker 0.26", (5, 10), false);
        assert!(INKS.with_borrow(|inks| inks.len()) == 3);
    }
}
