//! Scan reports: CSV and JSON tables (JSON with a provenance header) and the figures of a sweep:
//! Tc against one parameter with the uniform and modulated curves and the Lifshitz point, or a
//! colour map of Tc over two parameters with the region where the modulated state wins outlined.

use super::error::ReportError;
use super::figures::{write_line_plot, write_map_plot, Dash, LinePlot, MapPlot, Marker, Series};
use super::files::{figure_files, write_csv_commented, write_json};
use super::tables::{channel_tc_json, header, scan_columns, scan_rows, text_table};
use crate::config::ConfigSource;
use crate::model::Model;
use crate::solvers::tc_channel::{CouplingHeld, Method};
use crate::sweeps::lifshitz::LifshitzSearch;
use crate::sweeps::tc_scan::ScanPoint;
use crate::sweeps::Grid;
use crate::units::mev_to_kelvin;
use serde_json::{json, Value};
use std::path::{Path, PathBuf};

/// Unit of a swept key, for axis labels.
pub fn key_unit(key: &str) -> &'static str {
    match key {
        "offset" | "cutoff" => "meV",
        "mass" => "m_e",
        "velocity" | "vf" => "meV nm",
        "kf" | "center" => "1/nm",
        "angle" | "phase" => "deg",
        "g" => "meV nm^2",
        "a" | "b" => "nm",
        _ => "",
    }
}

/// Label of swept axis `i`: its path and, when known, its unit.
pub(crate) fn axis_label(grid: &Grid, i: usize) -> String {
    let a = &grid.axes[i];
    let u = key_unit(&a.key);
    if u.is_empty() {
        a.path()
    } else {
        format!("{} ({u})", a.path())
    }
}

/// The JSON of a channel's Lifshitz points: `{"value", "temperature_K"}` each.
fn lifshitz_points_json(found: &LifshitzSearch) -> Vec<Value> {
    found
        .points
        .iter()
        .map(|p| json!({"value": p.value, "temperature_K": mev_to_kelvin(p.t)}))
        .collect()
}

/// The CSV header comments of a 1D scan: every Lifshitz point of every channel (or none).
fn lifshitz_comments(m: &Model, grid: &Grid, lifshitz: &[LifshitzSearch]) -> Vec<String> {
    let path = grid.axes[0].path();
    let mut out = Vec::new();
    for (ch, found) in m.channels().iter().zip(lifshitz) {
        let label = ch.label();
        if found.points.is_empty() {
            out.push(format!("channel {label}: no Lifshitz point in range"));
        }
        for p in &found.points {
            out.push(format!(
                "channel {label}: Lifshitz point at {path} = {}, T = {} K",
                p.value,
                mev_to_kelvin(p.t)
            ));
        }
        for f in &found.failures {
            out.push(format!("channel {label}: {f}"));
        }
    }
    out
}

/// Writes `<stem>.csv`, `<stem>.json` and the figures into `out`; returns the paths written.
pub fn write_scan(
    src: &ConfigSource,
    m: &Model,
    grid: &Grid,
    scan: &ScanResult,
    out: &Path,
    stem: &str,
) -> Result<Vec<PathBuf>, ReportError> {
    let (points, method) = (scan.points, scan.method);
    let labels: Vec<String> = m.channels().iter().map(|c| c.label().to_string()).collect();
    let csv_path = out.join(format!("{stem}.csv"));
    let comments = if grid.axes.len() == 1 {
        lifshitz_comments(m, grid, scan.lifshitz)
    } else {
        vec![]
    };
    let mut written = vec![write_csv_commented(
        csv_path,
        &comments,
        scan_columns(grid),
        scan_rows(points, &labels),
    )?];
    let v = scan_json(src, m, grid, scan);
    written.push(write_json(out.join(format!("{stem}.json")), &v)?);
    // Figures, one per channel.
    for (c, label) in labels.iter().enumerate() {
        let fig_stem = out.join(format!("{stem}_tc_{label}"));
        if grid.axes.len() == 1 {
            let found = scan.lifshitz.get(c);
            write_line_plot(
                &tc_curve_plot(grid, points, c, label, method, found),
                &fig_stem,
            )?;
        } else {
            write_map_plot(&tc_map_plot(grid, points, c, label), &fig_stem)?;
        }
        written.extend(figure_files(&fig_stem));
    }
    Ok(written)
}

