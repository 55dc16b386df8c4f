//! Scan reports: CSV and JSON tables (JSON with a provenance header) and the figures of a sweep:
//! Tc against one parameter with the uniform and modulated curves and the Lifshitz point, or a
//! colour map of Tc over two parameters with the region where the modulated state wins outlined.

use super::error::ReportError;
use super::figures::{write_line_plot, write_map_plot, Dash, LinePlot, MapPlot, Marker, Series};
use super::files::{figure_files, write_csv, write_json};
use super::tables::{channel_tc_json, header, scan_columns, scan_rows, text_table};
use crate::config::ConfigSource;
use crate::model::Model;
use crate::solvers::tc_channel::Method;
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

/// The Lifshitz point of a 1D curve of one channel: where q* first becomes non-zero (between the
/// last uniform and the first modulated point; the midpoint is reported).
pub fn lifshitz_on_curve(points: &[ScanPoint], channel: usize) -> Option<(f64, f64)> {
    let state = |p: &ScanPoint| {
        p.result
            .as_ref()
            .ok()
            .and_then(|r| r.get(channel))
            .map(|c| (c.modulated_wins(), c.modulated.tc.tc, c.uniform.tc))
    };
    for w in points.windows(2) {
        if let (Some(a), Some(b)) = (state(&w[0]), state(&w[1])) {
            if a.0 != b.0 && a.2 > 0.0 {
                let x = 0.5 * (w[0].values[0] + w[1].values[0]);
                let t = 0.5 * (if a.0 { a.1 } else { a.2 } + if b.0 { b.1 } else { b.2 });
                return Some((x, mev_to_kelvin(t)));
            }
        }
    }
    None
}

/// Writes `<stem>.csv`, `<stem>.json` and the figures into `out`; returns the paths written.
pub fn write_scan(
    src: &ConfigSource,
    m: &Model,
    grid: &Grid,
    points: &[ScanPoint],
    method: Method,
    out: &Path,
    stem: &str,
) -> Result<Vec<PathBuf>, ReportError> {
    let labels: Vec<String> = m.channels().iter().map(|c| c.label().to_string()).collect();
    let csv_path = out.join(format!("{stem}.csv"));
    let mut written = vec![write_csv(
        csv_path,
        scan_columns(grid),
        scan_rows(points, &labels),
    )?];
    let v = scan_json(src, m, grid, points, method);
    written.push(write_json(out.join(format!("{stem}.json")), &v)?);
    // Figures, one per channel.
    for (c, label) in labels.iter().enumerate() {
        let fig_stem = out.join(format!("{stem}_tc_{label}"));
        if grid.axes.len() == 1 {
            write_line_plot(&tc_curve_plot(grid, points, c, label, method), &fig_stem)?;
        } else {
            write_map_plot(&tc_map_plot(grid, points, c, label), &fig_stem)?;
        }
        written.extend(figure_files(&fig_stem));
    }
    Ok(written)
}

/// The JSON report of a scan: the swept axes, every point's channels, and on a 1D scan the
/// Lifshitz point of each channel.
fn scan_json(
    src: &ConfigSource,
    m: &Model,
    grid: &Grid,
    points: &[ScanPoint],
    method: Method,
) -> Value {
    let mut v = header(src, "scan");
    v["method"] = json!(method);
    v["vary"] = Value::Array(
        grid.axes
            .iter()
            .map(|a| json!({"path": a.path(), "from": a.from, "to": a.to, "n": a.n, "unit": key_unit(&a.key)}))
            .collect(),
    );
    v["note"] = json!("g is fixed at the base configuration (lambda converted there); q* is known to fewer digits than Tc");
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
                .map(|(c, ch)| match lifshitz_on_curve(points, c) {
                    Some((x, t)) => json!({"channel": ch.label(), "value": x, "temperature_K": t}),
                    None => json!({"channel": ch.label(), "value": null, "temperature_K": null}),
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
) -> LinePlot {
    let (uni, md) = tc_curves(points, c);
    let markers = lifshitz_on_curve(points, c)
        .map(|(x, t)| Marker {
            label: "Lifshitz point (q* leaves 0)".into(),
            x,
            y: t,
            color: 3,
        })
        .into_iter()
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
        notes: vec![
            format!("method: {method:?}"),
            "g fixed at the base configuration".into(),
        ],
    }
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

/// A short text summary of a scan for the terminal.
pub fn summary(m: &Model, grid: &Grid, points: &[ScanPoint]) -> String {
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
                lifshitz_on_curve(points, c)
                    .map(|(x, t)| format!("{} = {x:.4}, T = {t:.4} K", grid.axes[0].path()))
                    .unwrap_or("none in range".into()),
            ]];
            s += &text_table(&["channel", "highest Tc", "Lifshitz point"], &rows);
        }
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
