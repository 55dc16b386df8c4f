//! Phase-diagram reports: CSV of the grid, JSON with the lines as point lists and the tricritical
//! and Lifshitz points, and the figure (regions shaded, second-order lines solid, first-order
//! dashed, the metastability band, special points marked).

use super::error::ReportError;
use super::figures::{write_region_plot, Band, Dash, Marker, RegionPlot, Series};
use super::files::{failed_cells, figure_files, write_csv, write_json};
use super::scan::{axis_label, key_unit};
use super::tables::header;
use crate::config::ConfigSource;
use crate::error::NestorError;
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
    let lines = PhaseLines::new(d, grid);
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
                        Err(r) => failed_cells(6, &r.to_string()).collect(),
                    };
                    rows.push(lead.into_iter().chain(rest).collect());
                }
            }
            Err(r) => {
                let lead = [String::new(), String::new()];
                rows.push(
                    lead.into_iter()
                        .chain(failed_cells(6, &r.to_string()))
                        .collect(),
                );
            }
        }
    }
    rows
}

/// The CSV cells of a solved grid cell after its parameter and temperature (`ns` spin
/// channels); the last (reason) holds the cell's note, if any.
fn cell_fields(x: &Cell, ns: f64) -> Vec<String> {
    vec![
        format!("{:?}", x.state).to_lowercase(),
        format!("{}", x.delta),
        format!("{}", x.q[0]),
        format!("{}", x.q[1]),
        format!("{}", ns * x.omega),
        x.uniform_omega
            .map(|o| format!("{}", ns * o))
            .unwrap_or_default(),
        format!("{}", x.normal_minimum),
        x.note.clone().unwrap_or_default(),
    ]
}

/// The lines and special points of one branch of a phase diagram, temperatures in K.
struct BranchLines {
    /// The parameter range of the branch (its first and last column).
    range: [f64; 2],
    /// The uniform instability (parameter, T, second order).
    uniform: Vec<(f64, f64, bool)>,
    /// The modulated instability where the modulated state wins.
    modulated: Vec<(f64, f64)>,
    /// Equal Omega of the ordered and the normal state.
    first_order: Vec<(f64, f64)>,
    /// Where the uniform state's minimum disappears.
    spinodal: Vec<(f64, f64)>,
    tricritical: Option<SpecialPoint>,
    lifshitz: Option<SpecialPoint>,
}

/// The lines of every branch of a phase diagram.
struct PhaseLines {
    branches: Vec<BranchLines>,
}

impl PhaseLines {
    fn new(d: &PhaseDiagram, grid: &Grid) -> Self {
        let kelvin = |l: &[(f64, f64)]| -> Vec<(f64, f64)> {
            l.iter().map(|&(x, t)| (x, mev_to_kelvin(t))).collect()
        };
        let branches = d
            .branches
            .iter()
            .map(|b| {
                let ok = solved_columns(&d.columns[b.columns[0]..=b.columns[1]]);
                BranchLines {
                    range: [grid.values(b.columns[0])[0], grid.values(b.columns[1])[0]],
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
                    first_order: kelvin(&b.first_order),
                    spinodal: kelvin(&b.spinodal),
                    tricritical: b.tricritical,
                    lifshitz: b.lifshitz,
                }
            })
            .collect();
        PhaseLines { branches }
    }
}

/// The columns that were solved.
fn solved_columns(columns: &[Result<Column, NestorError>]) -> Vec<&Column> {
    columns.iter().filter_map(|c| c.as_ref().ok()).collect()
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

/// The lines of one branch as JSON.
fn lines_json(b: &BranchLines) -> Value {
    json!({
        "uniform_instability": b.uniform.iter().map(|&(x, t, so)| json!({"value": x, "temperature_K": t, "second_order": so})).collect::<Vec<_>>(),
        "modulated_instability": points_json(b.modulated.iter().copied()),
        "first_order": points_json(b.first_order.iter().copied()),
        "spinodal_uniform": points_json(b.spinodal.iter().copied()),
    })
}

/// The JSON report of a phase diagram: one branch keeps its lines and special points at the
/// top level; several (a sweep through perfect nesting) are listed under `branches`, each with
/// its parameter range and the same keys.
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
    match lines.branches.as_slice() {
        [b] => {
            v["lines"] = lines_json(b);
            v["tricritical"] = special(&b.tricritical);
            v["lifshitz"] = special(&b.lifshitz);
        }
        branches => {
            v["branches"] = branches
                .iter()
                .map(|b| json!({"from": b.range[0], "to": b.range[1], "lines": lines_json(b), "tricritical": special(&b.tricritical), "lifshitz": special(&b.lifshitz)}))
                .collect();
        }
    }
    v["special_point_failures"] = json!(d.special_point_failures);
    v["structure_marks"] = d
        .structure_marks
        .iter()
        .map(|m| json!({"value": m.value, "temperature_K": mev_to_kelvin(m.t), "preferred": m.preferred, "wavevectors": m.wavevectors, "first_order": m.first_order, "failure": m.failure}))
        .collect();
    v["note"] = if lines.branches.len() > 1 {
        json!(format!("{NOTE}{BRANCHES_NOTE}"))
    } else {
        json!(NOTE)
    };
    v["columns"] = Value::Array(d.columns.iter().map(column_json).collect());
    v
}

