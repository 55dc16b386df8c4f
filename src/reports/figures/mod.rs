//! Figures for reports, at the edge of the pipeline: plain plot descriptions (numbers, labels,
//! palette indices) in, `<stem>.png` and `<stem>.svg` out.  The physics core builds and tests
//! without this module; nothing here feeds back into results.
//!
//! Four figure kinds cover what the sweeps produce: line plots (gaps, critical temperatures,
//! free energies along a cut), colour maps on a parameter grid with an outlined sub-region
//! (e.g. where the modulated state wins), categorical phase diagrams (regions, transition lines,
//! metastability bands, special points) and real-space density maps beside their Fourier
//! amplitudes.
//!
//! Rendering notes:
//! * Text uses an embedded DejaVu Sans (assets/), registered once with plotters' `ab_glyph`
//!   support under the family name `sans-serif`; no system font or fontconfig is needed.
//! * PNGs are drawn at twice the size and averaged down (anti-aliasing), then encoded in memory
//!   by the `png` crate; SVGs are drawn with four user units per pixel of their declared size.
//!   Rasters inside an SVG (the density map) are embedded as base64 PNG data URIs.
//! * Axes, ticks, legends and colour bars are laid out here rather than by plotters' chart
//!   builder, so that tick labels, legend placement and colour bars are under our control; plotters
//!   serves as the drawing backend.
//! * Both files are written atomically (see [`super::atomic`]); nothing half-written appears.
//!
//! Layout of the module: `output` (the `Figure` trait, rendering, PNG and SVG files), `canvas`
//! (device-pixel drawing primitives), `geometry` (frames, ranges, ticks, clipping), `style`
//! (palettes, colour map, sizes), `axes` (title and axes), `marks` (curves, bands, markers),
//! `legend` (legends and notes), `cells` (grid cells, colour bar, hatching, contours), one file
//! per figure kind (`line_plot`, `map_plot`, `region_plot`, `density_plot`) and `error`.

mod axes;
mod canvas;
mod cells;
mod density_plot;
mod error;
mod geometry;
mod legend;
mod line_plot;
mod map_plot;
mod marks;
mod output;
mod region_plot;
mod style;
#[cfg(test)]
mod tests;

pub use error::{DrawError, FigureError, InputProblem};
use geometry::check_grid;
use output::write_figure;
use std::path::Path;

/// Line pattern of a curve.  In phase diagrams: second-order lines solid, first-order dashed.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Dash {
    /// A continuous line.
    #[default]
    Solid,
    /// Long dashes.
    Dashed,
    /// Short dots.
    Dotted,
}

/// A curve.  Non-finite points split the curve into separate pieces; a single finite point is
/// drawn as a dot.  An empty label keeps the curve out of the legend.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Series {
    /// Legend text.
    pub label: String,
    /// Points `(x, y)` in data units, drawn in order.
    pub points: Vec<(f64, f64)>,
    /// Line pattern.
    pub dash: Dash,
    /// Index into the line palette (taken modulo its length).
    pub color: usize,
}

/// A special point (tricritical, Lifshitz, ...).  The marker shape follows the marker's position
/// in its list, the fill colour is the palette index.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Marker {
    /// Legend text (empty: not in the legend).
    pub label: String,
    /// Position on the x axis, data units.
    pub x: f64,
    /// Position on the y axis, data units.
    pub y: f64,
    /// Index into the line palette of the fill (taken modulo its length).
    pub color: usize,
}

/// A shaded region between two curves (e.g. the metastability band between two spinodals): the
/// polygon `lower` followed by `upper` reversed, so both curves run in the same direction.
/// With `upper` empty, `lower` alone is taken as a closed polygon.  The two curves are also
/// drawn as thin lines.  Non-finite points are skipped.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Band {
    /// Legend text (empty: not in the legend).
    pub label: String,
    /// The lower boundary curve, data units.
    pub lower: Vec<(f64, f64)>,
    /// The upper boundary curve, data units (empty: `lower` is a closed polygon).
    pub upper: Vec<(f64, f64)>,
    /// Index into the line palette (taken modulo its length).
    pub color: usize,
}

/// Curves, bands and markers on linear axes.  Axis labels carry their units.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LinePlot {
    /// Title above the plot.
    pub title: String,
    /// Label of the x axis, with its unit.
    pub x_label: String,
    /// Label of the y axis, with its unit.
    pub y_label: String,
    /// Curves, drawn over the bands.
    pub series: Vec<Series>,
    /// Special points, drawn last.
    pub markers: Vec<Marker>,
    /// Shaded bands, drawn first.
    pub bands: Vec<Band>,
    /// Small text lines (parameters of the run, ...) drawn in a free corner.
    pub notes: Vec<String>,
}

