//! The colour map: values on a parameter grid with an outlined, hatched sub-region, curves and
//! markers on top, a colour bar and a legend strip above the plot.

use super::axes::*;
use super::canvas::*;
use super::cells::*;
use super::geometry::*;
use super::legend::*;
use super::marks::*;
use super::output::*;
use super::style::*;
use super::MapPlot;
use plotters::prelude::DrawingBackend;
use plotters::style::{Color, RGBColor};

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
