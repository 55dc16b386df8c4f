//! nestor: electron-hole (excitonic) order between nearly nested Fermi-surface pockets of a 2D
//! electron system, in mean-field theory.
//!
//! # Pipeline
//!
//! [`config`] (TOML text and `--set` overrides) builds a validated, frozen [`model::Model`];
//! [`kernels`] evaluate the physics of one channel at one parameter point (pair susceptibility,
//! grand potential, weak-coupling closed forms); [`solvers`] find critical temperatures and ordered
//! states; [`sweeps`] map them over parameter grids in parallel; [`reports`] turn results into
//! tables and figures. Only `main.rs` knows the command line.
//!
//! ```text
//! TOML text --config--> ConfigSource --build--> Model (pockets, channels, surface)
//!           --kernels--> chi(q, T), Omega(Delta, q, T), Landau coefficients
//!           --solvers--> Tc(q), uniform and modulated Tc, ordered states, patterns
//!           --sweeps--->  grids of parameter points, in parallel, failed points recorded
//!           --reports-->  text, JSON, CSV, figures
//! ```
//!
//! Dependencies point one way: each stage knows only the stages before it. The model, its
//! conventions, the equations each stage solves, the numerical policy and the check values with
//! their sources are written out in [`theory`].
//!
//! # Units
//!
//! Energy and temperature (k_B T) in meV internally (temperatures in K at the edges), momentum in
//! 1/nm, hbar v in meV nm, masses in electron masses, coupling g in meV nm^2, densities per nm^2.
//! Energies are measured from the common chemical potential; the mismatch h > 0 when the hole
//! pocket is the larger one. See [`theory::units`].
//!
//! # Example: the critical temperature of a nested pair
//!
//! Two circular parabolic pockets of equal mass at one zone point, perfectly nested (h = 0),
//! with cutoff Lambda = 5 meV, far below the Fermi energy of 100 meV, and lambda = 0.25. In this
//! weak-coupling limit the critical temperature is the BCS value
//! Tc0 = 1.1339 Lambda exp(-1/lambda) (see [`theory::susceptibility`]).
//!
//! ```
//! use nestor::config::ConfigSource;
//! use nestor::solvers::tc::{TcSolver, TcStatus};
//!
//! let text = r#"
//! [[pocket]]
//! name = "e"
//! kind = "electron"
//! center = [0.0, 0.0]
//! mass = 0.2
//! offset = -100.0
//!
//! [[pocket]]
//! name = "h"
//! kind = "hole"
//! center = [0.0, 0.0]
//! mass = 0.2
//! offset = 100.0
//!
//! [[channel]]
//! pockets = ["e", "h"]
//! lambda = 0.25
//! cutoff = 5.0
//! "#;
//! let model = ConfigSource::from_text("nested pair", text)?.build(None)?;
//! let channel = &model.channels()[0];
//! let report = TcSolver::default().uniform(&model, channel)?;
//! assert_eq!(report.status, TcStatus::Unstable);
//!
//! // k_B Tc in meV against the weak-coupling value 1.1339 Lambda exp(-1/lambda).
//! let bcs = 1.133_866 * 5.0 * (-1.0f64 / 0.25).exp();
//! assert!((report.tc / bcs - 1.0).abs() < 0.01);
//! println!("Tc = {:.4} K", nestor::units::mev_to_kelvin(report.tc));
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

pub mod config;
pub mod error;
pub mod kernels;
pub mod model;
pub mod observables;
pub mod reports;
pub mod solvers;
pub mod special;
pub mod sweeps;
pub mod theory;
pub mod units;
