//! Titles, axes, grid lines and tick labels of a plot frame (text layout in device pixels).

use super::canvas::{Canvas, Rect, Rot, BLACK, GRID_GREY, TEXT_GREY, WHITE};
use super::geometry::{tick_labels, ticks, Frame};
use super::output::DrawResult;
use super::style::{GAP, LABEL_SIZE, PAD, TICK_LEN, TICK_SIZE, TITLE_SIZE};
use super::{Dash, DrawError};
use plotters::prelude::DrawingBackend;
use plotters::style::text_anchor::HPos;
use plotters::style::Color;

/// Draws the title centred at the top (shrunk to fit the width); returns the y below it.
pub(super) fn draw_title<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    title: &str,
    region: Rect,
) -> Result<f64, DrawError> {
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
pub(super) fn fit_text<DB: DrawingBackend>(
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
pub(super) struct AxisTicks {
    pub(super) values: Vec<f64>,
    pub(super) labels: Vec<String>,
}

impl AxisTicks {
    pub(super) fn new(range: (f64, f64), target: usize) -> Self {
        let (values, step) = ticks(range.0, range.1, target);
        let labels = tick_labels(&values, step);
        AxisTicks { values, labels }
    }
}

/// Device-pixel room the axis decorations need: (left of the frame, below the frame).
pub(super) fn axes_room<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    yt: &AxisTicks,
    x_label: &str,
    y_label: &str,
) -> (f64, f64) {
    let tick_w = c.widest(&yt.labels, TICK_SIZE, f64::INFINITY);
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
pub(super) fn draw_grid<DB: DrawingBackend>(
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
pub(super) fn draw_axes<DB: DrawingBackend>(
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

pub(super) fn draw_no_data<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    f: &Frame,
    what: &str,
) -> DrawResult {
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
