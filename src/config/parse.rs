//! Parsing of the raw TOML table into pocket and channel specs, key by key, with messages naming
//! the file, the entry, the key and the allowed range; the specs then go to [`Model::new_pinned`],
//! which checks the values and computes every derived quantity.

use super::PinnedCouplings;
use crate::error::InputError;
use crate::model::{
    ChannelSpec, CouplingInput, DispersionSpec, Lattice, Model, PocketKind, PocketSpec, SpinMatrix,
    SpinSpec,
};
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
    crate::model::check_positive(x, unit, hi).map_err(|why| ctx.err(key, why))
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

/// A required number in (0, hi]; `key` is (name, what is expected when it is missing).
fn required_positive(
    ctx: &Ctx,
    t: &Table,
    (key, what): (&str, &str),
    unit: &str,
    hi: f64,
) -> Result<f64, InputError> {
    positive(ctx, key, required(ctx, t, key, what)?, unit, hi)
}

/// The i-th `[[section]]` entry as a table, with its message context.
fn entry_table<'a>(
    origin: &'a str,
    section: &str,
    i: usize,
    v: &'a Value,
) -> Result<(Ctx<'a>, &'a Table), InputError> {
    let ctx = Ctx {
        origin,
        entry: format!("[[{section}]] #{}", i + 1),
    };
    let t = v
        .as_table()
        .ok_or_else(|| ctx.whole(format!("each [[{section}]] must be a table")))?;
    Ok((ctx, t))
}

fn parse_pocket(origin: &str, i: usize, v: &Value) -> Result<PocketSpec, InputError> {
    let (mut ctx, t) = entry_table(origin, "pocket", i, v)?;
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
    let (kind, kind_s) = parse_kind(&ctx, t)?;
    let center = parse_center(&ctx, t)?;
    let angle_deg = match t.get("angle") {
        Some(v) => number(&ctx, "angle", v, "an angle in degrees")?,
        None => 0.0,
    };
    let dispersion = match kind {
        PocketKind::Electron | PocketKind::Hole => parse_parabolic(&ctx, t, kind_s)?,
        PocketKind::Dirac => parse_cone(&ctx, t)?,
    };
    let spin = parse_spin(&ctx, origin, name, t, kind)?;
    Ok(PocketSpec {
        name: name.to_string(),
        kind,
        center,
        angle_deg,
        dispersion,
        spin,
    })
}

fn parse_kind<'t>(ctx: &Ctx, t: &'t Table) -> Result<(PocketKind, &'t str), InputError> {
    let kinds = "\"electron\", \"hole\" or \"dirac\"";
    let kind_s = string(ctx, "kind", required(ctx, t, "kind", kinds)?, kinds)?;
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
    Ok((kind, kind_s))
}

fn parse_center(ctx: &Ctx, t: &Table) -> Result<[f64; 2], InputError> {
    match required(ctx, t, "center", "[kx, ky] in 1/nm")? {
        Value::Array(a) if a.len() == 2 => Ok([
            number(ctx, "center", &a[0], "[kx, ky] in 1/nm")?,
            number(ctx, "center", &a[1], "[kx, ky] in 1/nm")?,
        ]),
        Value::Array(a) => Err(ctx.err(
            "center",
            format!("expected [kx, ky] in 1/nm, got {} components", a.len()),
        )),
        other => Err(ctx.err(
            "center",
            format!("expected [kx, ky] in 1/nm, got {}", type_name(other)),
        )),
    }
}

fn parse_offset(ctx: &Ctx, t: &Table) -> Result<Option<f64>, InputError> {
    t.get("offset")
        .map(|v| number(ctx, "offset", v, "an energy in meV"))
        .transpose()
}

