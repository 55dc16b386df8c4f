//! Phase-diagram reports: CSV of the grid, JSON with the lines as point lists and the tricritical
//! and Lifshitz points, and the figure (regions shaded, second-order lines solid, first-order
//! dashed, the metastability band, special points marked).

use super::error::ReportError;
use super::figures::{write_region_plot, Band, Dash, Marker, RegionPlot, Series};
use super::files::{failed_cells, figure_files, write_csv, write_json};
use super::scan::{axis_label, key_unit};
use super::tables::header;
use crate::config::ConfigSource;
use crate::model::Model;
use crate::solvers::ordered::StateKind;
use crate::sweeps::phase_map::{Cell, Column, PhaseDiagram, SpecialPoint};
use crate::sweeps::Grid;
use crate::units::mev_to_kelvin;
use serde_json::{json, Value};
use std::path::{Path, PathBuf};

/// Region index of a state in the phase figure.
fn region(s: StateKind) -> usize {
    match s {
        StateKind::Normal => 0,
        StateKind::Uniform => 1,
        StateKind::Modulated => 2,
    }
}

/// A special point as JSON (temperature in K); nulls when absent.
fn special(p: &Option<SpecialPoint>) -> Value {
    match p {
        Some(p) => {
            json!({"value": p.value, "temperature_K": mev_to_kelvin(p.t), "on_phase_boundary": p.on_boundary})
        }
        None => json!({"value": null, "temperature_K": null, "on_phase_boundary": null}),
    }
}

/// Everything the phase reports are built from.
struct PhaseInputs<'a> {
    src: &'a ConfigSource,
    model: &'a Model,
    grid: &'a Grid,
    diagram: &'a PhaseDiagram,
}

/// Writes `<stem>.csv`, `<stem>.json`, `<stem>.png`, `<stem>.svg`; returns the paths.
pub fn write_phases(
    src: &ConfigSource,
    m: &Model,
    grid: &Grid,
    d: &PhaseDiagram,
    out: &Path,
    stem: &str,
) -> Result<Vec<PathBuf>, ReportError> {
    let p = PhaseInputs {
        src,
        model: m,
        grid,
        diagram: d,
    };
    let lines = PhaseLines::new(d);
    let csv = write_csv(
        out.join(format!("{stem}.csv")),
        csv_columns(grid),
        csv_rows(&p),
    )?;
    let json = write_json(out.join(format!("{stem}.json")), &phases_json(&p, &lines))?;
    let fig = out.join(stem);
    write_region_plot(&phase_plot(&p, &lines), &fig)?;
    let [png, svg] = figure_files(&fig);
    Ok(vec![csv, json, png, svg])
}

/// Column names of the phase CSV (the first is the swept parameter's path).
fn csv_columns(grid: &Grid) -> [String; 10] {
    [
        grid.axes[0].path(),
        "temperature_K".into(),
        "state".into(),
        "delta_meV".into(),
        "q_x_per_nm".into(),
        "q_y_per_nm".into(),
        "omega_meV_per_nm2".into(),
        "uniform_omega_meV_per_nm2".into(),
        "normal_is_minimum".into(),
        "reason".into(),
    ]
}

/// Rows of the phase CSV: one per cell (a failed column: one row with its reason).
fn csv_rows(p: &PhaseInputs) -> Vec<Vec<String>> {
    let d = p.diagram;
    let ns = p.model.channels()[d.channel].spin_channels();
    let mut rows = Vec::new();
    for col in &d.columns {
        match col {
            Ok(c) => {
                for (cell, &t) in c.cells.iter().zip(&d.temperatures) {
                    let lead = [format!("{}", c.value), format!("{}", mev_to_kelvin(t))];
                    let rest: Vec<String> = match cell {
                        Ok(x) => cell_fields(x, ns),
                        Err(r) => failed_cells(6, r).collect(),
                    };
                    rows.push(lead.into_iter().chain(rest).collect());
                }
            }
            Err(r) => {
                let lead = [String::new(), String::new()];
                rows.push(lead.into_iter().chain(failed_cells(6, r)).collect());
            }
        }
    }
    rows
}

/// The CSV cells of a solved grid cell after its parameter and temperature (`ns` spin channels).
fn cell_fields(x: &Cell, ns: f64) -> Vec<String> {
    vec![
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
    ]
}

