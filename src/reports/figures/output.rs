//! Figure output (the last step of the report pipeline): renders a figure to an in-memory SVG and
//! a supersampled RGB raster, embeds rasters into the SVG as PNG data URIs and writes both files
//! atomically.

use super::super::atomic;
use super::axes::draw_title;
use super::canvas::{Canvas, EmbeddedImage, Rect};
use super::{DrawError, FigureError};
use base64::engine::general_purpose::STANDARD as BASE64;
use base64::Engine as _;
use plotters::prelude::{BitMapBackend, DrawingBackend, IntoDrawingArea, SVGBackend};
use plotters::style::{register_font, FontStyle};
use std::io;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Once;

pub(super) const FAMILY: &str = "sans-serif";
pub(super) static FONT_REGULAR: &[u8] = include_bytes!("../../../assets/DejaVuSans.ttf");
pub(super) static FONT_BOLD: &[u8] = include_bytes!("../../../assets/DejaVuSans-Bold.ttf");

/// Registers the embedded fonts with plotters exactly once; reports whether that worked.
pub(super) fn fonts_ready() -> bool {
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
pub(super) const SUPERSAMPLE: u32 = 2;
/// SVG user units per pixel of the declared size.
pub(super) const SVG_SCALE: u32 = 4;

/// A figure that can draw itself on any plotters backend.
pub(super) trait Figure {
    /// Final size in pixels.
    const SIZE: (u32, u32);
    /// The title, drawn centred at the top.
    fn title(&self) -> &str;
    /// Draws everything below the title, whose lower edge is at `top` (device pixels).
    fn draw_body<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>, top: f64) -> DrawResult;
}

/// Draws a whole figure: the title, then the body below it.
fn draw_figure<F: Figure, DB: DrawingBackend>(fig: &F, c: &mut Canvas<'_, DB>) -> DrawResult {
    let (w, h) = c.dims();
    let top = draw_title(c, fig.title(), Rect::new(0.0, 0.0, w, h))?;
    fig.draw_body(c, top)
}

/// What drawing a figure (or one of its parts) returns.
pub(super) type DrawResult = Result<(), DrawError>;

/// Turns plotters backend errors into [`DrawError::Backend`] (the caller attaches the path).
pub(super) trait OrBackend<T> {
    fn backend(self) -> Result<T, DrawError>;
}

impl<T, E: std::fmt::Display> OrBackend<T> for Result<T, E> {
    fn backend(self) -> Result<T, DrawError> {
        self.map_err(|e| DrawError::Backend(e.to_string()))
    }
}

/// `<stem>.<ext>`, appending rather than replacing (a stem may contain dots).
pub(super) fn with_suffix(stem: &Path, ext: &str) -> PathBuf {
    let mut s = stem.as_os_str().to_owned();
    s.push(".");
    s.push(ext);
    PathBuf::from(s)
}

/// Renders `fig` and writes `<stem>.png` and `<stem>.svg`; nothing is written if drawing fails.
pub(super) fn write_figure<F: Figure>(fig: &F, stem: &Path) -> Result<(), FigureError> {
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
    let (w, h) = F::SIZE;

    // Render both in memory first, so that a drawing failure writes nothing at all.
    let svg = render_svg(fig, w, h).map_err(|source| FigureError::Draw {
        path: svg_path.clone(),
        source,
    })?;
    let png = render_rgb(fig, w, h)
        .and_then(|rgb| encode_png(w, h, &rgb))
        .map_err(|source| FigureError::Draw {
            path: png_path.clone(),
            source,
        })?;
    write_file(&png_path, &png)?;
    write_file(&svg_path, svg.as_bytes())
}

/// Writes one output file atomically (see [`atomic::write_atomic`]).
fn write_file(path: &Path, bytes: &[u8]) -> Result<(), FigureError> {
    atomic::write_atomic(path, bytes).map_err(|source| FigureError::Io {
        path: path.to_path_buf(),
        source,
    })
}

/// Draws the SVG with `SVG_SCALE` user units per final pixel (plotters' coordinates are integers;
/// this keeps curves smooth) and declares the final size on the root element.
pub(super) fn render_svg<F: Figure>(fig: &F, w: u32, h: u32) -> Result<String, DrawError> {
    let (sw, sh) = (w * SVG_SCALE, h * SVG_SCALE);
    let mut text = String::new();
    let images;
    {
        let area = SVGBackend::with_string(&mut text, (sw, sh)).into_drawing_area();
        let mut c = Canvas::new(&area, SVG_SCALE as f64, true);
        c.clear()?;
        draw_figure(fig, &mut c)?;
        images = std::mem::take(&mut c.images);
        area.present().backend()?;
    }
    let drawn = format!("<svg width=\"{sw}\" height=\"{sh}\"");
    if text.starts_with(&drawn) {
        text.replace_range(..drawn.len(), &format!("<svg width=\"{w}\" height=\"{h}\""));
    }
    Ok(splice_images(text, &images))
}

/// Renders at `SUPERSAMPLE` times the size and averages down to `w × h` RGB.
pub(super) fn render_rgb<F: Figure>(fig: &F, w: u32, h: u32) -> Result<Vec<u8>, DrawError> {
    let k = SUPERSAMPLE as usize;
    let (bw, bh) = (w as usize * k, h as usize * k);
    let mut big = vec![255u8; bw * bh * 3];
    {
        let area = BitMapBackend::with_buffer(&mut big, (bw as u32, bh as u32)).into_drawing_area();
        let mut c = Canvas::new(&area, SUPERSAMPLE as f64, false);
        draw_figure(fig, &mut c)?;
        area.present().backend()?;
    }
    Ok(downsample(&big, w as usize, h as usize, k))
}

/// Averages each `k × k` block of the RGB raster `big` (`w·k` pixels wide) into one pixel of a
/// `w × h` raster, rounding to nearest.
fn downsample(big: &[u8], w: usize, h: usize, k: usize) -> Vec<u8> {
    let bw = w * k;
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
    out
}

/// Replaces the placeholder rectangles of embedded rasters by `<image>` elements.
pub(super) fn splice_images(mut svg: String, images: &[EmbeddedImage]) -> String {
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
        let data = BASE64.encode(&im.png);
        let tag = format!(
            "<image x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" preserveAspectRatio=\"none\" \
             xlink:href=\"data:image/png;base64,{data}\"/>",
            im.x, im.y, im.w, im.h
        );
        svg.replace_range(start..end, &tag);
    }
    svg
}

/// Encodes a `w × h` 8-bit RGB raster (row-major, top row first) as PNG in memory.
pub(super) fn encode_png(w: u32, h: u32, rgb: &[u8]) -> Result<Vec<u8>, DrawError> {
    let mut out = Vec::new();
    let mut encoder = png::Encoder::new(&mut out, w, h);
    encoder.set_color(png::ColorType::Rgb);
    encoder.set_depth(png::BitDepth::Eight);
    let mut writer = encoder.write_header()?;
    writer.write_image_data(rgb)?;
    writer.finish()?;
    Ok(out)
}
