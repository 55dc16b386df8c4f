//! Errors of the figures (the last step of the report pipeline): what was wrong with a plot
//! description, what failed while drawing or encoding, and which file could not be written.

use std::io;
use std::path::PathBuf;

/// Why a figure could not be written.  Every variant names the file concerned.
#[derive(Debug, thiserror::Error)]
pub enum FigureError {
    /// The plot description is inconsistent (grid shape, non-monotonic axis, ...).
    #[error("figure {}: invalid input: {reason}", .path.display())]
    InvalidInput {
        /// The figure stem.
        path: PathBuf,
        /// What is inconsistent.
        reason: InputProblem,
    },
    /// The drawing backend or the PNG encoder failed.
    #[error("figure {}: drawing failed: {source}", .path.display())]
    Draw {
        /// The figure file being drawn.
        path: PathBuf,
        #[source]
        /// What failed.
        source: DrawError,
    },
    /// The file system refused the file (missing directory, permissions, disk full, ...).
    #[error("figure {}: cannot write: {source}", .path.display())]
    Io {
        /// The figure file that could not be written.
        path: PathBuf,
        #[source]
        /// What the file system reported.
        source: io::Error,
    },
    /// The embedded font could not be parsed (should never happen).
    #[error("figure {}: embedded font could not be loaded", .path.display())]
    Font {
        /// The figure file being drawn.
        path: PathBuf,
    },
}

/// What is inconsistent in a plot description.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum InputProblem {
    /// An axis (`xs` or `ys`) holds a NaN or an infinity.
    #[error("{axis} contains a non-finite value")]
    NonFiniteAxis {
        /// `xs` or `ys`.
        axis: &'static str,
    },
    /// The cell edges of an axis overflow the f64 range.
    #[error("{axis} spans too large a range")]
    AxisTooLarge {
        /// `xs` or `ys`.
        axis: &'static str,
    },
    /// An axis is neither strictly increasing nor strictly decreasing.
    #[error("{axis} is not strictly monotonic")]
    NotMonotonic {
        /// `xs` or `ys`.
        axis: &'static str,
    },
    /// A per-cell list (`values`, `regions`) does not have `nx * ny` entries.
    #[error("{what} has {cells} cells, expected xs.len() * ys.len() = {nx} * {ny}")]
    CellCount {
        /// Which list (`values`, `regions`).
        what: &'static str,
        /// Its length.
        cells: usize,
        /// Number of x cell centres.
        nx: usize,
        /// Number of y cell centres.
        ny: usize,
    },
    /// The outline mask of a colour map has another shape than its values.
    #[error("outline has {outline} cells, values have {values}")]
    OutlineShape {
        /// Cells in the outline.
        outline: usize,
        /// Cells in the values.
        values: usize,
    },
    /// The density samples are not `n * n`.
    #[error("density has {samples} samples, expected n*n with n = {n}")]
    DensityShape {
        /// Samples given.
        samples: usize,
        /// Samples per side.
        n: usize,
    },
    /// The field of view (nm) is not a positive number.
    #[error("field of view must be positive, got {fov_nm} nm")]
    FieldOfView {
        /// The side given, nm.
        fov_nm: f64,
    },
}

/// A failure while drawing a figure in memory or encoding its raster.
#[derive(Debug, thiserror::Error)]
pub enum DrawError {
    /// The plotters backend reported an error (its message).
    #[error("{0}")]
    Backend(String),
    /// A raster handed to the bitmap backend does not have `width * height` RGB pixels.
    #[error("{what} buffer has the wrong size for {width} x {height} pixels")]
    RasterSize {
        /// Which buffer (the whole image or an embedded raster).
        what: &'static str,
        /// Expected width, pixels.
        width: u32,
        /// Expected height, pixels.
        height: u32,
    },
    /// The PNG encoder failed.
    #[error("PNG encoding: {0}")]
    Png(#[from] png::EncodingError),
}
