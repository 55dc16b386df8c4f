//! The density plot: a real-space density map (a raster) beside its Fourier amplitudes drawn as
//! discs whose area follows the amplitude.

use super::axes::{axes_room, draw_axes, draw_grid, draw_no_data, AxisTicks};
use super::canvas::{rgba, Canvas, Rect, Rot, BLACK, FAILED_GREY, TEXT_GREY, WHITE};
use super::cells::{colorbar_room, draw_colorbar};
use super::geometry::{fmt_significant, Frame};
use super::output::{DrawResult, Figure};
use super::style::{line_color, Scale, GAP, NOTE_SIZE, PAD};
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

/// Axis labels of the two panels.
const X_LABEL: &str = "x (nm)";
const Y_LABEL: &str = "y (nm)";
const KX_LABEL: &str = "kx (1/nm)";
const KY_LABEL: &str = "ky (1/nm)";
/// Font size of the panel headers, logical pixels.
const HEADER_SIZE: f64 = 16.0;

/// The two square panels of a density plot (device pixels) and their ticks.
struct Panels {
    /// Real space, `[-fov/2, fov/2]^2` in nm.
    map: Frame,
    /// Fourier space, `[-k, k]^2` in 1/nm.
    fourier: Frame,
    xt: AxisTicks,
    kt: AxisTicks,
    /// Side of each panel.
    side: f64,
}

/// A Fourier peak `(kx, ky, amplitude, label)`.
type Peak = (f64, f64, f64, String);

impl DensityPlot {
    /// Lays out the two panels side by side below `top`, centred, with room for the axes, the
    /// colour bar of the map and the panel headers.
    fn panels<DB: DrawingBackend>(&self, c: &Canvas<'_, DB>, top: f64, scale: &Scale) -> Panels {
        let (w, h) = c.dims();
        let fov = if self.n == 0 { 1.0 } else { self.fov_nm };
        let kx = self.k_range();
        let xr = (-fov / 2.0, fov / 2.0);
        let kr = (-kx, kx);
        let xt = AxisTicks::new(xr, 6);
        let kt = AxisTicks::new(kr, 6);
        let (left_a, below) = axes_room(c, &xt, X_LABEL, Y_LABEL);
        let (left_b, _) = axes_room(c, &kt, KX_LABEL, KY_LABEL);
        let cbar = colorbar_room(c, scale, &self.colorbar_label);
        let panel_gap = c.p(40.0);
        let t = top + c.p(10.0) + c.p(HEADER_SIZE) + c.p(GAP);
        let avail_h = h - c.p(PAD) - below - t;
        let avail_w = w - 2.0 * c.p(PAD) - left_a - cbar - panel_gap - left_b;
        let side = avail_h.min(avail_w / 2.0).max(c.p(40.0));
        let used = left_a + side + cbar + panel_gap + left_b + side;
        let x0 = (w - used) / 2.0;
        let map = Frame {
            px: Rect::new(x0 + left_a, t, x0 + left_a + side, t + side),
            x: xr,
            y: xr,
        };
        let bl = map.px.r + cbar + panel_gap + left_b;
        let fourier = Frame {
            px: Rect::new(bl, t, bl + side, t + side),
            x: kr,
            y: kr,
        };
        Panels {
            map,
            fourier,
            xt,
            kt,
            side,
        }
    }

    /// Left panel: the density as a raster, its axes and colour bar.
    fn draw_map<DB: DrawingBackend>(
        &self,
        c: &mut Canvas<'_, DB>,
        p: &Panels,
        scale: &Scale,
    ) -> DrawResult {
        let fa = &p.map;
        c.fill_rect(fa.px, WHITE.to_rgba())?;
        if self.n > 0 {
            let (iw, ih) = (fa.px.w().round() as usize, fa.px.h().round() as usize);
            if c.svg {
                // Embedded at about the data resolution (the viewer interpolates further).
                let res = self.n.max(256).min(iw.max(1));
                let img = self.raster(scale, res, res);
                c.raster(fa.px, res as u32, res as u32, img)?;
            } else {
                let img = self.raster(scale, iw, ih);
                c.raster(fa.px, iw as u32, ih as u32, img)?;
            }
        }
        draw_axes(c, fa, &p.xt, &p.xt, X_LABEL, Y_LABEL)?;
        draw_colorbar(c, &fa.px, scale, &self.colorbar_label)?;
        if self.n == 0 {
            draw_no_data(c, fa, "no density samples")?;
        }
        Ok(())
    }