/// A scan's results as the reports take them: the points, how Tc was computed, and on a 1D scan
/// the Lifshitz points of each channel (in channel order; empty on a 2D scan).
#[derive(Debug, Clone, Copy)]
pub struct ScanResult<'a> {
    /// Every grid point, in grid order.
    pub points: &'a [ScanPoint],
    /// Exact integral or weak-coupling closed form.
    pub method: Method,
    /// Per channel, the Lifshitz points of the curve.
    pub lifshitz: &'a [LifshitzSearch],
}

/// The JSON report of a scan: the swept axes, every point's channels, and on a 1D scan the
/// Lifshitz points of each channel (`lifshitz[c].points`, the first also as `value` and
/// `temperature_K`, null when there is none).
fn scan_json(src: &ConfigSource, m: &Model, grid: &Grid, scan: &ScanResult) -> Value {
    let (points, method) = (scan.points, scan.method);
    let mut v = header(src, "scan");
    v["method"] = json!(method);
    v["vary"] = Value::Array(
        grid.axes
            .iter()
            .map(|a| json!({"path": a.path(), "from": a.from, "to": a.to, "n": a.n, "unit": key_unit(&a.key)}))
            .collect(),
    );
    v["note"] = json!("g is fixed at the base configuration (lambda converted there) and held at every point, as coupling_held per channel says; q* is known to fewer digits than Tc");
    v["points"] = Value::Array(
        points
            .iter()
            .map(|p| match &p.result {
                Ok(chs) => json!({
                    "values": p.values,
                    "status": "ok",
                    "channels": chs.iter().zip(m.channels()).map(|(r, c)| channel_tc_json(m, c, r)).collect::<Vec<_>>(),
                }),
                Err(e) => json!({"values": p.values, "status": "failed", "reason": e.to_string()}),
            })
            .collect(),
    );
    if grid.axes.len() == 1 {
        v["lifshitz"] = Value::Array(
            m.channels()
                .iter()
                .enumerate()
                .map(|(c, ch)| {
                    let found = scan.lifshitz.get(c).cloned().unwrap_or_default();
                    let first = found.points.first();
                    json!({
                        "channel": ch.label(),
                        "value": first.map(|p| p.value),
                        "temperature_K": first.map(|p| mev_to_kelvin(p.t)),
                        "points": lifshitz_points_json(&found),
                        "failures": found.failures,
                    })
                })
                .collect(),
        );
    }
    v
}

/// A temperature in K where positive (meV in), NaN where not (no instability: the curve is
/// interrupted there).
pub(crate) fn kelvin_or_nan(t: f64) -> f64 {
    if t > 0.0 {
        mev_to_kelvin(t)
    } else {
        f64::NAN
    }
}

/// Points `(parameter, T in K)` of a curve.
type Curve = Vec<(f64, f64)>;

/// Tc of channel `c` along a 1D scan: the uniform and the modulated curves (K, NaN where absent
/// or failed).
fn tc_curves(points: &[ScanPoint], c: usize) -> (Curve, Curve) {
    points
        .iter()
        .map(|p| {
            let x = p.values[0];
            match p.result.as_ref().ok().and_then(|r| r.get(c)) {
                Some(r) => (
                    (x, kelvin_or_nan(r.uniform.tc)),
                    (x, kelvin_or_nan(r.modulated.tc.tc)),
                ),
                None => ((x, f64::NAN), (x, f64::NAN)),
            }
        })
        .unzip()
}

/// The figure of a 1D scan for channel `c`: uniform and modulated Tc, the Lifshitz point.
fn tc_curve_plot(
    grid: &Grid,
    points: &[ScanPoint],
    c: usize,
    label: &str,
    method: Method,
    lifshitz: Option<&LifshitzSearch>,
) -> LinePlot {
    let (uni, md) = tc_curves(points, c);
    let markers = lifshitz
        .map(|f| f.points.as_slice())
        .unwrap_or_default()
        .iter()
        .enumerate()
        .map(|(k, p)| Marker {
            // One legend entry for all the points.
            label: if k == 0 {
                "Lifshitz point (q* leaves 0)".into()
            } else {
                String::new()
            },
            x: p.value,
            y: mev_to_kelvin(p.t),
            color: 3,
        })
        .collect();
    LinePlot {
        title: format!("Critical temperature, channel {label}"),
        x_label: axis_label(grid, 0),
        y_label: "Tc (K)".into(),
        series: vec![
            Series {
                label: "uniform (q = 0)".into(),
                points: uni,
                dash: Dash::Dashed,
                color: 0,
            },
            Series {
                label: "modulated (max over q)".into(),
                points: md,
                dash: Dash::Solid,
                color: 1,
            },
        ],
        markers,
        bands: vec![],
        notes: vec![format!("method: {method:?}"), held_note(points, c)],
    }
}

