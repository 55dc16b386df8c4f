//! Figures for reports, at the edge of the pipeline: plain plot descriptions (numbers, labels,
//! palette indices) in, `<stem>.png` and `<stem>.svg` out.  The physics core builds and tests
//! without this module; nothing here feeds back into results.
//!
//! Four figure kinds cover what the sweeps produce: line plots (gaps, critical temperatures,
//! free energies along a cut), colour maps on a parameter grid with an outlined sub-region
//! (e.g. where the modulated state wins), categorical phase diagrams (regions, transition lines,
//! metastability bands, special points) and real-space density maps beside their Fourier
//! amplitudes.
//!
//! Rendering notes:
//! * Text uses an embedded DejaVu Sans (assets/), registered once with plotters' `ab_glyph`
//!   support under the family name `sans-serif`; no system font or fontconfig is needed.
//! * PNGs are drawn at twice the size and averaged down (anti-aliasing); SVGs are drawn at 1:1.
//! * Axes, ticks, legends and colour bars are laid out here rather than by plotters' chart
//!   builder, so that tick labels, legend placement and colour bars are under our control; plotters
//!   serves as the drawing backend.
//! * Both files are written atomically (see [`super::atomic`]); nothing half-written appears.

use super::atomic::{self, TempPathError};
use plotters::coord::Shift;
use plotters::element::{
    BitMapElement, Circle, DashedPathElement, PathElement, Polygon, Rectangle,
};
use plotters::prelude::{BitMapBackend, DrawingArea, DrawingBackend, IntoDrawingArea, SVGBackend};
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::{
    register_font, Color, FontDesc, FontFamily, FontStyle, FontTransform, RGBAColor, RGBColor,
    ShapeStyle, TextStyle,
};
use std::collections::HashMap;
use std::io;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Once;

// ---------------------------------------------------------------------------------------------
// Public data types
// ---------------------------------------------------------------------------------------------

/// Line pattern of a curve.  In phase diagrams: second-order lines solid, first-order dashed.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Dash {
    #[default]
    Solid,
    Dashed,
    Dotted,
}

/// A curve.  Non-finite points split the curve into separate pieces; a single finite point is
/// drawn as a dot.  An empty label keeps the curve out of the legend.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Series {
    pub label: String,
    pub points: Vec<(f64, f64)>,
    pub dash: Dash,
    /// Index into the line palette (taken modulo its length).
    pub color: usize,
}

/// A special point (tricritical, Lifshitz, ...).  The marker shape follows the marker's position
/// in its list, the fill colour is the palette index.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Marker {
    pub label: String,
    pub x: f64,
    pub y: f64,
    pub color: usize,
}

/// A shaded region between two curves (e.g. the metastability band between two spinodals): the
/// polygon `lower` followed by `upper` reversed, so both curves run in the same direction.
/// With `upper` empty, `lower` alone is taken as a closed polygon.  The two curves are also
/// drawn as thin lines.  Non-finite points are skipped.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Band {
    pub label: String,
    pub lower: Vec<(f64, f64)>,
    pub upper: Vec<(f64, f64)>,
    pub color: usize,
}

/// Curves, bands and markers on linear axes.  Axis labels carry their units.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LinePlot {
    pub title: String,
    pub x_label: String,
    pub y_label: String,
    pub series: Vec<Series>,
    pub markers: Vec<Marker>,
    pub bands: Vec<Band>,
    /// Small text lines (parameters of the run, ...) drawn in a free corner.
    pub notes: Vec<String>,
}

/// A colour map on a rectangular grid (cell centres `xs` × `ys`, each strictly monotonic) with
/// an outlined sub-region and optional curves and markers on top.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct MapPlot {
    pub title: String,
    pub x_label: String,
    pub y_label: String,
    pub colorbar_label: String,
    pub xs: Vec<f64>,
    pub ys: Vec<f64>,
    /// Row-major, `values[iy * xs.len() + ix]`; `None` (or a non-finite value) marks a failed
    /// point, drawn grey.
    pub values: Vec<Option<f64>>,
    /// Same shape as `values`, or empty for no outline.  The boundary of the `true` cells is
    /// drawn as a thick contour and the region is hatched.
    pub outline: Vec<bool>,
    /// Legend text of the outlined region (empty: no legend entry).
    pub outline_label: String,
    pub series: Vec<Series>,
    pub markers: Vec<Marker>,
}

/// A categorical phase diagram on a grid (cell centres `xs` × `ys`, each strictly monotonic).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RegionPlot {
    pub title: String,
    pub x_label: String,
    pub y_label: String,
    pub xs: Vec<f64>,
    pub ys: Vec<f64>,
    /// Row-major region index per cell, `regions[iy * xs.len() + ix]`; `None` = no solution.
    pub regions: Vec<Option<usize>>,
    /// Legend names of the region indices (an index without a name is called "region k").
    pub region_names: Vec<String>,
    /// Transition lines (second-order solid, first-order dashed, by convention).
    pub series: Vec<Series>,
    /// Metastability bands between spinodals.
    pub bands: Vec<Band>,
    /// Tricritical, Lifshitz, ... points.
    pub markers: Vec<Marker>,
    /// Text drawn at a data position, e.g. the name of a phase inside its region.
    pub labels: Vec<(String, f64, f64)>,
}

/// A real-space density over a square field of view beside its Fourier amplitudes.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct DensityPlot {
    pub title: String,
    /// Side of the field of view in nm; the map covers `[-fov/2, fov/2]^2`.
    pub fov_nm: f64,
    /// Samples per side.
    pub n: usize,
    /// `n × n` samples, row-major with y outer (`density[iy * n + ix]`), `iy = 0` at `y = -fov/2`.
    /// Sample `(ix, iy)` sits at the centre of its cell of side `fov/n`.
    pub density: Vec<f64>,
    pub colorbar_label: String,
    /// Fourier peaks `(kx, ky, amplitude, label)`, k in 1/nm, drawn as discs whose area is
    /// proportional to the amplitude.
    pub peaks: Vec<(f64, f64, f64, String)>,
    /// Half-width of the Fourier panel in 1/nm (non-positive: chosen from the peaks).
    pub k_extent: f64,
}

/// Why a figure could not be written.  Every variant names the file concerned.
#[derive(Debug, thiserror::Error)]
pub enum FigureError {
    /// The plot description is inconsistent (grid shape, non-monotonic axis, ...).
    #[error("figure {}: invalid input: {reason}", .path.display())]
    InvalidInput { path: PathBuf, reason: String },
    /// The drawing backend or the PNG encoder failed.
    #[error("figure {}: drawing failed: {message}", .path.display())]
    Draw { path: PathBuf, message: String },
    /// The file system refused the file (missing directory, permissions, disk full, ...).
    #[error("figure {}: cannot write: {source}", .path.display())]
    Io {
        path: PathBuf,
        #[source]
        source: io::Error,
    },
    /// The embedded font could not be parsed (should never happen).
    #[error("figure {}: embedded font could not be loaded", .path.display())]
    Font { path: PathBuf },
}

/// Writes `<stem>.png` and `<stem>.svg` of a line plot.
pub fn write_line_plot(plot: &LinePlot, stem: &Path) -> Result<(), FigureError> {
    write_figure(plot, stem)
}

/// Writes `<stem>.png` and `<stem>.svg` of a colour map.
pub fn write_map_plot(plot: &MapPlot, stem: &Path) -> Result<(), FigureError> {
    let err = |reason: String| FigureError::InvalidInput {
        path: stem.to_path_buf(),
        reason,
    };
    check_grid(&plot.xs, &plot.ys, plot.values.len(), "values").map_err(err)?;
    if !plot.outline.is_empty() && plot.outline.len() != plot.values.len() {
        return Err(err(format!(
            "outline has {} cells, values have {}",
            plot.outline.len(),
            plot.values.len()
        )));
    }
    write_figure(plot, stem)
}

/// Writes `<stem>.png` and `<stem>.svg` of a categorical phase diagram.
pub fn write_region_plot(plot: &RegionPlot, stem: &Path) -> Result<(), FigureError> {
    check_grid(&plot.xs, &plot.ys, plot.regions.len(), "regions").map_err(|reason| {
        FigureError::InvalidInput {
            path: stem.to_path_buf(),
            reason,
        }
    })?;
    write_figure(plot, stem)
}

/// Writes `<stem>.png` and `<stem>.svg` of a density map and its Fourier amplitudes.
pub fn write_density_plot(plot: &DensityPlot, stem: &Path) -> Result<(), FigureError> {
    let err = |reason: String| FigureError::InvalidInput {
        path: stem.to_path_buf(),
        reason,
    };
    if plot.n.checked_mul(plot.n) != Some(plot.density.len()) {
        return Err(err(format!(
            "density has {} samples, expected n*n with n = {}",
            plot.density.len(),
            plot.n
        )));
    }
    if plot.n > 0 && !(plot.fov_nm.is_finite() && plot.fov_nm > 0.0) {
        return Err(err(format!(
            "field of view must be positive, got {} nm",
            plot.fov_nm
        )));
    }
    write_figure(plot, stem)
}

// ---------------------------------------------------------------------------------------------
// Output pipeline
// ---------------------------------------------------------------------------------------------

const FAMILY: &str = "sans-serif";
static FONT_REGULAR: &[u8] = include_bytes!("../../assets/DejaVuSans.ttf");
static FONT_BOLD: &[u8] = include_bytes!("../../assets/DejaVuSans-Bold.ttf");

/// Registers the embedded fonts with plotters exactly once; reports whether that worked.
fn fonts_ready() -> bool {
    static ONCE: Once = Once::new();
    static OK: AtomicBool = AtomicBool::new(false);
    ONCE.call_once(|| {
        let ok = register_font(FAMILY, FontStyle::Normal, FONT_REGULAR).is_ok()
            && register_font(FAMILY, FontStyle::Bold, FONT_BOLD).is_ok();
        OK.store(ok, Ordering::SeqCst);
    });
    OK.load(Ordering::SeqCst)
}

/// PNGs are rendered at this multiple of their final size and averaged down.
const SUPERSAMPLE: u32 = 2;
/// SVG user units per pixel of the declared size.
const SVG_SCALE: u32 = 4;

/// A figure that can draw itself on any plotters backend.
trait Figure {
    /// Final size in pixels.
    fn size(&self) -> (u32, u32);
    fn draw<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>) -> DrawResult;
}

type DrawResult = Result<(), String>;

/// Turns backend errors into messages (the caller attaches the path).
trait OrMsg<T> {
    fn msg(self) -> Result<T, String>;
}

impl<T, E: std::fmt::Display> OrMsg<T> for Result<T, E> {
    fn msg(self) -> Result<T, String> {
        self.map_err(|e| e.to_string())
    }
}

/// `<stem>.<ext>`, appending rather than replacing (a stem may contain dots).
fn with_suffix(stem: &Path, ext: &str) -> PathBuf {
    let mut s = stem.as_os_str().to_owned();
    s.push(".");
    s.push(ext);
    PathBuf::from(s)
}

fn write_figure<F: Figure>(fig: &F, stem: &Path) -> Result<(), FigureError> {
    let png_path = with_suffix(stem, "png");
    let svg_path = with_suffix(stem, "svg");
    if !fonts_ready() {
        return Err(FigureError::Font { path: png_path });
    }
    // Fail early and clearly when the directory is missing (the encoders would report it in
    // less direct words).
    if let Some(dir) = png_path.parent().filter(|d| !d.as_os_str().is_empty()) {
        if !dir.is_dir() {
            return Err(FigureError::Io {
                path: png_path.clone(),
                source: io::Error::new(
                    io::ErrorKind::NotFound,
                    format!("directory {} does not exist", dir.display()),
                ),
            });
        }
    }
    let (w, h) = fig.size();

    // Render both in memory first, so that a drawing failure writes nothing at all.
    let svg = render_svg(fig, w, h).map_err(|message| FigureError::Draw {
        path: svg_path.clone(),
        message,
    })?;
    let rgb = render_rgb(fig, w, h).map_err(|message| FigureError::Draw {
        path: png_path.clone(),
        message,
    })?;

    atomic::with_temp_path(&png_path, |tmp| -> DrawResult {
        let area = BitMapBackend::new(tmp, (w, h)).into_drawing_area();
        let image = BitMapElement::with_owned_buffer((0, 0), (w, h), rgb)
            .ok_or_else(|| "image buffer has the wrong size".to_string())?;
        area.draw(&image).msg()?;
        area.present().msg()
    })
    .map_err(|e| match e {
        TempPathError::Io(source) => FigureError::Io {
            path: png_path.clone(),
            source,
        },
        TempPathError::Inner(message) => FigureError::Draw {
            path: png_path.clone(),
            message,
        },
    })?;
    atomic::write_atomic(&svg_path, svg.as_bytes()).map_err(|source| FigureError::Io {
        path: svg_path,
        source,
    })
}

/// Draws the SVG with `SVG_SCALE` user units per final pixel (plotters' coordinates are integers;
/// this keeps curves smooth) and declares the final size on the root element.
fn render_svg<F: Figure>(fig: &F, w: u32, h: u32) -> Result<String, String> {
    let (sw, sh) = (w * SVG_SCALE, h * SVG_SCALE);
    let mut text = String::new();
    let images;
    {
        let area = SVGBackend::with_string(&mut text, (sw, sh)).into_drawing_area();
        let mut c = Canvas::new(&area, SVG_SCALE as f64, true);
        c.clear()?;
        fig.draw(&mut c)?;
        images = std::mem::take(&mut c.images);
        area.present().msg()?;
    }
    let drawn = format!("<svg width=\"{sw}\" height=\"{sh}\"");
    if text.starts_with(&drawn) {
        text.replace_range(..drawn.len(), &format!("<svg width=\"{w}\" height=\"{h}\""));
    }
    Ok(splice_images(text, &images))
}

