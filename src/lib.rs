//! nestor: electron-hole (excitonic) order between nearly nested Fermi-surface pockets of a 2D
//! electron system, in mean-field theory.
//!
//! Pipeline: [`config`] (TOML text and `--set` overrides) builds a validated, frozen [`model::Model`];
//! [`kernels`] evaluate the physics of one channel at one parameter point (pair susceptibility,
//! grand potential, weak-coupling closed forms); [`solvers`] find critical temperatures and ordered
//! states; [`sweeps`] map them over parameter grids in parallel; [`reports`] turn results into
//! tables and figures. Only `main.rs` knows the command line.
//!
//! Units everywhere: energy and temperature (k_B T) in meV internally, momentum in 1/nm, hbar v in
//! meV nm, masses in electron masses, coupling g in meV nm^2, densities per nm^2.

pub mod config;
pub mod error;
pub mod kernels;
pub mod model;
pub mod observables;
pub mod reports;
pub mod solvers;
pub mod special;
pub mod sweeps;
pub mod units;
