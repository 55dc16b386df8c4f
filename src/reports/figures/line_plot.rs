//! The line plot: curves, bands and markers on linear axes, with a legend and notes placed where
//! they cover the least data.

use super::axes::*;
use super::canvas::*;
use super::geometry::*;
use super::legend::*;
use super::marks::*;
use super::output::*;
use super::style::*;
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