/// The lines of a phase diagram, temperatures in K.
struct PhaseLines {
    /// The uniform instability (parameter, T, second order).
    uniform: Vec<(f64, f64, bool)>,
    /// The modulated instability where the modulated state wins.
    modulated: Vec<(f64, f64)>,
    /// Equal Omega of the ordered and the normal state.
    first_order: Vec<(f64, f64)>,
    /// Where the uniform state's minimum disappears.
    spinodal: Vec<(f64, f64)>,
}

impl PhaseLines {
    fn new(d: &PhaseDiagram) -> Self {
        let ok = solved_columns(d);
        let kelvin = |l: &[(f64, f64)]| -> Vec<(f64, f64)> {
            l.iter().map(|&(x, t)| (x, mev_to_kelvin(t))).collect()
        };
        PhaseLines {
            uniform: ok
                .iter()
                .filter(|c| c.t_uniform > 0.0)
                .map(|c| {
                    (
                        c.value,
                        mev_to_kelvin(c.t_uniform),
                        c.beta_uniform.unwrap_or(0.0) > 0.0,
                    )
                })
                .collect(),
            modulated: ok
                .iter()
                .filter(|c| modulated_wins(c))
                .map(|c| (c.value, mev_to_kelvin(c.t_modulated)))
                .collect(),
            first_order: kelvin(&d.first_order),
            spinodal: kelvin(&d.spinodal),
        }
    }
}

/// The columns that were solved.
fn solved_columns(d: &PhaseDiagram) -> Vec<&Column> {
    d.columns.iter().filter_map(|c| c.as_ref().ok()).collect()
}

/// Whether the modulated state wins on a column's instability line.
fn modulated_wins(c: &Column) -> bool {
    c.t_modulated > 0.0 && c.q_star != [0.0, 0.0]
}

/// Points `(value, T)` as JSON objects.
fn points_json(points: impl Iterator<Item = (f64, f64)>) -> Vec<Value> {
    points
        .map(|(x, t)| json!({"value": x, "temperature_K": t}))
        .collect()
}

