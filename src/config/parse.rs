//! Validation of the raw TOML table into the frozen model: key by key, with messages naming the
//! file, the entry, the key and the allowed range. Also converts `lambda` to g with the pair
//! density of states of this configuration.

use super::PinnedCouplings;
use crate::error::InputError;
use crate::kernels::susceptibility::nesting_line;
use crate::kernels::{Accuracy, Shell};
use crate::model::{
    form_factor, spin_channels, Channel, CouplingInput, Dispersion, Lattice, Model, Pocket,
    PocketKind, Spin, SpinMatrix,
};
use crate::units::HBAR2_OVER_2ME;
use toml::{Table, Value};

const TOP_KEYS: &[&str] = &["pocket", "channel", "surface"];
const POCKET_KEYS: &[&str] = &[
    "name", "kind", "center", "mass", "offset", "velocity", "kf", "vf", "angle", "spin",
];
const CHANNEL_KEYS: &[&str] = &[
    "name",
    "pockets",
    "lambda",
    "g",
    "cutoff",
    "spin_matrix",
    "overlap",
];
const SURFACE_KEYS: &[&str] = &["lattice", "a", "b"];

/// Above this lambda mean-field theory is doubtful (a warning, not an error).
const STRONG_LAMBDA: f64 = 0.5;

struct Ctx<'a> {
    origin: &'a str,
    entry: String,
}

impl Ctx<'_> {
    fn err(&self, key: &str, why: impl std::fmt::Display) -> InputError {
        InputError::new(format!("{}: {}: `{key}`: {why}", self.origin, self.entry))
    }
    fn whole(&self, why: impl std::fmt::Display) -> InputError {
        InputError::new(format!("{}: {}: {why}", self.origin, self.entry))
    }
}

fn type_name(v: &Value) -> &'static str {
    match v {
        Value::String(_) => "a string",
        Value::Integer(_) => "an integer",
        Value::Float(_) => "a number",
        Value::Boolean(_) => "a boolean",
        Value::Datetime(_) => "a date",
        Value::Array(_) => "an array",
        Value::Table(_) => "a table",
    }
}

fn check_keys(ctx: &Ctx, t: &Table, allowed: &[&str]) -> Result<(), InputError> {
    for k in t.keys() {
        if !allowed.contains(&k.as_str()) {
            return Err(ctx.err(
                k,
                format!("unknown key; allowed keys: {}", allowed.join(", ")),
            ));
        }
    }
    Ok(())
}

fn number(ctx: &Ctx, key: &str, v: &Value, what: &str) -> Result<f64, InputError> {
    let x = match v {
        Value::Float(x) => *x,
        Value::Integer(i) => *i as f64,
        other => {
            return Err(ctx.err(key, format!("expected {what}, got {}", type_name(other))));
        }
    };
    if !x.is_finite() {
        return Err(ctx.err(key, format!("expected {what}, got a non-finite number")));
    }
    Ok(x)
}

/// A number in (lo, hi].
fn positive(ctx: &Ctx, key: &str, v: &Value, unit: &str, hi: f64) -> Result<f64, InputError> {
    let what = format!("a number in (0, {hi}] {unit}");
    let x = number(ctx, key, v, &what)?;
    if !(x > 0.0 && x <= hi) {
        return Err(ctx.err(key, format!("{x} is out of range: expected {what}")));
    }
    Ok(x)
}

/// A number or a pair [x, y], each in (0, hi].
fn scalar_or_pair(
    ctx: &Ctx,
    key: &str,
    v: &Value,
    unit: &str,
    hi: f64,
) -> Result<[f64; 2], InputError> {
    match v {
        Value::Array(a) => {
            if a.len() != 2 {
                return Err(ctx.err(
                    key,
                    format!(
                        "expected a number or a pair [x, y] in (0, {hi}] {unit}, got {} components",
                        a.len()
                    ),
                ));
            }
            Ok([
                positive(ctx, key, &a[0], unit, hi)?,
                positive(ctx, key, &a[1], unit, hi)?,
            ])
        }
        other => {
            let x = positive(ctx, key, other, unit, hi)?;
            Ok([x, x])
        }
    }
}

