//! The density plot: a real-space density map (a raster) beside its Fourier amplitudes drawn as
//! discs whose area follows the amplitude.

use super::axes::*;
use super::canvas::*;
use super::cells::*;
use super::geometry::*;
use super::output::*;
use super::style::*;
use super::{Dash, DensityPlot};
use plotters::prelude::DrawingBackend;
use plotters::style::text_anchor::HPos;
use plotters::style::{Color, RGBColor};

impl DensityPlot {
    /// Bilinear interpolation of the samples at `(x, y)` in nm; `None` where a needed sample is
    /// not finite (nearest finite sample used when available).
    pub(super) fn sample(&self, x: f64, y: f64) -> Option<f64> {
        let n = self.n;
        let cell = self.fov_nm / n as f64;
        let gx = ((x + self.fov_nm / 2.0) / cell - 0.5).clamp(0.0, (n - 1) as f64);
        let gy = ((y + self.fov_nm / 2.0) / cell - 0.5).clamp(0.0, (n - 1) as f64);
        let (i0, j0) = (gx.floor() as usize, gy.floor() as usize);
        let (i1, j1) = ((i0 + 1).min(n - 1), (j0 + 1).min(n - 1));
        let (fx, fy) = (gx - i0 as f64, gy - j0 as f64);
        let v = |i: usize, j: usize| self.density[j * n + i];
        let (a, b, cc, d) = (v(i0, j0), v(i1, j0), v(i0, j1), v(i1, j1));
        if a.is_finite() && b.is_finite() && cc.is_finite() && d.is_finite() {
            Some((a * (1.0 - fx) + b * fx) * (1.0 - fy) + (cc * (1.0 - fx) + d * fx) * fy)
        } else {
            let near = v(gx.round() as usize, gy.round() as usize);
            near.is_finite().then_some(near)
        }
    }

    /// RGB raster of the map over the field of view, `iw × ih` pixels, top row at `y = +fov/2`.
    pub(super) fn raster(&self, scale: &Scale, iw: usize, ih: usize) -> Vec<u8> {
        let mut out = Vec::with_capacity(iw * ih * 3);
        let fov = self.fov_nm;
        for py in 0..ih {
            let y = fov / 2.0 - (py as f64 + 0.5) / ih as f64 * fov;
            for px in 0..iw {
                let x = -fov / 2.0 + (px as f64 + 0.5) / iw as f64 * fov;
                let col = self.sample(x, y).map_or(FAILED_GREY, |v| scale.color(v));
                out.extend_from_slice(&[col.0, col.1, col.2]);
            }
        }
        out
    }

    pub(super) fn k_range(&self) -> f64 {
        if self.k_extent.is_finite() && self.k_extent > 0.0 {
            return self.k_extent;
        }
        let kmax = self
            .peaks
            .iter()
            .filter(|p| p.0.is_finite() && p.1.is_finite())
            .map(|p| p.0.abs().max(p.1.abs()))
            .fold(0.0, f64::max);
        if kmax > 0.0 {
            1.25 * kmax
        } else {
            1.0
        }
    }
}

impl Figure for DensityPlot {
    fn size(&self) -> (u32, u32) {
        (1300, 600)
    }

