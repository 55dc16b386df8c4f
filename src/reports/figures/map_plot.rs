//! The colour map: values on a parameter grid with an outlined, hatched sub-region, curves and
//! markers on top, a colour bar and a legend strip above the plot.

use super::axes::{axes_room, draw_axes, draw_no_data, AxisTicks};
use super::canvas::{Canvas, Rect, FAILED_GREY, WHITE};
use super::cells::{
    colorbar_room, draw_cells, draw_colorbar, draw_mask, grid_ranges, GridGeometry,
};
use super::geometry::Frame;
use super::legend::{
    draw_legend_flow, failed_entry, legend_flow, marker_entries, series_entries, LegendEntry,
    Swatch,
};
use super::marks::{draw_all_series, draw_markers};
use super::output::{DrawResult, Figure};
use super::style::{Scale, PAD};
use super::MapPlot;
use plotters::prelude::DrawingBackend;
use plotters::style::{Color, RGBColor};

impl MapPlot {
    /// Whether any cell is outlined.
    fn has_outline(&self) -> bool {
        self.outline.iter().any(|b| *b)
    }

    /// Legend entries: the outlined region, failed points, curves, markers.
    fn legend(&self) -> Vec<LegendEntry> {
        let mut entries = Vec::new();
        if self.has_outline() && !self.outline_label.is_empty() {
            entries.push(LegendEntry {
                label: self.outline_label.clone(),
                swatch: Swatch::Outline,
            });
        }
        if self.values.iter().any(|v| finite(v).is_none()) {
            entries.push(failed_entry("failed point"));
        }
        entries.extend(series_entries(&self.series, true));
        entries.extend(marker_entries(&self.markers, true));
        entries
    }

    /// The cells in their colours, and the outlined region over them.
    fn draw_grid_cells<DB: DrawingBackend>(
        &self,
        c: &Canvas<'_, DB>,
        frame: &Frame,
        geometry: &GridGeometry,
        scale: &Scale,
    ) -> DrawResult {
        let colors: Vec<RGBColor> = self
            .values
            .iter()
            .map(|v| finite(v).map_or(FAILED_GREY, |x| scale.color(x)))
            .collect();
        let (xe, ye) = (&geometry.xe, &geometry.ye);
        draw_cells(c, frame, xe, ye, &colors)?;
        if self.has_outline() {
            draw_mask(c, frame, xe, ye, &self.outline, &colors)?;
        }
        Ok(())
    }
}

/// A finite value of a cell; `None` for a failed or non-finite one.
fn finite(v: &Option<f64>) -> Option<f64> {
    v.filter(|x| x.is_finite())
}

impl Figure for MapPlot {
    const SIZE: (u32, u32) = (900, 650);

    fn title(&self) -> &str {
        &self.title
    }

    fn draw_body<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>, top: f64) -> DrawResult {
        let (w, h) = c.dims();
        let scale = Scale::from_values(self.values.iter().filter_map(finite));
        let geometry = grid_ranges(&self.xs, &self.ys);
        let empty = geometry.is_empty();
        let entries = self.legend();

        // The legend flows in a strip above the frame, the colour bar sits to its right.
        let xt = AxisTicks::new(geometry.xr, 8);
        let yt = AxisTicks::new(geometry.yr, 7);
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
            x: geometry.xr,
            y: geometry.yr,
        };

        c.fill_rect(frame.px, WHITE.to_rgba())?;
        if !empty {
            self.draw_grid_cells(c, &frame, &geometry, &scale)?;
        }
        draw_all_series(c, &frame, &self.series, true)?;
        draw_markers(c, &frame, &self.markers, true)?;
        draw_axes(c, &frame, &xt, &yt, &self.x_label, &self.y_label)?;
        draw_colorbar(c, &frame.px, &scale, &self.colorbar_label)?;
        if empty {
            draw_no_data(c, &frame, "no grid points")?;
        }
        draw_legend_flow(c, &entries, l, strip_top, r - l)
    }
}