fn string<'v>(ctx: &Ctx, key: &str, v: &'v Value, what: &str) -> Result<&'v str, InputError> {
    v.as_str()
        .ok_or_else(|| ctx.err(key, format!("expected {what}, got {}", type_name(v))))
}

fn required<'t>(ctx: &Ctx, t: &'t Table, key: &str, what: &str) -> Result<&'t Value, InputError> {
    t.get(key)
        .ok_or_else(|| ctx.err(key, format!("missing; expected {what}")))
}

fn parse_pocket(origin: &str, i: usize, v: &Value) -> Result<Pocket, InputError> {
    let mut ctx = Ctx {
        origin,
        entry: format!("[[pocket]] #{}", i + 1),
    };
    let t = v
        .as_table()
        .ok_or_else(|| ctx.whole("each [[pocket]] must be a table"))?;
    let name = string(
        &ctx,
        "name",
        required(&ctx, t, "name", "a unique label")?,
        "a unique label",
    )?;
    if name.trim().is_empty() || name.contains(['.', '=', '[', ']']) {
        return Err(ctx.err("name", "must be non-empty and contain none of . = [ ]"));
    }
    ctx.entry = format!("pocket \"{name}\"");
    check_keys(&ctx, t, POCKET_KEYS)?;
    let kind_s = string(
        &ctx,
        "kind",
        required(&ctx, t, "kind", "\"electron\", \"hole\" or \"dirac\"")?,
        "\"electron\", \"hole\" or \"dirac\"",
    )?;
    let kind = match kind_s {
        "electron" => PocketKind::Electron,
        "hole" => PocketKind::Hole,
        "dirac" => PocketKind::Dirac,
        other => {
            return Err(ctx.err(
                "kind",
                format!(
                    "`{other}` is not a pocket kind; allowed: \"electron\", \"hole\", \"dirac\""
                ),
            ))
        }
    };
    let center = match required(&ctx, t, "center", "[kx, ky] in 1/nm")? {
        Value::Array(a) if a.len() == 2 => [
            number(&ctx, "center", &a[0], "[kx, ky] in 1/nm")?,
            number(&ctx, "center", &a[1], "[kx, ky] in 1/nm")?,
        ],
        Value::Array(a) => {
            return Err(ctx.err(
                "center",
                format!("expected [kx, ky] in 1/nm, got {} components", a.len()),
            ))
        }
        other => {
            return Err(ctx.err(
                "center",
                format!("expected [kx, ky] in 1/nm, got {}", type_name(other)),
            ))
        }
    };
    if center.iter().any(|c| c.abs() > 1e3) {
        return Err(ctx.err("center", "components must lie in [-1000, 1000] 1/nm"));
    }
    let angle_deg = match t.get("angle") {
        Some(v) => number(&ctx, "angle", v, "an angle in degrees")?,
        None => 0.0,
    };
    if angle_deg.abs() > 360.0 {
        return Err(ctx.err(
            "angle",
            format!("{angle_deg} is out of range: expected degrees in [-360, 360]"),
        ));
    }
    let offset = t
        .get("offset")
        .map(|v| number(&ctx, "offset", v, "an energy in meV"))
        .transpose()?;
    if let Some(o) = offset {
        if o.abs() > 1e5 {
            return Err(ctx.err(
                "offset",
                format!("{o} is out of range: expected |offset| <= 1e5 meV"),
            ));
        }
    }
    let dispersion = match kind {
        PocketKind::Electron | PocketKind::Hole => {
            let sign = if kind == PocketKind::Electron {
                1.0
            } else {
                -1.0
            };
            if t.contains_key("velocity") {
                return Err(ctx.err(
                    "velocity",
                    format!("a {kind_s} pocket takes `mass` + `offset`, or `kf` + `vf`; `velocity` is for \"dirac\" pockets"),
                ));
            }
            let has_mass = t.contains_key("mass");
            let has_kf = t.contains_key("kf") || t.contains_key("vf");
            let (c, offset) = match (has_mass, has_kf) {
                (true, true) => {
                    return Err(ctx.whole("give either `mass` + `offset`, or `kf` + `vf`, not both"))
                }
                (false, false) => {
                    return Err(ctx.err(
                        "mass",
                        "missing; a parabolic pocket needs `mass` (electron masses) + `offset` (meV), or `kf` (1/nm) + `vf` (hbar v, meV nm)",
                    ))
                }
                (true, false) => {
                    let m = scalar_or_pair(&ctx, "mass", &t["mass"], "electron masses", 1e3)?;
                    if m.iter().any(|&x| x < 1e-3) {
                        return Err(ctx.err("mass", "out of range: expected masses in [0.001, 1000] electron masses"));
                    }
                    let offset = offset.ok_or_else(|| {
                        ctx.err("offset", "missing; expected the band-edge energy in meV")
                    })?;
                    ([HBAR2_OVER_2ME / m[0], HBAR2_OVER_2ME / m[1]], offset)
                }
                (false, true) => {
                    if offset.is_some() {
                        return Err(ctx.err(
                            "offset",
                            "not allowed with `kf` + `vf` (the band edge follows from them: -+ hbar kF vF / 2)",
                        ));
                    }
                    let kf = positive(&ctx, "kf", required(&ctx, t, "kf", "kF in 1/nm")?, "1/nm", 1e2)?;
                    let vf = positive(&ctx, "vf", required(&ctx, t, "vf", "hbar vF in meV nm")?, "meV nm", 1e5)?;
                    // m = hbar kF / vF: hbar^2/(2m) = (hbar vF)/(2 kF); E0 = -+ hbar kF vF / 2.
                    let c = vf / (2.0 * kf);
                    let edge = kf * vf / 2.0;
                    if edge <= 0.0 || !c.is_finite() {
                        return Err(ctx.err(
                            "vf",
                            format!("kf = {kf} 1/nm with vf = {vf} meV nm gives a band edge kf vf / 2 = {edge} meV, which is not usable; allowed: kf vf / 2 > 0 and vf / kf finite"),
                        ));
                    }
                    ([c, c], -sign * edge)
                }
            };
            if sign * offset >= 0.0 {
                return Err(ctx.err(
                    "offset",
                    if kind == PocketKind::Electron {
                        format!("{offset} meV: an electron pocket's band edge must lie below the chemical potential (offset < 0), otherwise it has no Fermi surface")
                    } else {
                        format!("{offset} meV: a hole pocket's band edge must lie above the chemical potential (offset > 0), otherwise it has no Fermi surface")
                    },
                ));
            }
            Dispersion::Parabolic { sign, c, offset }
        }
        PocketKind::Dirac => {
            for k in ["mass", "kf", "vf"] {
                if t.contains_key(k) {
                    return Err(ctx.err(k, "a \"dirac\" pocket takes `velocity` (hbar v, meV nm) and `offset` (Dirac-point energy, meV)"));
                }
            }
            let v = scalar_or_pair(
                &ctx,
                "velocity",
                required(&ctx, t, "velocity", "hbar v in meV nm, or [vx, vy]")?,
                "meV nm",
                1e5,
            )?;
            let offset = offset.ok_or_else(|| {
                ctx.err(
                    "offset",
                    "missing; expected the Dirac-point energy in meV (non-zero)",
                )
            })?;
            if offset == 0.0 {
                return Err(ctx.err(
                    "offset",
                    "0 meV: a Dirac point at the chemical potential has no Fermi surface; the offset must be non-zero (< 0 electron-like, > 0 hole-like)",
                ));
            }
            Dispersion::Dirac {
                branch: if offset < 0.0 { 1.0 } else { -1.0 },
                v,
                offset,
            }
        }
    };
    let spin = match t.get("spin") {
        None => {
            if kind == PocketKind::Dirac {
                Spin::Helical {
                    winding: 1,
                    phase: 0.0,
                }
            } else {
                Spin::Degenerate
            }
        }
        Some(Value::String(s)) if s == "degenerate" => Spin::Degenerate,
        Some(Value::Table(st)) => {
            let sctx = Ctx {
                origin,
                entry: format!("pocket \"{name}\" spin"),
            };
            check_keys(&sctx, st, &["winding", "phase"])?;
            let w = match st.get("winding") {
                Some(Value::Integer(w)) if *w == 1 || *w == -1 => *w as i32,
                Some(other) => {
                    return Err(sctx.err("winding", format!("expected 1 or -1, got {other}")))
                }
                None => return Err(sctx.err("winding", "missing; expected 1 or -1")),
            };
            let phase = match st.get("phase") {
                Some(v) => number(&sctx, "phase", v, "a texture phase in degrees")?,
                None => 0.0,
            };
            Spin::Helical {
                winding: w,
                phase: phase.to_radians(),
            }
        }
        Some(other) => {
            return Err(ctx.err(
                "spin",
                format!(
                "expected \"degenerate\" or {{ winding = 1 or -1, phase = degrees }}, got {other}"
            ),
            ))
        }
    };
    Ok(Pocket::new(
        name.to_string(),
        kind,
        center,
        dispersion,
        angle_deg.to_radians(),
        spin,
    ))
}

