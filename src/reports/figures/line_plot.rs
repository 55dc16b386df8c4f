//! The line plot: curves, bands and markers on linear axes, with a legend and notes placed where
//! they cover the least data.

use super::axes::{axes_room, draw_axes, draw_grid, draw_no_data, AxisTicks};
use super::canvas::{Canvas, Rect};
use super::geometry::{
    band_polygon, clip_polygon, clip_polyline, densify, point_in_polygon, Extent, Frame,
};
use super::legend::{
    band_entries, draw_legend_box, draw_notes, legend_size, marker_entries, notes_size,
    place_boxes, series_entries, LegendEntry,
};
use super::marks::{draw_all_series, draw_band, draw_markers};
use super::output::{DrawResult, Figure};
use super::style::{GAP, PAD};
use super::LinePlot;
use plotters::prelude::DrawingBackend;

impl LinePlot {
    pub(super) fn extents(&self) -> (Extent, Extent) {
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

    pub(super) fn legend(&self) -> Vec<LegendEntry> {
        let mut e = series_entries(&self.series, false);
        e.extend(band_entries(&self.bands));
        e.extend(marker_entries(&self.markers, false));
        e
    }

    /// Device points where data is drawn (for legend placement).
    pub(super) fn samples(&self, f: &Frame, step: f64) -> Vec<(f64, f64)> {
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

/// Largest legend label width, logical pixels.
const MAX_LABEL_W: f64 = 300.0;

/// Where the parts of a line plot go (device pixels), decided before anything is drawn.
struct LineLayout {
    frame: Frame,
    xt: AxisTicks,
    yt: AxisTicks,
    /// Data spans beyond the f64 range (values near f64::MAX): nothing can be mapped to pixels.
    too_large: bool,
    /// Nothing to plot (no finite data, or `too_large`).
    empty: bool,
    entries: Vec<LegendEntry>,
    notes: Vec<String>,
    /// The x of a legend too tall for the frame, drawn outside to its right.
    legend_outside: Option<f64>,
    /// Top-left corners of the boxes inside the frame: the legend (unless outside), then notes.
    spots: Vec<(f64, f64)>,
    notes_max_w: f64,
}

impl LinePlot {
    /// Data ranges of both axes, and whether their spans overflow (then both are `(0, 1)`).
    fn ranges(&self) -> ((f64, f64), (f64, f64), bool, bool) {
        let (ex, ey) = self.extents();
        let xpad = if self.markers.is_empty() { 0.0 } else { 0.03 };
        let mut xr = ex.range(xpad);
        let mut yr = ey.range(0.06);
        let too_large = !(xr.1 - xr.0).is_finite() || !(yr.1 - yr.0).is_finite();
        if too_large {
            (xr, yr) = ((0.0, 1.0), (0.0, 1.0));
        }
        (xr, yr, too_large, ex.is_empty() || too_large)
    }

    /// The plot rectangle for given ranges and right edge (the y tick labels set the left
    /// margin), below `top`.
    fn frame<DB: DrawingBackend>(
        &self,
        c: &Canvas<'_, DB>,
        (xr, yr): ((f64, f64), (f64, f64)),
        top: f64,
        right: f64,
    ) -> (Frame, AxisTicks, AxisTicks) {
        let (_, h) = c.dims();
        let xt = AxisTicks::new(xr, 8);
        let yt = AxisTicks::new(yr, 7);
        let (left, below) = axes_room(c, &yt, &self.x_label, &self.y_label);
        let px = Rect::new(c.p(PAD) + left, top + c.p(8.0), right, h - c.p(PAD) - below);
        (Frame { px, x: xr, y: yr }, xt, yt)
    }

    /// Lays the plot out below `top`: the frame, the legend (outside when very tall) and the
    /// notes, placed where they cover the least data; when they must cover some, the y range is
    /// extended to make room for them at the top.
    fn layout<DB: DrawingBackend>(&self, c: &Canvas<'_, DB>, top: f64) -> LineLayout {
        let (w, _) = c.dims();
        let (xr, mut yr, too_large, empty) = self.ranges();
        let entries = self.legend();
        let notes: Vec<String> = self
            .notes
            .iter()
            .filter(|n| !n.trim().is_empty())
            .cloned()
            .collect();
        let mut right = w - c.p(PAD + 6.0);
        let (mut frame, mut xt, mut yt) = self.frame(c, (xr, yr), top, right);
        let (lw, lh) = legend_size(c, &entries, c.p(MAX_LABEL_W));
        let outside = !entries.is_empty() && lh > 0.6 * frame.px.h();
        if outside {
            right -= lw + c.p(GAP + 4.0);
            (frame, xt, yt) = self.frame(c, (xr, yr), top, right);
        }
        let mut sizes = Vec::new();
        if !entries.is_empty() && !outside {
            sizes.push((lw, lh));
        }
        let notes_max_w = frame.px.w() * 0.6;
        if !notes.is_empty() {
            sizes.push(notes_size(c, &notes, notes_max_w));
        }
        let (inset, margin, step) = (c.p(8.0), c.p(3.0), c.p(3.0));
        let (mut spots, free) =
            place_boxes(&frame, &sizes, &self.samples(&frame, step), inset, margin);
        if !free && !empty && !sizes.is_empty() {
            let ph = frame.px.h();
            let need = room_for_boxes(&sizes, inset, frame.px.w()).min(0.5 * ph);
            yr.1 = yr.0 + (yr.1 - yr.0) * ph / (ph - need);
            (frame, xt, yt) = self.frame(c, (xr, yr), top, right);
            spots = place_boxes(&frame, &sizes, &self.samples(&frame, step), inset, margin).0;
        }
        LineLayout {
            frame,
            xt,
            yt,
            too_large,
            empty,
            entries,
            notes,
            legend_outside: outside.then(|| right + c.p(GAP + 4.0)),
            spots,
            notes_max_w,
        }
    }
}

/// Height (device pixels) to free at the top of a frame `frame_w` wide so that boxes of the
/// given sizes fit there: side by side when they fit across, else stacked.
fn room_for_boxes(sizes: &[(f64, f64)], inset: f64, frame_w: f64) -> f64 {
    let side_by_side =
        sizes.iter().map(|s| s.0).sum::<f64>() + inset * (sizes.len() as f64 + 1.0) <= frame_w;
    (if side_by_side {
        sizes.iter().map(|s| s.1).fold(0.0, f64::max)
    } else {
        sizes.iter().map(|s| s.1).sum::<f64>() + inset
    }) + 2.0 * inset
}

/// Draws the legend and the notes of a laid-out line plot.
fn draw_boxes<DB: DrawingBackend>(c: &Canvas<'_, DB>, lay: &LineLayout) -> DrawResult {
    let max_label_w = c.p(MAX_LABEL_W);
    let mut spots = lay.spots.iter();
    if !lay.entries.is_empty() {
        let (x, y) = match lay.legend_outside {
            Some(x) => (x, lay.frame.px.t),
            None => *spots.next().expect("a spot per box"),
        };
        draw_legend_box(c, &lay.entries, x, y, max_label_w)?;
    }
    if !lay.notes.is_empty() {
        let &(x, y) = spots.next().expect("a spot per box");
        draw_notes(c, &lay.notes, x, y, lay.notes_max_w)?;
    }
    Ok(())
}

impl Figure for LinePlot {
    const SIZE: (u32, u32) = (900, 650);

    fn title(&self) -> &str {
        &self.title
    }

    fn draw_body<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>, top: f64) -> DrawResult {
        let lay = self.layout(c, top);
        let frame = &lay.frame;
        draw_grid(c, frame, &lay.xt, &lay.yt)?;
        if !lay.too_large {
            for b in &self.bands {
                draw_band(c, frame, b)?;
            }
            draw_all_series(c, frame, &self.series, false)?;
            draw_markers(c, frame, &self.markers, false)?;
        }
        draw_axes(c, frame, &lay.xt, &lay.yt, &self.x_label, &self.y_label)?;
        if lay.empty {
            let what = if lay.too_large {
                "values too large to plot"
            } else {
                "no finite data"
            };
            draw_no_data(c, frame, what)?;
        }
        draw_boxes(c, &lay)
    }
}
