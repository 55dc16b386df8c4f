//! Sweeps: parameter grids built from `--vary` ranges, evaluated in parallel over points (rayon),
//! results returned in grid order so that the output does not depend on the thread count. A
//! failed point is recorded with its reason and the sweep goes on.

pub mod defaults;
pub mod lifshitz;
pub mod phase_map;
pub mod tc_scan;

use crate::config::{ConfigSource, Range};
use crate::error::InputError;
use crate::model::{Model, Param};
use indicatif::{ProgressBar, ProgressStyle};
use rayon::prelude::*;

/// A 1D or 2D grid of parameter values. Point i of a 2D grid has x index i % nx and y index
/// i / nx (x fastest).
#[derive(Debug, Clone)]
pub struct Grid {
    pub axes: Vec<Range>,
}

impl Grid {
    /// A grid of one or two distinct axes, at most 10^6 points.
    pub fn new(axes: Vec<Range>) -> Result<Self, InputError> {
        if axes.is_empty() || axes.len() > 2 {
            return Err(InputError::new(
                "--vary: give one or two ranges (PATH=FROM:TO:N)",
            ));
        }
        if axes.len() == 2 && axes[0].path() == axes[1].path() {
            return Err(InputError::new(format!(
                "--vary: {} is given twice",
                axes[0].path()
            )));
        }
        let n: usize = axes.iter().map(|a| a.n).product();
        if n > 1_000_000 {
            return Err(InputError::new(format!(
                "--vary: {n} points is too many (at most 1000000)"
            )));
        }
        Ok(Grid { axes })
    }

    /// Number of points.
    pub fn len(&self) -> usize {
        self.axes.iter().map(|a| a.n).product()
    }

    /// Whether the grid has no point.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Parameter values of point i, one per axis.
    pub fn values(&self, i: usize) -> Vec<f64> {
        let mut out = Vec::with_capacity(self.axes.len());
        let mut rest = i;
        for a in &self.axes {
            let vals = a.values();
            out.push(vals[rest % a.n]);
            rest /= a.n;
        }
        out
    }
}

/// A grid resolved against its base model: the typed parameter of each axis, so that a point's
/// model is the base model with those parameters set (no text, no TOML, no re-parsing), g held
/// at the base model except in channels whose coupling the sweep itself varies.
#[derive(Debug, Clone)]
pub struct Sweep<'a> {
    /// File name of the base configuration, for messages.
    pub origin: &'a str,
    /// The base model (couplings converted there).
    pub base: &'a Model,
    /// The grid of values.
    pub grid: &'a Grid,
    /// The parameter of each axis of `grid`.
    pub params: Vec<Param>,
}

impl<'a> Sweep<'a> {
    /// Resolves every axis of `grid` against `base` (built from `src`); an unknown name or key,
    /// or a key the pocket was not given with, fails here, before any point is computed.
    pub fn new(src: &'a ConfigSource, base: &'a Model, grid: &'a Grid) -> Result<Self, InputError> {
        let params = grid
            .axes
            .iter()
            .map(|a| a.resolve(&src.origin, base))
            .collect::<Result<Vec<_>, _>>()?;
        Ok(Sweep {
            origin: &src.origin,
            base,
            grid,
            params,
        })
    }

    /// The model at point i of the grid.
    pub fn model_at(&self, i: usize) -> Result<Model, InputError> {
        let changes: Vec<(Param, f64)> = self
            .params
            .iter()
            .copied()
            .zip(self.grid.values(i))
            .collect();
        self.model_with(&changes)
    }

    /// The base model with the first axis's parameter set to `x` (a point between grid points).
    pub fn model_along(&self, x: f64) -> Result<Model, InputError> {
        self.model_with(&[(self.params[0], x)])
    }

    /// The base model with `changes` applied, g held at the base model in every channel whose
    /// coupling the changes do not set (the coupling is converted once, at the configuration as
    /// given, and a sweep changes the physics, not the coupling).
    fn model_with(&self, changes: &[(Param, f64)]) -> Result<Model, InputError> {
        self.base
            .with(changes)
            .map_err(|e| InputError::new(format!("{}: {e}", self.origin)))
    }
}

/// Runs `f` on every point index in parallel (on `threads` threads, or rayon's default) with an
/// optional progress bar; results in index order.
pub fn par_map<T, F>(n: usize, threads: Option<usize>, progress: bool, f: F) -> Vec<T>
where
    T: Send,
    F: Fn(usize) -> T + Sync + Send,
{
    let bar = if progress {
        let b = ProgressBar::new(n as u64);
        b.set_style(
            ProgressStyle::with_template("{bar:40} {pos}/{len} points  {elapsed} (eta {eta})")
                .unwrap_or_else(|_| ProgressStyle::default_bar()),
        );
        Some(b)
    } else {
        None
    };
    let run = || {
        (0..n)
            .into_par_iter()
            .map(|i| {
                let r = f(i);
                if let Some(b) = &bar {
                    b.inc(1);
                }
                r
            })
            .collect::<Vec<T>>()
    };
    let out = match threads {
        Some(t) => match rayon::ThreadPoolBuilder::new().num_threads(t).build() {
            Ok(pool) => pool.install(run),
            Err(_) => run(),
        },
        None => run(),
    };
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    out
}
