//! Reports: tables (CSV, JSON) and figures, built from solver results at the edge of the pipeline.

pub mod atomic;
pub mod figures;
pub mod pattern;
pub mod phases;
pub mod scan;
pub mod tables;