/// Renders at `SUPERSAMPLE` times the size and averages down to `w × h` RGB.
fn render_rgb<F: Figure>(fig: &F, w: u32, h: u32) -> Result<Vec<u8>, String> {
    let k = SUPERSAMPLE as usize;
    let (bw, bh) = (w as usize * k, h as usize * k);
    let mut big = vec![255u8; bw * bh * 3];
    {
        let area = BitMapBackend::with_buffer(&mut big, (bw as u32, bh as u32)).into_drawing_area();
        let mut c = Canvas::new(&area, SUPERSAMPLE as f64, false);
        fig.draw(&mut c)?;
        area.present().msg()?;
    }
    let (w, h) = (w as usize, h as usize);
    let mut out = vec![0u8; w * h * 3];
    let norm = (k * k) as u32;
    for y in 0..h {
        for x in 0..w {
            for ch in 0..3 {
                let mut sum = 0u32;
                for dy in 0..k {
                    let row = (y * k + dy) * bw;
                    for dx in 0..k {
                        sum += big[(row + x * k + dx) * 3 + ch] as u32;
                    }
                }
                out[(y * w + x) * 3 + ch] = ((sum + norm / 2) / norm) as u8;
            }
        }
    }
    Ok(out)
}

// ---------------------------------------------------------------------------------------------
// Canvas: device-pixel drawing helpers on top of a plotters drawing area
// ---------------------------------------------------------------------------------------------

/// A raster image to be embedded into the SVG in place of a placeholder rectangle.
struct EmbeddedImage {
    key: (u8, u8, u8),
    x: i32,
    y: i32,
    w: u32,
    h: u32,
    png: Vec<u8>,
}

/// Drawing surface in device pixels.  Sizes given to its methods are logical pixels (the final
/// figure's pixels) and are multiplied by `s` (2 for the supersampled PNG, 1 for SVG).
struct Canvas<'a, DB: DrawingBackend> {
    area: &'a DrawingArea<DB, Shift>,
    s: f64,
    svg: bool,
    images: Vec<EmbeddedImage>,
}

#[derive(Clone, Copy, PartialEq)]
enum Rot {
    None,
    /// Reading bottom to top (y-axis labels).
    Up,
}

fn ip(p: (f64, f64)) -> (i32, i32) {
    (p.0.round() as i32, p.1.round() as i32)
}

fn rgba(c: RGBColor, a: f64) -> RGBAColor {
    RGBAColor(c.0, c.1, c.2, a)
}

const BLACK: RGBColor = RGBColor(0, 0, 0);
const WHITE: RGBColor = RGBColor(255, 255, 255);
const TEXT_GREY: RGBColor = RGBColor(90, 90, 90);
const GRID_GREY: RGBColor = RGBColor(226, 226, 226);
const FAILED_GREY: RGBColor = RGBColor(150, 150, 150);

impl<'a, DB: DrawingBackend> Canvas<'a, DB> {
    fn new(area: &'a DrawingArea<DB, Shift>, s: f64, svg: bool) -> Self {
        Canvas {
            area,
            s,
            svg,
            images: Vec::new(),
        }
    }

    /// Logical to device pixels.
    fn p(&self, v: f64) -> f64 {
        v * self.s
    }

    fn dims(&self) -> (f64, f64) {
        let (w, h) = self.area.dim_in_pixel();
        (w as f64, h as f64)
    }

    fn clear(&self) -> DrawResult {
        self.area.fill(&WHITE).msg()
    }

    fn stroke(&self, width: f64) -> u32 {
        self.p(width).round().max(1.0) as u32
    }

    /// Polyline in device pixels with the given pattern; `width` in logical pixels.
    fn path(&self, pts: &[(f64, f64)], color: RGBAColor, width: f64, dash: Dash) -> DrawResult {
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
            Dash::Solid => self.area.draw(&PathElement::new(v, style)).msg(),
            Dash::Dashed => {
                let on = self.p(9.0).round() as i32;
                let off = self.p(5.0).round() as i32;
                self.area
                    .draw(&DashedPathElement::new(v, on, off, style))
                    .msg()
            }
            Dash::Dotted => {
                let on = sw as i32;
                let off = (sw as f64 * 1.6).round().max(2.0) as i32;
                self.area
                    .draw(&DashedPathElement::new(v, on, off, style))
                    .msg()
            }
        }
    }

    fn polygon(&self, pts: &[(f64, f64)], color: RGBAColor) -> DrawResult {
        let v: Vec<(i32, i32)> = pts.iter().map(|p| ip(*p)).collect();
        if v.len() < 3 {
            return Ok(());
        }
        self.area.draw(&Polygon::new(v, color.filled())).msg()
    }

    fn fill_rect(&self, r: Rect, color: RGBAColor) -> DrawResult {
        let a = ip((r.l, r.t));
        let b = ip((r.r, r.b));
        if a.0 >= b.0 || a.1 >= b.1 {
            return Ok(());
        }
        self.area
            .draw(&Rectangle::new([a, b], color.filled()))
            .msg()
    }

    /// A tile of a mosaic (map cells, colour-bar steps).  On SVG each tile overlaps its right and
    /// lower neighbours by one pixel (staying inside `bound`), so that anti-aliased edges do not
    /// leave light seams.
    fn fill_tile(&self, r: Rect, color: RGBAColor, bound: &Rect) -> DrawResult {
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

    fn stroke_rect(&self, r: Rect, color: RGBAColor, width: f64) -> DrawResult {
        let pts = [(r.l, r.t), (r.r, r.t), (r.r, r.b), (r.l, r.b), (r.l, r.t)];
        self.path(&pts, color, width, Dash::Solid)
    }

    fn disc(&self, c: (f64, f64), radius: f64, color: RGBAColor) -> DrawResult {
        let r = radius.round().max(1.0) as u32;
        self.area.draw(&Circle::new(ip(c), r, color.filled())).msg()
    }

    fn ring(&self, c: (f64, f64), radius: f64, color: RGBAColor, width: f64) -> DrawResult {
        let r = radius.round().max(1.0) as u32;
        let style = ShapeStyle {
            color,
            filled: false,
            stroke_width: self.stroke(width),
        };
        self.area.draw(&Circle::new(ip(c), r, style)).msg()
    }

    fn font(&self, size: f64, bold: bool) -> FontDesc<'static> {
        let style = if bold {
            FontStyle::Bold
        } else {
            FontStyle::Normal
        };
        FontDesc::new(FontFamily::Name(FAMILY), self.p(size), style)
    }

    /// Width in device pixels of `text` at logical font size `size`.
    fn text_width(&self, text: &str, size: f64, bold: bool) -> f64 {
        if text.is_empty() {
            return 0.0;
        }
        let style = TextStyle::from(self.font(size, bold));
        match self.area.estimate_text_size(text, &style) {
            Ok((w, _)) => w as f64,
            Err(_) => text.chars().count() as f64 * self.p(size) * 0.6,
        }
    }

    /// Cap height of digits and capitals, device pixels (for vertical layout).
    fn cap(&self, size: f64) -> f64 {
        self.p(size) * 0.63
    }

    /// Draws one line of text whose capitals are vertically centred on `yc` (for `Rot::Up`:
    /// horizontally centred on `x`, running upwards from `yc` according to `h`).
    #[allow(clippy::too_many_arguments)]
    fn text(
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
        self.area.draw_text(text, &style, ip(pos)).msg()
    }

    /// Places an RGB raster (`iw × ih` pixels) stretched over the device rectangle `r`.  On the
    /// bitmap backend the raster must already have the device size of `r`; on SVG it is embedded
    /// as a PNG image.
    fn raster(&mut self, r: Rect, iw: u32, ih: u32, rgb: Vec<u8>) -> DrawResult {
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
                png: encode_png(iw, ih, &rgb),
            });
            Ok(())
        } else {
            let image = BitMapElement::with_owned_buffer((x, y), (iw, ih), rgb)
                .ok_or_else(|| "raster buffer has the wrong size".to_string())?;
            self.area.draw(&image).msg()
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Geometry, ranges, ticks
// ---------------------------------------------------------------------------------------------

/// Axis-aligned rectangle in device pixels (y down).
#[derive(Clone, Copy, Debug, PartialEq)]
struct Rect {
    l: f64,
    t: f64,
    r: f64,
    b: f64,
}

impl Rect {
    fn new(l: f64, t: f64, r: f64, b: f64) -> Self {
        Rect { l, t, r, b }
    }
    fn w(&self) -> f64 {
        self.r - self.l
    }
    fn h(&self) -> f64 {
        self.b - self.t
    }
    fn contains(&self, p: (f64, f64)) -> bool {
        p.0 >= self.l && p.0 <= self.r && p.1 >= self.t && p.1 <= self.b
    }
    fn inflate(&self, d: f64) -> Rect {
        Rect::new(self.l - d, self.t - d, self.r + d, self.b + d)
    }
    fn intersects(&self, o: &Rect) -> bool {
        self.l < o.r && o.l < self.r && self.t < o.b && o.t < self.b
    }
}

/// The plot rectangle with its data ranges.
#[derive(Clone, Copy, Debug)]
struct Frame {
    px: Rect,
    x: (f64, f64),
    y: (f64, f64),
}

impl Frame {
    fn map(&self, x: f64, y: f64) -> (f64, f64) {
        let tx = (x - self.x.0) / (self.x.1 - self.x.0);
        let ty = (y - self.y.0) / (self.y.1 - self.y.0);
        (self.px.l + tx * self.px.w(), self.px.b - ty * self.px.h())
    }
    fn inside(&self, x: f64, y: f64) -> bool {
        x >= self.x.0 && x <= self.x.1 && y >= self.y.0 && y <= self.y.1
    }
}

/// Running min/max of finite values.
#[derive(Clone, Copy, Debug)]
struct Extent {
    lo: f64,
    hi: f64,
}

impl Extent {
    fn new() -> Self {
        Extent {
            lo: f64::INFINITY,
            hi: f64::NEG_INFINITY,
        }
    }
    fn add(&mut self, v: f64) {
        if v.is_finite() {
            self.lo = self.lo.min(v);
            self.hi = self.hi.max(v);
        }
    }
    fn is_empty(&self) -> bool {
        self.lo > self.hi
    }
    /// A non-degenerate range: padded by `pad` × span; a single value gets a span of its own.
    fn range(&self, pad: f64) -> (f64, f64) {
        if self.is_empty() {
            return (0.0, 1.0);
        }
        let (lo, hi) = (self.lo, self.hi);
        let span = hi - lo;
        if span <= f64::EPSILON * lo.abs().max(hi.abs()).max(f64::MIN_POSITIVE) * 16.0 {
            let d = if lo == 0.0 { 1.0 } else { 0.1 * lo.abs() };
            return (lo - d, hi + d);
        }
        (lo - pad * span, hi + pad * span)
    }
}

/// A "nice" tick step (1, 2, 2.5, 5 × 10^k) giving about `target` intervals over `span`.
fn nice_step(span: f64, target: usize) -> f64 {
    let raw = span / target.max(1) as f64;
    if !(raw.is_finite() && raw > 0.0) {
        return 1.0;
    }
    let mag = 10f64.powf(raw.log10().floor());
    let f = raw / mag;
    let m = if f <= 1.0 {
        1.0
    } else if f <= 2.0 {
        2.0
    } else if f <= 2.5 {
        2.5
    } else if f <= 5.0 {
        5.0
    } else {
        10.0
    };
    m * mag
}

/// Tick values in `[lo, hi]` and their step.
fn ticks(lo: f64, hi: f64, target: usize) -> (Vec<f64>, f64) {
    if !(lo.is_finite() && hi.is_finite() && hi > lo) {
        return (Vec::new(), 1.0);
    }
    let step = nice_step(hi - lo, target);
    let k0 = (lo / step - 1e-9).ceil();
    let k1 = (hi / step + 1e-9).floor();
    if k1 < k0 || k1 - k0 > 200.0 {
        return (Vec::new(), step);
    }
    let mut v = Vec::new();
    let mut k = k0;
    while k <= k1 {
        let t = k * step;
        v.push(if t.abs() < step * 1e-9 { 0.0 } else { t });
        k += 1.0;
    }
    (v, step)
}

/// Tick labels with as many decimals as the step needs; scientific notation for very large or
/// very small magnitudes.  Uses a true minus sign.
fn tick_labels(values: &[f64], step: f64) -> Vec<String> {
    let mag = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let sci = mag >= 1e6 || (mag > 0.0 && mag < 1e-3);
    values
        .iter()
        .map(|&v| {
            let s = if v == 0.0 {
                "0".to_string()
            } else if sci {
                let e_mag = mag.log10().floor();
                let d = (e_mag - (step.log10() - 1e-9).floor()).clamp(0.0, 6.0) as usize;
                format!("{v:.d$e}")
            } else {
                let mut d = 0usize;
                while d < 10 {
                    let scaled = step * 10f64.powi(d as i32);
                    if (scaled - scaled.round()).abs() <= 1e-6 * scaled.max(1.0) {
                        break;
                    }
                    d += 1;
                }
                format!("{v:.d$}")
            };
            s.replace('-', "\u{2212}")
        })
        .collect()
}

/// `v` with `digits` significant digits, trailing zeros dropped, true minus sign.
fn fmt_significant(v: f64, digits: usize) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    if v == 0.0 {
        return "0".to_string();
    }
    let e = v.abs().log10().floor();
    let s = if !(-4.0..6.0).contains(&e) {
        format!("{:.*e}", digits.saturating_sub(1), v)
    } else {
        let d = (digits as f64 - 1.0 - e).max(0.0) as usize;
        let t = format!("{v:.d$}");
        if t.contains('.') {
            t.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            t
        }
    };
    s.replace('-', "\u{2212}")
}

/// Cell edges from cell centres (midpoints; the outer edges extrapolated by half a spacing).
fn cell_edges(cs: &[f64]) -> Vec<f64> {
    match cs.len() {
        0 => Vec::new(),
        1 => {
            let c = cs[0];
            let d = if c == 0.0 { 0.5 } else { 0.05 * c.abs() };
            vec![c - d, c + d]
        }
        n => {
            let mut e = Vec::with_capacity(n + 1);
            e.push(cs[0] - 0.5 * (cs[1] - cs[0]));
            for i in 0..n - 1 {
                e.push(0.5 * (cs[i] + cs[i + 1]));
            }
            e.push(cs[n - 1] + 0.5 * (cs[n - 1] - cs[n - 2]));
            e
        }
    }
}

