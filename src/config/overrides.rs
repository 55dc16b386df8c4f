//! `--set PATH=VALUE` overrides and `--vary PATH=FROM:TO:N` ranges on the raw TOML table.
//!
//! PATH is `NAME.key` where NAME is a pocket's or a channel's `name` (or `surface`), and key a
//! numeric field; two-component fields take `.x`/`.y` or `[0]`/`[1]` (`B.mass=0.3` makes an
//! isotropic mass, `B.mass.x=0.3` sets one axis).

use crate::error::InputError;
use crate::model::{degenerate_phase, Model, Param, CHANNEL_KEYS, POCKET_KEYS, SURFACE_KEYS};
use toml::{Table, Value};

/// Resolves `target.key[component]` against `model` into a typed parameter and checks that the
/// pocket or channel can take it (setting it to its present value). Messages name the file and
/// the path as `--set`/`--vary` do.
fn resolve(
    origin: &str,
    path: &str,
    model: &Model,
    (target, key, component): (&str, &str, Option<usize>),
) -> Result<Param, InputError> {
    let p = model
        .param(target, key, component)
        .map_err(|e| InputError::new(format!("{origin}: --set/--vary {path}: {e}")))?;
    model
        .with(&[(p, model.value(p))])
        .map_err(|e| InputError::new(format!("{origin}: {e}")))?;
    Ok(p)
}

/// One override: target name, key, optional component, value.
#[derive(Debug, Clone, PartialEq)]
pub struct Override {
    pub target: String,
    pub key: String,
    pub component: Option<usize>,
    pub value: f64,
}

impl Override {
    /// Parses `NAME.key=VALUE`.
    pub fn parse(s: &str) -> Result<Self, InputError> {
        let (path, value) = s.split_once('=').ok_or_else(|| {
            InputError::new(format!(
                "--set {s}: expected PATH=VALUE, e.g. --set B.offset=105 (PATH is NAME.key with NAME a pocket or channel name)"
            ))
        })?;
        let value: f64 = value.trim().parse().map_err(|_| {
            InputError::new(format!(
                "--set {s}: the value `{}` is not a number",
                value.trim()
            ))
        })?;
        if !value.is_finite() {
            return Err(InputError::new(format!(
                "--set {s}: the value must be finite"
            )));
        }
        let (target, key, component) = parse_path(path.trim(), "--set")?;
        Ok(Override {
            target,
            key,
            component,
            value,
        })
    }

    /// The typed parameter this override sets in `model` (built from the file `origin`).
    pub fn resolve(&self, origin: &str, model: &Model) -> Result<Param, InputError> {
        let parts = (self.target.as_str(), self.key.as_str(), self.component);
        resolve(origin, &self.path(), model, parts)
    }

    /// The PATH text, `NAME.key` or `NAME.key[c]`.
    pub fn path(&self) -> String {
        match self.component {
            Some(c) => format!("{}.{}[{c}]", self.target, self.key),
            None => format!("{}.{}", self.target, self.key),
        }
    }
}

/// A swept parameter: PATH from `from` to `to` in `n` points (inclusive).
#[derive(Debug, Clone, PartialEq)]
pub struct Range {
    pub target: String,
    pub key: String,
    pub component: Option<usize>,
    pub from: f64,
    pub to: f64,
    pub n: usize,
}

impl Range {
    /// The n values from `from` to `to` inclusive.
    pub fn values(&self) -> Vec<f64> {
        if self.n == 1 {
            return vec![self.from];
        }
        (0..self.n)
            .map(|i| self.from + (self.to - self.from) * i as f64 / (self.n - 1) as f64)
            .collect()
    }

    /// The override setting this range's path to `value`.
    pub fn at(&self, value: f64) -> Override {
        Override {
            target: self.target.clone(),
            key: self.key.clone(),
            component: self.component,
            value,
        }
    }

    /// The PATH text of the range.
    pub fn path(&self) -> String {
        self.at(0.0).path()
    }

    /// The typed parameter this range varies in `model` (built from the file `origin`).
    pub fn resolve(&self, origin: &str, model: &Model) -> Result<Param, InputError> {
        self.at(0.0).resolve(origin, model)
    }
}