/// The note of the phase JSON.
const NOTE: &str = "uniform_instability is the line g chi(0, T) = 1 (second_order where beta > 0); the normal state's spinodal is that line, the uniform state's spinodal is where its minimum disappears; omega totals over spin channels";

/// Appended to [`NOTE`] when the sweep crosses perfect nesting.
const BRANCHES_NOTE: &str = "; the sweep crosses perfect nesting (the mismatch changes sign): the lines and special points of each side are under branches";

/// One column of the diagram as JSON: the state and gap of each cell.
fn column_json(c: &Result<Column, NestorError>) -> Value {
    match c {
        Ok(c) => json!({
            "value": c.value,
            "states": c.cells.iter().map(|x| match x { Ok(x) => json!(x.state), Err(_) => json!("failed") }).collect::<Vec<_>>(),
            "delta_meV": c.cells.iter().map(|x| x.as_ref().map(|x| x.delta).ok()).collect::<Vec<_>>(),
        }),
        Err(r) => json!({"status": "failed", "reason": r.to_string()}),
    }
}

/// The phase figure: regions shaded, second-order lines solid, first-order dashed, the
/// metastability band, special points marked, preferred structures labelled; the first-order
/// line, the band and the special points drawn per branch.
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
        ],
        series: phase_series(d, lines),
        bands: lines
            .branches
            .iter()
            .filter_map(metastable_band)
            .enumerate()
            .map(|(i, mut b)| {
                b.label = legend_once(&b.label, i == 0);
                b
            })
            .collect(),
        markers: special_markers(lines),
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
/// the state, `None` for a failed cell.
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
                regions[iy * xs.len() + ix] = Some(region(cell.state));
            }
        }
    }
    (xs, ys, regions)
}

/// One point per solved column at `t` (meV) where `on`, NaN elsewhere, so that separate
/// stretches of a line are not joined (figure only).
fn column_line(
    d: &PhaseDiagram,
    on: impl Fn(&Column) -> bool,
    t: impl Fn(&Column) -> f64,
) -> Vec<(f64, f64)> {
    solved_columns(&d.columns)
        .into_iter()
        .map(|c| {
            let y = if on(c) { mev_to_kelvin(t(c)) } else { f64::NAN };
            (c.value, y)
        })
        .collect()
}

/// The lines of the phase figure that have at least one finite point: the instability lines
/// across the axis, the first-order line of each branch on its own (in the legend once).
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
    ];
    series.extend(
        lines
            .branches
            .iter()
            .filter(|b| !b.first_order.is_empty())
            .enumerate()
            .map(|(i, b)| Series {
                label: legend_once("first order (equal Omega)", i == 0),
                points: b.first_order.clone(),
                dash: Dash::Dashed,
                color: 2,
            }),
    );
    series.retain(|s| s.points.iter().any(|p| p.1.is_finite()));
    series
}

/// The legend text for the first of its kind, empty (no legend entry) for the others.
fn legend_once(label: &str, first: bool) -> String {
    if first {
        label.into()
    } else {
        String::new()
    }
}

/// The band between a branch's first-order line and its uniform state's spinodal (both sorted
/// by temperature), when both exist.
fn metastable_band(b: &BranchLines) -> Option<Band> {
    if b.spinodal.is_empty() || b.first_order.is_empty() {
        return None;
    }
    let by_temperature = |l: &[(f64, f64)]| {
        let mut l = l.to_vec();
        l.sort_by(|a, b| a.1.total_cmp(&b.1));
        l
    };
    Some(Band {
        label: "uniform metastable (first-order line to spinodal)".into(),
        lower: by_temperature(&b.first_order),
        upper: by_temperature(&b.spinodal),
        color: 4,
    })
}

/// The tricritical and Lifshitz points of every branch, noting when they are off the phase
/// boundary; each kind (colour) in the legend once, and drawn with the shape of its first
/// marker (see the region plot).
fn special_markers(lines: &PhaseLines) -> Vec<Marker> {
    let marker = |p: &SpecialPoint, name: &str, off: &str, color: usize| Marker {
        label: format!("{name}{}", if p.on_boundary { "" } else { off }),
        x: p.value,
        y: mev_to_kelvin(p.t),
        color,
    };
    let mut markers: Vec<Marker> = Vec::new();
    for b in &lines.branches {
        if let Some(p) = &b.tricritical {
            markers.push(marker(p, "tricritical", " (preempted)", 3));
        }
        if let Some(p) = &b.lifshitz {
            markers.push(marker(p, "Lifshitz", " (off the boundary)", 5));
        }
    }
    for i in 1..markers.len() {
        if markers[..i].iter().any(|m| m.color == markers[i].color) {
            markers[i].label.clear();
        }
    }
    markers
}
