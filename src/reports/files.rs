//! Report files (the edge of the pipeline): CSV tables and pretty-printed JSON written
//! atomically, and the names of the two files of a figure.

use super::atomic::write_atomic;
use super::error::ReportError;
use serde_json::Value;
use std::path::{Path, PathBuf};

/// Writes a CSV table (`head`, then `rows`, all of the same length) atomically to `path`;
/// returns the path.
pub fn write_csv<H, R>(path: PathBuf, head: H, rows: R) -> Result<PathBuf, ReportError>
where
    H: IntoIterator,
    H::Item: AsRef<[u8]>,
    R: IntoIterator,
    R::Item: IntoIterator,
    <R::Item as IntoIterator>::Item: AsRef<[u8]>,
{
    write_csv_commented(path, &[], head, rows)
}

/// As [`write_csv`], with `comments` written first, one line each after `# `.
pub fn write_csv_commented<H, R>(
    path: PathBuf,
    comments: &[String],
    head: H,
    rows: R,
) -> Result<PathBuf, ReportError>
where
    H: IntoIterator,
    H::Item: AsRef<[u8]>,
    R: IntoIterator,
    R::Item: IntoIterator,
    <R::Item as IntoIterator>::Item: AsRef<[u8]>,
{
    let csv_error = |source: csv::Error| ReportError::Csv {
        path: path.clone(),
        source,
    };
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(head).map_err(csv_error)?;
    for r in rows {
        w.write_record(r).map_err(csv_error)?;
    }
    let table = w
        .into_inner()
        .map_err(|e| csv_error(csv::Error::from(e.into_error())))?;
    let mut bytes: Vec<u8> = comments
        .iter()
        .flat_map(|c| format!("# {c}\n").into_bytes())
        .collect();
    bytes.extend(table);
    write_file(path, &bytes)
}

/// Writes `v` as pretty-printed JSON atomically to `path`; returns the path.
pub fn write_json(path: PathBuf, v: &Value) -> Result<PathBuf, ReportError> {
    let text = serde_json::to_string_pretty(v).unwrap_or_default();
    write_file(path, text.as_bytes())
}

/// Writes `bytes` atomically to `path`; returns the path.
fn write_file(path: PathBuf, bytes: &[u8]) -> Result<PathBuf, ReportError> {
    match write_atomic(&path, bytes) {
        Ok(()) => Ok(path),
        Err(source) => Err(ReportError::Write { path, source }),
    }
}

/// The two files a figure written to `stem` produces, as listed to the user (PNG, SVG).
pub fn figure_files(stem: &Path) -> [PathBuf; 2] {
    [stem.with_extension("png"), stem.with_extension("svg")]
}

/// The cells of a CSV row after its leading columns for a point that failed: the status
/// `failed`, `blanks` empty cells, and the reason.
pub fn failed_cells(blanks: usize, reason: &str) -> impl Iterator<Item = String> + '_ {
    std::iter::once("failed".to_string())
        .chain(std::iter::repeat_n(String::new(), blanks))
        .chain(std::iter::once(reason.to_string()))
}