/// Parses `PATH=FROM:TO:N`.
pub fn parse_range(s: &str) -> Result<Range, InputError> {
    let bad = || {
        InputError::new(format!(
            "--vary {s}: expected PATH=FROM:TO:N, e.g. --vary B.offset=95:115:41 (N from 1 to 100000)"
        ))
    };
    let (path, spec) = s.split_once('=').ok_or_else(bad)?;
    let parts: Vec<&str> = spec.split(':').collect();
    if parts.len() != 3 {
        return Err(bad());
    }
    let from: f64 = parts[0].trim().parse().map_err(|_| bad())?;
    let to: f64 = parts[1].trim().parse().map_err(|_| bad())?;
    let n: usize = parts[2].trim().parse().map_err(|_| bad())?;
    if !from.is_finite() || !to.is_finite() || n == 0 || n > 100_000 {
        return Err(bad());
    }
    let (target, key, component) = parse_path(path.trim(), "--vary")?;
    Ok(Range {
        target,
        key,
        component,
        from,
        to,
        n,
    })
}

fn parse_path(path: &str, flag: &str) -> Result<(String, String, Option<usize>), InputError> {
    let bad = |why: &str| InputError::new(format!("{flag} {path}: {why}"));
    let (target, rest) = path
        .split_once('.')
        .ok_or_else(|| bad("PATH must be NAME.key, e.g. B.offset or ab.cutoff"))?;
    if target.is_empty() {
        return Err(bad("the NAME before the dot is empty"));
    }
    let (key, component) = if let Some(k) = rest.strip_suffix("[0]") {
        (k, Some(0))
    } else if let Some(k) = rest.strip_suffix("[1]") {
        (k, Some(1))
    } else if let Some(k) = rest.strip_suffix(".x") {
        (k, Some(0))
    } else if let Some(k) = rest.strip_suffix(".y") {
        (k, Some(1))
    } else {
        (rest, None)
    };
    let key = key.strip_prefix("spin.").unwrap_or(key);
    let all: Vec<&str> = POCKET_KEYS
        .iter()
        .chain(CHANNEL_KEYS)
        .chain(SURFACE_KEYS)
        .copied()
        .collect();
    if !all.contains(&key) {
        return Err(bad(&format!(
            "`{key}` is not a numeric key that can be set; pocket keys: {}; channel keys: {}; surface keys: {}",
            POCKET_KEYS.join(", "),
            CHANNEL_KEYS.join(", "),
            SURFACE_KEYS.join(", ")
        )));
    }
    Ok((target.to_string(), key.to_string(), component))
}

