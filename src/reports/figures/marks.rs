//! Data marks drawn inside a plot frame: markers of special points, curves and shaded bands.

use super::canvas::{rgba, Canvas, BLACK, WHITE};
use super::geometry::{band_polygon, clip_polygon, clip_polyline, Frame};
use super::output::DrawResult;
use super::style::{line_color, LINE_WIDTH, MARKER_R};
use super::{Band, Dash, Marker, Series};
use plotters::prelude::DrawingBackend;
use plotters::style::{Color, RGBColor};

/// Marker outline (device pixels) for shape index `shape` centred on `p` with radius `r`.
pub(super) fn marker_shape(shape: usize, p: (f64, f64), r: f64) -> Vec<(f64, f64)> {
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
pub(super) fn draw_marker<DB: DrawingBackend>(
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
pub(super) fn draw_series<DB: DrawingBackend>(
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
pub(super) fn draw_band<DB: DrawingBackend>(c: &Canvas<'_, DB>, f: &Frame, b: &Band) -> DrawResult {
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

/// The curves of a plot, in order (see [`draw_series`]).
pub(super) fn draw_all_series<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    f: &Frame,
    series: &[Series],
    halo: bool,
) -> DrawResult {
    for s in series {
        draw_series(c, f, s, halo)?;
    }
    Ok(())
}

/// The markers inside the frame; the shape follows the position in the list.
pub(super) fn draw_markers<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    f: &Frame,
    markers: &[Marker],
    halo: bool,
) -> DrawResult {
    for (i, m) in markers.iter().enumerate() {
        if f.inside(m.x, m.y) {
            draw_marker(c, f.map(m.x, m.y), i, line_color(m.color), halo)?;
        }
    }
    Ok(())
}