/// The JSON report of a phase diagram.
fn phases_json(p: &PhaseInputs, lines: &PhaseLines) -> Value {
    let (d, axis) = (p.diagram, &p.grid.axes[0]);
    let mut v = header(p.src, "phases");
    v["channel"] = json!(p.model.channels()[d.channel].label());
    v["vary"] = json!({"path": axis.path(), "from": axis.from, "to": axis.to, "n": axis.n, "unit": key_unit(&axis.key)});
    v["temperatures_K"] = json!(d
        .temperatures
        .iter()
        .map(|&t| mev_to_kelvin(t))
        .collect::<Vec<_>>());
    v["lines"] = json!({
        "uniform_instability": lines.uniform.iter().map(|&(x, t, so)| json!({"value": x, "temperature_K": t, "second_order": so})).collect::<Vec<_>>(),
        "modulated_instability": points_json(lines.modulated.iter().copied()),
        "first_order": points_json(lines.first_order.iter().copied()),
        "spinodal_uniform": points_json(lines.spinodal.iter().copied()),
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
            .map(|c| column_json(c.as_ref().map_err(String::as_str)))
            .collect(),
    );
    v
}

/// One column of the diagram as JSON: the state and gap of each cell.
fn column_json(c: Result<&Column, &str>) -> Value {
    match c {
        Ok(c) => json!({
            "value": c.value,
            "states": c.cells.iter().map(|x| match x { Ok(x) => json!(x.state), Err(_) => json!("failed") }).collect::<Vec<_>>(),
            "delta_meV": c.cells.iter().map(|x| x.as_ref().map(|x| x.delta).ok()).collect::<Vec<_>>(),
        }),
        Err(r) => json!({"status": "failed", "reason": r}),
    }
}

/// The phase figure: regions shaded, second-order lines solid, first-order dashed, the
/// metastability band, special points marked, preferred structures labelled.
fn phase_plot(p: &PhaseInputs, lines: &PhaseLines) -> RegionPlot {
    let d = p.diagram;
    let (xs, ys, regions) = region_grid(p);
    RegionPlot {
        title: format!(
            "Phase diagram, channel {}",
            p.model.channels()[d.channel].label()
        ),
        x_label: axis_label(p.grid, 0),
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
        series: phase_series(d, lines),
        bands: metastable_band(lines).into_iter().collect(),
        markers: special_markers(d),
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
    }
}

/// Cell centres (parameter, T in K) and the region index of every cell (row-major, T outer):
/// the state, 3 for coexistence, 4 for undetermined, `None` for a failed cell.
fn region_grid(p: &PhaseInputs) -> (Vec<f64>, Vec<f64>, Vec<Option<usize>>) {
    let d = p.diagram;
    let xs: Vec<f64> = d
        .columns
        .iter()
        .enumerate()
        .map(|(i, c)| {
            c.as_ref()
                .map(|c| c.value)
                .unwrap_or_else(|_| p.grid.values(i)[0])
        })
        .collect();
    let ys: Vec<f64> = d.temperatures.iter().map(|&t| mev_to_kelvin(t)).collect();
    let mut regions = vec![None; xs.len() * ys.len()];
    for (ix, c) in d.columns.iter().enumerate() {
        let Ok(c) = c else { continue };
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
    (xs, ys, regions)
}

/// One point per solved column at `t` (meV) where `on`, NaN elsewhere, so that separate
/// stretches of a line are not joined.
fn column_line(
    d: &PhaseDiagram,
    on: impl Fn(&Column) -> bool,
    t: impl Fn(&Column) -> f64,
) -> Vec<(f64, f64)> {
    solved_columns(d)
        .into_iter()
        .map(|c| {
            let y = if on(c) { mev_to_kelvin(t(c)) } else { f64::NAN };
            (c.value, y)
        })
        .collect()
}

/// The lines of the phase figure that have at least one finite point.
fn phase_series(d: &PhaseDiagram, lines: &PhaseLines) -> Vec<Series> {
    let uniform_line = |second_order: bool| {
        column_line(
            d,
            |c| c.t_uniform > 0.0 && ((c.beta_uniform.unwrap_or(0.0) > 0.0) == second_order),
            |c| c.t_uniform,
        )
    };
    let mut series = vec![
        Series {
            label: "second order (uniform)".into(),
            points: uniform_line(true),
            dash: Dash::Solid,
            color: 0,
        },
        Series {
            label: "uniform instability, continued (beta < 0)".into(),
            points: uniform_line(false),
            dash: Dash::Dotted,
            color: 0,
        },
        Series {
            label: "modulated instability".into(),
            points: column_line(d, modulated_wins, |c| c.t_modulated),
            dash: Dash::Solid,
            color: 1,
        },
        Series {
            label: "first order (equal Omega)".into(),
            points: lines.first_order.clone(),
            dash: Dash::Dashed,
            color: 2,
        },
    ];
    series.retain(|s| s.points.iter().any(|p| p.1.is_finite()));
    series
}

/// The band between the first-order line and the uniform state's spinodal (both sorted by
/// temperature), when both exist.
fn metastable_band(lines: &PhaseLines) -> Option<Band> {
    if lines.spinodal.is_empty() || lines.first_order.is_empty() {
        return None;
    }
    let by_temperature = |l: &[(f64, f64)]| {
        let mut l = l.to_vec();
        l.sort_by(|a, b| a.1.total_cmp(&b.1));
        l
    };
    Some(Band {
        label: "uniform metastable (first-order line to spinodal)".into(),
        lower: by_temperature(&lines.first_order),
        upper: by_temperature(&lines.spinodal),
        color: 4,
    })
}

/// The tricritical and Lifshitz points, noting when they are off the phase boundary.
fn special_markers(d: &PhaseDiagram) -> Vec<Marker> {
    let marker = |p: &SpecialPoint, name: &str, off: &str, color: usize| Marker {
        label: format!("{name}{}", if p.on_boundary { "" } else { off }),
        x: p.value,
        y: mev_to_kelvin(p.t),
        color,
    };
    let mut markers = Vec::new();
    if let Some(p) = &d.tricritical {
        markers.push(marker(p, "tricritical", " (preempted)", 3));
    }
    if let Some(p) = &d.lifshitz {
        markers.push(marker(p, "Lifshitz", " (off the boundary)", 5));
    }
    markers
}
