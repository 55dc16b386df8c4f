//! Sweeps: parameter grids built from `--vary` ranges, evaluated in parallel over points (rayon),
//! results returned in grid order so that the output does not depend on the thread count. A
//! failed point is recorded with its reason and the sweep goes on.

pub mod defaults;
pub mod phase_map;
pub mod tc_scan;

use crate::config::{ConfigSource, Override, PinnedCouplings, Range};
use crate::error::InputError;
use crate::model::Model;
use indicatif::{ProgressBar, ProgressStyle};
use rayon::prelude::*;

/// A 1D or 2D grid of parameter values. Point i of a 2D grid has x index i % nx and y index
/// i / nx (x fastest).
#[derive(Debug, Clone)]
pub struct Grid {
    pub axes: Vec<Range>,
}

impl Grid {
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

    pub fn len(&self) -> usize {
        self.axes.iter().map(|a| a.n).product()
    }

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

    /// The overrides of point i.
    pub fn overrides(&self, i: usize) -> Vec<Override> {
        self.values(i)
            .iter()
            .zip(&self.axes)
            .map(|(v, a)| a.at(*v))
            .collect()
    }
}

/// The model at one sweep point: the base configuration with the point's overrides, g pinned to
/// the base configuration except for channels whose coupling the sweep itself varies.
pub fn model_at(
    base: &ConfigSource,
    pinned: &PinnedCouplings,
    grid: &Grid,
    i: usize,
) -> Result<Model, InputError> {
    let ovs = grid.overrides(i);
    let unpinned: Vec<String> = ovs
        .iter()
        .filter(|o| o.key == "lambda" || o.key == "g")
        .map(|o| o.target.clone())
        .collect();
    base.with_overrides(&ovs)?
        .build_with(Some(pinned), &unpinned)
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