fn parse_surface(origin: &str, v: &Value) -> Result<Lattice, InputError> {
    let ctx = Ctx {
        origin,
        entry: "[surface]".into(),
    };
    let t = v.as_table().ok_or_else(|| ctx.whole("must be a table"))?;
    check_keys(&ctx, t, SURFACE_KEYS)?;
    let lat = string(
        &ctx,
        "lattice",
        required(
            &ctx,
            t,
            "lattice",
            "\"square\", \"hexagonal\" or \"rectangular\"",
        )?,
        "\"square\", \"hexagonal\" or \"rectangular\"",
    )?;
    let a = positive(
        &ctx,
        "a",
        required(&ctx, t, "a", "the lattice constant in nm")?,
        "nm",
        1e3,
    )?;
    let b = t
        .get("b")
        .map(|v| positive(&ctx, "b", v, "nm", 1e3))
        .transpose()?;
    match (lat, b) {
        ("square", None) => Ok(Lattice::Square { a }),
        ("hexagonal", None) => Ok(Lattice::Hexagonal { a }),
        ("rectangular", Some(b)) => Ok(Lattice::Rectangular { a, b }),
        ("rectangular", None) => {
            Err(ctx.err("b", "missing; a rectangular lattice needs `b` in nm"))
        }
        ("square" | "hexagonal", Some(_)) => Err(ctx.err(
            "b",
            format!("only a rectangular lattice takes `b` (this one is {lat})"),
        )),
        (other, _) => Err(ctx.err(
            "lattice",
            format!(
                "`{other}` is not a lattice; allowed: \"square\", \"hexagonal\", \"rectangular\""
            ),
        )),
    }
}