/// `mass` + `offset`, or `kf` + `vf`, of an electron or hole pocket.
fn parse_parabolic(ctx: &Ctx, t: &Table, kind_s: &str) -> Result<DispersionSpec, InputError> {
    let offset = parse_offset(ctx, t)?;
    if t.contains_key("velocity") {
        return Err(ctx.err(
            "velocity",
            format!("a {kind_s} pocket takes `mass` + `offset`, or `kf` + `vf`; `velocity` is for \"dirac\" pockets"),
        ));
    }
    let has_mass = t.contains_key("mass");
    let has_kf = t.contains_key("kf") || t.contains_key("vf");
    match (has_mass, has_kf) {
        (true, true) => Err(ctx.whole("give either `mass` + `offset`, or `kf` + `vf`, not both")),
        (false, false) => Err(ctx.err(
            "mass",
            "missing; a parabolic pocket needs `mass` (electron masses) + `offset` (meV), or `kf` (1/nm) + `vf` (hbar v, meV nm)",
        )),
        (true, false) => {
            let mass = scalar_or_pair(ctx, "mass", &t["mass"], "electron masses", 1e3)?;
            let offset = offset.ok_or_else(|| {
                ctx.err("offset", "missing; expected the band-edge energy in meV")
            })?;
            Ok(DispersionSpec::Mass { mass, offset })
        }
        (false, true) => {
            if offset.is_some() {
                return Err(ctx.err(
                    "offset",
                    "not allowed with `kf` + `vf` (the band edge follows from them: -+ hbar kF vF / 2)",
                ));
            }
            let kf = required_positive(ctx, t, ("kf", "kF in 1/nm"), "1/nm", 1e2)?;
            let vf = required_positive(ctx, t, ("vf", "hbar vF in meV nm"), "meV nm", 1e5)?;
            Ok(DispersionSpec::FermiPoint { kf, vf })
        }
    }
}

/// `velocity` + `offset` of a Dirac pocket.
fn parse_cone(ctx: &Ctx, t: &Table) -> Result<DispersionSpec, InputError> {
    let offset = parse_offset(ctx, t)?;
    for k in ["mass", "kf", "vf"] {
        if t.contains_key(k) {
            return Err(ctx.err(k, "a \"dirac\" pocket takes `velocity` (hbar v, meV nm) and `offset` (Dirac-point energy, meV)"));
        }
    }
    let velocity = scalar_or_pair(
        ctx,
        "velocity",
        required(ctx, t, "velocity", "hbar v in meV nm, or [vx, vy]")?,
        "meV nm",
        1e5,
    )?;
    let offset = offset.ok_or_else(|| {
        ctx.err(
            "offset",
            "missing; expected the Dirac-point energy in meV (non-zero)",
        )
    })?;
    Ok(DispersionSpec::Cone { velocity, offset })
}

fn parse_spin(
    ctx: &Ctx,
    origin: &str,
    name: &str,
    t: &Table,
    kind: PocketKind,
) -> Result<SpinSpec, InputError> {
    match t.get("spin") {
        None if kind == PocketKind::Dirac => Ok(SpinSpec::Helical {
            winding: 1,
            phase_deg: 0.0,
        }),
        None => Ok(SpinSpec::Degenerate),
        Some(Value::String(s)) if s == "degenerate" => Ok(SpinSpec::Degenerate),
        Some(Value::Table(st)) => {
            let sctx = Ctx {
                origin,
                entry: format!("pocket \"{name}\" spin"),
            };
            check_keys(&sctx, st, &["winding", "phase"])?;
            let winding = match st.get("winding") {
                Some(Value::Integer(w)) if *w == 1 || *w == -1 => *w as i32,
                Some(other) => {
                    return Err(sctx.err("winding", format!("expected 1 or -1, got {other}")))
                }
                None => return Err(sctx.err("winding", "missing; expected 1 or -1")),
            };
            let phase_deg = match st.get("phase") {
                Some(v) => number(&sctx, "phase", v, "a texture phase in degrees")?,
                None => 0.0,
            };
            Ok(SpinSpec::Helical { winding, phase_deg })
        }
        Some(other) => Err(ctx.err(
            "spin",
            format!(
                "expected \"degenerate\" or {{ winding = 1 or -1, phase = degrees }}, got {other}"
            ),
        )),
    }
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
    let a = required_positive(&ctx, t, ("a", "the lattice constant in nm"), "nm", 1e3)?;
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
    let pockets = pockets_v
        .iter()
        .enumerate()
        .map(|(i, v)| parse_pocket(origin, i, v))
        .collect::<Result<Vec<_>, _>>()?;
    let surface = table
        .get("surface")
        .map(|v| parse_surface(origin, v))
        .transpose()?;
    let channels_v: &[Value] = match table.get("channel") {
        Some(Value::Array(a)) => a,
        Some(_) => return Err(top.err("channel", "expected [[channel]] tables")),
        None => &[],
    };
    let mut channels = Vec::new();
    let mut pins = Vec::new();
    for (i, v) in channels_v.iter().enumerate() {
        channels.push(parse_channel(origin, i, v, &pockets)?);
        pins.push(pinned.and_then(|p| p.0.get(i).copied()));
    }
    Model::new_pinned(pockets, channels, surface, &pins)
        .map_err(|e| InputError::new(format!("{origin}: {e}")))
}

