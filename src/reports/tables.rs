//! Tables: readable text and JSON for `check` and `tc`, CSV and JSON for scans, each JSON with a
//! provenance header (program version, configuration, units). Results arrive in meV; the tables
//! show temperatures in K.

use super::files::failed_cells;
use crate::config::ConfigSource;
use crate::model::{Channel, CouplingInput, Model, Pocket, Spin};
use crate::solvers::ordered::StateKind;
use crate::solvers::tc::nested_tc;
use crate::solvers::tc_channel::ChannelTc;
use crate::solvers::TcStatus;
use crate::sweeps::tc_scan::ScanPoint;
use crate::sweeps::Grid;
use crate::units::mev_to_kelvin;
use serde_json::{json, Value};

/// Units used by every table.
pub fn units() -> Value {
    json!({
        "energy": "meV (from the common chemical potential)",
        "temperature": "K",
        "momentum": "1/nm (from each pocket's centre)",
        "velocity": "hbar v in meV nm",
        "mass": "electron masses",
        "coupling_g": "meV nm^2, per spin channel",
        "density": "1/nm^2",
        "dos": "1/(meV nm^2)",
        "mismatch": "h = half the hole minus electron Fermi energy on the nesting line, meV",
    })
}

/// The provenance header of a JSON report.
pub fn header(src: &ConfigSource, command: &str) -> Value {
    json!({
        "program": "nestor",
        "version": env!("CARGO_PKG_VERSION"),
        "command": command,
        "config": src.origin,
        "config_toml": src.to_toml(),
        "units": units(),
    })
}

fn kelvin(t_mev: f64) -> f64 {
    mev_to_kelvin(t_mev)
}

fn opt_kelvin(r: &crate::solvers::TcReport) -> Value {
    match r.status {
        TcStatus::Unstable => json!(kelvin(r.tc)),
        TcStatus::NoInstability => json!(0.0),
    }
}

fn pocket_json(p: &Pocket) -> Value {
    let x = [1.0, 0.0];
    let y = [0.0, 1.0];
    json!({
        "name": p.name(),
        "kind": p.kind(),
        "electron_like": p.is_electron_like(),
        "center_per_nm": p.center(),
        "offset_meV": p.offset(),
        "angle_deg": p.angle().to_degrees(),
        "mass_me": p.masses(),
        "velocity_meV_nm": match p.dispersion() {
            crate::model::Dispersion::Dirac { v, .. } => json!(v),
            _ => Value::Null,
        },
        "spin": match p.spin() {
            Spin::Degenerate => json!("degenerate"),
            Spin::Helical { winding, phase } => json!({"winding": winding, "phase_deg": phase.to_degrees()}),
        },
        "kf_per_nm": [p.fermi_momentum_along(x), p.fermi_momentum_along(y)],
        "vf_meV_nm": [p.fermi_velocity_along(x), p.fermi_velocity_along(y)],
        "density_per_nm2": p.density(),
        "dos_per_meV_nm2": p.dos(),
    })
}

fn channel_json(m: &Model, c: &Channel) -> Value {
    json!({
        "name": c.name(),
        "label": c.label(),
        "pockets": [m.pockets()[c.a()].name(), m.pockets()[c.b()].name()],
        "nu_per_meV_nm2": c.nu(),
        "g_meV_nm2": c.g(),
        "lambda": c.lambda(),
        "coupling_given": match c.coupling_input() { CouplingInput::Lambda(_) => "lambda", CouplingInput::G(_) => "g" },
        "cutoff_meV": c.cutoff(),
        "spin_matrix": c.spin_matrix().label(),
        "spin_channels": c.spin_channels(),
        "mismatch_meV": c.mismatch(),
        "mismatch_min_meV": c.mismatch_range()[0],
        "mismatch_max_meV": c.mismatch_range()[1],
        "nesting_vector_per_nm": c.nesting_vector(m),
        "overlap": c.overlap(),
        "tc_nested_K": nested_tc(c).map(kelvin),
    })
}