/// Checks a grid description: finite, strictly monotonic axes and a matching cell count.
fn check_grid(xs: &[f64], ys: &[f64], cells: usize, what: &str) -> Result<(), String> {
    for (name, axis) in [("xs", xs), ("ys", ys)] {
        if axis.iter().any(|v| !v.is_finite()) {
            return Err(format!("{name} contains a non-finite value"));
        }
        if cell_edges(axis).iter().any(|v| !v.is_finite()) {
            return Err(format!("{name} spans too large a range"));
        }
        let up = axis.windows(2).all(|w| w[1] > w[0]);
        let down = axis.windows(2).all(|w| w[1] < w[0]);
        if !(up || down) {
            return Err(format!("{name} is not strictly monotonic"));
        }
    }
    if xs.len().checked_mul(ys.len()) != Some(cells) {
        return Err(format!(
            "{what} has {cells} cells, expected xs.len() * ys.len() = {} * {}",
            xs.len(),
            ys.len()
        ));
    }
    Ok(())
}

// ---------------------------------------------------------------------------------------------
// Clipping and sampling
// ---------------------------------------------------------------------------------------------

/// Clips segment `p`–`q` to the rectangle (Liang–Barsky); `None` if it misses.
fn clip_segment(
    p: (f64, f64),
    q: (f64, f64),
    x: (f64, f64),
    y: (f64, f64),
) -> Option<((f64, f64), (f64, f64))> {
    let (dx, dy) = (q.0 - p.0, q.1 - p.1);
    let mut t0 = 0.0f64;
    let mut t1 = 1.0f64;
    for (pk, qk) in [
        (-dx, p.0 - x.0),
        (dx, x.1 - p.0),
        (-dy, p.1 - y.0),
        (dy, y.1 - p.1),
    ] {
        if pk == 0.0 {
            if qk < 0.0 {
                return None;
            }
        } else {
            let t = qk / pk;
            if pk < 0.0 {
                t0 = t0.max(t);
            } else {
                t1 = t1.min(t);
            }
        }
    }
    if t0 > t1 {
        return None;
    }
    Some((
        (p.0 + t0 * dx, p.1 + t0 * dy),
        (p.0 + t1 * dx, p.1 + t1 * dy),
    ))
}

/// Splits a curve at non-finite points and clips it to the frame's data range.  Pieces of one
/// point are isolated finite points inside the range.
fn clip_polyline(pts: &[(f64, f64)], f: &Frame) -> Vec<Vec<(f64, f64)>> {
    let finite = |p: &(f64, f64)| p.0.is_finite() && p.1.is_finite();
    let mut out: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut i = 0;
    while i < pts.len() {
        if !finite(&pts[i]) {
            i += 1;
            continue;
        }
        let start = i;
        while i < pts.len() && finite(&pts[i]) {
            i += 1;
        }
        let run = &pts[start..i];
        if run.len() == 1 {
            if f.inside(run[0].0, run[0].1) {
                out.push(vec![run[0]]);
            }
            continue;
        }
        let mut cur: Vec<(f64, f64)> = Vec::new();
        for w in run.windows(2) {
            match clip_segment(w[0], w[1], f.x, f.y) {
                None => {
                    if cur.len() > 1 {
                        out.push(std::mem::take(&mut cur));
                    }
                    cur.clear();
                }
                Some((a, b)) => {
                    if cur.last() != Some(&a) {
                        if cur.len() > 1 {
                            out.push(std::mem::take(&mut cur));
                        }
                        cur.clear();
                        cur.push(a);
                    }
                    cur.push(b);
                    if b != w[1] {
                        out.push(std::mem::take(&mut cur));
                    }
                }
            }
        }
        if cur.len() > 1 {
            out.push(cur);
        }
    }
    out
}

/// Clips a polygon to the frame's data range (Sutherland–Hodgman).
fn clip_polygon(poly: &[(f64, f64)], f: &Frame) -> Vec<(f64, f64)> {
    let mut pts: Vec<(f64, f64)> = poly
        .iter()
        .copied()
        .filter(|p| p.0.is_finite() && p.1.is_finite())
        .collect();
    // Each edge: keep points with `inside(p)`, intersect on the coordinate `axis` at `v`.
    let edges: [(usize, f64, bool); 4] = [
        (0, f.x.0, true),
        (0, f.x.1, false),
        (1, f.y.0, true),
        (1, f.y.1, false),
    ];
    for (axis, v, keep_above) in edges {
        if pts.is_empty() {
            break;
        }
        let coord = |p: &(f64, f64)| if axis == 0 { p.0 } else { p.1 };
        let inside = |p: &(f64, f64)| {
            if keep_above {
                coord(p) >= v
            } else {
                coord(p) <= v
            }
        };
        let mut out = Vec::with_capacity(pts.len() + 4);
        for i in 0..pts.len() {
            let a = pts[i];
            let b = pts[(i + 1) % pts.len()];
            let (ia, ib) = (inside(&a), inside(&b));
            if ia {
                out.push(a);
            }
            if ia != ib {
                let t = (v - coord(&a)) / (coord(&b) - coord(&a));
                out.push((a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1)));
            }
        }
        pts = out;
    }
    pts
}

/// Even-odd point-in-polygon test.
fn point_in_polygon(p: (f64, f64), poly: &[(f64, f64)]) -> bool {
    let mut inside = false;
    let n = poly.len();
    let mut j = n.wrapping_sub(1);
    for i in 0..n {
        let (a, b) = (poly[i], poly[j]);
        if (a.1 > p.1) != (b.1 > p.1) && p.0 < (b.0 - a.0) * (p.1 - a.1) / (b.1 - a.1) + a.0 {
            inside = !inside;
        }
        j = i;
    }
    inside
}

/// Points every `step` device pixels along a device-pixel polyline.
fn densify(pts: &[(f64, f64)], step: f64, out: &mut Vec<(f64, f64)>) {
    if let Some(first) = pts.first() {
        out.push(*first);
    }
    for w in pts.windows(2) {
        let d = (w[1].0 - w[0].0).hypot(w[1].1 - w[0].1);
        let n = (d / step).ceil().clamp(1.0, 10_000.0) as usize;
        for k in 1..=n {
            let t = k as f64 / n as f64;
            out.push((
                w[0].0 + t * (w[1].0 - w[0].0),
                w[0].1 + t * (w[1].1 - w[0].1),
            ));
        }
    }
}

/// The polygon of a band: `lower` then `upper` reversed (or `lower` alone), finite points only.
fn band_polygon(b: &Band) -> Vec<(f64, f64)> {
    b.lower
        .iter()
        .chain(b.upper.iter().rev())
        .copied()
        .filter(|p| p.0.is_finite() && p.1.is_finite())
        .collect()
}

// ---------------------------------------------------------------------------------------------
// Colours
// ---------------------------------------------------------------------------------------------

/// Line and marker palette (colour-blind safe ordering, dark enough on white).
const LINE_PALETTE: [RGBColor; 8] = [
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
    RGBColor(86, 180, 233),
    RGBColor(0, 0, 0),
    RGBColor(150, 90, 40),
];

/// Light fills for categorical regions (lines and text stay readable on top).
const REGION_PALETTE: [RGBColor; 12] = [
    RGBColor(198, 219, 239),
    RGBColor(253, 208, 162),
    RGBColor(199, 233, 192),
    RGBColor(218, 218, 235),
    RGBColor(252, 197, 205),
    RGBColor(255, 237, 160),
    RGBColor(204, 236, 230),
    RGBColor(230, 220, 200),
    RGBColor(235, 205, 240),
    RGBColor(215, 235, 160),
    RGBColor(175, 215, 225),
    RGBColor(240, 225, 215),
];

fn line_color(i: usize) -> RGBColor {
    LINE_PALETTE[i % LINE_PALETTE.len()]
}

fn region_color(i: usize) -> RGBColor {
    REGION_PALETTE[i % REGION_PALETTE.len()]
}

/// Anchors of the viridis colour map at 0, 1/8, ..., 1, linearly interpolated in between.
const VIRIDIS: [(u8, u8, u8); 9] = [
    (0x44, 0x01, 0x54),
    (0x47, 0x2D, 0x7B),
    (0x3B, 0x52, 0x8B),
    (0x2C, 0x72, 0x8E),
    (0x21, 0x90, 0x8C),
    (0x27, 0xAD, 0x81),
    (0x5D, 0xC8, 0x63),
    (0xAA, 0xDC, 0x32),
    (0xFD, 0xE7, 0x25),
];

fn colormap(t: f64) -> RGBColor {
    let t = if t.is_finite() {
        t.clamp(0.0, 1.0)
    } else {
        0.0
    };
    let x = t * (VIRIDIS.len() - 1) as f64;
    let i = (x.floor() as usize).min(VIRIDIS.len() - 2);
    let f = x - i as f64;
    let (a, b) = (VIRIDIS[i], VIRIDIS[i + 1]);
    let mix = |u: u8, v: u8| (u as f64 + f * (v as f64 - u as f64)).round() as u8;
    RGBColor(mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// Colour scale of a map: finite range of the values.
#[derive(Clone, Copy, Debug)]
struct Scale {
    lo: f64,
    hi: f64,
}

impl Scale {
    fn from_values(values: impl Iterator<Item = f64>) -> Scale {
        let mut e = Extent::new();
        for v in values {
            e.add(v);
        }
        let (lo, hi) = e.range(0.0);
        Scale { lo, hi }
    }
    fn color(&self, v: f64) -> RGBColor {
        colormap((v - self.lo) / (self.hi - self.lo))
    }
}

// ---------------------------------------------------------------------------------------------
// Shared layout constants (logical pixels)
// ---------------------------------------------------------------------------------------------

const PAD: f64 = 14.0;
const TITLE_SIZE: f64 = 19.0;
const LABEL_SIZE: f64 = 16.0;
const TICK_SIZE: f64 = 14.0;
const LEGEND_SIZE: f64 = 13.5;
const NOTE_SIZE: f64 = 12.5;
const TICK_LEN: f64 = 5.0;
const GAP: f64 = 6.0;
const LINE_WIDTH: f64 = 2.0;
const MARKER_R: f64 = 6.0;

/// Draws the title centred at the top (shrunk to fit the width); returns the y below it.
fn draw_title<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    title: &str,
    region: Rect,
) -> Result<f64, String> {
    if title.trim().is_empty() {
        return Ok(region.t + c.p(PAD));
    }
    let max_w = region.w() - c.p(2.0 * PAD);
    let mut size = TITLE_SIZE;
    while size > 11.0 && c.text_width(title, size, true) > max_w {
        size -= 1.0;
    }
    let text = fit_text(c, title, size, true, max_w);
    let yc = region.t + c.p(PAD) + c.cap(size) / 2.0;
    c.text(
        &text,
        (region.l + region.r) / 2.0,
        yc,
        size,
        true,
        HPos::Center,
        BLACK,
        Rot::None,
    )?;
    Ok(yc + c.cap(size) / 2.0 + c.p(4.0))
}

/// `text`, shortened with an ellipsis if wider than `max_w` device pixels.
fn fit_text<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    text: &str,
    size: f64,
    bold: bool,
    max_w: f64,
) -> String {
    if c.text_width(text, size, bold) <= max_w {
        return text.to_string();
    }
    let chars: Vec<char> = text.chars().collect();
    let mut n = chars.len();
    while n > 1 {
        n -= 1;
        let s: String = chars[..n].iter().collect::<String>() + "\u{2026}";
        if c.text_width(&s, size, bold) <= max_w {
            return s;
        }
    }
    "\u{2026}".to_string()
}

/// Ticks of one axis with their labels.
struct AxisTicks {
    values: Vec<f64>,
    labels: Vec<String>,
}

impl AxisTicks {
    fn new(range: (f64, f64), target: usize) -> Self {
        let (values, step) = ticks(range.0, range.1, target);
        let labels = tick_labels(&values, step);
        AxisTicks { values, labels }
    }
}

/// Device-pixel room the axis decorations need: (left of the frame, below the frame).
fn axes_room<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    yt: &AxisTicks,
    x_label: &str,
    y_label: &str,
) -> (f64, f64) {
    let tick_w = yt
        .labels
        .iter()
        .map(|l| c.text_width(l, TICK_SIZE, false))
        .fold(0.0, f64::max);
    let mut left = c.p(TICK_LEN + GAP) + tick_w;
    if !y_label.is_empty() {
        left += c.p(GAP + 2.0) + c.p(LABEL_SIZE) * 0.9;
    }
    let mut below = c.p(TICK_LEN + GAP) + c.cap(TICK_SIZE);
    if !x_label.is_empty() {
        below += c.p(GAP + 6.0) + c.p(LABEL_SIZE) * 0.9;
    }
    (left, below)
}

/// Light grid lines at the ticks (drawn before the data).
fn draw_grid<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    f: &Frame,
    xt: &AxisTicks,
    yt: &AxisTicks,
) -> DrawResult {
    c.fill_rect(f.px, WHITE.to_rgba())?;
    for &x in &xt.values {
        let (px, _) = f.map(x, f.y.0);
        c.path(
            &[(px, f.px.t), (px, f.px.b)],
            GRID_GREY.to_rgba(),
            1.0,
            Dash::Solid,
        )?;
    }
    for &y in &yt.values {
        let (_, py) = f.map(f.x.0, y);
        c.path(
            &[(f.px.l, py), (f.px.r, py)],
            GRID_GREY.to_rgba(),
            1.0,
            Dash::Solid,
        )?;
    }
    Ok(())
}