/// Applies one override to the raw table.
pub fn apply(origin: &str, table: &mut Table, o: &Override) -> Result<(), InputError> {
    let path = o.path();
    // Shared by `--set` and by each point of `--vary`, so the message names both.
    let err = |why: String| InputError::new(format!("{origin}: --set/--vary {path}: {why}"));
    if o.target == "surface" {
        if !SURFACE_KEYS.contains(&o.key.as_str()) || o.component.is_some() {
            return Err(err(format!(
                "the surface has keys {}",
                SURFACE_KEYS.join(", ")
            )));
        }
        let s = table
            .get_mut("surface")
            .and_then(Value::as_table_mut)
            .ok_or_else(|| err("the configuration has no [surface] table".into()))?;
        s.insert(o.key.clone(), Value::Float(o.value));
        return Ok(());
    }
    let mut found: Vec<(&'static str, usize)> = Vec::new();
    for (section, _) in [("pocket", 0), ("channel", 0)] {
        if let Some(Value::Array(items)) = table.get(section) {
            for (i, it) in items.iter().enumerate() {
                if it.get("name").and_then(Value::as_str) == Some(o.target.as_str()) {
                    found.push((section, i));
                }
            }
        }
    }
    let (section, index) = match found.as_slice() {
        [one] => *one,
        [] => {
            return Err(err(format!(
                "no pocket or channel is named `{}` (a channel needs `name = \"...\"` to be set this way)",
                o.target
            )))
        }
        _ => {
            return Err(err(format!(
                "the name `{}` is used by more than one pocket or channel",
                o.target
            )))
        }
    };
    let allowed = if section == "pocket" {
        POCKET_KEYS
    } else {
        CHANNEL_KEYS
    };
    if !allowed.contains(&o.key.as_str()) {
        return Err(err(format!(
            "`{}` is a {section}; its numeric keys are {}",
            o.target,
            allowed.join(", ")
        )));
    }
    let item = table
        .get_mut(section)
        .and_then(Value::as_array_mut)
        .and_then(|a| a.get_mut(index))
        .and_then(Value::as_table_mut)
        .ok_or_else(|| err(format!("[[{section}]] entry is not a table")))?;
    set_key(item, o, &err)
}

/// Keys that say how a pocket's dispersion is given (`mass` + `offset`, `kf` + `vf`, or
/// `velocity` + `offset`): an override may change them but not add one the entry lacks.
const DISPERSION_KEYS: &[&str] = &["mass", "offset", "velocity", "kf", "vf"];

/// Sets the override's key in one `[[pocket]]` or `[[channel]]` table. An override changes a
/// value; it never adds a key or a table that would change the kind of a pocket, the way its
/// dispersion is given or its spin structure.
fn set_key(
    item: &mut Table,
    o: &Override,
    err: &dyn Fn(String) -> InputError,
) -> Result<(), InputError> {
    let v = Value::Float(o.value);
    if item.contains_key("kind") && DISPERSION_KEYS.contains(&o.key.as_str()) {
        check_dispersion_key(item, &o.key, err)?;
    }
    match o.key.as_str() {
        "phase" => set_phase(item, v, err)?,
        "lambda" | "g" => {
            let other = if o.key == "lambda" { "g" } else { "lambda" };
            item.remove(other);
            item.insert(o.key.clone(), v);
        }
        key if matches!(key, "mass" | "velocity" | "center") => match o.component {
            None if key == "center" => {
                return Err(err(
                    "center has two components: use center.x or center.y".into()
                ))
            }
            None => {
                item.insert(key.into(), v);
            }
            Some(c) => {
                let current = item.get(key).cloned();
                let mut pair = match current {
                    Some(Value::Array(a)) if a.len() == 2 => a,
                    Some(x @ (Value::Float(_) | Value::Integer(_))) => vec![x.clone(), x],
                    _ => vec![v.clone(), v.clone()],
                };
                pair[c] = v;
                item.insert(key.into(), Value::Array(pair));
            }
        },
        key => {
            if o.component.is_some() {
                return Err(err(format!("`{key}` has one component")));
            }
            item.insert(key.into(), v);
        }
    }
    Ok(())
}

/// Refuses a dispersion key that the pocket entry does not have (it would change how the
/// pocket is given, or its kind).
fn check_dispersion_key(
    item: &Table,
    key: &str,
    err: &dyn Fn(String) -> InputError,
) -> Result<(), InputError> {
    if item.contains_key(key) {
        return Ok(());
    }
    let name = item.get("name").and_then(Value::as_str).unwrap_or("?");
    let kind = item.get("kind").and_then(Value::as_str).unwrap_or("?");
    let given: Vec<String> = DISPERSION_KEYS
        .iter()
        .filter(|k| item.contains_key(**k))
        .map(|k| format!("`{k}`"))
        .collect();
    Err(err(format!(
        "pocket {name} ({kind}) has no `{key}` in the file (it is given by {}); an override may change a value, never the kind of a pocket or the way its dispersion is given",
        given.join(" + ")
    )))
}

/// Sets the texture phase of a helical pocket. A Dirac pocket without a `spin` key is helical
/// with winding 1 and phase 0, so its phase may be set; a spin-degenerate pocket has no phase.
fn set_phase(
    item: &mut Table,
    v: Value,
    err: &dyn Fn(String) -> InputError,
) -> Result<(), InputError> {
    let name = item
        .get("name")
        .and_then(Value::as_str)
        .unwrap_or("?")
        .to_string();
    let dirac = item.get("kind").and_then(Value::as_str) == Some("dirac");
    match item.get_mut("spin") {
        Some(Value::Table(t)) => {
            t.insert("phase".into(), v);
        }
        None if dirac => {
            let mut t = Table::new();
            t.insert("winding".into(), Value::Integer(1));
            t.insert("phase".into(), v);
            item.insert("spin".into(), Value::Table(t));
        }
        _ => return Err(err(degenerate_phase(&name).0)),
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_paths_and_ranges() {
        let o = Override::parse("B.offset=105").unwrap();
        assert_eq!(
            (o.target.as_str(), o.key.as_str(), o.value),
            ("B", "offset", 105.0)
        );
        let o = Override::parse("A.mass.y=0.7").unwrap();
        assert_eq!(o.component, Some(1));
        let r = parse_range("ab.cutoff=2:4:3").unwrap();
        assert_eq!(r.values(), vec![2.0, 3.0, 4.0]);
        assert!(Override::parse("B.offset").is_err());
        assert!(Override::parse("B.colour=1").is_err());
        assert!(Override::parse("B.offset=abc").is_err());
        assert!(parse_range("B.offset=1:2").is_err());
        assert!(parse_range("B.offset=1:2:0").is_err());
    }
}