/// A colour map on a rectangular grid (cell centres `xs` × `ys`, each strictly monotonic) with
/// an outlined sub-region and optional curves and markers on top.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct MapPlot {
    /// Title above the plot.
    pub title: String,
    /// Label of the x axis, with its unit.
    pub x_label: String,
    /// Label of the y axis, with its unit.
    pub y_label: String,
    /// Label of the colour bar, with its unit.
    pub colorbar_label: String,
    /// Cell centres along x, data units.
    pub xs: Vec<f64>,
    /// Cell centres along y, data units.
    pub ys: Vec<f64>,
    /// Row-major, `values[iy * xs.len() + ix]`; `None` (or a non-finite value) marks a failed
    /// point, drawn grey.
    pub values: Vec<Option<f64>>,
    /// Same shape as `values`, or empty for no outline.  The boundary of the `true` cells is
    /// drawn as a thick contour and the region is hatched.
    pub outline: Vec<bool>,
    /// Legend text of the outlined region (empty: no legend entry).
    pub outline_label: String,
    /// Curves drawn over the map (with a white halo).
    pub series: Vec<Series>,
    /// Special points drawn over the map.
    pub markers: Vec<Marker>,
}

/// A categorical phase diagram on a grid (cell centres `xs` × `ys`, each strictly monotonic).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RegionPlot {
    /// Title above the plot.
    pub title: String,
    /// Label of the x axis, with its unit.
    pub x_label: String,
    /// Label of the y axis, with its unit.
    pub y_label: String,
    /// Cell centres along x, data units.
    pub xs: Vec<f64>,
    /// Cell centres along y, data units.
    pub ys: Vec<f64>,
    /// Row-major region index per cell, `regions[iy * xs.len() + ix]`; `None` = no solution.
    pub regions: Vec<Option<usize>>,
    /// Legend names of the region indices (an index without a name is called "region k").
    pub region_names: Vec<String>,
    /// Transition lines (second-order solid, first-order dashed, by convention).
    pub series: Vec<Series>,
    /// Metastability bands between spinodals.
    pub bands: Vec<Band>,
    /// Tricritical, Lifshitz, ... points.
    pub markers: Vec<Marker>,
    /// Text drawn at a data position, e.g. the name of a phase inside its region.
    pub labels: Vec<(String, f64, f64)>,
}

/// A real-space density over a square field of view beside its Fourier amplitudes.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct DensityPlot {
    /// Title above both panels.
    pub title: String,
    /// Side of the field of view in nm; the map covers `[-fov/2, fov/2]^2`.
    pub fov_nm: f64,
    /// Samples per side.
    pub n: usize,
    /// `n × n` samples, row-major with y outer (`density[iy * n + ix]`), `iy = 0` at `y = -fov/2`.
    /// Sample `(ix, iy)` sits at the centre of its cell of side `fov/n`.
    pub density: Vec<f64>,
    /// Label of the colour bar, with its unit.
    pub colorbar_label: String,
    /// Fourier peaks `(kx, ky, amplitude, label)`, k in 1/nm, drawn as discs whose area is
    /// proportional to the amplitude.
    pub peaks: Vec<(f64, f64, f64, String)>,
    /// Half-width of the Fourier panel in 1/nm (non-positive: chosen from the peaks).
    pub k_extent: f64,
}

/// Writes `<stem>.png` and `<stem>.svg` of a line plot.
pub fn write_line_plot(plot: &LinePlot, stem: &Path) -> Result<(), FigureError> {
    write_figure(plot, stem)
}

/// Writes `<stem>.png` and `<stem>.svg` of a colour map.
pub fn write_map_plot(plot: &MapPlot, stem: &Path) -> Result<(), FigureError> {
    let invalid = |reason| invalid_input(stem, reason);
    check_grid(&plot.xs, &plot.ys, plot.values.len(), "values").map_err(invalid)?;
    if !plot.outline.is_empty() && plot.outline.len() != plot.values.len() {
        return Err(invalid(InputProblem::OutlineShape {
            outline: plot.outline.len(),
            values: plot.values.len(),
        }));
    }
    write_figure(plot, stem)
}

/// Writes `<stem>.png` and `<stem>.svg` of a categorical phase diagram.
pub fn write_region_plot(plot: &RegionPlot, stem: &Path) -> Result<(), FigureError> {
    check_grid(&plot.xs, &plot.ys, plot.regions.len(), "regions")
        .map_err(|reason| invalid_input(stem, reason))?;
    write_figure(plot, stem)
}

/// Writes `<stem>.png` and `<stem>.svg` of a density map and its Fourier amplitudes.
pub fn write_density_plot(plot: &DensityPlot, stem: &Path) -> Result<(), FigureError> {
    if plot.n.checked_mul(plot.n) != Some(plot.density.len()) {
        let reason = InputProblem::DensityShape {
            samples: plot.density.len(),
            n: plot.n,
        };
        return Err(invalid_input(stem, reason));
    }
    if plot.n > 0 && !(plot.fov_nm.is_finite() && plot.fov_nm > 0.0) {
        let reason = InputProblem::FieldOfView {
            fov_nm: plot.fov_nm,
        };
        return Err(invalid_input(stem, reason));
    }
    write_figure(plot, stem)
}

/// The error of an inconsistent plot description written to `stem`.
fn invalid_input(stem: &Path, reason: InputProblem) -> FigureError {
    FigureError::InvalidInput {
        path: stem.to_path_buf(),
        reason,
    }
}