/// One `[[channel]]` entry as a spec.
fn parse_channel(
    origin: &str,
    i: usize,
    v: &Value,
    pockets: &[PocketSpec],
) -> Result<ChannelSpec, InputError> {
    let (mut ctx, t) = entry_table(origin, "channel", i, v)?;
    let name = t
        .get("name")
        .map(|v| string(&ctx, "name", v, "a label").map(str::to_string))
        .transpose()?;
    if let Some(n) = &name {
        if n.trim().is_empty() || n.contains(['.', '=', '[', ']']) {
            return Err(ctx.err("name", "must be non-empty and contain none of . = [ ]"));
        }
        ctx.entry = format!("channel \"{n}\"");
    }
    check_keys(&ctx, t, CHANNEL_KEYS)?;
    let (pair, names) = parse_channel_pockets(&ctx, t, pockets)?;
    let label = name
        .clone()
        .unwrap_or_else(|| format!("{}-{}", names[0], names[1]));
    if name.is_none() {
        ctx.entry = format!("channel {label}");
    }
    let cutoff = required_positive(
        &ctx,
        t,
        ("cutoff", "the shell half-width Lambda in meV"),
        "meV",
        1e4,
    )?;
    let spin_matrix = parse_spin_matrix(&ctx, t)?;
    let overlap = match t.get("overlap") {
        None => 1.0,
        Some(v) => number(&ctx, "overlap", v, "an orbital overlap factor in [0, 10]")?,
    };
    let coupling = parse_coupling(&ctx, t)?;
    Ok(ChannelSpec {
        name,
        pockets: pair,
        coupling,
        cutoff,
        spin_matrix,
        overlap,
    })
}

/// The two pocket names of a channel, resolved to indices.
fn parse_channel_pockets<'t>(
    ctx: &Ctx,
    t: &'t Table,
    pockets: &[PocketSpec],
) -> Result<([usize; 2], [&'t str; 2]), InputError> {
    let names = match required(
        ctx,
        t,
        "pockets",
        "[\"electron-like\", \"hole-like\"] pocket names",
    )? {
        Value::Array(a) if a.len() == 2 => [
            string(ctx, "pockets", &a[0], "pocket names")?,
            string(ctx, "pockets", &a[1], "pocket names")?,
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
    Ok(([find(names[0])?, find(names[1])?], names))
}

fn parse_spin_matrix(ctx: &Ctx, t: &Table) -> Result<SpinMatrix, InputError> {
    Ok(match t.get("spin_matrix") {
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
    })
}

fn parse_coupling(ctx: &Ctx, t: &Table) -> Result<CouplingInput, InputError> {
    match (t.get("lambda"), t.get("g")) {
        (Some(_), Some(_)) => Err(ctx.whole("give either `lambda` or `g`, not both")),
        (None, None) => Err(ctx.err(
            "lambda",
            "missing; give the dimensionless coupling `lambda` (0 < lambda <= 10) or `g` in meV nm^2",
        )),
        (Some(v), None) => Ok(CouplingInput::Lambda(positive(ctx, "lambda", v, "(dimensionless)", 10.0)?)),
        (None, Some(v)) => Ok(CouplingInput::G(positive(ctx, "g", v, "meV nm^2", 1e9)?)),
    }
}
