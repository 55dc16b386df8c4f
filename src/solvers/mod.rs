//! Solvers: how the equations of the kernels are solved (bracketing root searches, maximisation
//! over the wavevector). Solvers hold only their tolerances; every solve returns a report with the
//! value, its error estimate and why it stopped.

pub mod canonical;
pub mod defaults;
pub mod optimize;
pub mod ordered;
pub mod pattern;
pub mod pattern_state;
pub mod relative_phases;
pub mod roots;
pub mod tc;
pub mod tc_channel;

pub use tc::{ModulatedTc, TcReport, TcSolver, TcStatus, TcStop};
