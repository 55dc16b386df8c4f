//! The drawing surface of the figures: device-pixel primitives (paths, polygons, rectangles,
//! discs, text, rasters) on top of a plotters drawing area, and the device rectangle `Rect`.

use super::output::{encode_png, DrawResult, OrBackend, FAMILY};
use super::Dash;
use super::DrawError;
use plotters::coord::Shift;
use plotters::element::{
    BitMapElement, Circle, DashedPathElement, PathElement, Polygon, Rectangle,
};
use plotters::prelude::{DrawingArea, DrawingBackend};
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::{
    Color, FontDesc, FontFamily, FontStyle, FontTransform, RGBAColor, RGBColor, ShapeStyle,
    TextStyle,
};

/// A raster image to be embedded into the SVG in place of a placeholder rectangle.
pub(super) struct EmbeddedImage {
    pub(super) key: (u8, u8, u8),
    pub(super) x: i32,
    pub(super) y: i32,
    pub(super) w: u32,
    pub(super) h: u32,
    pub(super) png: Vec<u8>,
}

/// Drawing surface in device pixels.  Sizes given to its methods are logical pixels (the final
/// figure's pixels) and are multiplied by `s` (2 for the supersampled PNG, 1 for SVG).
pub(super) struct Canvas<'a, DB: DrawingBackend> {
    pub(super) area: &'a DrawingArea<DB, Shift>,
    pub(super) s: f64,
    pub(super) svg: bool,
    pub(super) images: Vec<EmbeddedImage>,
}

#[derive(Clone, Copy, PartialEq)]
pub(super) enum Rot {
    None,
    /// Reading bottom to top (y-axis labels).
    Up,
}

pub(super) fn ip(p: (f64, f64)) -> (i32, i32) {
    (p.0.round() as i32, p.1.round() as i32)
}

pub(super) fn rgba(c: RGBColor, a: f64) -> RGBAColor {
    RGBAColor(c.0, c.1, c.2, a)
}

pub(super) const BLACK: RGBColor = RGBColor(0, 0, 0);
pub(super) const WHITE: RGBColor = RGBColor(255, 255, 255);
pub(super) const TEXT_GREY: RGBColor = RGBColor(90, 90, 90);
pub(super) const GRID_GREY: RGBColor = RGBColor(226, 226, 226);
pub(super) const FAILED_GREY: RGBColor = RGBColor(150, 150, 150);

impl<'a, DB: DrawingBackend> Canvas<'a, DB> {
    pub(super) fn new(area: &'a DrawingArea<DB, Shift>, s: f64, svg: bool) -> Self {
        Canvas {
            area,
            s,
            svg,
            images: Vec::new(),
        }
    }

    /// Logical to device pixels.
    pub(super) fn p(&self, v: f64) -> f64 {
        v * self.s
    }

    pub(super) fn dims(&self) -> (f64, f64) {
        let (w, h) = self.area.dim_in_pixel();
        (w as f64, h as f64)
    }

    pub(super) fn clear(&self) -> DrawResult {
        self.area.fill(&WHITE).backend()
    }

    pub(super) fn stroke(&self, width: f64) -> u32 {
        self.p(width).round().max(1.0) as u32
    }

    /// Polyline in device pixels with the given pattern; `width` in logical pixels.
    pub(super) fn path(
        &self,
        pts: &[(f64, f64)],
        color: RGBAColor,
        width: f64,
        dash: Dash,
    ) -> DrawResult {
        let mut v: Vec<(i32, i32)> = Vec::with_capacity(pts.len());
        for p in pts {
            if !(p.0.is_finite() && p.1.is_finite()) {
                continue;
            }
            let q = ip(*p);
            if v.last() != Some(&q) {
                v.push(q);
            }
        }
        if v.len() < 2 {
            return Ok(());
        }
        let sw = self.stroke(width);
        let style = ShapeStyle {
            color,
            filled: false,
            stroke_width: sw,
        };
        match dash {
            Dash::Solid => self.area.draw(&PathElement::new(v, style)).backend(),
            Dash::Dashed => {
                let on = self.p(9.0).round() as i32;
                let off = self.p(5.0).round() as i32;
                self.area
                    .draw(&DashedPathElement::new(v, on, off, style))
                    .backend()
            }
            Dash::Dotted => {
                let on = sw as i32;
                let off = (sw as f64 * 1.6).round().max(2.0) as i32;
                self.area
                    .draw(&DashedPathElement::new(v, on, off, style))
                    .backend()
            }
        }
    }