/// `nestor check --json`.
pub fn check_json(src: &ConfigSource, m: &Model) -> Value {
    let mut v = header(src, "check");
    v["pockets"] = Value::Array(m.pockets().iter().map(pocket_json).collect());
    v["channels"] = Value::Array(m.channels().iter().map(|c| channel_json(m, c)).collect());
    v["warnings"] = json!(m.warnings());
    v
}

/// Aligned text columns.
pub fn text_table(head: &[&str], rows: &[Vec<String>]) -> String {
    let n = head.len();
    let mut w: Vec<usize> = head.iter().map(|h| h.len()).collect();
    for r in rows {
        for (i, c) in r.iter().enumerate().take(n) {
            w[i] = w[i].max(c.chars().count());
        }
    }
    let mut s = String::new();
    let line = |cells: Vec<String>, s: &mut String| {
        let parts: Vec<String> = cells
            .iter()
            .enumerate()
            .map(|(i, c)| format!("{:>width$}", c, width = w[i]))
            .collect();
        s.push_str(parts.join("  ").trim_end());
        s.push('\n');
    };
    line(head.iter().map(|h| h.to_string()).collect(), &mut s);
    for r in rows {
        line(r.clone(), &mut s);
    }
    s
}

fn g4(x: f64) -> String {
    if x == 0.0 {
        "0".into()
    } else if x.abs() >= 1e-3 && x.abs() < 1e5 {
        format!("{:.5}", x)
            .trim_end_matches('0')
            .trim_end_matches('.')
            .to_string()
    } else {
        format!("{x:.4e}")
    }
}

/// `nestor check` as text.
pub fn check_text(m: &Model) -> String {
    let mut s = String::from(
        "Pockets (momenta 1/nm, energies meV, hbar v meV nm, densities 1/nm^2, DOS 1/(meV nm^2))\n",
    );
    let rows = pocket_rows(m);
    s += &text_table(
        &[
            "pocket", "kind", "center", "offset", "kF x/y", "vF x/y", "density", "DOS", "spin",
        ],
        &rows,
    );
    if m.channels().is_empty() {
        s += "\nNo channels.\n";
        return s;
    }
    s += "\nChannels (nu per spin channel 1/(meV nm^2), g meV nm^2, cutoff and mismatch meV, Tc0 = 1.134 cutoff exp(-1/lambda) in K)\n";
    let rows = channel_rows(m);
    s += &text_table(
        &[
            "channel",
            "pockets",
            "nu",
            "g",
            "lambda",
            "cutoff",
            "M",
            "n_s",
            "mismatch h",
            "Ka-Kb",
            "Tc0 K",
        ],
        &rows,
    );
    s
}

/// Rows of the pocket table of `nestor check`.
fn pocket_rows(m: &Model) -> Vec<Vec<String>> {
    m.pockets()
        .iter()
        .map(|p| {
            let (x, y) = ([1.0, 0.0], [0.0, 1.0]);
            vec![
                p.name().to_string(),
                p.kind().label().to_string(),
                format!("({}, {})", g4(p.center()[0]), g4(p.center()[1])),
                g4(p.offset()),
                format!(
                    "{} / {}",
                    g4(p.fermi_momentum_along(x)),
                    g4(p.fermi_momentum_along(y))
                ),
                format!(
                    "{} / {}",
                    g4(p.fermi_velocity_along(x)),
                    g4(p.fermi_velocity_along(y))
                ),
                g4(p.density()),
                g4(p.dos()),
                match p.spin() {
                    Spin::Degenerate => "degenerate".into(),
                    Spin::Helical { winding, phase } => {
                        format!("helical w={winding:+} phi={}", g4(phase.to_degrees()))
                    }
                },
            ]
        })
        .collect()
}