/// Frame, outward ticks, tick labels and axis labels (drawn after the data).
fn draw_axes<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    f: &Frame,
    xt: &AxisTicks,
    yt: &AxisTicks,
    x_label: &str,
    y_label: &str,
) -> DrawResult {
    let k = BLACK.to_rgba();
    let tl = c.p(TICK_LEN);
    for (x, l) in xt.values.iter().zip(&xt.labels) {
        let (px, _) = f.map(*x, f.y.0);
        c.path(&[(px, f.px.b), (px, f.px.b + tl)], k, 1.0, Dash::Solid)?;
        let yc = f.px.b + tl + c.p(GAP) + c.cap(TICK_SIZE) / 2.0;
        c.text(l, px, yc, TICK_SIZE, false, HPos::Center, BLACK, Rot::None)?;
    }
    let mut tick_w: f64 = 0.0;
    for (y, l) in yt.values.iter().zip(&yt.labels) {
        let (_, py) = f.map(f.x.0, *y);
        c.path(&[(f.px.l - tl, py), (f.px.l, py)], k, 1.0, Dash::Solid)?;
        let x = f.px.l - tl - c.p(GAP);
        c.text(l, x, py, TICK_SIZE, false, HPos::Right, BLACK, Rot::None)?;
        tick_w = tick_w.max(c.text_width(l, TICK_SIZE, false));
    }
    c.stroke_rect(f.px, k, 1.2)?;
    let xc = (f.px.l + f.px.r) / 2.0;
    let max_w = f.px.w();
    let xl = fit_text(c, x_label, LABEL_SIZE, false, max_w);
    let yc = f.px.b + tl + c.p(GAP) + c.cap(TICK_SIZE) + c.p(GAP + 6.0) + c.cap(LABEL_SIZE) / 2.0;
    c.text(
        &xl,
        xc,
        yc,
        LABEL_SIZE,
        false,
        HPos::Center,
        BLACK,
        Rot::None,
    )?;
    let yl = fit_text(c, y_label, LABEL_SIZE, false, f.px.h());
    let x = f.px.l - tl - c.p(GAP) - tick_w - c.p(GAP + 2.0) - c.p(LABEL_SIZE) * 0.45;
    c.text(
        &yl,
        x,
        (f.px.t + f.px.b) / 2.0,
        LABEL_SIZE,
        false,
        HPos::Center,
        BLACK,
        Rot::Up,
    )
}

fn draw_no_data<DB: DrawingBackend>(c: &Canvas<'_, DB>, f: &Frame, what: &str) -> DrawResult {
    c.text(
        what,
        (f.px.l + f.px.r) / 2.0,
        (f.px.t + f.px.b) / 2.0,
        LABEL_SIZE,
        false,
        HPos::Center,
        TEXT_GREY,
        Rot::None,
    )
}

// ---------------------------------------------------------------------------------------------
// Markers, curves, bands
// ---------------------------------------------------------------------------------------------

/// Marker outline (device pixels) for shape index `shape` centred on `p` with radius `r`.
fn marker_shape(shape: usize, p: (f64, f64), r: f64) -> Vec<(f64, f64)> {
    let poly = |angles: &[f64], rr: f64| -> Vec<(f64, f64)> {
        angles
            .iter()
            .map(|a| {
                let a = a.to_radians();
                (p.0 + rr * a.cos(), p.1 - rr * a.sin())
            })
            .collect()
    };
    match shape % 5 {
        1 => {
            let h = r * 0.88;
            vec![
                (p.0 - h, p.1 - h),
                (p.0 + h, p.1 - h),
                (p.0 + h, p.1 + h),
                (p.0 - h, p.1 + h),
            ]
        }
        2 => poly(&[90.0, 210.0, 330.0], r * 1.2),
        3 => poly(&[90.0, 180.0, 270.0, 0.0], r * 1.2),
        4 => poly(&[270.0, 30.0, 150.0], r * 1.2),
        _ => Vec::new(), // circle
    }
}

/// A filled marker with a dark edge; `halo` adds a white rim (for colour-map backgrounds).
fn draw_marker<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    p: (f64, f64),
    shape: usize,
    color: RGBColor,
    halo: bool,
) -> DrawResult {
    let r = c.p(MARKER_R);
    let outline = marker_shape(shape, p, r);
    if outline.is_empty() {
        if halo {
            c.disc(p, r + c.p(2.0), WHITE.to_rgba())?;
        }
        c.disc(p, r, color.to_rgba())?;
        c.ring(p, r, BLACK.to_rgba(), 1.0)
    } else {
        let mut closed = outline.clone();
        closed.push(outline[0]);
        if halo {
            c.path(&closed, WHITE.to_rgba(), 4.5, Dash::Solid)?;
        }
        c.polygon(&outline, color.to_rgba())?;
        c.path(&closed, BLACK.to_rgba(), 1.0, Dash::Solid)
    }
}

/// A curve clipped to the frame; `halo` first draws a wider white line under it.
fn draw_series<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    f: &Frame,
    s: &Series,
    halo: bool,
) -> DrawResult {
    let color = line_color(s.color);
    let width = if s.dash == Dash::Dotted {
        LINE_WIDTH * 1.3
    } else {
        LINE_WIDTH
    };
    for piece in clip_polyline(&s.points, f) {
        let px: Vec<(f64, f64)> = piece.iter().map(|p| f.map(p.0, p.1)).collect();
        if px.len() == 1 {
            if halo {
                c.disc(px[0], c.p(4.5), WHITE.to_rgba())?;
            }
            c.disc(px[0], c.p(3.0), color.to_rgba())?;
            continue;
        }
        if halo {
            c.path(&px, rgba(WHITE, 0.85), width + 2.5, s.dash)?;
        }
        c.path(&px, color.to_rgba(), width, s.dash)?;
    }
    Ok(())
}

/// A translucent band with its two boundary curves.
fn draw_band<DB: DrawingBackend>(c: &Canvas<'_, DB>, f: &Frame, b: &Band) -> DrawResult {
    let color = line_color(b.color);
    let poly = clip_polygon(&band_polygon(b), f);
    let px: Vec<(f64, f64)> = poly.iter().map(|p| f.map(p.0, p.1)).collect();
    c.polygon(&px, rgba(color, 0.22))?;
    for curve in [&b.lower, &b.upper] {
        for piece in clip_polyline(curve, f) {
            let px: Vec<(f64, f64)> = piece.iter().map(|p| f.map(p.0, p.1)).collect();
            c.path(&px, rgba(color, 0.9), 1.2, Dash::Solid)?;
        }
    }
    Ok(())
}

// ---------------------------------------------------------------------------------------------
// Legends
// ---------------------------------------------------------------------------------------------

#[derive(Clone, Copy, Debug)]
enum Swatch {
    Line(RGBColor, Dash),
    /// A curve with a white halo (as drawn on colour maps).
    HaloLine(RGBColor, Dash),
    Band(RGBColor),
    Fill(RGBColor),
    Marker(RGBColor, usize, bool),
    /// The outlined, hatched region of a colour map.
    Outline,
}

#[derive(Clone, Debug)]
struct LegendEntry {
    label: String,
    swatch: Swatch,
}

const SWATCH_W: f64 = 30.0;
const LEGEND_ROW: f64 = 21.0;
const LEGEND_PAD: f64 = 8.0;

fn draw_swatch<DB: DrawingBackend>(c: &Canvas<'_, DB>, sw: Swatch, x: f64, yc: f64) -> DrawResult {
    let w = c.p(SWATCH_W);
    let hh = c.p(6.5);
    let r = Rect::new(x, yc - hh, x + w, yc + hh);
    match sw {
        Swatch::Line(col, dash) => {
            let width = if dash == Dash::Dotted {
                LINE_WIDTH * 1.3
            } else {
                LINE_WIDTH
            };
            c.path(&[(x, yc), (x + w, yc)], col.to_rgba(), width, dash)
        }
        Swatch::HaloLine(col, dash) => {
            c.fill_rect(r, colormap(0.15).to_rgba())?;
            let width = if dash == Dash::Dotted {
                LINE_WIDTH * 1.3
            } else {
                LINE_WIDTH
            };
            let pts = [(x + c.p(2.0), yc), (x + w - c.p(2.0), yc)];
            c.path(&pts, rgba(WHITE, 0.85), width + 2.5, dash)?;
            c.path(&pts, col.to_rgba(), width, dash)
        }
        Swatch::Band(col) => {
            c.fill_rect(r, rgba(col, 0.22))?;
            c.path(&[(r.l, r.t), (r.r, r.t)], rgba(col, 0.9), 1.2, Dash::Solid)?;
            c.path(&[(r.l, r.b), (r.r, r.b)], rgba(col, 0.9), 1.2, Dash::Solid)
        }
        Swatch::Fill(col) => {
            c.fill_rect(r, col.to_rgba())?;
            c.stroke_rect(r, RGBColor(120, 120, 120).to_rgba(), 1.0)
        }
        Swatch::Marker(col, shape, halo) => draw_marker(c, (x + w / 2.0, yc), shape, col, halo),
        Swatch::Outline => {
            c.fill_rect(r, colormap(0.45).to_rgba())?;
            hatch_rect(c, r, hatch_color(colormap(0.45)))?;
            let pts = [(r.l, r.t), (r.r, r.t), (r.r, r.b), (r.l, r.b), (r.l, r.t)];
            c.path(&pts, BLACK.to_rgba(), 4.0, Dash::Solid)?;
            c.path(&pts, WHITE.to_rgba(), 1.8, Dash::Solid)
        }
    }
}

/// Size (device pixels) of a boxed, one-column legend, labels capped at `max_label_w`.
fn legend_size<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    entries: &[LegendEntry],
    max_label_w: f64,
) -> (f64, f64) {
    let label_w = entries
        .iter()
        .map(|e| c.text_width(&e.label, LEGEND_SIZE, false).min(max_label_w))
        .fold(0.0, f64::max);
    (
        c.p(2.0 * LEGEND_PAD + SWATCH_W + GAP) + label_w,
        c.p(2.0 * LEGEND_PAD - 6.0 + LEGEND_ROW * entries.len() as f64),
    )
}

/// A boxed one-column legend with its top-left corner at `(x, y)`.
fn draw_legend_box<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    entries: &[LegendEntry],
    x: f64,
    y: f64,
    max_label_w: f64,
) -> DrawResult {
    let (w, h) = legend_size(c, entries, max_label_w);
    let r = Rect::new(x, y, x + w, y + h);
    c.fill_rect(r, rgba(WHITE, 0.9))?;
    c.stroke_rect(r, RGBColor(160, 160, 160).to_rgba(), 1.0)?;
    for (i, e) in entries.iter().enumerate() {
        let yc = y + c.p(LEGEND_PAD - 3.0 + LEGEND_ROW * (i as f64 + 0.5));
        let sx = x + c.p(LEGEND_PAD);
        draw_swatch(c, e.swatch, sx, yc)?;
        let label = fit_text(c, &e.label, LEGEND_SIZE, false, max_label_w);
        c.text(
            &label,
            sx + c.p(SWATCH_W + GAP),
            yc,
            LEGEND_SIZE,
            false,
            HPos::Left,
            BLACK,
            Rot::None,
        )?;
    }
    Ok(())
}

/// Lays legend entries out in rows across `width`; returns their top-left offsets (relative to
/// the strip) and the strip height.
fn legend_flow<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    entries: &[LegendEntry],
    width: f64,
) -> (Vec<(f64, f64)>, f64) {
    let mut pos = Vec::with_capacity(entries.len());
    let (mut x, mut row) = (0.0, 0usize);
    let spacing = c.p(18.0);
    for e in entries {
        let w = c.p(SWATCH_W + GAP) + c.text_width(&e.label, LEGEND_SIZE, false).min(width);
        if x > 0.0 && x + w > width {
            x = 0.0;
            row += 1;
        }
        pos.push((x, c.p(LEGEND_ROW) * row as f64));
        x += w + spacing;
    }
    let rows = if entries.is_empty() { 0 } else { row + 1 };
    (pos, c.p(LEGEND_ROW) * rows as f64)
}

fn draw_legend_flow<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    entries: &[LegendEntry],
    x: f64,
    y: f64,
    width: f64,
) -> DrawResult {
    let (pos, _) = legend_flow(c, entries, width);
    for (e, (dx, dy)) in entries.iter().zip(pos) {
        let yc = y + dy + c.p(LEGEND_ROW) / 2.0;
        draw_swatch(c, e.swatch, x + dx, yc)?;
        let label = fit_text(c, &e.label, LEGEND_SIZE, false, width - c.p(SWATCH_W + GAP));
        c.text(
            &label,
            x + dx + c.p(SWATCH_W + GAP),
            yc,
            LEGEND_SIZE,
            false,
            HPos::Left,
            BLACK,
            Rot::None,
        )?;
    }
    Ok(())
}

fn series_entries(series: &[Series], halo: bool) -> Vec<LegendEntry> {
    series
        .iter()
        .filter(|s| !s.label.is_empty())
        .map(|s| LegendEntry {
            label: s.label.clone(),
            swatch: if halo {
                Swatch::HaloLine(line_color(s.color), s.dash)
            } else {
                Swatch::Line(line_color(s.color), s.dash)
            },
        })
        .collect()
}

fn band_entries(bands: &[Band]) -> Vec<LegendEntry> {
    bands
        .iter()
        .filter(|b| !b.label.is_empty())
        .map(|b| LegendEntry {
            label: b.label.clone(),
            swatch: Swatch::Band(line_color(b.color)),
        })
        .collect()
}

fn marker_entries(markers: &[Marker], halo: bool) -> Vec<LegendEntry> {
    markers
        .iter()
        .enumerate()
        .filter(|(_, m)| !m.label.is_empty())
        .map(|(i, m)| LegendEntry {
            label: m.label.clone(),
            swatch: Swatch::Marker(line_color(m.color), i, halo),
        })
        .collect()
}

/// Candidate top-left corners for a `w × h` box inside the frame, in order of preference.
fn box_candidates(f: &Frame, w: f64, h: f64, inset: f64) -> Vec<(f64, f64)> {
    let r = f.px;
    let (xl, xr, xm) = (r.l + inset, r.r - inset - w, (r.l + r.r - w) / 2.0);
    let (yt, yb, ym) = (r.t + inset, r.b - inset - h, (r.t + r.b - h) / 2.0);
    vec![
        (xr, yt),
        (xl, yt),
        (xr, yb),
        (xl, yb),
        (xm, yt),
        (xm, yb),
        (xr, ym),
        (xl, ym),
    ]
}