    fn draw<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>) -> DrawResult {
        let (w, h) = c.dims();
        let page = Rect::new(0.0, 0.0, w, h);
        let top = draw_title(c, &self.title, page)?;
        let empty = self.n == 0;
        let fov = if empty { 1.0 } else { self.fov_nm };
        let scale = Scale::from_values(self.density.iter().copied());
        let kx = self.k_range();
        let xr = (-fov / 2.0, fov / 2.0);
        let kr = (-kx, kx);
        let (x_label, y_label) = ("x (nm)", "y (nm)");
        let (kx_label, ky_label) = ("kx (1/nm)", "ky (1/nm)");

        let header = 16.0;
        let xt = AxisTicks::new(xr, 6);
        let kt = AxisTicks::new(kr, 6);
        let (left_a, below) = axes_room(c, &xt, x_label, y_label);
        let (left_b, _) = axes_room(c, &kt, kx_label, ky_label);
        let cbar = colorbar_room(c, &scale, &self.colorbar_label);
        let panel_gap = c.p(40.0);
        let t = top + c.p(10.0) + c.p(header) + c.p(GAP);
        let avail_h = h - c.p(PAD) - below - t;
        let avail_w = w - 2.0 * c.p(PAD) - left_a - cbar - panel_gap - left_b;
        let side = avail_h.min(avail_w / 2.0).max(c.p(40.0));
        let used = left_a + side + cbar + panel_gap + left_b + side;
        let x0 = (w - used) / 2.0;
        let fa = Frame {
            px: Rect::new(x0 + left_a, t, x0 + left_a + side, t + side),
            x: xr,
            y: xr,
        };
        let bl = fa.px.r + cbar + panel_gap + left_b;
        let fb = Frame {
            px: Rect::new(bl, t, bl + side, t + side),
            x: kr,
            y: kr,
        };
        for (f, text) in [(&fa, "real space"), (&fb, "Fourier amplitudes")] {
            c.text(
                text,
                (f.px.l + f.px.r) / 2.0,
                t - c.p(GAP) - c.cap(header) / 2.0,
                header,
                true,
                HPos::Center,
                BLACK,
                Rot::None,
            )?;
        }

        // Left: the density map.
        c.fill_rect(fa.px, WHITE.to_rgba())?;
        if !empty {
            let (iw, ih) = (fa.px.w().round() as usize, fa.px.h().round() as usize);
            if c.svg {
                // Embedded at about the data resolution (the viewer interpolates further).
                let res = self.n.max(256).min(iw.max(1));
                let img = self.raster(&scale, res, res);
                c.raster(fa.px, res as u32, res as u32, img)?;
            } else {
                let img = self.raster(&scale, iw, ih);
                c.raster(fa.px, iw as u32, ih as u32, img)?;
            }
        }
        draw_axes(c, &fa, &xt, &xt, x_label, y_label)?;
        draw_colorbar(c, &fa.px, &scale, &self.colorbar_label)?;
        if empty {
            draw_no_data(c, &fa, "no density samples")?;
        }

        // Right: Fourier peaks as discs, area proportional to amplitude.
        draw_grid(c, &fb, &kt, &kt)?;
        let (ox, oy) = fb.map(0.0, 0.0);
        let cross = c.p(6.0);
        let grey = RGBColor(120, 120, 120).to_rgba();
        c.path(
            &[(ox - cross, oy), (ox + cross, oy)],
            grey,
            1.0,
            Dash::Solid,
        )?;
        c.path(
            &[(ox, oy - cross), (ox, oy + cross)],
            grey,
            1.0,
            Dash::Solid,
        )?;
        let valid: Vec<&(f64, f64, f64, String)> = self
            .peaks
            .iter()
            .filter(|p| p.0.is_finite() && p.1.is_finite() && p.2.is_finite() && p.2 > 0.0)
            .filter(|p| fb.inside(p.0, p.1))
            .collect();
        let amax = valid.iter().map(|p| p.2).fold(0.0, f64::max);
        let rmax = 0.055 * side;
        let color = line_color(0);
        for p in &valid {
            let r = (rmax * (p.2 / amax).sqrt()).max(c.p(2.0));
            let q = fb.map(p.0, p.1);
            c.disc(q, r, rgba(color, 0.8))?;
            c.ring(q, r, BLACK.to_rgba(), 1.0)?;
        }
        for p in &valid {
            if p.3.is_empty() {
                continue;
            }
            let r = (rmax * (p.2 / amax).sqrt()).max(c.p(2.0));
            let q = fb.map(p.0, p.1);
            let tw = c.text_width(&p.3, NOTE_SIZE, false);
            // Label to the right of the disc, or to the left near the right edge.
            let (x, hp) = if q.0 + r + c.p(4.0) + tw < fb.px.r - c.p(2.0) {
                (q.0 + r + c.p(4.0), HPos::Left)
            } else {
                (q.0 - r - c.p(4.0), HPos::Right)
            };
            c.text(&p.3, x, q.1, NOTE_SIZE, false, hp, BLACK, Rot::None)?;
        }
        draw_axes(c, &fb, &kt, &kt, kx_label, ky_label)?;
        let note = if valid.is_empty() {
            "no peaks".to_string()
        } else {
            format!(
                "disc area \u{221d} amplitude (largest {})",
                fmt_significant(amax, 3)
            )
        };
        let nw = c.text_width(&note, NOTE_SIZE, false);
        let nb = Rect::new(
            fb.px.r - nw - c.p(14.0),
            fb.px.b - c.p(26.0),
            fb.px.r - c.p(6.0),
            fb.px.b - c.p(6.0),
        );
        c.fill_rect(nb, rgba(WHITE, 0.85))?;
        c.text(
            &note,
            nb.r - c.p(4.0),
            (nb.t + nb.b) / 2.0,
            NOTE_SIZE,
            false,
            HPos::Right,
            TEXT_GREY,
            Rot::None,
        )
    }
}
