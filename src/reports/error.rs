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
        /// The CSV file.
        path: PathBuf,
        #[source]
        /// What the CSV writer reported.
        source: csv::Error,
    },
    /// The file system refused the file (missing directory, permissions, disk full, ...).
    #[error("cannot write {}: {source}", .path.display())]
    Write {
        /// The file that could not be written.
        path: PathBuf,
        #[source]
        /// What the file system reported.
        source: io::Error,
    },
    /// A figure could not be drawn or written.
    #[error(transparent)]
    Figure(#[from] FigureError),
}
