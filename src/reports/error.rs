//! Errors of the report layer (the edge of the pipeline): which table or figure could not be
//! formatted or written, and where.

use super::figures::FigureError;
use std::io;
use std::path::PathBuf;

/// Why a report file could not be produced.  Every variant names the file concerned.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// The CSV writer refused a record (e.g. rows of different lengths).
    #[error("cannot format the CSV {}: {source}", .path.display())]
    Csv {
        path: PathBuf,
        #[source]
        source: csv::Error,
    },
    /// The file system refused the file (missing directory, permissions, disk full, ...).
    #[error("cannot write {}: {source}", .path.display())]
    Write {
        path: PathBuf,
        #[source]
        source: io::Error,
    },
    /// A figure could not be drawn or written.
    #[error(transparent)]
    Figure(#[from] FigureError),
}
