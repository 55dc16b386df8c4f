//! Physics kernels: pure functions of a channel and a parameter point (wavevector, temperature,
//! gap). Shell geometry and integration rules are shared by all of them.

pub mod equation;
pub mod grand_potential;
pub mod harmonics;
pub mod integrate;
pub mod multichannel;
pub mod quad;
pub mod quartic;
pub mod shell;
pub mod susceptibility;
pub mod weak;
pub mod weak_structures;

pub use integrate::{Accuracy, Estimate};
pub use shell::Shell;