/// Rows of the channel table of `nestor check`.
fn channel_rows(m: &Model) -> Vec<Vec<String>> {
    m.channels()
        .iter()
        .map(|c| {
            let q = c.nesting_vector(m);
            vec![
                c.label().to_string(),
                format!(
                    "{} -> {}",
                    m.pockets()[c.a()].name(),
                    m.pockets()[c.b()].name()
                ),
                g4(c.nu()),
                g4(c.g()),
                g4(c.lambda()),
                g4(c.cutoff()),
                c.spin_matrix().label().into(),
                format!("{}", c.spin_channels()),
                if (c.mismatch_range()[1] - c.mismatch_range()[0]).abs()
                    > 1e-9 * c.mismatch().abs().max(1.0)
                {
                    format!(
                        "{} [{}, {}]",
                        g4(c.mismatch()),
                        g4(c.mismatch_range()[0]),
                        g4(c.mismatch_range()[1])
                    )
                } else {
                    g4(c.mismatch())
                },
                format!("({}, {})", g4(q[0]), g4(q[1])),
                nested_tc(c)
                    .map(|t| g4(kelvin(t)))
                    .unwrap_or_else(|| "-".into()),
            ]
        })
        .collect()
}

/// One channel's Tc result as JSON (temperatures in K).
pub fn channel_tc_json(m: &Model, c: &Channel, r: &ChannelTc) -> Value {
    let q = r.modulated.q;
    let qn = q[0].hypot(q[1]);
    let angle = if r.modulated.isotropic || qn == 0.0 {
        Value::Null
    } else {
        let mut a = q[1].atan2(q[0]).to_degrees();
        if a <= -90.0 {
            a += 180.0;
        }
        if a > 90.0 {
            a -= 180.0;
        }
        json!(a)
    };
    json!({
        "label": c.label(),
        "pockets": [m.pockets()[c.a()].name(), m.pockets()[c.b()].name()],
        "method": r.method,
        "nu_per_meV_nm2": r.nu,
        "g_meV_nm2": r.g,
        "lambda": r.lambda,
        "mismatch_meV": r.mismatch,
        "tc_nested_K": r.tc_nested.map(kelvin),
        "tc_uniform_K": opt_kelvin(&r.uniform),
        "tc_uniform_error_K": kelvin(r.uniform.error),
        "tc_modulated_K": opt_kelvin(&r.modulated.tc),
        "tc_modulated_error_K": kelvin(r.modulated.tc.error),
        "q_star_per_nm": q,
        "q_star_abs_per_nm": qn,
        "q_star_abs_uncertainty_per_nm": r.modulated.q_error,
        "q_star_angle_deg": angle,
        "wavelength_nm": if qn > 0.0 { json!(2.0 * std::f64::consts::PI / qn) } else { Value::Null },
        "modulated_wins": r.modulated_wins(),
        "uniform_reason": r.uniform.reason,
        "modulated_reason": r.modulated.tc.reason,
        "notes": r.notes,
        "coupling_held": r.coupling_held,
    })
}

/// `nestor tc --json`.
pub fn tc_json(src: &ConfigSource, m: &Model, results: &[ChannelTc]) -> Value {
    let mut v = header(src, "tc");
    v["channels"] = Value::Array(
        m.channels()
            .iter()
            .zip(results)
            .map(|(c, r)| channel_tc_json(m, c, r))
            .collect(),
    );
    v["warnings"] = json!(m.warnings());
    v
}