/// Chooses a position for each box (in order) that covers the fewest sample points and no box
/// placed before it.  Returns the positions and whether all are free of data.
fn place_boxes(
    f: &Frame,
    sizes: &[(f64, f64)],
    samples: &[(f64, f64)],
    inset: f64,
    margin: f64,
) -> (Vec<(f64, f64)>, bool) {
    let mut placed: Vec<Rect> = Vec::new();
    let mut out = Vec::new();
    let mut all_free = true;
    for &(w, h) in sizes {
        let mut best: Option<((f64, f64), usize)> = None;
        for (x, y) in box_candidates(f, w, h, inset) {
            let r = Rect::new(x, y, x + w, y + h);
            if placed.iter().any(|p| p.inflate(margin).intersects(&r)) {
                continue;
            }
            let rr = r.inflate(margin);
            let hits = samples.iter().filter(|p| rr.contains(**p)).count();
            if best.is_none_or(|(_, b)| hits < b) {
                best = Some(((x, y), hits));
            }
        }
        let ((x, y), hits) = best.unwrap_or(((f.px.r - inset - w, f.px.t + inset), usize::MAX));
        all_free &= hits == 0;
        placed.push(Rect::new(x, y, x + w, y + h));
        out.push((x, y));
    }
    (out, all_free)
}

// ---------------------------------------------------------------------------------------------
// Colour bar, hatching, contours, raster images
// ---------------------------------------------------------------------------------------------

const CBAR_W: f64 = 20.0;
const CBAR_GAP: f64 = 18.0;

/// Width (device pixels) the colour bar needs to the right of the plot.
fn colorbar_room<DB: DrawingBackend>(c: &Canvas<'_, DB>, scale: &Scale, label: &str) -> f64 {
    let t = AxisTicks::new((scale.lo, scale.hi), 6);
    let tw = t
        .labels
        .iter()
        .map(|l| c.text_width(l, TICK_SIZE, false))
        .fold(0.0, f64::max);
    let mut w = c.p(CBAR_GAP + CBAR_W + TICK_LEN + GAP) + tw;
    if !label.is_empty() {
        w += c.p(GAP + 4.0) + c.p(LABEL_SIZE) * 0.9;
    }
    w
}

/// Vertical colour bar beside the frame (same height), ticks and rotated label to its right.
fn draw_colorbar<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    frame: &Rect,
    scale: &Scale,
    label: &str,
) -> DrawResult {
    let bar = Rect::new(
        frame.r + c.p(CBAR_GAP),
        frame.t,
        frame.r + c.p(CBAR_GAP + CBAR_W),
        frame.b,
    );
    let rows = bar.h().round().clamp(1.0, 256.0) as usize;
    let step = bar.h() / rows as f64;
    for k in 0..rows {
        let t = (k as f64 + 0.5) / rows as f64;
        let y1 = bar.b - k as f64 * step;
        let y0 = bar.b - (k + 1) as f64 * step;
        c.fill_tile(
            Rect::new(bar.l, y0.floor(), bar.r, y1.ceil()),
            colormap(t).to_rgba(),
            &bar,
        )?;
    }
    c.stroke_rect(bar, BLACK.to_rgba(), 1.0)?;
    let t = AxisTicks::new((scale.lo, scale.hi), 6);
    let mut tw: f64 = 0.0;
    for (v, l) in t.values.iter().zip(&t.labels) {
        let y = bar.b - (v - scale.lo) / (scale.hi - scale.lo) * bar.h();
        c.path(
            &[(bar.r, y), (bar.r + c.p(TICK_LEN), y)],
            BLACK.to_rgba(),
            1.0,
            Dash::Solid,
        )?;
        c.text(
            l,
            bar.r + c.p(TICK_LEN + GAP),
            y,
            TICK_SIZE,
            false,
            HPos::Left,
            BLACK,
            Rot::None,
        )?;
        tw = tw.max(c.text_width(l, TICK_SIZE, false));
    }
    let label = fit_text(c, label, LABEL_SIZE, false, bar.h());
    let x = bar.r + c.p(TICK_LEN + GAP) + tw + c.p(GAP + 4.0) + c.p(LABEL_SIZE) * 0.45;
    c.text(
        &label,
        x,
        (bar.t + bar.b) / 2.0,
        LABEL_SIZE,
        false,
        HPos::Center,
        BLACK,
        Rot::Up,
    )
}

/// Diagonal white hatching inside a device rectangle; the line family is global, so adjacent
/// rectangles join seamlessly.
fn hatch_rect<DB: DrawingBackend>(c: &Canvas<'_, DB>, r: Rect, color: RGBAColor) -> DrawResult {
    if ![r.l, r.t, r.r, r.b].iter().all(|v| v.is_finite()) {
        return Ok(());
    }
    let sp = c.p(7.0);
    let mut k = ((r.l + r.t) / sp).ceil();
    while k * sp <= r.r + r.b {
        let cc = k * sp;
        let xa = r.l.max(cc - r.b);
        let xb = r.r.min(cc - r.t);
        if xb > xa {
            c.path(&[(xa, cc - xa), (xb, cc - xb)], color, 1.0, Dash::Solid)?;
        }
        k += 1.0;
    }
    Ok(())
}

/// Hatching colour that shows on a background: white on dark colours, black on light ones.
fn hatch_color(bg: RGBColor) -> RGBAColor {
    let lum = (0.2126 * bg.0 as f64 + 0.7152 * bg.1 as f64 + 0.0722 * bg.2 as f64) / 255.0;
    if lum > 0.62 {
        rgba(BLACK, 0.4)
    } else {
        rgba(WHITE, 0.6)
    }
}

/// Boundary of the `true` cells of a grid mask as chains of lattice vertices `(i, j)` (cell
/// `(ix, iy)` spans vertices `ix..=ix+1`, `iy..=iy+1`).
fn mask_contours(mask: &[bool], nx: usize, ny: usize) -> Vec<Vec<(usize, usize)>> {
    let at = |ix: isize, iy: isize| -> bool {
        ix >= 0
            && iy >= 0
            && (ix as usize) < nx
            && (iy as usize) < ny
            && mask[iy as usize * nx + ix as usize]
    };
    let mut edges: Vec<((usize, usize), (usize, usize))> = Vec::new();
    for iy in 0..ny {
        for ix in 0..nx {
            if !mask[iy * nx + ix] {
                continue;
            }
            let (i, j) = (ix as isize, iy as isize);
            if !at(i - 1, j) {
                edges.push(((ix, iy), (ix, iy + 1)));
            }
            if !at(i + 1, j) {
                edges.push(((ix + 1, iy), (ix + 1, iy + 1)));
            }
            if !at(i, j - 1) {
                edges.push(((ix, iy), (ix + 1, iy)));
            }
            if !at(i, j + 1) {
                edges.push(((ix, iy + 1), (ix + 1, iy + 1)));
            }
        }
    }
    let mut by_vertex: HashMap<(usize, usize), Vec<usize>> = HashMap::new();
    for (k, (a, b)) in edges.iter().enumerate() {
        by_vertex.entry(*a).or_default().push(k);
        by_vertex.entry(*b).or_default().push(k);
    }
    let mut used = vec![false; edges.len()];
    let mut chains = Vec::new();
    for start in 0..edges.len() {
        if used[start] {
            continue;
        }
        used[start] = true;
        let (a, b) = edges[start];
        let mut chain = vec![a, b];
        let mut cur = b;
        loop {
            let next = by_vertex
                .get(&cur)
                .and_then(|ks| ks.iter().copied().find(|k| !used[*k]));
            let Some(k) = next else { break };
            used[k] = true;
            let (p, q) = edges[k];
            cur = if p == cur { q } else { p };
            chain.push(cur);
        }
        chains.push(chain);
    }
    chains
}

/// Device rectangle of grid cell `(ix, iy)` from cell edges.
fn cell_rect(f: &Frame, xe: &[f64], ye: &[f64], ix: usize, iy: usize) -> Rect {
    let a = f.map(xe[ix], ye[iy]);
    let b = f.map(xe[ix + 1], ye[iy + 1]);
    Rect::new(
        a.0.min(b.0).round(),
        a.1.min(b.1).round(),
        a.0.max(b.0).round(),
        a.1.max(b.1).round(),
    )
}

/// Fills grid cells, merging runs of equal colour along rows.
fn draw_cells<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    f: &Frame,
    xe: &[f64],
    ye: &[f64],
    colors: &[RGBColor],
) -> DrawResult {
    let nx = xe.len() - 1;
    let ny = ye.len() - 1;
    for iy in 0..ny {
        let mut ix = 0;
        while ix < nx {
            let col = colors[iy * nx + ix];
            let start = ix;
            while ix < nx && colors[iy * nx + ix] == col {
                ix += 1;
            }
            let a = cell_rect(f, xe, ye, start, iy);
            let b = cell_rect(f, xe, ye, ix - 1, iy);
            let r = Rect::new(a.l.min(b.l), a.t, a.r.max(b.r), a.b);
            c.fill_tile(r, col.to_rgba(), &f.px)?;
        }
    }
    Ok(())
}

/// Contour (black under white, visible on any colour) and hatching of the `true` cells.
fn draw_mask<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    f: &Frame,
    xe: &[f64],
    ye: &[f64],
    mask: &[bool],
    colors: &[RGBColor],
) -> DrawResult {
    let nx = xe.len() - 1;
    let ny = ye.len() - 1;
    let hatch: Vec<RGBAColor> = colors.iter().map(|c| hatch_color(*c)).collect();
    for iy in 0..ny {
        let mut ix = 0;
        while ix < nx {
            let k = iy * nx + ix;
            if !mask[k] {
                ix += 1;
                continue;
            }
            let start = ix;
            while ix < nx && mask[iy * nx + ix] && hatch[iy * nx + ix] == hatch[k] {
                ix += 1;
            }
            let a = cell_rect(f, xe, ye, start, iy);
            let b = cell_rect(f, xe, ye, ix - 1, iy);
            let r = Rect::new(a.l.min(b.l), a.t, a.r.max(b.r), a.b);
            hatch_rect(c, r, hatch[k])?;
        }
    }
    let chains = mask_contours(mask, nx, ny);
    let px: Vec<Vec<(f64, f64)>> = chains
        .iter()
        .map(|ch| ch.iter().map(|&(i, j)| f.map(xe[i], ye[j])).collect())
        .collect();
    for p in &px {
        c.path(p, BLACK.to_rgba(), 4.5, Dash::Solid)?;
    }
    for p in &px {
        c.path(p, WHITE.to_rgba(), 2.0, Dash::Solid)?;
    }
    Ok(())
}

/// Replaces the placeholder rectangles of embedded rasters by `<image>` elements.
fn splice_images(mut svg: String, images: &[EmbeddedImage]) -> String {
    if images.is_empty() {
        return svg;
    }
    const NS: &str = "xmlns=\"http://www.w3.org/2000/svg\"";
    if let Some(i) = svg.find(NS) {
        svg.insert_str(
            i + NS.len(),
            " xmlns:xlink=\"http://www.w3.org/1999/xlink\"",
        );
    }
    for im in images {
        let needle = format!("fill=\"#{:02X}{:02X}{:02X}\"", im.key.0, im.key.1, im.key.2);
        let Some(at) = svg.find(&needle) else {
            continue;
        };
        let Some(start) = svg[..at].rfind("<rect") else {
            continue;
        };
        let Some(end) = svg[at..].find("/>").map(|e| at + e + 2) else {
            continue;
        };
        let data = base64(&im.png);
        let tag = format!(
            "<image x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" preserveAspectRatio=\"none\" \
             xlink:href=\"data:image/png;base64,{data}\"/>",
            im.x, im.y, im.w, im.h
        );
        svg.replace_range(start..end, &tag);
    }
    svg
}

fn crc32(bytes: &[u8]) -> u32 {
    let mut table = [0u32; 256];
    for (n, slot) in table.iter_mut().enumerate() {
        let mut c = n as u32;
        for _ in 0..8 {
            c = if c & 1 != 0 {
                0xEDB8_8320 ^ (c >> 1)
            } else {
                c >> 1
            };
        }
        *slot = c;
    }
    let mut crc = 0xFFFF_FFFFu32;
    for &b in bytes {
        crc = table[((crc ^ b as u32) & 0xFF) as usize] ^ (crc >> 8);
    }
    crc ^ 0xFFFF_FFFF
}

/// A minimal PNG (8-bit RGB, no filtering, stored deflate blocks) for rasters embedded in SVG.
fn encode_png(w: u32, h: u32, rgb: &[u8]) -> Vec<u8> {
    let row = w as usize * 3;
    let mut raw = Vec::with_capacity((row + 1) * h as usize);
    for y in 0..h as usize {
        raw.push(0u8);
        let line = rgb.get(y * row..(y + 1) * row);
        match line {
            Some(l) => raw.extend_from_slice(l),
            None => raw.extend(std::iter::repeat_n(0u8, row)),
        }
    }
    let mut z = vec![0x78, 0x01];
    let blocks: Vec<&[u8]> = if raw.is_empty() {
        vec![&[][..]]
    } else {
        raw.chunks(65_535).collect()
    };
    let nblocks = blocks.len();
    for (i, blk) in blocks.into_iter().enumerate() {
        z.push(u8::from(i + 1 == nblocks));
        let len = blk.len() as u16;
        z.extend_from_slice(&len.to_le_bytes());
        z.extend_from_slice(&(!len).to_le_bytes());
        z.extend_from_slice(blk);
    }
    let (mut a, mut b) = (1u32, 0u32);
    for &byte in &raw {
        a = (a + byte as u32) % 65_521;
        b = (b + a) % 65_521;
    }
    z.extend_from_slice(&((b << 16) | a).to_be_bytes());

    let mut out = vec![0x89, b'P', b'N', b'G', 0x0D, 0x0A, 0x1A, 0x0A];
    let mut chunk = |kind: &[u8; 4], data: &[u8]| {
        out.extend_from_slice(&(data.len() as u32).to_be_bytes());
        let mut body = kind.to_vec();
        body.extend_from_slice(data);
        out.extend_from_slice(&body);
        out.extend_from_slice(&crc32(&body).to_be_bytes());
    };
    let mut ihdr = Vec::with_capacity(13);
    ihdr.extend_from_slice(&w.to_be_bytes());
    ihdr.extend_from_slice(&h.to_be_bytes());
    ihdr.extend_from_slice(&[8, 2, 0, 0, 0]);
    chunk(b"IHDR", &ihdr);
    chunk(b"IDAT", &z);
    chunk(b"IEND", &[]);
    out
}

