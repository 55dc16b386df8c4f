//! Grid plots: cell rectangles and their fills, the colour bar, hatching and the contour of a
//! cell mask (used by the colour map and the region plot).

use super::axes::{fit_text, AxisTicks};
use super::canvas::{rgba, Canvas, Rect, Rot, BLACK, WHITE};
use super::geometry::{cell_edges, Frame};
use super::output::DrawResult;
use super::style::{colormap, Scale, GAP, LABEL_SIZE, TICK_LEN, TICK_SIZE};
use super::Dash;
use plotters::prelude::DrawingBackend;
use plotters::style::text_anchor::HPos;
use plotters::style::{Color, RGBAColor, RGBColor};
use std::collections::HashMap;

pub(super) const CBAR_W: f64 = 20.0;
pub(super) const CBAR_GAP: f64 = 18.0;

/// Width (device pixels) the colour bar needs to the right of the plot.
pub(super) fn colorbar_room<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    scale: &Scale,
    label: &str,
) -> f64 {
    let t = AxisTicks::new((scale.lo, scale.hi), 6);
    let tw = c.widest(&t.labels, TICK_SIZE, f64::INFINITY);
    let mut w = c.p(CBAR_GAP + CBAR_W + TICK_LEN + GAP) + tw;
    if !label.is_empty() {
        w += c.p(GAP + 4.0) + c.p(LABEL_SIZE) * 0.9;
    }
    w
}

/// Vertical colour bar beside the frame (same height), ticks and rotated label to its right.
pub(super) fn draw_colorbar<DB: DrawingBackend>(
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
pub(super) fn hatch_rect<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    r: Rect,
    color: RGBAColor,
) -> DrawResult {
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
pub(super) fn hatch_color(bg: RGBColor) -> RGBAColor {
    let lum = (0.2126 * bg.0 as f64 + 0.7152 * bg.1 as f64 + 0.0722 * bg.2 as f64) / 255.0;
    if lum > 0.62 {
        rgba(BLACK, 0.4)
    } else {
        rgba(WHITE, 0.6)
    }
}

/// Boundary of the `true` cells of a grid mask as chains of lattice vertices `(i, j)` (cell
/// `(ix, iy)` spans vertices `ix..=ix+1`, `iy..=iy+1`).
pub(super) fn mask_contours(mask: &[bool], nx: usize, ny: usize) -> Vec<Vec<(usize, usize)>> {
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
pub(super) fn cell_rect(f: &Frame, xe: &[f64], ye: &[f64], ix: usize, iy: usize) -> Rect {
    let a = f.map(xe[ix], ye[iy]);
    let b = f.map(xe[ix + 1], ye[iy + 1]);
    Rect::new(
        a.0.min(b.0).round(),
        a.1.min(b.1).round(),
        a.0.max(b.0).round(),
        a.1.max(b.1).round(),
    )
}

/// Runs of consecutive cells along each row with the same `Some` key: `(iy, first ix, last ix,
/// key)`; cells whose key is `None` are left out.
fn row_runs<K: PartialEq + Copy>(
    nx: usize,
    ny: usize,
    key: impl Fn(usize) -> Option<K>,
) -> Vec<(usize, usize, usize, K)> {
    let mut runs = Vec::new();
    for iy in 0..ny {
        let mut ix = 0;
        while ix < nx {
            let Some(k) = key(iy * nx + ix) else {
                ix += 1;
                continue;
            };
            let start = ix;
            while ix < nx && key(iy * nx + ix) == Some(k) {
                ix += 1;
            }
            runs.push((iy, start, ix - 1, k));
        }
    }
    runs
}

/// Device rectangle covering the cells `first..=last` of row `iy`.
fn run_rect(f: &Frame, xe: &[f64], ye: &[f64], iy: usize, first: usize, last: usize) -> Rect {
    let a = cell_rect(f, xe, ye, first, iy);
    let b = cell_rect(f, xe, ye, last, iy);
    Rect::new(a.l.min(b.l), a.t, a.r.max(b.r), a.b)
}

/// Fills grid cells, merging runs of equal colour along rows.
pub(super) fn draw_cells<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    f: &Frame,
    xe: &[f64],
    ye: &[f64],
    colors: &[RGBColor],
) -> DrawResult {
    let (nx, ny) = (xe.len() - 1, ye.len() - 1);
    for (iy, first, last, col) in row_runs(nx, ny, |k| Some(colors[k])) {
        let r = run_rect(f, xe, ye, iy, first, last);
        c.fill_tile(r, col.to_rgba(), &f.px)?;
    }
    Ok(())
}

/// Contour (black under white, visible on any colour) and hatching of the `true` cells.
pub(super) fn draw_mask<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    f: &Frame,
    xe: &[f64],
    ye: &[f64],
    mask: &[bool],
    colors: &[RGBColor],
) -> DrawResult {
    let (nx, ny) = (xe.len() - 1, ye.len() - 1);
    let hatch: Vec<RGBAColor> = colors.iter().map(|c| hatch_color(*c)).collect();
    for (iy, first, last, color) in row_runs(nx, ny, |k| mask[k].then_some(hatch[k])) {
        hatch_rect(c, run_rect(f, xe, ye, iy, first, last), color)?;
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

/// Cell edges of a grid plot and its data ranges (outer cell edges, in increasing order).
pub(super) struct GridGeometry {
    pub(super) xe: Vec<f64>,
    pub(super) ye: Vec<f64>,
    pub(super) xr: (f64, f64),
    pub(super) yr: (f64, f64),
}

impl GridGeometry {
    /// Whether the grid has no cells (an axis without points).
    pub(super) fn is_empty(&self) -> bool {
        self.xe.is_empty() || self.ye.is_empty()
    }
}

/// Cell edges and data ranges of a grid with cell centres `xs` × `ys`.
pub(super) fn grid_ranges(xs: &[f64], ys: &[f64]) -> GridGeometry {
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
