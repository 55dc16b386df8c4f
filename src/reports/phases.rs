//! Phase-diagram reports: CSV of the grid, JSON with the lines as point lists and the tricritical
//! and Lifshitz points, and the figure (regions shaded, second-order lines solid, first-order
//! dashed, the metastability band, special points marked).

use super::atomic::write_atomic;
use super::figures::{write_region_plot, Band, Dash, Marker, RegionPlot, Series};
use super::scan::key_unit;
use super::tables::header;
use crate::config::ConfigSource;
use crate::model::Model;
use crate::solvers::ordered::StateKind;
use crate::sweeps::phase_map::{PhaseDiagram, SpecialPoint};
use crate::sweeps::Grid;
use crate::units::mev_to_kelvin;
use serde_json::{json, Value};
use std::path::{Path, PathBuf};

fn region(s: StateKind) -> usize {
    match s {
        StateKind::Normal => 0,
        StateKind::Uniform => 1,
        StateKind::Modulated => 2,
    }
}

fn special(p: &Option<SpecialPoint>) -> Value {
    match p {
        Some(p) => {
            json!({"value": p.value, "temperature_K": mev_to_kelvin(p.t), "on_phase_boundary": p.on_boundary})
        }
        None => json!({"value": null, "temperature_K": null, "on_phase_boundary": null}),
    }
}