/// `nestor tc` as text.
pub fn tc_text(m: &Model, results: &[ChannelTc]) -> String {
    let rows: Vec<Vec<String>> = m
        .channels()
        .iter()
        .zip(results)
        .map(|(c, r)| {
            let q = r.modulated.q;
            let qn = q[0].hypot(q[1]);
            vec![
                c.label().to_string(),
                g4(c.lambda()),
                g4(c.g()),
                r.tc_nested.map(|t| g4(kelvin(t))).unwrap_or("-".into()),
                if r.uniform.status == TcStatus::Unstable {
                    g4(kelvin(r.uniform.tc))
                } else {
                    "none".into()
                },
                if r.modulated.tc.status == TcStatus::Unstable {
                    g4(kelvin(r.modulated.tc.tc))
                } else {
                    "none".into()
                },
                if qn > 0.0 {
                    format!("({}, {})", g4(q[0]), g4(q[1]))
                } else {
                    "0".into()
                },
                if qn > 0.0 {
                    g4(2.0 * std::f64::consts::PI / qn)
                } else {
                    "-".into()
                },
            ]
        })
        .collect();
    let mut s = text_table(
        &[
            "channel",
            "lambda",
            "g",
            "Tc0 K",
            "Tc uniform K",
            "Tc modulated K",
            "q* 1/nm",
            "period nm",
        ],
        &rows,
    );
    for (c, r) in m.channels().iter().zip(results) {
        for why in [&r.uniform.reason, &r.modulated.tc.reason]
            .into_iter()
            .flatten()
        {
            s += &format!("{}: {}\n", c.label(), why);
        }
        for n in &r.notes {
            s += &format!("{}: {}\n", c.label(), n);
        }
    }
    s += "q* is known to fewer digits than Tc (the maximum over q is flat); period = 2 pi/|q*| of the order parameter's modulation.\n";
    s
}

/// Column names of the scan CSV.
pub fn scan_columns(grid: &Grid) -> Vec<String> {
    let mut c: Vec<String> = grid.axes.iter().map(|a| a.path()).collect();
    c.extend(
        [
            "channel",
            "status",
            "mismatch_meV",
            "tc_uniform_K",
            "tc_modulated_K",
            "q_star_x_per_nm",
            "q_star_y_per_nm",
            "q_star_abs_per_nm",
            "wavelength_nm",
            "reason",
        ]
        .iter()
        .map(|s| s.to_string()),
    );
    c
}

/// Rows of the scan CSV: one per point and channel (a failed point: one row with its reason).
pub fn scan_rows(points: &[ScanPoint], channel_labels: &[String]) -> Vec<Vec<String>> {
    let mut rows = Vec::new();
    for p in points {
        let vals: Vec<String> = p.values.iter().map(|v| format!("{v}")).collect();
        match &p.result {
            Ok(chs) => {
                for r in chs {
                    let q = r.modulated.q;
                    let qn = q[0].hypot(q[1]);
                    let mut row = vals.clone();
                    let reason = [&r.uniform.reason, &r.modulated.tc.reason]
                        .into_iter()
                        .flatten()
                        .cloned()
                        .collect::<Vec<_>>()
                        .join("; ");
                    row.extend([
                        r.label.clone(),
                        "ok".into(),
                        format!("{}", r.mismatch),
                        format!("{}", kelvin(r.uniform.tc)),
                        format!("{}", kelvin(r.modulated.tc.tc)),
                        format!("{}", q[0]),
                        format!("{}", q[1]),
                        format!("{qn}"),
                        if qn > 0.0 {
                            format!("{}", 2.0 * std::f64::consts::PI / qn)
                        } else {
                            String::new()
                        },
                        reason,
                    ]);
                    rows.push(row);
                }
            }
            Err(e) => {
                for l in channel_labels {
                    let mut row = vals.clone();
                    row.push(l.clone());
                    row.extend(failed_cells(7, &e.to_string()));
                    rows.push(row);
                }
            }
        }
    }
    rows
}

/// One channel's ordered states as JSON (Omega as the total over spin channels).
pub fn ordered_json(
    m: &Model,
    c: &Channel,
    st: &crate::solvers::ordered::OrderedStates,
    spectra: &[crate::observables::Spectrum],
) -> Value {
    let sols: Vec<Value> = st
        .solutions
        .iter()
        .zip(spectra)
        .map(|(s, sp)| {
            let mut v = json!({
                "state": s.state,
                "delta_meV": s.delta,
                "q_per_nm": s.q,
                "omega_meV_per_nm2": c.spin_channels() * s.omega,
                "omega_error_meV_per_nm2": c.spin_channels() * s.omega_error,
                "stability": s.stability,
                "quasiparticle_gap_meV": sp.gap,
                "gapless": sp.gap.is_none(),
                "gapless_arcs_deg": sp.gapless_arcs_deg,
                "coherence_per_nm2": s.delta / c.g(),
                "density_modulation": density_modulation(m, c, s),
            });
            if s.state == StateKind::Normal {
                let inst = st.normal_instability.as_ref();
                v["unstable_towards"] = json!(inst.map(|i| i.towards));
                v["instability_q_per_nm"] = json!(inst.map(|i| i.q));
            }
            v
        })
        .collect();
    json!({
        "label": c.label(),
        "pockets": [m.pockets()[c.a()].name(), m.pockets()[c.b()].name()],
        "spin_channels": c.spin_channels(),
        "g_meV_nm2": c.g(),
        "lambda": c.lambda(),
        "mismatch_meV": c.mismatch(),
        "temperature_K": kelvin(st.t),
        "solutions": sols,
        "chosen": st.chosen,
        "reason": st.normal_reason(),
    })
}

