//! Pattern reports: the structure ranking on the modulated instability line, the chosen state at
//! the configuration as given, its density waves (JSON and text), and the figure a scanning-probe
//! user holds against a topograph: the real-space density map beside its Fourier amplitudes.

use super::error::ReportError;
use super::figures::{write_density_plot, DensityPlot};
use super::files::{figure_files, write_json};
use super::tables::{header, text_table};
use crate::config::ConfigSource;
use crate::model::{Channel, Model};
use crate::observables::{
    correlation, density_map, envelope_map, gap_map, DensityWave, MapField, MapPlan,
};
use crate::solvers::pattern::{LinePoint, RankedStructure, StateCandidate};
use crate::units::mev_to_kelvin;
use serde_json::{json, Value};
use std::path::{Path, PathBuf};

/// Everything `pattern` reports.
pub struct PatternReport<'a> {
    /// The configuration as given (for the provenance header).
    pub src: &'a ConfigSource,
    /// The model built from it.
    pub model: &'a Model,
    /// Index of the channel reported.
    pub channel: usize,
    /// None when the line point could not be reached (the reason is in `line_failure`).
    pub line: Option<&'a LinePoint>,
    /// Why the line point could not be reached (when `line` is None).
    pub line_failure: Option<String>,
    /// The structures ranked on the line, in ranking order.
    pub structures: &'a [RankedStructure],
    /// The candidate states at the configuration as given.
    pub candidates: &'a [StateCandidate],
    /// Index of the chosen state in `candidates`.
    pub chosen: usize,
    /// Density waves of the chosen state.
    pub waves: &'a [DensityWave],
    /// The density maps: their fields of view (nm), samplings and notes.
    pub maps: &'a MapPlan,
    /// Correlation of the second-order density with |Delta(r)|^2 (None without second order).
    pub unpaired_correlation: Option<f64>,
}

fn channel<'a>(r: &PatternReport<'a>) -> &'a Channel {
    &r.model.channels()[r.channel]
}

/// The JSON report.
pub fn pattern_json(r: &PatternReport) -> Value {
    let ch = channel(r);
    let ns = ch.spin_channels();
    let mut v = header(r.src, "pattern");
    v["channel"] = json!(ch.label());
    v["line_point"] = line_point_json(r);
    v["structures"] = structures_json(r);
    v["quartic_units"] = json!(
        "F4/(n^2 |Delta|^4) in meV^-3 nm^-2 per spin channel, with the best relative phases; the plane wave's is beta/2"
    );
    v["states"] = states_json(r);
    v["chosen_state"] = json!(r.candidates.get(r.chosen).map(|c| c.name.clone()));
    v["omega_units"] = json!(format!(
        "Omega relative to the normal state, total over {ns} spin channel(s), meV/nm^2"
    ));
    v["density_modulation"] = waves_json(r);
    v["unpaired_carriers"] = match unpaired(r) {
        Some((c, carriers, small)) => json!({
            "charge_density_correlation_with_gap_squared": c,
            "carriers": carriers,
            "collect_where": if small { "|Delta(r)| is small" } else { "|Delta(r)| is large" },
        }),
        None => Value::Null,
    };
    v["field_of_view_nm"] = json!(r.maps.widest_fov_nm());
    v["requested_field_of_view_nm"] = json!(r.maps.requested_fov_nm);
    v["maps"] = json!(r.maps.maps);
    v["map_notes"] = json!(r.maps.notes);
    v["warnings"] = json!(r.model.warnings());
    v
}

/// The point of the modulated instability line the ranking was made at (or why it is missing).
fn line_point_json(r: &PatternReport) -> Value {
    match r.line {
        Some(l) => json!({
            "path": l.path,
            "value": l.value,
            "base_value": l.base_value,
            "temperature_K": mev_to_kelvin(l.t),
            "mismatch_meV": l.mismatch,
            "q_star_per_nm": l.q_star,
            "maxima_per_nm": l.maxima,
            "isotropic": l.isotropic,
        }),
        None => json!({"path": null, "value": null, "failure": r.line_failure}),
    }
}