/// Writes `<stem>.csv`, `<stem>.json`, `<stem>.png`, `<stem>.svg`; returns the paths.
pub fn write_phases(
    src: &ConfigSource,
    m: &Model,
    grid: &Grid,
    d: &PhaseDiagram,
    out: &Path,
    stem: &str,
) -> Result<Vec<PathBuf>, String> {
    let ch = &m.channels()[d.channel];
    let path = grid.axes[0].path();
    let ns = ch.spin_channels();
    let mut written = Vec::new();
    // CSV
    let mut w = csv::Writer::from_writer(Vec::new());
    let e = |e: csv::Error| format!("cannot format the CSV: {e}");
    w.write_record([
        path.as_str(),
        "temperature_K",
        "state",
        "delta_meV",
        "q_x_per_nm",
        "q_y_per_nm",
        "omega_meV_per_nm2",
        "uniform_omega_meV_per_nm2",
        "normal_is_minimum",
        "reason",
    ])
    .map_err(e)?;
    for col in &d.columns {
        match col {
            Ok(c) => {
                for (cell, &t) in c.cells.iter().zip(&d.temperatures) {
                    let row: Vec<String> = match cell {
                        Ok(x) => vec![
                            format!("{}", c.value),
                            format!("{}", mev_to_kelvin(t)),
                            if x.undetermined {
                                "undetermined".into()
                            } else if let Some(f) = x.coexistence {
                                format!("coexistence (ordered fraction {f:.4})")
                            } else {
                                format!("{:?}", x.state).to_lowercase()
                            },
                            format!("{}", x.delta),
                            format!("{}", x.q[0]),
                            format!("{}", x.q[1]),
                            format!("{}", ns * x.omega),
                            x.uniform_omega
                                .map(|o| format!("{}", ns * o))
                                .unwrap_or_default(),
                            format!("{}", x.normal_minimum),
                            String::new(),
                        ],
                        Err(r) => vec![
                            format!("{}", c.value),
                            format!("{}", mev_to_kelvin(t)),
                            "failed".into(),
                            String::new(),
                            String::new(),
                            String::new(),
                            String::new(),
                            String::new(),
                            String::new(),
                            r.clone(),
                        ],
                    };
                    w.write_record(row).map_err(e)?;
                }
            }
            Err(r) => {
                w.write_record(["", "", "failed", "", "", "", "", "", "", r.as_str()])
                    .map_err(e)?;
            }
        }
    }
    let bytes = w
        .into_inner()
        .map_err(|e| format!("cannot format the CSV: {e}"))?;
    let p = out.join(format!("{stem}.csv"));
    write_atomic(&p, &bytes).map_err(|e| format!("cannot write {}: {e}", p.display()))?;
    written.push(p);
    // Lines.
    let ok: Vec<_> = d.columns.iter().filter_map(|c| c.as_ref().ok()).collect();
    let uniform_line: Vec<(f64, f64, bool)> = ok
        .iter()
        .filter(|c| c.t_uniform > 0.0)
        .map(|c| {
            (
                c.value,
                mev_to_kelvin(c.t_uniform),
                c.beta_uniform.unwrap_or(0.0) > 0.0,
            )
        })
        .collect();
    let modulated_line: Vec<(f64, f64)> = ok
        .iter()
        .filter(|c| c.t_modulated > 0.0 && c.q_star != [0.0, 0.0])
        .map(|c| (c.value, mev_to_kelvin(c.t_modulated)))
        .collect();
    let first: Vec<(f64, f64)> = d
        .first_order
        .iter()
        .map(|&(x, t)| (x, mev_to_kelvin(t)))
        .collect();
    let spin: Vec<(f64, f64)> = d
        .spinodal
        .iter()
        .map(|&(x, t)| (x, mev_to_kelvin(t)))
        .collect();
    // JSON
    let mut v = header(src, "phases");
    v["channel"] = json!(ch.label());
    v["vary"] = json!({"path": path, "from": grid.axes[0].from, "to": grid.axes[0].to, "n": grid.axes[0].n, "unit": key_unit(&grid.axes[0].key)});
    v["temperatures_K"] = json!(d
        .temperatures
        .iter()
        .map(|&t| mev_to_kelvin(t))
        .collect::<Vec<_>>());
    v["lines"] = json!({
        "uniform_instability": uniform_line.iter().map(|&(x, t, so)| json!({"value": x, "temperature_K": t, "second_order": so})).collect::<Vec<_>>(),
        "modulated_instability": modulated_line.iter().map(|&(x, t)| json!({"value": x, "temperature_K": t})).collect::<Vec<_>>(),
        "first_order": first.iter().map(|&(x, t)| json!({"value": x, "temperature_K": t})).collect::<Vec<_>>(),
        "spinodal_uniform": spin.iter().map(|&(x, t)| json!({"value": x, "temperature_K": t})).collect::<Vec<_>>(),
    });
    v["tricritical"] = special(&d.tricritical);
    v["lifshitz"] = special(&d.lifshitz);
    v["special_point_failures"] = json!(d.special_point_failures);
    v["structure_marks"] = d
        .structure_marks
        .iter()
        .map(|m| json!({"value": m.value, "temperature_K": mev_to_kelvin(m.t), "preferred": m.preferred, "wavevectors": m.wavevectors, "first_order": m.first_order, "failure": m.failure}))
        .collect();
    v["note"] = json!("uniform_instability is the line g chi(0, T) = 1 (second_order where beta > 0); the normal state's spinodal is that line, the uniform state's spinodal is where its minimum disappears; omega totals over spin channels");
    v["columns"] = Value::Array(
        d.columns
            .iter()
            .map(|c| match c {
                Ok(c) => json!({
                    "value": c.value,
                    "states": c.cells.iter().map(|x| match x { Ok(x) => json!(x.state), Err(_) => json!("failed") }).collect::<Vec<_>>(),
                    "delta_meV": c.cells.iter().map(|x| x.as_ref().map(|x| x.delta).ok()).collect::<Vec<_>>(),
                }),
                Err(r) => json!({"status": "failed", "reason": r}),
            })
            .collect(),
    );
    let p = out.join(format!("{stem}.json"));
    write_atomic(
        &p,
        serde_json::to_string_pretty(&v)
            .unwrap_or_default()
            .as_bytes(),
    )
    .map_err(|e| format!("cannot write {}: {e}", p.display()))?;
    written.push(p);
    // Figure.
    let xs: Vec<f64> = d
        .columns
        .iter()
        .enumerate()
        .map(|(i, c)| {
            c.as_ref()
                .map(|c| c.value)
                .unwrap_or_else(|_| grid.values(i)[0])
        })
        .collect();
    let ys: Vec<f64> = d.temperatures.iter().map(|&t| mev_to_kelvin(t)).collect();
    let mut regions = vec![None; xs.len() * ys.len()];
    for (ix, c) in d.columns.iter().enumerate() {
        if let Ok(c) = c {
            for (iy, cell) in c.cells.iter().enumerate() {
                if let Ok(cell) = cell {
                    regions[iy * xs.len() + ix] = Some(if cell.undetermined {
                        4
                    } else if cell.coexistence.is_some() {
                        3
                    } else {
                        region(cell.state)
                    });
                }
            }
        }
    }
    // Per column, NaN where the line is absent, so separate stretches are not joined.
    let line_point = |c: &&crate::sweeps::phase_map::Column, second_order: bool| {
        let on = c.t_uniform > 0.0 && ((c.beta_uniform.unwrap_or(0.0) > 0.0) == second_order);
        (
            c.value,
            if on {
                mev_to_kelvin(c.t_uniform)
            } else {
                f64::NAN
            },
        )
    };
    let second: Vec<(f64, f64)> = ok.iter().map(|c| line_point(c, true)).collect();
    let continued: Vec<(f64, f64)> = ok.iter().map(|c| line_point(c, false)).collect();
    let mut series = vec![
        Series {
            label: "second order (uniform)".into(),
            points: second,
            dash: Dash::Solid,
            color: 0,
        },
        Series {
            label: "uniform instability, continued (beta < 0)".into(),
            points: continued,
            dash: Dash::Dotted,
            color: 0,
        },
        Series {
            label: "modulated instability".into(),
            // One point per column, NaN where the modulated state does not win, so that separate
            // stretches are not joined.
            points: ok
                .iter()
                .map(|c| {
                    let on = c.t_modulated > 0.0 && c.q_star != [0.0, 0.0];
                    (
                        c.value,
                        if on {
                            mev_to_kelvin(c.t_modulated)
                        } else {
                            f64::NAN
                        },
                    )
                })
                .collect(),
            dash: Dash::Solid,
            color: 1,
        },
        Series {
            label: "first order (equal Omega)".into(),
            points: first.clone(),
            dash: Dash::Dashed,
            color: 2,
        },
    ];
    series.retain(|s| s.points.iter().any(|p| p.1.is_finite()));
    let mut bands = Vec::new();
    if !spin.is_empty() && !first.is_empty() {
        // Between the first-order line and the uniform state's spinodal.
        let mut lower: Vec<(f64, f64)> = first.clone();
        lower.sort_by(|a, b| a.1.total_cmp(&b.1));
        let mut upper: Vec<(f64, f64)> = spin.clone();
        upper.sort_by(|a, b| a.1.total_cmp(&b.1));
        bands.push(Band {
            label: "uniform metastable (first-order line to spinodal)".into(),
            lower,
            upper,
            color: 4,
        });
    }
    let mut markers = Vec::new();
    if let Some(p) = d.tricritical {
        markers.push(Marker {
            label: format!(
                "tricritical{}",
                if p.on_boundary { "" } else { " (preempted)" }
            ),
            x: p.value,
            y: mev_to_kelvin(p.t),
            color: 3,
        });
    }
    if let Some(p) = d.lifshitz {
        markers.push(Marker {
            label: format!(
                "Lifshitz{}",
                if p.on_boundary {
                    ""
                } else {
                    " (off the boundary)"
                }
            ),
            x: p.value,
            y: mev_to_kelvin(p.t),
            color: 5,
        });
    }
    let u = key_unit(&grid.axes[0].key);
    let plot = RegionPlot {
        title: format!("Phase diagram, channel {}", ch.label()),
        x_label: if u.is_empty() {
            path.clone()
        } else {
            format!("{path} ({u})")
        },
        y_label: "T (K)".into(),
        xs,
        ys,
        regions,
        region_names: vec![
            "normal".into(),
            "uniform order".into(),
            "modulated (plane wave)".into(),
            "coexistence (fixed density)".into(),
            "phase separation, not constructed".into(),
        ],
        series,
        bands,
        markers,
        // The preferred structure where a multi-wavevector state wins on the modulated line.
        labels: d
            .structure_marks
            .iter()
            .filter(|m| m.wavevectors >= 2)
            .filter_map(|m| {
                m.preferred
                    .as_ref()
                    .map(|n| (n.clone(), m.value, mev_to_kelvin(m.t)))
            })
            .collect(),
    };
    let fig = out.join(stem);
    write_region_plot(&plot, &fig).map_err(|e| e.to_string())?;
    written.push(fig.with_extension("png"));
    written.push(fig.with_extension("svg"));
    Ok(written)
}