fn base64(bytes: &[u8]) -> String {
    const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut s = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let b = [
            chunk[0],
            *chunk.get(1).unwrap_or(&0),
            *chunk.get(2).unwrap_or(&0),
        ];
        let n = ((b[0] as u32) << 16) | ((b[1] as u32) << 8) | b[2] as u32;
        for k in 0..4 {
            if k <= chunk.len() {
                s.push(ALPHABET[((n >> (18 - 6 * k)) & 63) as usize] as char);
            } else {
                s.push('=');
            }
        }
    }
    s
}

// ---------------------------------------------------------------------------------------------
// Line plot
// ---------------------------------------------------------------------------------------------

impl LinePlot {
    fn extents(&self) -> (Extent, Extent) {
        let (mut ex, mut ey) = (Extent::new(), Extent::new());
        let mut add = |p: &(f64, f64)| {
            if p.0.is_finite() && p.1.is_finite() {
                ex.add(p.0);
                ey.add(p.1);
            }
        };
        self.series
            .iter()
            .flat_map(|s| &s.points)
            .for_each(&mut add);
        self.bands
            .iter()
            .flat_map(|b| b.lower.iter().chain(&b.upper))
            .for_each(&mut add);
        self.markers.iter().for_each(|m| add(&(m.x, m.y)));
        (ex, ey)
    }

    fn legend(&self) -> Vec<LegendEntry> {
        let mut e = series_entries(&self.series, false);
        e.extend(band_entries(&self.bands));
        e.extend(marker_entries(&self.markers, false));
        e
    }

    /// Device points where data is drawn (for legend placement).
    fn samples(&self, f: &Frame, step: f64) -> Vec<(f64, f64)> {
        let mut out = Vec::new();
        for s in &self.series {
            for piece in clip_polyline(&s.points, f) {
                let px: Vec<(f64, f64)> = piece.iter().map(|p| f.map(p.0, p.1)).collect();
                densify(&px, step, &mut out);
            }
        }
        for b in &self.bands {
            let poly: Vec<(f64, f64)> = clip_polygon(&band_polygon(b), f)
                .iter()
                .map(|p| f.map(p.0, p.1))
                .collect();
            if poly.len() < 3 {
                continue;
            }
            let mut closed = poly.clone();
            closed.push(poly[0]);
            densify(&closed, step, &mut out);
            let g = 2.0 * step;
            let mut y = f.px.t;
            while y <= f.px.b {
                let mut x = f.px.l;
                while x <= f.px.r {
                    if point_in_polygon((x, y), &poly) {
                        out.push((x, y));
                    }
                    x += g;
                }
                y += g;
            }
        }
        for m in &self.markers {
            if f.inside(m.x, m.y) {
                let p = f.map(m.x, m.y);
                let r = step * 2.0;
                out.extend([
                    p,
                    (p.0 - r, p.1),
                    (p.0 + r, p.1),
                    (p.0, p.1 - r),
                    (p.0, p.1 + r),
                ]);
            }
        }
        out
    }
}

/// Size of the notes box (device pixels).
fn notes_size<DB: DrawingBackend>(c: &Canvas<'_, DB>, notes: &[String], max_w: f64) -> (f64, f64) {
    let w = notes
        .iter()
        .map(|n| c.text_width(n, NOTE_SIZE, false).min(max_w))
        .fold(0.0, f64::max);
    (
        w + c.p(2.0 * LEGEND_PAD),
        c.p(2.0 * LEGEND_PAD - 4.0 + 17.0 * notes.len() as f64),
    )
}

fn draw_notes<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    notes: &[String],
    x: f64,
    y: f64,
    max_w: f64,
) -> DrawResult {
    let (w, h) = notes_size(c, notes, max_w);
    let r = Rect::new(x, y, x + w, y + h);
    c.fill_rect(r, rgba(WHITE, 0.9))?;
    c.stroke_rect(r, RGBColor(200, 200, 200).to_rgba(), 1.0)?;
    for (i, n) in notes.iter().enumerate() {
        let yc = y + c.p(LEGEND_PAD - 2.0 + 17.0 * (i as f64 + 0.5));
        let text = fit_text(c, n, NOTE_SIZE, false, max_w);
        c.text(
            &text,
            x + c.p(LEGEND_PAD),
            yc,
            NOTE_SIZE,
            false,
            HPos::Left,
            TEXT_GREY,
            Rot::None,
        )?;
    }
    Ok(())
}

impl Figure for LinePlot {
    fn size(&self) -> (u32, u32) {
        (900, 650)
    }

    fn draw<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>) -> DrawResult {
        let (w, h) = c.dims();
        let page = Rect::new(0.0, 0.0, w, h);
        let top = draw_title(c, &self.title, page)?;
        let (ex, ey) = self.extents();
        let xpad = if self.markers.is_empty() { 0.0 } else { 0.03 };
        let mut xr = ex.range(xpad);
        let mut yr = ey.range(0.06);
        // Spans beyond the f64 range (values near f64::MAX) cannot be mapped to pixels.
        let too_large = !(xr.1 - xr.0).is_finite() || !(yr.1 - yr.0).is_finite();
        if too_large {
            (xr, yr) = ((0.0, 1.0), (0.0, 1.0));
        }
        let empty = ex.is_empty() || too_large;

        let entries = self.legend();
        let notes: Vec<String> = self
            .notes
            .iter()
            .filter(|n| !n.trim().is_empty())
            .cloned()
            .collect();
        let max_label_w = c.p(300.0);

        // The plot rectangle for a given y range (the y tick labels set the left margin).
        let mut right = w - c.p(PAD + 6.0);
        let frame_for = |yr: (f64, f64), right: f64| -> (Frame, AxisTicks, AxisTicks) {
            let xt = AxisTicks::new(xr, 8);
            let yt = AxisTicks::new(yr, 7);
            let (left, below) = axes_room(c, &yt, &self.x_label, &self.y_label);
            let px = Rect::new(c.p(PAD) + left, top + c.p(8.0), right, h - c.p(PAD) - below);
            (Frame { px, x: xr, y: yr }, xt, yt)
        };
        let (mut frame, mut xt, mut yt) = frame_for(yr, right);

        // A very tall legend goes outside, to the right of the plot.
        let (lw, lh) = legend_size(c, &entries, max_label_w);
        let outside = !entries.is_empty() && lh > 0.6 * frame.px.h();
        if outside {
            right -= lw + c.p(GAP + 4.0);
            (frame, xt, yt) = frame_for(yr, right);
        }
        let mut sizes = Vec::new();
        if !entries.is_empty() && !outside {
            sizes.push((lw, lh));
        }
        let notes_max_w = frame.px.w() * 0.6;
        if !notes.is_empty() {
            sizes.push(notes_size(c, &notes, notes_max_w));
        }
        let inset = c.p(8.0);
        let margin = c.p(3.0);
        let step = c.p(3.0);
        let (mut spots, free) =
            place_boxes(&frame, &sizes, &self.samples(&frame, step), inset, margin);
        if !free && !empty && !sizes.is_empty() {
            // Make room above the data: extend the y range so that the boxes fit at the top.
            let side_by_side = sizes.iter().map(|s| s.0).sum::<f64>()
                + inset * (sizes.len() as f64 + 1.0)
                <= frame.px.w();
            let need = if side_by_side {
                sizes.iter().map(|s| s.1).fold(0.0, f64::max)
            } else {
                sizes.iter().map(|s| s.1).sum::<f64>() + inset
            } + 2.0 * inset;
            let ph = frame.px.h();
            let need = need.min(0.5 * ph);
            yr.1 = yr.0 + (yr.1 - yr.0) * ph / (ph - need);
            (frame, xt, yt) = frame_for(yr, right);
            spots = place_boxes(&frame, &sizes, &self.samples(&frame, step), inset, margin).0;
        }

        draw_grid(c, &frame, &xt, &yt)?;
        let (bands, series, markers) = if too_large {
            (&[][..], &[][..], &[][..])
        } else {
            (&self.bands[..], &self.series[..], &self.markers[..])
        };
        for b in bands {
            draw_band(c, &frame, b)?;
        }
        for s in series {
            draw_series(c, &frame, s, false)?;
        }
        for (i, m) in markers.iter().enumerate() {
            if frame.inside(m.x, m.y) {
                draw_marker(c, frame.map(m.x, m.y), i, line_color(m.color), false)?;
            }
        }
        draw_axes(c, &frame, &xt, &yt, &self.x_label, &self.y_label)?;
        if empty {
            let what = if too_large {
                "values too large to plot"
            } else {
                "no finite data"
            };
            draw_no_data(c, &frame, what)?;
        }
        let mut k = 0;
        if !entries.is_empty() {
            if outside {
                draw_legend_box(c, &entries, right + c.p(GAP + 4.0), frame.px.t, max_label_w)?;
            } else {
                let (x, y) = spots[k];
                k += 1;
                draw_legend_box(c, &entries, x, y, max_label_w)?;
            }
        }
        if !notes.is_empty() {
            let (x, y) = spots[k];
            draw_notes(c, &notes, x, y, notes_max_w)?;
        }
        Ok(())
    }
}

// ---------------------------------------------------------------------------------------------
// Colour map
// ---------------------------------------------------------------------------------------------

/// Cell edges of a grid plot and its data ranges (outer cell edges, in increasing order).
struct GridGeometry {
    xe: Vec<f64>,
    ye: Vec<f64>,
    xr: (f64, f64),
    yr: (f64, f64),
}

fn grid_ranges(xs: &[f64], ys: &[f64]) -> GridGeometry {
    let xe = cell_edges(xs);
    let ye = cell_edges(ys);
    let range = |e: &[f64]| -> (f64, f64) {
        if e.len() < 2 {
            (0.0, 1.0)
        } else {
            let (a, b) = (e[0], e[e.len() - 1]);
            (a.min(b), a.max(b))
        }
    };
    let (xr, yr) = (range(&xe), range(&ye));
    GridGeometry { xe, ye, xr, yr }
}

impl Figure for MapPlot {
    fn size(&self) -> (u32, u32) {
        (900, 650)
    }

    fn draw<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>) -> DrawResult {
        let (w, h) = c.dims();
        let page = Rect::new(0.0, 0.0, w, h);
        let top = draw_title(c, &self.title, page)?;
        let (nx, ny) = (self.xs.len(), self.ys.len());
        let empty = nx == 0 || ny == 0;
        let finite = |v: &Option<f64>| v.filter(|x| x.is_finite());
        let scale = Scale::from_values(self.values.iter().filter_map(finite));
        let GridGeometry { xe, ye, xr, yr } = grid_ranges(&self.xs, &self.ys);

        let mut entries = Vec::new();
        let has_outline = self.outline.iter().any(|b| *b);
        if has_outline && !self.outline_label.is_empty() {
            entries.push(LegendEntry {
                label: self.outline_label.clone(),
                swatch: Swatch::Outline,
            });
        }
        if self.values.iter().any(|v| finite(v).is_none()) {
            entries.push(LegendEntry {
                label: "failed point".to_string(),
                swatch: Swatch::Fill(FAILED_GREY),
            });
        }
        entries.extend(series_entries(&self.series, true));
        entries.extend(marker_entries(&self.markers, true));

        let xt = AxisTicks::new(xr, 8);
        let yt = AxisTicks::new(yr, 7);
        let (left, below) = axes_room(c, &yt, &self.x_label, &self.y_label);
        let l = c.p(PAD) + left;
        let r = w - c.p(PAD) - colorbar_room(c, &scale, &self.colorbar_label);
        let (_, strip_h) = legend_flow(c, &entries, r - l);
        let strip_top = top + c.p(6.0);
        let t = if entries.is_empty() {
            top + c.p(8.0)
        } else {
            strip_top + strip_h + c.p(6.0)
        };
        let frame = Frame {
            px: Rect::new(l, t, r, h - c.p(PAD) - below),
            x: xr,
            y: yr,
        };

        c.fill_rect(frame.px, WHITE.to_rgba())?;
        if !empty {
            let colors: Vec<RGBColor> = self
                .values
                .iter()
                .map(|v| finite(v).map_or(FAILED_GREY, |x| scale.color(x)))
                .collect();
            draw_cells(c, &frame, &xe, &ye, &colors)?;
            if has_outline {
                draw_mask(c, &frame, &xe, &ye, &self.outline, &colors)?;
            }
        }
        for s in &self.series {
            draw_series(c, &frame, s, true)?;
        }
        for (i, m) in self.markers.iter().enumerate() {
            if frame.inside(m.x, m.y) {
                draw_marker(c, frame.map(m.x, m.y), i, line_color(m.color), true)?;
            }
        }
        draw_axes(c, &frame, &xt, &yt, &self.x_label, &self.y_label)?;
        draw_colorbar(c, &frame.px, &scale, &self.colorbar_label)?;
        if empty {
            draw_no_data(c, &frame, "no grid points")?;
        }
        draw_legend_flow(c, &entries, l, strip_top, r - l)
    }
}

// ---------------------------------------------------------------------------------------------
// Region plot (categorical phase diagram)
// ---------------------------------------------------------------------------------------------

impl RegionPlot {
    fn region_name(&self, k: usize) -> String {
        match self.region_names.get(k) {
            Some(n) if !n.is_empty() => n.clone(),
            _ => format!("region {k}"),
        }
    }
}

impl Figure for RegionPlot {
    fn size(&self) -> (u32, u32) {
        (900, 650)
    }