    /// The peaks drawn in the Fourier panel: finite, positive amplitude, inside the panel.
    fn visible_peaks(&self, fb: &Frame) -> Vec<&Peak> {
        self.peaks
            .iter()
            .filter(|p| p.0.is_finite() && p.1.is_finite() && p.2.is_finite() && p.2 > 0.0)
            .filter(|p| fb.inside(p.0, p.1))
            .collect()
    }

    /// Right panel: Fourier peaks as discs, area proportional to amplitude, with their labels,
    /// the axes and a note on the scale.
    fn draw_fourier<DB: DrawingBackend>(&self, c: &Canvas<'_, DB>, p: &Panels) -> DrawResult {
        let fb = &p.fourier;
        draw_grid(c, fb, &p.kt, &p.kt)?;
        draw_origin_cross(c, fb)?;
        let valid = self.visible_peaks(fb);
        let amax = valid.iter().map(|p| p.2).fold(0.0, f64::max);
        let rmax = 0.055 * p.side;
        let radius = |a: f64| (rmax * (a / amax).sqrt()).max(c.p(2.0));
        let color = line_color(0);
        for pk in &valid {
            let q = fb.map(pk.0, pk.1);
            c.disc(q, radius(pk.2), rgba(color, 0.8))?;
            c.ring(q, radius(pk.2), BLACK.to_rgba(), 1.0)?;
        }
        for pk in valid.iter().filter(|pk| !pk.3.is_empty()) {
            draw_peak_label(c, fb, pk, radius(pk.2))?;
        }
        draw_axes(c, fb, &p.kt, &p.kt, KX_LABEL, KY_LABEL)?;
        let note = if valid.is_empty() {
            "no peaks".to_string()
        } else {
            format!(
                "disc area \u{221d} amplitude (largest {})",
                fmt_significant(amax, 3)
            )
        };
        draw_corner_note(c, fb, &note)
    }
}

/// A small grey cross at k = 0.
fn draw_origin_cross<DB: DrawingBackend>(c: &Canvas<'_, DB>, fb: &Frame) -> DrawResult {
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
    )
}

/// The label of a peak drawn as a disc of radius `r`: to the right of the disc, or to the left
/// near the right edge of the panel.
fn draw_peak_label<DB: DrawingBackend>(
    c: &Canvas<'_, DB>,
    fb: &Frame,
    pk: &Peak,
    r: f64,
) -> DrawResult {
    let q = fb.map(pk.0, pk.1);
    let tw = c.text_width(&pk.3, NOTE_SIZE, false);
    let (x, hp) = if q.0 + r + c.p(4.0) + tw < fb.px.r - c.p(2.0) {
        (q.0 + r + c.p(4.0), HPos::Left)
    } else {
        (q.0 - r - c.p(4.0), HPos::Right)
    };
    c.text(&pk.3, x, q.1, NOTE_SIZE, false, hp, BLACK, Rot::None)
}

/// A grey note on a light box in the lower right corner of a frame.
fn draw_corner_note<DB: DrawingBackend>(c: &Canvas<'_, DB>, f: &Frame, note: &str) -> DrawResult {
    let nw = c.text_width(note, NOTE_SIZE, false);
    let nb = Rect::new(
        f.px.r - nw - c.p(14.0),
        f.px.b - c.p(26.0),
        f.px.r - c.p(6.0),
        f.px.b - c.p(6.0),
    );
    c.fill_rect(nb, rgba(WHITE, 0.85))?;
    c.text(
        note,
        nb.r - c.p(4.0),
        (nb.t + nb.b) / 2.0,
        NOTE_SIZE,
        false,
        HPos::Right,
        TEXT_GREY,
        Rot::None,
    )
}

impl Figure for DensityPlot {
    const SIZE: (u32, u32) = (1300, 600);

    fn title(&self) -> &str {
        &self.title
    }

    fn draw_body<DB: DrawingBackend>(&self, c: &mut Canvas<'_, DB>, top: f64) -> DrawResult {
        let scale = Scale::from_values(self.density.iter().copied());
        let panels = self.panels(c, top, &scale);
        let t = panels.map.px.t;
        for (f, text) in [
            (&panels.map, "real space"),
            (&panels.fourier, "Fourier amplitudes"),
        ] {
            let (x, yc) = (
                (f.px.l + f.px.r) / 2.0,
                t - c.p(GAP) - c.cap(HEADER_SIZE) / 2.0,
            );
            let size = HEADER_SIZE;
            c.text(text, x, yc, size, true, HPos::Center, BLACK, Rot::None)?;
        }
        self.draw_map(c, &panels, &scale)?;
        self.draw_fourier(c, &panels)
    }
}
