//! Legends and note boxes of the figures: swatches, boxed and flowing legends, and the placement
//! of boxes where they cover the least data.

use super::axes::fit_text;
use super::canvas::{rgba, Canvas, Rect, Rot, BLACK, FAILED_GREY, TEXT_GREY, WHITE};
use super::cells::{hatch_color, hatch_rect};
use super::geometry::Frame;
use super::marks::draw_marker;
use super::output::DrawResult;
use super::style::{colormap, line_color, GAP, LEGEND_SIZE, LINE_WIDTH, NOTE_SIZE};
use super::{Band, Dash, Marker, Series};
use plotters::prelude::DrawingBackend;
use plotters::style::text_anchor::HPos;
use plotters::style::{Color, RGBColor};

#[derive(Clone, Copy, Debug)]
pub(super) enum Swatch {
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
pub(super) struct LegendEntry {
    pub(super) label: String,
    pub(super) swatch: Swatch,
}

pub(super) const SWATCH_W: f64 = 30.0;
pub(super) const LEGEND_ROW: f64 = 21.0;
pub(super) const LEGEND_PAD: f64 = 8.0;

pub(super) fn draw_swatch<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    sw: Swatch,
    x: f64,
    yc: f64,
) -> DrawResult {
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
pub(super) fn legend_size<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    entries: &[LegendEntry],
    max_label_w: f64,
) -> (f64, f64) {
    let label_w = c.widest(entries.iter().map(|e| &e.label), LEGEND_SIZE, max_label_w);
    (
        c.p(2.0 * LEGEND_PAD + SWATCH_W + GAP) + label_w,
        c.p(2.0 * LEGEND_PAD - 6.0 + LEGEND_ROW * entries.len() as f64),
    )
}

/// A boxed one-column legend with its top-left corner at `(x, y)`.
pub(super) fn draw_legend_box<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    entries: &[LegendEntry],
    x: f64,
    y: f64,
    max_label_w: f64,
) -> DrawResult {
    let size = legend_size(c, entries, max_label_w);
    draw_box(c, (x, y), size, RGBColor(160, 160, 160))?;
    for (i, e) in entries.iter().enumerate() {
        let yc = y + c.p(LEGEND_PAD - 3.0 + LEGEND_ROW * (i as f64 + 0.5));
        draw_entry(c, e, x + c.p(LEGEND_PAD), yc, max_label_w)?;
    }
    Ok(())
}

/// A light box (90% white) with a thin border, top-left corner at `at`, `size` device pixels.
fn draw_box<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    at: (f64, f64),
    size: (f64, f64),
    border: RGBColor,
) -> DrawResult {
    let r = Rect::new(at.0, at.1, at.0 + size.0, at.1 + size.1);
    c.fill_rect(r, rgba(WHITE, 0.9))?;
    c.stroke_rect(r, border.to_rgba(), 1.0)
}

/// One legend entry: the swatch from `x`, the label (at most `max_label_w` wide) after it,
/// both centred on `yc`.
fn draw_entry<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    e: &LegendEntry,
    x: f64,
    yc: f64,
    max_label_w: f64,
) -> DrawResult {
    draw_swatch(c, e.swatch, x, yc)?;
    let label = fit_text(c, &e.label, LEGEND_SIZE, false, max_label_w);
    let lx = x + c.p(SWATCH_W + GAP);
    c.text(
        &label,
        lx,
        yc,
        LEGEND_SIZE,
        false,
        HPos::Left,
        BLACK,
        Rot::None,
    )
}

/// Lays legend entries out in rows across `width`; returns their top-left offsets (relative to
/// the strip) and the strip height.
pub(super) fn legend_flow<DB: DrawingBackend>(
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

pub(super) fn draw_legend_flow<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    entries: &[LegendEntry],
    x: f64,
    y: f64,
    width: f64,
) -> DrawResult {
    let (pos, _) = legend_flow(c, entries, width);
    for (e, (dx, dy)) in entries.iter().zip(pos) {
        let yc = y + dy + c.p(LEGEND_ROW) / 2.0;
        draw_entry(c, e, x + dx, yc, width - c.p(SWATCH_W + GAP))?;
    }
    Ok(())
}

pub(super) fn series_entries(series: &[Series], halo: bool) -> Vec<LegendEntry> {
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

/// The legend entry of grey cells (failed points, no solution).
pub(super) fn failed_entry(label: &str) -> LegendEntry {
    LegendEntry {
        label: label.to_string(),
        swatch: Swatch::Fill(FAILED_GREY),
    }
}

pub(super) fn band_entries(bands: &[Band]) -> Vec<LegendEntry> {
    bands
        .iter()
        .filter(|b| !b.label.is_empty())
        .map(|b| LegendEntry {
            label: b.label.clone(),
            swatch: Swatch::Band(line_color(b.color)),
        })
        .collect()
}

pub(super) fn marker_entries(markers: &[Marker], halo: bool) -> Vec<LegendEntry> {
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
pub(super) fn box_candidates(f: &Frame, w: f64, h: f64, inset: f64) -> Vec<(f64, f64)> {
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
pub(super) fn place_boxes(
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

/// Size of the notes box (device pixels).
pub(super) fn notes_size<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    notes: &[String],
    max_w: f64,
) -> (f64, f64) {
    let w = c.widest(notes, NOTE_SIZE, max_w);
    (
        w + c.p(2.0 * LEGEND_PAD),
        c.p(2.0 * LEGEND_PAD - 4.0 + 17.0 * notes.len() as f64),
    )
}

/// A box of note lines (grey text) with its top-left corner at `(x, y)`.
pub(super) fn draw_notes<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    notes: &[String],
    x: f64,
    y: f64,
    max_w: f64,
) -> DrawResult {
    draw_box(
        c,
        (x, y),
        notes_size(c, notes, max_w),
        RGBColor(200, 200, 200),
    )?;
    for (i, n) in notes.iter().enumerate() {
        let yc = y + c.p(LEGEND_PAD - 2.0 + 17.0 * (i as f64 + 0.5));
        let text = fit_text(c, n, NOTE_SIZE, false, max_w);
        let tx = x + c.p(LEGEND_PAD);
        c.text(
            &text,
            tx,
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