pub(super) fn build_model(
    origin: &str,
    table: &Table,
    pinned: Option<&PinnedCouplings>,
    unpinned: &[String],
) -> Result<Model, InputError> {
    let top = Ctx {
        origin,
        entry: "top level".into(),
    };
    check_keys(&top, table, TOP_KEYS)?;
    let pockets_v = match table.get("pocket") {
        Some(Value::Array(a)) if !a.is_empty() => a,
        Some(_) => return Err(top.err("pocket", "expected one or more [[pocket]] tables")),
        None => {
            return Err(top.err(
                "pocket",
                "missing; the configuration needs at least one [[pocket]]",
            ))
        }
    };
    let mut pockets = Vec::new();
    for (i, v) in pockets_v.iter().enumerate() {
        let p = parse_pocket(origin, i, v)?;
        if pockets.iter().any(|q: &Pocket| q.name == p.name) {
            return Err(InputError::new(format!(
                "{origin}: pocket \"{}\": `name`: duplicate; pocket names must be unique",
                p.name
            )));
        }
        pockets.push(p);
    }
    let surface = table
        .get("surface")
        .map(|v| parse_surface(origin, v))
        .transpose()?;
    let channels_v: &[Value] = match table.get("channel") {
        Some(Value::Array(a)) => a,
        Some(_) => return Err(top.err("channel", "expected [[channel]] tables")),
        None => &[],
    };
    let mut warnings = Vec::new();
    let mut channels = Vec::new();
    for (i, v) in channels_v.iter().enumerate() {
        let mut ctx = Ctx {
            origin,
            entry: format!("[[channel]] #{}", i + 1),
        };
        let t = v
            .as_table()
            .ok_or_else(|| ctx.whole("each [[channel]] must be a table"))?;
        let name = t
            .get("name")
            .map(|v| string(&ctx, "name", v, "a label").map(str::to_string))
            .transpose()?;
        if let Some(n) = &name {
            if n.trim().is_empty() || n.contains(['.', '=', '[', ']']) {
                return Err(ctx.err("name", "must be non-empty and contain none of . = [ ]"));
            }
            if pockets.iter().any(|p| &p.name == n)
                || channels
                    .iter()
                    .any(|c: &Channel| c.name.as_ref() == Some(n))
            {
                return Err(ctx.err(
                    "name",
                    format!("`{n}` is already used by a pocket or channel"),
                ));
            }
            ctx.entry = format!("channel \"{n}\"");
        }
        check_keys(&ctx, t, CHANNEL_KEYS)?;
        let names = match required(
            &ctx,
            t,
            "pockets",
            "[\"electron-like\", \"hole-like\"] pocket names",
        )? {
            Value::Array(a) if a.len() == 2 => [
                string(&ctx, "pockets", &a[0], "pocket names")?,
                string(&ctx, "pockets", &a[1], "pocket names")?,
            ],
            _ => {
                return Err(ctx.err(
                    "pockets",
                    "expected two pocket names, electron-like first: [\"A\", \"B\"]",
                ))
            }
        };
        let find = |n: &str| -> Result<usize, InputError> {
            pockets.iter().position(|p| p.name == n).ok_or_else(|| {
                ctx.err(
                    "pockets",
                    format!(
                        "no pocket is named \"{n}\"; pockets: {}",
                        pockets
                            .iter()
                            .map(|p| format!("\"{}\"", p.name))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                )
            })
        };
        let (a, b) = (find(names[0])?, find(names[1])?);
        if a == b {
            return Err(ctx.err("pockets", "the two pockets must differ"));
        }
        if !pockets[a].is_electron_like() {
            return Err(ctx.err(
                "pockets",
                format!(
                    "the first pocket must be electron-like, but \"{}\" is hole-like{}",
                    names[0],
                    if pockets[b].is_electron_like() {
                        format!(" (swap them: [\"{}\", \"{}\"])", names[1], names[0])
                    } else {
                        String::new()
                    }
                ),
            ));
        }
        if pockets[b].is_electron_like() {
            return Err(ctx.err(
                "pockets",
                format!(
                    "the second pocket must be hole-like, but \"{}\" is electron-like",
                    names[1]
                ),
            ));
        }
        let label = name
            .clone()
            .unwrap_or_else(|| format!("{}-{}", names[0], names[1]));
        if name.is_none() {
            ctx.entry = format!("channel {label}");
        }
        let cutoff = positive(
            &ctx,
            "cutoff",
            required(&ctx, t, "cutoff", "the shell half-width Lambda in meV")?,
            "meV",
            1e4,
        )?;
        let spin_matrix = match t.get("spin_matrix") {
            None => SpinMatrix::Identity,
            Some(v) => match v {
                Value::String(s) if s == "1" => SpinMatrix::Identity,
                Value::Integer(1) => SpinMatrix::Identity,
                Value::String(s) if s == "x" => SpinMatrix::X,
                Value::String(s) if s == "y" => SpinMatrix::Y,
                Value::String(s) if s == "z" => SpinMatrix::Z,
                other => {
                    return Err(ctx.err(
                        "spin_matrix",
                        format!("`{other}` is not allowed; expected \"1\", \"x\", \"y\" or \"z\""),
                    ))
                }
            },
        };
        let overlap = match t.get("overlap") {
            None => 1.0,
            Some(v) => {
                let x = number(&ctx, "overlap", v, "an orbital overlap factor in [0, 10]")?;
                if !(0.0..=10.0).contains(&x) {
                    return Err(
                        ctx.err("overlap", format!("{x} is out of range: expected [0, 10]"))
                    );
                }
                x
            }
        };
        let coupling_input = match (t.get("lambda"), t.get("g")) {
            (Some(_), Some(_)) => return Err(ctx.whole("give either `lambda` or `g`, not both")),
            (None, None) => {
                return Err(ctx.err(
                    "lambda",
                    "missing; give the dimensionless coupling `lambda` (0 < lambda <= 10) or `g` in meV nm^2",
                ))
            }
            (Some(v), None) => CouplingInput::Lambda(positive(&ctx, "lambda", v, "(dimensionless)", 10.0)?),
            (None, Some(v)) => CouplingInput::G(positive(&ctx, "g", v, "meV nm^2", 1e9)?),
        };
        let (pa, pb) = (&pockets[a], &pockets[b]);
        let form = form_factor(pa, pb, spin_matrix);
        // Shell checks at q = 0.
        let shell =
            Shell::new(pa, pb, form, cutoff, [0.0, 0.0]).map_err(|e| ctx.err("cutoff", e))?;
        if shell.xi_centre > -cutoff {
            warnings.push(format!(
                "channel {label}: the shell |xi| < {cutoff} meV reaches past the band bottom (xi = {:.3} meV at the pockets' centres); the result depends on the band edges",
                shell.xi_centre
            ));
        }
        let line = nesting_line(&shell, &Accuracy::default())
            .map_err(|e| ctx.whole(format!("cannot compute the pair density of states: {e}")))?;
        let nu = line.nu.value;
        let pinned_g = pinned.and_then(|p| p.0.get(i).copied()).filter(|_| {
            !unpinned
                .iter()
                .any(|u| u == &label || Some(u) == name.as_ref())
        });
        let g = match (pinned_g, coupling_input) {
            (Some(g), _) => g,
            (None, CouplingInput::G(g)) => g,
            (None, CouplingInput::Lambda(l)) => {
                if nu <= 1e-12 * line.nu_unweighted {
                    return Err(ctx.err(
                        "lambda",
                        "the pair density of states of this channel vanishes (its form factor is zero on the nesting line), so lambda cannot be converted: give `g` in meV nm^2 instead",
                    ));
                }
                l / nu
            }
        };
        if line.mismatch.abs() > cutoff {
            warnings.push(format!(
                "channel {label}: the mismatch |h| = {:.4} meV exceeds the cutoff {cutoff} meV: the pockets are far from nested and no instability is expected",
                line.mismatch.abs()
            ));
        }
        if g * nu > STRONG_LAMBDA {
            warnings.push(format!(
                "channel {label}: lambda = g nu = {:.3} > {STRONG_LAMBDA}: strong coupling, where mean-field theory is doubtful",
                g * nu
            ));
        }
        channels.push(Channel {
            name,
            label,
            a,
            b,
            g,
            coupling_input,
            cutoff,
            spin_matrix,
            overlap,
            spin_channels: spin_channels(pa, pb),
            form,
            nu,
            mismatch: line.mismatch,
            mismatch_range: [line.mismatch_min, line.mismatch_max],
        });
    }
    Ok(Model {
        pockets,
        channels,
        surface,
        warnings,
    })
}