/// One channel's ordered states as text.
pub fn ordered_text(
    c: &Channel,
    st: &crate::solvers::ordered::OrderedStates,
    spectra: &[crate::observables::Spectrum],
) -> String {
    let rows: Vec<Vec<String>> = st
        .solutions
        .iter()
        .zip(spectra)
        .enumerate()
        .map(|(i, (s, sp))| {
            vec![
                format!("{}{}", if i == st.chosen { "* " } else { "" }, s.state),
                g4(s.delta),
                if s.q == [0.0, 0.0] {
                    "0".into()
                } else {
                    format!("({}, {})", g4(s.q[0]), g4(s.q[1]))
                },
                g4(c.spin_channels() * s.omega),
                match (s.state, &st.normal_instability) {
                    (StateKind::Normal, Some(i)) => format!("{} ({})", s.stability, i.towards),
                    _ => s.stability.to_string(),
                },
                match (s.delta > 0.0, sp.gap) {
                    (false, _) => "-".into(),
                    (true, Some(g)) => g4(g),
                    (true, None) => format!("gapless ({} arcs)", sp.gapless_arcs_deg.len()),
                },
                g4(s.delta / c.g()),
            ]
        })
        .collect();
    let mut s = format!(
        "channel {} at T = {} K (Omega total over {} spin channel(s), relative to the normal state)\n",
        c.label(),
        g4(kelvin(st.t)),
        c.spin_channels()
    );
    s += &text_table(
        &[
            "state",
            "Delta meV",
            "q 1/nm",
            "Omega meV/nm^2",
            "stability",
            "qp gap meV",
            "Delta/g 1/nm^2",
        ],
        &rows,
    );
    if let Some(why) = st.normal_reason() {
        s += &format!("normal state chosen: {why}\n");
    }
    s
}

/// First-order density modulation of a single-wavevector state (the crate docs, [`theory::patterns`](crate::theory::patterns)): at
/// P = K_a - K_b + q (folded into the first zone when a `[surface]` lattice is given), amplitude
/// 2 n_s |m_ab Delta| / g per nm^2 (charge for M = 1, spin density along i for M = sigma_i).
pub fn density_modulation(m: &Model, c: &Channel, s: &crate::solvers::ordered::Solution) -> Value {
    if s.delta <= 0.0 {
        return json!([]);
    }
    let k = c.nesting_vector(m);
    let p = [k[0] + s.q[0], k[1] + s.q[1]];
    let (folded, is_folded) = match &m.surface() {
        Some(l) => (l.fold(p), true),
        None => (p, false),
    };
    let n = folded[0].hypot(folded[1]);
    json!([{
        "kind": match c.spin_matrix() { crate::model::SpinMatrix::Identity => "charge", crate::model::SpinMatrix::X => "spin x", crate::model::SpinMatrix::Y => "spin y", crate::model::SpinMatrix::Z => "spin z" },
        "order": 1,
        "wavevector_per_nm": folded,
        "folded_into_first_zone": is_folded,
        "period_nm": if n > 0.0 { json!(2.0 * std::f64::consts::PI / n) } else { Value::Null },
        "amplitude_per_nm2": 2.0 * c.spin_channels() * (c.overlap() * s.delta).abs() / c.g(),
    }])
}
