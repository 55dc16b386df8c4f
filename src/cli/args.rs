//! Argument types shared by several subcommands (the configuration and its overrides, the Tc
//! solver options) and the loading of a configuration into a model.

use super::Failure;
use clap::{Args, ValueEnum};
use nestor::config::{ConfigSource, Override};
use nestor::model::Model;
use nestor::solvers::tc_channel::Method;
use nestor::solvers::TcSolver;
use std::path::PathBuf;

#[derive(Args, Debug)]
/// The configuration file and its overrides.
pub struct ConfigArgs {
    /// Configuration file (TOML: [[pocket]] and [[channel]] tables).
    pub config: PathBuf,
    /// Override one numeric field, NAME.key=VALUE (repeatable), e.g. --set B.offset=105 or
    /// --set ab.cutoff=4 (NAME is a pocket's or a channel's name; two-component keys take .x/.y).
    #[arg(long = "set", value_name = "PATH=VALUE")]
    pub set: Vec<String>,
}

#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
/// How chi is computed.
pub enum MethodArg {
    /// Full 2D momentum integral over the shell with the real dispersions.
    Exact,
    /// Weak-coupling digamma closed form (circular pockets, equal velocities; fast, approximate).
    Weak,
}

impl From<MethodArg> for Method {
    fn from(m: MethodArg) -> Method {
        match m {
            MethodArg::Exact => Method::Exact,
            MethodArg::Weak => Method::Weak,
        }
    }
}

#[derive(Args, Debug, Clone)]
/// Options of the Tc solver.
pub struct SolveOpts {
    /// How chi is computed.
    #[arg(long, value_enum, default_value = "exact")]
    pub method: MethodArg,
    /// Relative accuracy target of each susceptibility integral (1e-12 to 1e-3).
    #[arg(long, default_value_t = 1e-7, value_name = "REL")]
    pub rtol: f64,
}

impl ConfigArgs {
    /// Loads the configuration, applies `--set` and builds the model (warnings on stderr).
    pub fn load(&self) -> Result<(ConfigSource, Model), Failure> {
        let src = ConfigSource::load(&self.config)?;
        let overrides = self
            .set
            .iter()
            .map(|s| Override::parse(s))
            .collect::<Result<Vec<_>, _>>()?;
        let src = src.with_overrides(&overrides)?;
        let model = src.build(None)?;
        warn(&model);
        Ok((src, model))
    }
}

/// Prints the model's warnings on stderr.
pub fn warn(model: &Model) {
    for w in model.warnings() {
        eprintln!("nestor: warning: {w}");
    }
}

impl SolveOpts {
    /// The Tc solver with `--rtol` (which must lie in [1e-12, 1e-3]).
    pub fn solver(&self) -> Result<TcSolver, Failure> {
        if !(self.rtol >= 1e-12 && self.rtol <= 1e-3) {
            return Err(Failure::Input(format!(
                "--rtol {}: must lie in [1e-12, 1e-3]",
                self.rtol
            )));
        }
        let mut s = TcSolver::default();
        s.acc.rtol = self.rtol;
        Ok(s)
    }
}

/// The index of the channel named by `--channel` (default: the first).
pub fn channel_index(model: &Model, name: Option<&String>) -> Result<usize, Failure> {
    match name {
        None => Ok(0),
        Some(n) => model
            .channels()
            .iter()
            .position(|c| c.label() == n || c.name() == Some(n.as_str()))
            .ok_or_else(|| {
                Failure::Input(format!(
                    "--channel {n}: no such channel; channels: {}",
                    model
                        .channels()
                        .iter()
                        .map(|c| c.label().to_string())
                        .collect::<Vec<_>>()
                        .join(", ")
                ))
            }),
    }
}