/// The ranked structures.
fn structures_json(r: &PatternReport) -> Value {
    r.structures
        .iter()
        .map(|s| {
            json!({
                "name": s.name,
                "wavevectors_per_nm": s.wavevectors,
                "quadratic_per_meV_nm2": s.alpha,
                "on_line": s.on_line,
                "quartic": s.quartic,
                "quartic_error": s.quartic_error,
                "phases_rad": s.phases,
                "phases_matter": s.phases_matter,
                "first_order": s.first_order,
                "preferred": s.preferred,
            })
        })
        .collect()
}

/// The candidate states at the configuration as given.
fn states_json(r: &PatternReport) -> Value {
    r.candidates
        .iter()
        .map(|c| {
            json!({
                "name": c.name,
                "omega_meV_per_nm2": c.omega,
                "omega_error": c.omega_error,
                "components": c.components.iter().map(|(g, d)| json!({
                    "wavevector_per_nm": g, "amplitude_meV": d.norm(), "phase_rad": d.arg()
                })).collect::<Vec<_>>(),
                "notes": c.notes,
            })
        })
        .collect()
}

/// The density waves of the chosen state.
fn waves_json(r: &PatternReport) -> Value {
    r.waves
        .iter()
        .map(|w| {
            json!({
                "kind": w.kind,
                "order": w.order,
                "wavevector_per_nm": w.wavevector_per_nm,
                "folded_into_first_zone": w.folded_into_first_zone,
                "period_nm": w.period_nm,
                "amplitude_per_nm2": w.amplitude_per_nm2,
                "phase_rad": w.phase,
            })
        })
        .collect()
}

/// The correlation of the second-order charge (electron) density with |Delta(r)|^2, which carriers
/// are unpaired (holes for h > 0: the hole pocket is larger), and whether they collect where the
/// gap is small (for holes the unpaired density is minus the electron density).
fn unpaired(r: &PatternReport) -> Option<(f64, &'static str, bool)> {
    let c = r.unpaired_correlation?;
    let holes = channel(r).mismatch() > 0.0;
    let unpaired_corr = if holes { -c } else { c };
    Some((
        c,
        if holes { "holes" } else { "electrons" },
        unpaired_corr < 0.0,
    ))
}

fn g4(x: f64) -> String {
    format!("{x:.5e}")
}

/// The text report.
pub fn pattern_text(r: &PatternReport) -> String {
    let mut s = line_text(r);
    s += &structures_text(r);
    s += &states_text(r);
    s += &waves_text(r);
    s += &maps_text(r.maps);
    if let Some((c, carriers, small)) = unpaired(r) {
        s += &format!(
            "the unpaired {carriers} collect where |Delta(r)| is {} (correlation of the second-order charge density with |Delta|^2: {c:.3})\n",
            if small { "small" } else { "large" }
        );
    }
    s
}

/// Where the modulated instability line was reached (or why not), and the maxima of chi.
fn line_text(r: &PatternReport) -> String {
    let ch = channel(r);
    let mut s = String::new();
    match r.line {
        Some(l) => {
            s += &format!(
                "channel {}: modulated instability line at T = {:.4} K reached at {} = {:.6} (given: {:.6}); mismatch h = {:.5} meV, |q*| = {:.5}/nm\n",
                ch.label(),
                mev_to_kelvin(l.t),
                l.path,
                l.value,
                l.base_value,
                l.mismatch,
                l.q_star
            );
            if l.q_star == 0.0 {
                s += "the instability at this temperature is uniform (q* = 0): no modulated structure to rank\n";
            } else if !l.isotropic {
                s += &format!(
                    "symmetry-equivalent maxima of chi at |q*|: {}\n",
                    l.maxima
                        .iter()
                        .map(|q| format!("({:.5}, {:.5})", q[0], q[1]))
                        .collect::<Vec<_>>()
                        .join(" ")
                );
            }
        }
        None => {
            s += &format!(
                "channel {}: the modulated instability line could not be reached: {}\n",
                ch.label(),
                r.line_failure.as_deref().unwrap_or("unknown reason")
            );
        }
    }
    s
}

