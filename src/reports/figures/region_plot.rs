//! The region plot: a categorical phase diagram (shaded regions, transition lines, bands, special
//! points and labels) with a boxed legend to the right.

use super::axes::{axes_room, draw_axes, draw_no_data, AxisTicks};
use super::canvas::{rgba, Canvas, Rect, Rot, BLACK, FAILED_GREY, WHITE};
use super::cells::{draw_cells, grid_ranges, GridGeometry};
use super::geometry::Frame;
use super::legend::{
    band_entries, draw_legend_box, failed_entry, legend_size, marker_entries, series_entries,
    LegendEntry, Swatch,
};
use super::marks::{draw_all_series, draw_band, draw_marker};
use super::output::{DrawResult, Figure};
use super::style::{line_color, region_color, PAD};
use super::RegionPlot;
use plotters::prelude::DrawingBackend;
use plotters::style::text_anchor::HPos;
use plotters::style::{Color, RGBColor};

/// Largest legend label width, logical pixels.
const MAX_LABEL_W: f64 = 260.0;
/// Font size of the text labels inside the regions, logical pixels.
const LABEL_TEXT_SIZE: f64 = 14.0;

impl RegionPlot {
    pub(super) fn region_name(&self, k: usize) -> String {
        match self.region_names.get(k) {
            Some(n) if !n.is_empty() => n.clone(),
            _ => format!("region {k}"),
        }
    }

    /// Legend entries: the regions present (in index order), cells without a solution, lines,
    /// bands, markers.
    fn legend(&self) -> Vec<LegendEntry> {
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
            entries.push(failed_entry("no solution"));
        }
        entries.extend(series_entries(&self.series, false));
        entries.extend(band_entries(&self.bands));
        entries.extend(marker_entries(&self.markers, false));
        entries
    }

    /// The markers inside the frame; a marker takes the shape of the first marker of its colour
    /// (markers of one kind, such as a special point on each side of a diagram, look alike and
    /// share the legend entry of the first).
    fn draw_markers<DB: DrawingBackend>(&self, c: &Canvas<'_, DB>, frame: &Frame) -> DrawResult {
        for m in &self.markers {
            if !frame.inside(m.x, m.y) {
                continue;
            }
            let shape = self
                .markers
                .iter()
                .position(|o| o.color == m.color)
                .unwrap_or(0);
            draw_marker(c, frame.map(m.x, m.y), shape, line_color(m.color), false)?;
        }
        Ok(())
    }

    /// The text labels inside the frame, each on a light box.
    fn draw_labels<DB: DrawingBackend>(&self, c: &Canvas<'_, DB>, frame: &Frame) -> DrawResult {
        for (text, x, y) in &self.labels {
            if text.is_empty() || !frame.inside(*x, *y) {
                continue;
            }
            let p = frame.map(*x, *y);
            let tw = c.text_width(text, LABEL_TEXT_SIZE, false);
            let bx = Rect::new(
                p.0 - tw / 2.0 - c.p(4.0),
                p.1 - c.p(10.0),
                p.0 + tw / 2.0 + c.p(4.0),
                p.1 + c.p(10.0),
            );
            c.fill_rect(bx, rgba(WHITE, 0.7))?;
            let size = LABEL_TEXT_SIZE;
            c.text(text, p.0, p.1, size, false, HPos::Center, BLACK, Rot::None)?;
        }
        Ok(())
    }
}

impl Figure for RegionPlot {
    const SIZE: (u32, u32) = (900, 650);

    fn title(&self) -> &str {
        &self.title
    }

    fn draw_body<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>, top: f64) -> DrawResult {
        let (w, h) = c.dims();
        let geometry = grid_ranges(&self.xs, &self.ys);
        let empty = geometry.is_empty();
        let GridGeometry { xe, ye, xr, yr } = geometry;
        let entries = self.legend();

        // The legend box sits to the right of the frame.
        let max_label_w = c.p(MAX_LABEL_W);
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
        draw_all_series(c, &frame, &self.series, false)?;
        self.draw_markers(c, &frame)?;
        self.draw_labels(c, &frame)?;
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