    fn draw<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>) -> DrawResult {
        let (w, h) = c.dims();
        let page = Rect::new(0.0, 0.0, w, h);
        let top = draw_title(c, &self.title, page)?;
        let (nx, ny) = (self.xs.len(), self.ys.len());
        let empty = nx == 0 || ny == 0;
        let GridGeometry { xe, ye, xr, yr } = grid_ranges(&self.xs, &self.ys);

        let mut present: Vec<usize> = self.regions.iter().flatten().copied().collect();
        present.sort_unstable();
        present.dedup();
        let mut entries: Vec<LegendEntry> = present
            .iter()
            .map(|&k| LegendEntry {
                label: self.region_name(k),
                swatch: Swatch::Fill(region_color(k)),
            })
            .collect();
        if self.regions.iter().any(|r| r.is_none()) {
            entries.push(LegendEntry {
                label: "no solution".to_string(),
                swatch: Swatch::Fill(FAILED_GREY),
            });
        }
        entries.extend(series_entries(&self.series, false));
        entries.extend(band_entries(&self.bands));
        entries.extend(marker_entries(&self.markers, false));

        let max_label_w = c.p(260.0);
        let (lw, _) = legend_size(c, &entries, max_label_w);
        let xt = AxisTicks::new(xr, 8);
        let yt = AxisTicks::new(yr, 7);
        let (left, below) = axes_room(c, &yt, &self.x_label, &self.y_label);
        let mut r = w - c.p(PAD);
        if !entries.is_empty() {
            r -= lw + c.p(12.0);
        }
        let frame = Frame {
            px: Rect::new(c.p(PAD) + left, top + c.p(8.0), r, h - c.p(PAD) - below),
            x: xr,
            y: yr,
        };

        c.fill_rect(frame.px, WHITE.to_rgba())?;
        if !empty {
            let colors: Vec<RGBColor> = self
                .regions
                .iter()
                .map(|k| k.map_or(FAILED_GREY, region_color))
                .collect();
            draw_cells(c, &frame, &xe, &ye, &colors)?;
        }
        for b in &self.bands {
            draw_band(c, &frame, b)?;
        }
        for s in &self.series {
            draw_series(c, &frame, s, false)?;
        }
        for (i, m) in self.markers.iter().enumerate() {
            if frame.inside(m.x, m.y) {
                draw_marker(c, frame.map(m.x, m.y), i, line_color(m.color), false)?;
            }
        }
        for (text, x, y) in &self.labels {
            if text.is_empty() || !frame.inside(*x, *y) {
                continue;
            }
            let p = frame.map(*x, *y);
            let tw = c.text_width(text, 14.0, false);
            let bx = Rect::new(
                p.0 - tw / 2.0 - c.p(4.0),
                p.1 - c.p(10.0),
                p.0 + tw / 2.0 + c.p(4.0),
                p.1 + c.p(10.0),
            );
            c.fill_rect(bx, rgba(WHITE, 0.7))?;
            c.text(text, p.0, p.1, 14.0, false, HPos::Center, BLACK, Rot::None)?;
        }
        draw_axes(c, &frame, &xt, &yt, &self.x_label, &self.y_label)?;
        if empty {
            draw_no_data(c, &frame, "no grid points")?;
        }
        if !entries.is_empty() {
            draw_legend_box(c, &entries, r + c.p(12.0), frame.px.t, max_label_w)?;
        }
        Ok(())
    }
}

// ---------------------------------------------------------------------------------------------
// Density map and Fourier amplitudes
// ---------------------------------------------------------------------------------------------

impl DensityPlot {
    /// Bilinear interpolation of the samples at `(x, y)` in nm; `None` where a needed sample is
    /// not finite (nearest finite sample used when available).
    fn sample(&self, x: f64, y: f64) -> Option<f64> {
        let n = self.n;
        let cell = self.fov_nm / n as f64;
        let gx = ((x + self.fov_nm / 2.0) / cell - 0.5).clamp(0.0, (n - 1) as f64);
        let gy = ((y + self.fov_nm / 2.0) / cell - 0.5).clamp(0.0, (n - 1) as f64);
        let (i0, j0) = (gx.floor() as usize, gy.floor() as usize);
        let (i1, j1) = ((i0 + 1).min(n - 1), (j0 + 1).min(n - 1));
        let (fx, fy) = (gx - i0 as f64, gy - j0 as f64);
        let v = |i: usize, j: usize| self.density[j * n + i];
        let (a, b, cc, d) = (v(i0, j0), v(i1, j0), v(i0, j1), v(i1, j1));
        if a.is_finite() && b.is_finite() && cc.is_finite() && d.is_finite() {
            Some((a * (1.0 - fx) + b * fx) * (1.0 - fy) + (cc * (1.0 - fx) + d * fx) * fy)
        } else {
            let near = v(gx.round() as usize, gy.round() as usize);
            near.is_finite().then_some(near)
        }
    }

    /// RGB raster of the map over the field of view, `iw × ih` pixels, top row at `y = +fov/2`.
    fn raster(&self, scale: &Scale, iw: usize, ih: usize) -> Vec<u8> {
        let mut out = Vec::with_capacity(iw * ih * 3);
        let fov = self.fov_nm;
        for py in 0..ih {
            let y = fov / 2.0 - (py as f64 + 0.5) / ih as f64 * fov;
            for px in 0..iw {
                let x = -fov / 2.0 + (px as f64 + 0.5) / iw as f64 * fov;
                let col = self.sample(x, y).map_or(FAILED_GREY, |v| scale.color(v));
                out.extend_from_slice(&[col.0, col.1, col.2]);
            }
        }
        out
    }

    fn k_range(&self) -> f64 {
        if self.k_extent.is_finite() && self.k_extent > 0.0 {
            return self.k_extent;
        }
        let kmax = self
            .peaks
            .iter()
            .filter(|p| p.0.is_finite() && p.1.is_finite())
            .map(|p| p.0.abs().max(p.1.abs()))
            .fold(0.0, f64::max);
        if kmax > 0.0 {
            1.25 * kmax
        } else {
            1.0
        }
    }
}

impl Figure for DensityPlot {
    fn size(&self) -> (u32, u32) {
        (1300, 600)
    }

    fn draw<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>) -> DrawResult {
        let (w, h) = c.dims();
        let page = Rect::new(0.0, 0.0, w, h);
        let top = draw_title(c, &self.title, page)?;
        let empty = self.n == 0;
        let fov = if empty { 1.0 } else { self.fov_nm };
        let scale = Scale::from_values(self.density.iter().copied());
        let kx = self.k_range();
        let xr = (-fov / 2.0, fov / 2.0);
        let kr = (-kx, kx);
        let (x_label, y_label) = ("x (nm)", "y (nm)");
        let (kx_label, ky_label) = ("kx (1/nm)", "ky (1/nm)");

        let header = 16.0;
        let xt = AxisTicks::new(xr, 6);
        let kt = AxisTicks::new(kr, 6);
        let (left_a, below) = axes_room(c, &xt, x_label, y_label);
        let (left_b, _) = axes_room(c, &kt, kx_label, ky_label);
        let cbar = colorbar_room(c, &scale, &self.colorbar_label);
        let panel_gap = c.p(40.0);
        let t = top + c.p(10.0) + c.p(header) + c.p(GAP);
        let avail_h = h - c.p(PAD) - below - t;
        let avail_w = w - 2.0 * c.p(PAD) - left_a - cbar - panel_gap - left_b;
        let side = avail_h.min(avail_w / 2.0).max(c.p(40.0));
        let used = left_a + side + cbar + panel_gap + left_b + side;
        let x0 = (w - used) / 2.0;
        let fa = Frame {
            px: Rect::new(x0 + left_a, t, x0 + left_a + side, t + side),
            x: xr,
            y: xr,
        };
        let bl = fa.px.r + cbar + panel_gap + left_b;
        let fb = Frame {
            px: Rect::new(bl, t, bl + side, t + side),
            x: kr,
            y: kr,
        };
        for (f, text) in [(&fa, "real space"), (&fb, "Fourier amplitudes")] {
            c.text(
                text,
                (f.px.l + f.px.r) / 2.0,
                t - c.p(GAP) - c.cap(header) / 2.0,
                header,
                true,
                HPos::Center,
                BLACK,
                Rot::None,
            )?;
        }

        // Left: the density map.
        c.fill_rect(fa.px, WHITE.to_rgba())?;
        if !empty {
            let (iw, ih) = (fa.px.w().round() as usize, fa.px.h().round() as usize);
            if c.svg {
                // Embedded at about the data resolution (the viewer interpolates further).
                let res = self.n.max(256).min(iw.max(1));
                let img = self.raster(&scale, res, res);
                c.raster(fa.px, res as u32, res as u32, img)?;
            } else {
                let img = self.raster(&scale, iw, ih);
                c.raster(fa.px, iw as u32, ih as u32, img)?;
            }
        }
        draw_axes(c, &fa, &xt, &xt, x_label, y_label)?;
        draw_colorbar(c, &fa.px, &scale, &self.colorbar_label)?;
        if empty {
            draw_no_data(c, &fa, "no density samples")?;
        }

        // Right: Fourier peaks as discs, area proportional to amplitude.
        draw_grid(c, &fb, &kt, &kt)?;
        let (ox, oy) = fb.map(0.0, 0.0);
        let cross = c.p(6.0);
        let grey = RGBColor(120, 120, 120).to_rgba();
        c.path(
            &[(ox - cross, oy), (ox + cross, oy)],
            grey,
            1.0,
            Dash::Solid,
        )?;
        c.path(
            &[(ox, oy - cross), (ox, oy + cross)],
            grey,
            1.0,
            Dash::Solid,
        )?;
        let valid: Vec<&(f64, f64, f64, String)> = self
            .peaks
            .iter()
            .filter(|p| p.0.is_finite() && p.1.is_finite() && p.2.is_finite() && p.2 > 0.0)
            .filter(|p| fb.inside(p.0, p.1))
            .collect();
        let amax = valid.iter().map(|p| p.2).fold(0.0, f64::max);
        let rmax = 0.055 * side;
        let color = line_color(0);
        for p in &valid {
            let r = (rmax * (p.2 / amax).sqrt()).max(c.p(2.0));
            let q = fb.map(p.0, p.1);
            c.disc(q, r, rgba(color, 0.8))?;
            c.ring(q, r, BLACK.to_rgba(), 1.0)?;
        }
        for p in &valid {
            if p.3.is_empty() {
                continue;
            }
            let r = (rmax * (p.2 / amax).sqrt()).max(c.p(2.0));
            let q = fb.map(p.0, p.1);
            let tw = c.text_width(&p.3, NOTE_SIZE, false);
            // Label to the right of the disc, or to the left near the right edge.
            let (x, hp) = if q.0 + r + c.p(4.0) + tw < fb.px.r - c.p(2.0) {
                (q.0 + r + c.p(4.0), HPos::Left)
            } else {
                (q.0 - r - c.p(4.0), HPos::Right)
            };
            c.text(&p.3, x, q.1, NOTE_SIZE, false, hp, BLACK, Rot::None)?;
        }
        draw_axes(c, &fb, &kt, &kt, kx_label, ky_label)?;
        let note = if valid.is_empty() {
            "no peaks".to_string()
        } else {
            format!(
                "disc area \u{221d} amplitude (largest {})",
                fmt_significant(amax, 3)
            )
        };
        let nw = c.text_width(&note, NOTE_SIZE, false);
        let nb = Rect::new(
            fb.px.r - nw - c.p(14.0),
            fb.px.b - c.p(26.0),
            fb.px.r - c.p(6.0),
            fb.px.b - c.p(6.0),
        );
        c.fill_rect(nb, rgba(WHITE, 0.85))?;
        c.text(
            &note,
            nb.r - c.p(4.0),
            (nb.t + nb.b) / 2.0,
            NOTE_SIZE,
            false,
            HPos::Right,
            TEXT_GREY,
            Rot::None,
        )
    }
}

// ---------------------------------------------------------------------------------------------
// Tests
// ---------------------------------------------------------------------------------------------

#[cfg(test)]
mod tests {
    use super::*;
    use std::fs;
    use std::sync::atomic::AtomicU64;

    static COUNTER: AtomicU64 = AtomicU64::new(0);

    fn scratch(tag: &str) -> PathBuf {
        let n = COUNTER.fetch_add(1, Ordering::Relaxed);
        let dir =
            std::env::temp_dir().join(format!("nestor-figures-{tag}-{}-{n}", std::process::id()));
        let _ = fs::remove_dir_all(&dir);
        fs::create_dir_all(&dir).unwrap();
        dir
    }

    fn check_outputs(stem: &Path) {
        let png = fs::read(with_suffix(stem, "png")).unwrap();
        assert!(png.len() > 1000, "png too small: {}", png.len());
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
        let svg = fs::read_to_string(with_suffix(stem, "svg")).unwrap();
        assert!(svg.contains("<svg"));
        assert!(svg.trim_end().ends_with("</svg>"));
        // No temporary files left next to the outputs.
        let dir = stem.parent().unwrap();
        for e in fs::read_dir(dir).unwrap() {
            let name = e.unwrap().file_name().to_string_lossy().into_owned();
            assert!(!name.contains(".tmp-"), "leftover {name}");
        }
    }

    fn curve(f: impl Fn(f64) -> f64, n: usize) -> Vec<(f64, f64)> {
        (0..n)
            .map(|i| {
                let x = i as f64 / (n - 1) as f64;
                (x, f(x))
            })
            .collect()
    }

    fn line_plot() -> LinePlot {
        LinePlot {
            title: "Gap versus temperature".into(),
            x_label: "T (K)".into(),
            y_label: "\u{0394} (meV)".into(),
            series: vec![
                Series {
                    label: "uniform".into(),
                    points: curve(|x| (1.0 - x * x).max(0.0).sqrt(), 60),
                    dash: Dash::Solid,
                    color: 0,
                },
                Series {
                    label: "modulated".into(),
                    points: curve(|x| 0.8 * (1.0 - x).max(0.0).sqrt(), 60),
                    dash: Dash::Dashed,
                    color: 1,
                },
                Series {
                    label: "dotted".into(),
                    points: curve(|x| 0.3 + 0.1 * x, 10),
                    dash: Dash::Dotted,
                    color: 2,
                },
            ],
            markers: vec![Marker {
                label: "T*".into(),
                x: 0.5,
                y: 0.5,
                color: 3,
            }],
            bands: vec![Band {
                label: "metastable".into(),
                lower: curve(|x| 0.1 * x, 20),
                upper: curve(|x| 0.2 + 0.1 * x, 20),
                color: 4,
            }],
            notes: vec!["g = 0.3".into(), "mu = 0".into()],
        }
    }

