//! Reports: tables (CSV, JSON) and figures, built from solver results at the edge of the pipeline.
#![warn(missing_docs)]

pub mod atomic;
pub mod error;
pub mod figures;
pub mod files;
pub mod pattern;
pub mod phases;
pub mod scan;
pub mod tables;

pub use error::ReportError;