/// The table of ranked structures (empty without structures).
fn structures_text(r: &PatternReport) -> String {
    if r.structures.is_empty() {
        return String::new();
    }
    let mut s = String::new();
    let rows: Vec<Vec<String>> = r
        .structures
        .iter()
        .map(|x| {
            vec![
                format!("{}{}", if x.preferred { "* " } else { "" }, x.name),
                format!("{}", x.wavevectors.len()),
                g4(x.quartic),
                format!("{:.1e}", x.quartic_error),
                if x.on_line {
                    "shared".into()
                } else {
                    format!(
                        "own ({})",
                        x.alpha
                            .iter()
                            .map(|a| format!("{a:.2e}"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    )
                },
                if x.phases_matter {
                    x.phases
                        .iter()
                        .map(|p| format!("{:.0}", p.to_degrees()))
                        .collect::<Vec<_>>()
                        .join(" ")
                } else {
                    "free".into()
                },
                if x.first_order {
                    "first order: higher orders needed".into()
                } else {
                    String::new()
                },
            ]
        })
        .collect();
    s += &text_table(
        &[
            "structure",
            "n",
            "F4/(n^2 D^4)",
            "error",
            "quadratic term",
            "phases (deg)",
            "",
        ],
        &rows,
    );
    s += "* = preferred (smallest positive quartic coefficient at equal quadratic term); F4 in meV^-3 nm^-2 per spin channel.\n";
    s
}

/// The table of candidate states, the chosen one starred.
fn states_text(r: &PatternReport) -> String {
    let mut s = String::new();
    s += "\nstates at the configuration as given:\n";
    let rows: Vec<Vec<String>> = r
        .candidates
        .iter()
        .enumerate()
        .map(|(i, c)| {
            vec![
                format!("{}{}", if i == r.chosen { "* " } else { "" }, c.name),
                g4(c.omega),
                c.components
                    .iter()
                    .take(c.first_harmonics.max(1))
                    .map(|(_, d)| format!("{:.5}", d.norm()))
                    .collect::<Vec<_>>()
                    .join(" "),
                c.notes.join("; "),
            ]
        })
        .collect();
    s += &text_table(
        &["state", "Omega (meV/nm^2)", "|Delta_j| (meV)", "notes"],
        &rows,
    );
    s
}

/// One line on the density maps: each map's field, sampling and content.
fn maps_text(plan: &MapPlan) -> String {
    let maps: Vec<String> = plan
        .maps
        .iter()
        .map(|m| {
            let content = match m.envelope_above_per_nm {
                Some(k) => format!(
                    ", waves shorter than {:.4} nm as their local amplitude",
                    2.0 * std::f64::consts::PI / k
                ),
                None => String::new(),
            };
            format!(
                "{} {:.5} nm ({} x {} samples{content})",
                m.name, m.fov_nm, m.samples, m.samples
            )
        })
        .collect();
    format!("density maps: {}\n", maps.join("; "))
}

/// The table of the chosen state's density waves (empty without waves).
fn waves_text(r: &PatternReport) -> String {
    if r.waves.is_empty() {
        return String::new();
    }
    let mut s = String::new();
    s += "\ndensity modulation of the chosen state:\n";
    let rows: Vec<Vec<String>> = r
        .waves
        .iter()
        .map(|w| {
            vec![
                w.kind.to_string(),
                format!("{}", w.order),
                format!(
                    "({:.5}, {:.5})",
                    w.wavevector_per_nm[0], w.wavevector_per_nm[1]
                ),
                w.period_nm
                    .map(|p| format!("{p:.4}"))
                    .unwrap_or_else(|| "uniform".into()),
                g4(w.amplitude_per_nm2),
            ]
        })
        .collect();
    s += &text_table(
        &[
            "kind",
            "order",
            "P (1/nm)",
            "period (nm)",
            "amplitude (1/nm^2)",
        ],
        &rows,
    );
    s
}

/// Writes `<stem>.json` and the density maps of the first modulated wave's kind into `out`:
/// `<stem>.png` and `<stem>.svg` for a single map, `<stem>_<name>.png`/`.svg` for each of
/// several (atomic and envelope); returns the paths.
pub fn write_pattern(
    r: &PatternReport,
    out: &Path,
    stem: &str,
) -> Result<Vec<PathBuf>, ReportError> {
    let mut written = vec![write_json(
        out.join(format!("{stem}.json")),
        &pattern_json(r),
    )?];
    // The maps show the modulated waves (P != 0) of the first such wave's kind.
    let Some(first) = r.waves.iter().find(|w| w.period_nm.is_some()) else {
        return Ok(written);
    };
    for map in &r.maps.maps {
        let stem_path = if r.maps.maps.len() == 1 {
            out.join(stem)
        } else {
            out.join(format!("{stem}_{}", map.name))
        };
        write_density_plot(&density_plot(r, first.kind, map), &stem_path)?;
        written.extend(figure_files(&stem_path));
    }
    Ok(written)
}

/// One density map of the waves of one kind beside their Fourier peaks.
fn density_plot(r: &PatternReport, kind: &str, map: &MapField) -> DensityPlot {
    let n = map.samples;
    let state = r
        .candidates
        .get(r.chosen)
        .map(|c| c.name.clone())
        .unwrap_or_default();
    let t = r.line.map(|l| mev_to_kelvin(l.t)).unwrap_or(f64::NAN);
    let (what, density) = match map.envelope_above_per_nm {
        Some(k) => (
            format!(
                "{kind} density envelope (waves shorter than {:.3} nm as their local amplitude)",
                2.0 * std::f64::consts::PI / k
            ),
            envelope_map(r.waves, kind, map.fov_nm, n, k),
        ),
        None => (
            format!("{kind} density modulation"),
            density_map(r.waves, kind, map.fov_nm, n),
        ),
    };
    DensityPlot {
        title: format!(
            "{what}, channel {} ({state}), T = {t:.3} K",
            channel(r).label()
        ),
        fov_nm: map.fov_nm,
        n,
        density,
        colorbar_label: format!("{kind} density modulation (1/nm^2)"),
        peaks: fourier_peaks(r.waves, kind),
        k_extent: 0.0,
    }
}

/// The Fourier peaks `(kx, ky, amplitude, label)` of the modulated waves of one kind, each with
/// its mirror image; first-order peaks are labelled P1, P2, ..., difference harmonics
/// "q_i - q_j", and a peak crowding a labelled one stays unlabelled.
fn fourier_peaks(waves: &[DensityWave], kind: &str) -> Vec<(f64, f64, f64, String)> {
    let mut peaks: Vec<(f64, f64, f64, String)> = Vec::new();
    let kmax = waves
        .iter()
        .map(|w| w.wavevector_per_nm[0].hypot(w.wavevector_per_nm[1]))
        .fold(0.0, f64::max);
    for (i, w) in waves
        .iter()
        .filter(|w| w.kind == kind && w.period_nm.is_some())
        .enumerate()
    {
        let p = w.wavevector_per_nm;
        let label = if w.order == 1 {
            format!("P{}", i + 1)
        } else {
            "q_i - q_j".to_string()
        };
        // Peaks closer than 8% of the largest wavevector to a labelled one stay unlabelled.
        let crowded = peaks
            .iter()
            .any(|x| !x.3.is_empty() && (x.0 - p[0]).hypot(x.1 - p[1]) < 0.08 * kmax);
        let label = if crowded { String::new() } else { label };
        peaks.push((p[0], p[1], w.amplitude_per_nm2, label));
        peaks.push((-p[0], -p[1], w.amplitude_per_nm2, String::new()));
    }
    peaks
}

/// Correlation of the second-order density waves with |Delta(r)|^2 over the field of view
/// (negative: the unpaired carriers collect where the gap is small).
pub fn unpaired_correlation(
    waves: &[DensityWave],
    state: &StateCandidate,
    fov: f64,
) -> Option<f64> {
    let second: Vec<DensityWave> = waves.iter().filter(|w| w.order == 2).cloned().collect();
    if second.is_empty() {
        return None;
    }
    let n = 96;
    let d = density_map(&second, "charge", fov, n);
    let g = gap_map(state, fov, n);
    Some(correlation(&d, &g))
}