    fn grid(nx: usize, ny: usize) -> (Vec<f64>, Vec<f64>) {
        (
            (0..nx).map(|i| i as f64 * 0.1).collect(),
            (0..ny).map(|j| 1.0 + j as f64 * 0.05).collect(),
        )
    }

    fn map_plot() -> MapPlot {
        let (xs, ys) = grid(30, 20);
        let mut values = Vec::new();
        let mut outline = Vec::new();
        for y in &ys {
            for x in &xs {
                let v = (x * 2.0).sin() * y;
                values.push(if (*x - 1.5).abs() < 0.05 && (*y - 1.5).abs() < 0.03 {
                    None
                } else {
                    Some(v)
                });
                outline.push((x - 1.5).powi(2) + (y - 1.4).powi(2) < 0.3);
            }
        }
        MapPlot {
            title: "Condensation energy".into(),
            x_label: "mismatch (meV)".into(),
            y_label: "T (K)".into(),
            colorbar_label: "E (meV)".into(),
            xs,
            ys,
            values,
            outline,
            outline_label: "modulated".into(),
            series: vec![Series {
                label: "Tc".into(),
                points: curve(|x| 1.2 + 0.5 * x, 30)
                    .into_iter()
                    .map(|(x, y)| (3.0 * x, y))
                    .collect(),
                dash: Dash::Dashed,
                color: 1,
            }],
            markers: vec![Marker {
                label: "L".into(),
                x: 1.0,
                y: 1.4,
                color: 2,
            }],
        }
    }

    fn region_plot() -> RegionPlot {
        let (xs, ys) = grid(25, 18);
        let mut regions = Vec::new();
        for y in &ys {
            for x in &xs {
                regions.push(if *y > 1.0 + 0.3 * x {
                    Some(0)
                } else if *x > 1.2 {
                    Some(2)
                } else {
                    Some(1)
                });
            }
        }
        regions[3] = None;
        RegionPlot {
            title: "Phase diagram".into(),
            x_label: "mismatch (meV)".into(),
            y_label: "T (K)".into(),
            xs,
            ys,
            regions,
            region_names: vec!["normal".into(), "uniform".into(), "modulated".into()],
            series: vec![Series {
                label: "second order".into(),
                points: curve(|x| 1.0 + 0.3 * 2.4 * x, 20)
                    .into_iter()
                    .map(|(x, y)| (2.4 * x, y))
                    .collect(),
                dash: Dash::Solid,
                color: 6,
            }],
            bands: vec![Band {
                label: "metastable".into(),
                lower: vec![(1.1, 1.0), (1.1, 1.3)],
                upper: vec![(1.3, 1.0), (1.3, 1.3)],
                color: 1,
            }],
            markers: vec![Marker {
                label: "tricritical".into(),
                x: 1.2,
                y: 1.36,
                color: 3,
            }],
            labels: vec![("normal".into(), 0.5, 1.7)],
        }
    }

    fn density_plot(n: usize) -> DensityPlot {
        let fov = 20.0;
        let q = 2.0 * std::f64::consts::PI / 4.0;
        let mut density = Vec::new();
        for j in 0..n {
            for i in 0..n {
                let x = -fov / 2.0 + (i as f64 + 0.5) * fov / n as f64;
                let y = -fov / 2.0 + (j as f64 + 0.5) * fov / n as f64;
                density.push(1.0 + 0.1 * (q * x).cos() + 0.05 * (q * y).cos());
            }
        }
        DensityPlot {
            title: "Charge density".into(),
            fov_nm: fov,
            n,
            density,
            colorbar_label: "n (1/nm\u{b2})".into(),
            peaks: vec![
                (q, 0.0, 0.05, "Q1".into()),
                (-q, 0.0, 0.05, "".into()),
                (0.0, q, 0.025, "Q2".into()),
            ],
            k_extent: 3.0,
        }
    }

    #[test]
    fn line_plot_writes_png_and_svg() {
        let dir = scratch("line");
        let stem = dir.join("line");
        write_line_plot(&line_plot(), &stem).unwrap();
        check_outputs(&stem);
        let svg = fs::read_to_string(with_suffix(&stem, "svg")).unwrap();
        assert!(svg.starts_with("<svg width=\"900\" height=\"650\" viewBox=\"0 0 3600 2600\""));
        // Writing again replaces the files.
        write_line_plot(&line_plot(), &stem).unwrap();
        check_outputs(&stem);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn map_plot_writes_png_and_svg() {
        let dir = scratch("map");
        let stem = dir.join("map");
        write_map_plot(&map_plot(), &stem).unwrap();
        check_outputs(&stem);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn region_plot_writes_png_and_svg() {
        let dir = scratch("region");
        let stem = dir.join("region");
        write_region_plot(&region_plot(), &stem).unwrap();
        check_outputs(&stem);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn density_plot_writes_png_and_svg_with_embedded_image() {
        let dir = scratch("density");
        let stem = dir.join("density");
        write_density_plot(&density_plot(64), &stem).unwrap();
        check_outputs(&stem);
        let svg = fs::read_to_string(with_suffix(&stem, "svg")).unwrap();
        assert!(svg.contains("<image"));
        assert!(svg.contains("data:image/png;base64,iVBORw0KGgo"));
        assert!(!svg.contains("fill=\"#010203\""));
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn degenerate_inputs_do_not_panic() {
        let dir = scratch("degenerate");
        let nan = f64::NAN;
        let lines = [
            LinePlot::default(),
            LinePlot {
                series: vec![Series {
                    label: "nan".into(),
                    points: vec![(nan, nan), (1.0, nan), (f64::INFINITY, 2.0)],
                    ..Default::default()
                }],
                markers: vec![Marker {
                    x: nan,
                    ..Default::default()
                }],
                notes: vec!["".into()],
                ..Default::default()
            },
            LinePlot {
                series: vec![Series {
                    label: "one point".into(),
                    points: vec![(1.0, 2.0)],
                    dash: Dash::Dotted,
                    ..Default::default()
                }],
                bands: vec![Band {
                    label: "degenerate".into(),
                    lower: vec![(1.0, 2.0)],
                    ..Default::default()
                }],
                ..Default::default()
            },
            LinePlot {
                series: vec![Series {
                    label: "gap".into(),
                    points: vec![(0.0, 0.0), (1.0, 1.0), (2.0, nan), (3.0, 1.0), (4.0, 0.0)],
                    ..Default::default()
                }],
                ..Default::default()
            },
        ];
        for (k, p) in lines.iter().enumerate() {
            let stem = dir.join(format!("line{k}"));
            write_line_plot(p, &stem).unwrap();
            check_outputs(&stem);
        }
        let maps = [
            MapPlot::default(),
            MapPlot {
                xs: vec![1.0],
                ys: vec![2.0],
                values: vec![None],
                outline: vec![true],
                outline_label: "x".into(),
                ..Default::default()
            },
            MapPlot {
                xs: vec![0.0, 1.0],
                ys: vec![0.0, 1.0],
                values: vec![Some(nan), Some(1.0), Some(1.0), Some(1.0)],
                ..Default::default()
            },
            MapPlot {
                xs: vec![3.0, 2.0, 1.0],
                ys: vec![0.0],
                values: vec![Some(1.0), Some(2.0), Some(3.0)],
                ..Default::default()
            },
        ];
        for (k, p) in maps.iter().enumerate() {
            let stem = dir.join(format!("map{k}"));
            write_map_plot(p, &stem).unwrap();
            check_outputs(&stem);
        }
        let regions = [
            RegionPlot::default(),
            RegionPlot {
                xs: vec![0.0],
                ys: vec![0.0],
                regions: vec![Some(7)],
                labels: vec![("outside".into(), 5.0, 5.0)],
                ..Default::default()
            },
        ];
        for (k, p) in regions.iter().enumerate() {
            let stem = dir.join(format!("region{k}"));
            write_region_plot(p, &stem).unwrap();
            check_outputs(&stem);
        }
        let mut one = density_plot(1);
        one.peaks.push((nan, 0.0, 1.0, "nan".into()));
        one.k_extent = nan;
        let mut holes = density_plot(8);
        holes.density[5] = nan;
        holes.peaks.clear();
        for (k, p) in [DensityPlot::default(), one, holes].iter().enumerate() {
            let stem = dir.join(format!("density{k}"));
            write_density_plot(p, &stem).unwrap();
            check_outputs(&stem);
        }
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn inconsistent_inputs_are_reported() {
        let dir = scratch("invalid");
        let stem = dir.join("bad");
        let mut m = map_plot();
        m.values.pop();
        let e = write_map_plot(&m, &stem).unwrap_err();
        assert!(matches!(e, FigureError::InvalidInput { .. }), "{e}");
        assert!(e.to_string().contains("bad"));
        let mut m = map_plot();
        m.outline.truncate(3);
        assert!(matches!(
            write_map_plot(&m, &stem),
            Err(FigureError::InvalidInput { .. })
        ));
        let mut m = map_plot();
        m.xs[3] = m.xs[2];
        assert!(matches!(
            write_map_plot(&m, &stem),
            Err(FigureError::InvalidInput { .. })
        ));
        let mut r = region_plot();
        r.ys[0] = f64::NAN;
        assert!(matches!(
            write_region_plot(&r, &stem),
            Err(FigureError::InvalidInput { .. })
        ));
        let mut d = density_plot(4);
        d.density.push(1.0);
        assert!(matches!(
            write_density_plot(&d, &stem),
            Err(FigureError::InvalidInput { .. })
        ));
        let mut d = density_plot(4);
        d.fov_nm = 0.0;
        assert!(matches!(
            write_density_plot(&d, &stem),
            Err(FigureError::InvalidInput { .. })
        ));
        assert_eq!(fs::read_dir(&dir).unwrap().count(), 0);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn missing_directory_fails_without_leftovers() {
        let dir = scratch("missing");
        let stem = dir.join("no-such-dir").join("fig");
        let e = write_line_plot(&line_plot(), &stem).unwrap_err();
        assert!(matches!(e, FigureError::Io { .. }), "{e}");
        assert!(e.to_string().contains("no-such-dir"));
        assert!(write_density_plot(&density_plot(4), &stem).is_err());
        assert_eq!(fs::read_dir(&dir).unwrap().count(), 0);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn ticks_and_labels() {
        let (t, step) = ticks(0.0, 1.0, 5);
        assert_eq!(step, 0.2);
        assert_eq!(t.len(), 6);
        assert_eq!(
            tick_labels(&t, step),
            vec!["0", "0.2", "0.4", "0.6", "0.8", "1.0"]
        );
        let (t, step) = ticks(-2.0, 2.0, 4);
        assert_eq!(tick_labels(&t, step)[0], "\u{2212}2");
        let (t, step) = ticks(0.0, 0.75, 3);
        assert_eq!(step, 0.25);
        assert_eq!(tick_labels(&t, step)[1], "0.25");
        let (t, step) = ticks(0.0, 3e-5, 3);
        assert!(tick_labels(&t, step)[1].contains('e'));
        assert!(ticks(1.0, 1.0, 5).0.is_empty());
        assert!(ticks(f64::NAN, 1.0, 5).0.is_empty());
    }

    #[test]
    fn clipping() {
        let f = Frame {
            px: Rect::new(0.0, 0.0, 100.0, 100.0),
            x: (0.0, 1.0),
            y: (0.0, 1.0),
        };
        let pieces = clip_polyline(&[(-1.0, 0.5), (0.5, 0.5), (2.0, 0.5)], &f);
        assert_eq!(pieces, vec![vec![(0.0, 0.5), (0.5, 0.5), (1.0, 0.5)]]);
        let pieces = clip_polyline(
            &[
                (0.2, 0.2),
                (0.3, 0.3),
                (f64::NAN, 0.0),
                (0.4, 0.4),
                (0.5, 2.0),
                (0.6, 0.5),
            ],
            &f,
        );
        assert_eq!(pieces.len(), 3);
        let square = clip_polygon(&[(-1.0, -1.0), (2.0, -1.0), (2.0, 2.0), (-1.0, 2.0)], &f);
        assert_eq!(square.len(), 4);
        assert!(square.iter().all(|p| f.inside(p.0, p.1)));
        assert!(point_in_polygon((0.5, 0.5), &square));
        assert!(!point_in_polygon((1.5, 0.5), &square));
    }

    #[test]
    fn contours_of_a_mask() {
        // A single cell: one closed chain of 4 edges (5 vertices).
        let chains = mask_contours(&[true], 1, 1);
        assert_eq!(chains.len(), 1);
        assert_eq!(chains[0].len(), 5);
        assert_eq!(chains[0].first(), chains[0].last());
        // An L shape in a 2x2 grid: one chain of 8 edges.
        let chains = mask_contours(&[true, true, true, false], 2, 2);
        assert_eq!(chains.iter().map(|c| c.len() - 1).sum::<usize>(), 8);
        assert!(mask_contours(&[false; 4], 2, 2).is_empty());
    }

    #[test]
    fn colormap_and_png_encoder() {
        assert_eq!(colormap(0.0), RGBColor(0x44, 0x01, 0x54));
        assert_eq!(colormap(1.0), RGBColor(0xFD, 0xE7, 0x25));
        assert_eq!(colormap(f64::NAN), colormap(0.0));
        assert_eq!(crc32(b"123456789"), 0xCBF4_3926);
        let png = encode_png(2, 1, &[255, 0, 0, 0, 0, 255]);
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
        assert_eq!(base64(b"Man"), "TWFu");
        assert_eq!(base64(b"Ma"), "TWE=");
        assert_eq!(base64(b"M"), "TQ==");
    }
}