    pub(super) fn polygon(&self, pts: &[(f64, f64)], color: RGBAColor) -> DrawResult {
        let v: Vec<(i32, i32)> = pts.iter().map(|p| ip(*p)).collect();
        if v.len() < 3 {
            return Ok(());
        }
        self.area.draw(&Polygon::new(v, color.filled())).backend()
    }

    pub(super) fn fill_rect(&self, r: Rect, color: RGBAColor) -> DrawResult {
        let a = ip((r.l, r.t));
        let b = ip((r.r, r.b));
        if a.0 >= b.0 || a.1 >= b.1 {
            return Ok(());
        }
        self.area
            .draw(&Rectangle::new([a, b], color.filled()))
            .backend()
    }

    /// A tile of a mosaic (map cells, colour-bar steps).  On SVG each tile overlaps its right and
    /// lower neighbours by one pixel (staying inside `bound`), so that anti-aliased edges do not
    /// leave light seams.
    pub(super) fn fill_tile(&self, r: Rect, color: RGBAColor, bound: &Rect) -> DrawResult {
        if self.svg {
            let d = self.p(1.0);
            let (right, bottom) = (
                (r.r + d).min(bound.r.max(r.r)),
                (r.b + d).min(bound.b.max(r.b)),
            );
            self.fill_rect(Rect::new(r.l, r.t, right, bottom), color)
        } else {
            self.fill_rect(r, color)
        }
    }

    pub(super) fn stroke_rect(&self, r: Rect, color: RGBAColor, width: f64) -> DrawResult {
        let pts = [(r.l, r.t), (r.r, r.t), (r.r, r.b), (r.l, r.b), (r.l, r.t)];
        self.path(&pts, color, width, Dash::Solid)
    }

    pub(super) fn disc(&self, c: (f64, f64), radius: f64, color: RGBAColor) -> DrawResult {
        let r = radius.round().max(1.0) as u32;
        self.area
            .draw(&Circle::new(ip(c), r, color.filled()))
            .backend()
    }

    pub(super) fn ring(
        &self,
        c: (f64, f64),
        radius: f64,
        color: RGBAColor,
        width: f64,
    ) -> DrawResult {
        let r = radius.round().max(1.0) as u32;
        let style = ShapeStyle {
            color,
            filled: false,
            stroke_width: self.stroke(width),
        };
        self.area.draw(&Circle::new(ip(c), r, style)).backend()
    }