/// The figure note naming the coupling channel `c` holds along the curve.
fn held_note(points: &[ScanPoint], c: usize) -> String {
    points
        .iter()
        .find_map(|p| p.result.as_ref().ok().and_then(|r| r.get(c)))
        .map(|r| r.coupling_held.to_string())
        .unwrap_or_default()
}

/// The figure of a 2D scan for channel `c`: Tc (max over q) as a colour map, the cells where the
/// modulated state wins outlined.
fn tc_map_plot(grid: &Grid, points: &[ScanPoint], c: usize, label: &str) -> MapPlot {
    let (values, outline) = points
        .iter()
        .map(|p| match p.result.as_ref().ok().and_then(|r| r.get(c)) {
            Some(r) => (Some(mev_to_kelvin(r.modulated.tc.tc)), r.modulated_wins()),
            None => (None, false),
        })
        .unzip();
    MapPlot {
        title: format!("Critical temperature, channel {label}"),
        x_label: axis_label(grid, 0),
        y_label: axis_label(grid, 1),
        colorbar_label: "Tc (K), max over q".into(),
        xs: grid.axes[0].values(),
        ys: grid.axes[1].values(),
        values,
        outline,
        outline_label: "modulated state wins (q* != 0)".into(),
        series: vec![],
        markers: vec![],
    }
}

/// The Lifshitz points of a channel as text ("PATH = x, T = t K; ..." or "none in range").
fn lifshitz_text(grid: &Grid, found: Option<&LifshitzSearch>) -> String {
    let path = grid.axes[0].path();
    let points: Vec<String> = found
        .map(|f| f.points.as_slice())
        .unwrap_or_default()
        .iter()
        .map(|p| format!("{path} = {:.4}, T = {:.4} K", p.value, mev_to_kelvin(p.t)))
        .collect();
    match (
        points.is_empty(),
        found.is_some_and(|f| !f.failures.is_empty()),
    ) {
        (true, true) => "search failed (see the JSON)".into(),
        (true, false) => "none in range".into(),
        _ => points.join("; "),
    }
}

/// A short text summary of a scan for the terminal.
pub fn summary(
    m: &Model,
    grid: &Grid,
    points: &[ScanPoint],
    lifshitz: &[LifshitzSearch],
) -> String {
    let failed = points.iter().filter(|p| p.result.is_err()).count();
    let mut s = format!("{} points, {} failed\n", points.len(), failed);
    if grid.axes.len() == 1 {
        for (c, ch) in m.channels().iter().enumerate() {
            let mut best: Option<(f64, f64)> = None;
            for p in points {
                if let Some(r) = p.result.as_ref().ok().and_then(|r| r.get(c)) {
                    if best.is_none_or(|b| r.modulated.tc.tc > b.1) {
                        best = Some((p.values[0], r.modulated.tc.tc));
                    }
                }
            }
            let rows = vec![vec![
                ch.label().to_string(),
                best.map(|b| {
                    format!(
                        "{:.4} K at {} = {}",
                        mev_to_kelvin(b.1),
                        grid.axes[0].path(),
                        b.0
                    )
                })
                .unwrap_or("-".into()),
                lifshitz_text(grid, lifshitz.get(c)),
            ]];
            s += &text_table(&["channel", "highest Tc", "Lifshitz point"], &rows);
        }
    }
    for ch in m.channels() {
        s += &format!(
            "channel {}: {} at every point (unless the sweep sets it)\n",
            ch.label(),
            CouplingHeld::of(ch)
        );
    }
    for p in points.iter().filter(|p| p.result.is_err()).take(5) {
        s += &format!(
            "failed at {:?}: {}\n",
            p.values,
            p.result.as_ref().err().unwrap()
        );
    }
    s
}
