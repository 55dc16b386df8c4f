//! Colours and sizes shared by all figures: line and region palettes, the viridis colour map and
//! its value scale, and the layout constants (logical pixels).

use super::geometry::Extent;
use plotters::style::RGBColor;

/// A colour from its `0xRRGGBB` code.
const fn rgb(code: u32) -> RGBColor {
    RGBColor((code >> 16) as u8, (code >> 8) as u8, code as u8)
}

/// Line and marker palette (colour-blind safe ordering, dark enough on white).
pub(super) const LINE_PALETTE: [RGBColor; 8] = [
    rgb(0x0072B2),
    rgb(0xD55E00),
    rgb(0x009E73),
    rgb(0xCC79A7),
    rgb(0xE69F00),
    rgb(0x56B4E9),
    rgb(0x000000),
    rgb(0x965A28),
];

/// Light fills for categorical regions (lines and text stay readable on top).
pub(super) const REGION_PALETTE: [RGBColor; 12] = [
    rgb(0xC6DBEF),
    rgb(0xFDD0A2),
    rgb(0xC7E9C0),
    rgb(0xDADAEB),
    rgb(0xFCC5CD),
    rgb(0xFFEDA0),
    rgb(0xCCECE6),
    rgb(0xE6DCC8),
    rgb(0xEBCDF0),
    rgb(0xD7EBA0),
    rgb(0xAFD7E1),
    rgb(0xF0E1D7),
];

/// Line palette colour `i` (cycling).
pub(super) fn line_color(i: usize) -> RGBColor {
    LINE_PALETTE[i % LINE_PALETTE.len()]
}

/// Region palette colour `i` (cycling).
pub(super) fn region_color(i: usize) -> RGBColor {
    REGION_PALETTE[i % REGION_PALETTE.len()]
}

/// Anchors of the viridis colour map at 0, 1/8, ..., 1, linearly interpolated in between.
pub(super) const VIRIDIS: [(u8, u8, u8); 9] = [
    (0x44, 0x01, 0x54),
    (0x47, 0x2D, 0x7B),
    (0x3B, 0x52, 0x8B),
    (0x2C, 0x72, 0x8E),
    (0x21, 0x90, 0x8C),
    (0x27, 0xAD, 0x81),
    (0x5D, 0xC8, 0x63),
    (0xAA, 0xDC, 0x32),
    (0xFD, 0xE7, 0x25),
];

pub(super) fn colormap(t: f64) -> RGBColor {
    let t = if t.is_finite() {
        t.clamp(0.0, 1.0)
    } else {
        0.0
    };
    let x = t * (VIRIDIS.len() - 1) as f64;
    let i = (x.floor() as usize).min(VIRIDIS.len() - 2);
    let f = x - i as f64;
    let (a, b) = (VIRIDIS[i], VIRIDIS[i + 1]);
    let mix = |u: u8, v: u8| (u as f64 + f * (v as f64 - u as f64)).round() as u8;
    RGBColor(mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// Colour scale of a map: finite range of the values.
#[derive(Clone, Copy, Debug)]
pub(super) struct Scale {
    pub(super) lo: f64,
    pub(super) hi: f64,
}

impl Scale {
    pub(super) fn from_values(values: impl Iterator<Item = f64>) -> Scale {
        let mut e = Extent::new();
        for v in values {
            e.add(v);
        }
        let (lo, hi) = e.range(0.0);
        Scale { lo, hi }
    }
    pub(super) fn color(&self, v: f64) -> RGBColor {
        colormap((v - self.lo) / (self.hi - self.lo))
    }
}

pub(super) const PAD: f64 = 14.0;
pub(super) const TITLE_SIZE: f64 = 19.0;
pub(super) const LABEL_SIZE: f64 = 16.0;
pub(super) const TICK_SIZE: f64 = 14.0;
pub(super) const LEGEND_SIZE: f64 = 13.5;
pub(super) const NOTE_SIZE: f64 = 12.5;
pub(super) const TICK_LEN: f64 = 5.0;
pub(super) const GAP: f64 = 6.0;
pub(super) const LINE_WIDTH: f64 = 2.0;
pub(super) const MARKER_R: f64 = 6.0;