    pub(super) fn font(&self, size: f64, bold: bool) -> FontDesc<'static> {
        let style = if bold {
            FontStyle::Bold
        } else {
            FontStyle::Normal
        };
        FontDesc::new(FontFamily::Name(FAMILY), self.p(size), style)
    }

    /// Width in device pixels of `text` at logical font size `size`.
    pub(super) fn text_width(&self, text: &str, size: f64, bold: bool) -> f64 {
        if text.is_empty() {
            return 0.0;
        }
        let style = TextStyle::from(self.font(size, bold));
        match self.area.estimate_text_size(text, &style) {
            Ok((w, _)) => w as f64,
            Err(_) => text.chars().count() as f64 * self.p(size) * 0.6,
        }
    }

    /// Width in device pixels of the widest of `texts` at logical font size `size` (regular),
    /// each capped at `cap` device pixels; 0 for none.
    pub(super) fn widest<'t>(
        &self,
        texts: impl IntoIterator<Item = &'t String>,
        size: f64,
        cap: f64,
    ) -> f64 {
        texts
            .into_iter()
            .map(|t| self.text_width(t, size, false).min(cap))
            .fold(0.0, f64::max)
    }

    /// Cap height of digits and capitals, device pixels (for vertical layout).
    pub(super) fn cap(&self, size: f64) -> f64 {
        self.p(size) * 0.63
    }

    /// Draws one line of text whose capitals are vertically centred on `yc` (for `Rot::Up`:
    /// horizontally centred on `x`, running upwards from `yc` according to `h`).
    #[allow(clippy::too_many_arguments)]
    pub(super) fn text(
        &self,
        text: &str,
        x: f64,
        yc: f64,
        size: f64,
        bold: bool,
        h: HPos,
        color: RGBColor,
        rot: Rot,
    ) -> DrawResult {
        if text.is_empty() {
            return Ok(());
        }
        let sz = self.p(size);
        // Where the centre of the capitals sits below the anchor, along the text's own "down"
        // direction, for the anchor used by each backend (measured on DejaVu Sans).
        let (v, off) = if self.svg {
            (VPos::Center, -0.08 * sz)
        } else {
            (VPos::Top, 0.187 * sz)
        };
        let mut style = TextStyle::from(self.font(size, bold))
            .color(&color)
            .pos(Pos::new(h, v));
        let pos = match rot {
            Rot::None => (x, yc - off),
            Rot::Up => {
                style = style.transform(FontTransform::Rotate270);
                (x - off, yc)
            }
        };
        self.area.draw_text(text, &style, ip(pos)).backend()
    }

    /// Places an RGB raster (`iw × ih` pixels) stretched over the device rectangle `r`.  On the
    /// bitmap backend the raster must already have the device size of `r`; on SVG it is embedded
    /// as a PNG image.
    pub(super) fn raster(&mut self, r: Rect, iw: u32, ih: u32, rgb: Vec<u8>) -> DrawResult {
        let (x, y) = ip((r.l, r.t));
        let (x1, y1) = ip((r.r, r.b));
        if x1 <= x || y1 <= y || iw == 0 || ih == 0 {
            return Ok(());
        }
        if self.svg {
            let k = self.images.len();
            let key = (1u8, 2u8, 3u8.wrapping_add((k % 250) as u8));
            let placeholder = RGBColor(key.0, key.1, key.2);
            self.fill_rect(r, placeholder.to_rgba())?;
            self.images.push(EmbeddedImage {
                key,
                x,
                y,
                w: (x1 - x) as u32,
                h: (y1 - y) as u32,
                png: encode_png(iw, ih, &rgb)?,
            });
            Ok(())
        } else {
            let image = BitMapElement::with_owned_buffer((x, y), (iw, ih), rgb).ok_or(
                DrawError::RasterSize {
                    what: "raster",
                    width: iw,
                    height: ih,
                },
            )?;
            self.area.draw(&image).backend()
        }
    }
}

/// Axis-aligned rectangle in device pixels (y down).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct Rect {
    pub(super) l: f64,
    pub(super) t: f64,
    pub(super) r: f64,
    pub(super) b: f64,
}

impl Rect {
    pub(super) fn new(l: f64, t: f64, r: f64, b: f64) -> Self {
        Rect { l, t, r, b }
    }
    pub(super) fn w(&self) -> f64 {
        self.r - self.l
    }
    pub(super) fn h(&self) -> f64 {
        self.b - self.t
    }
    pub(super) fn contains(&self, p: (f64, f64)) -> bool {
        p.0 >= self.l && p.0 <= self.r && p.1 >= self.t && p.1 <= self.b
    }
    pub(super) fn inflate(&self, d: f64) -> Rect {
        Rect::new(self.l - d, self.t - d, self.r + d, self.b + d)
    }
    pub(super) fn intersects(&self, o: &Rect) -> bool {
        self.l < o.r && o.l < self.r && self.t < o.b && o.t < self.b
    }
}
