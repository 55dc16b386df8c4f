//! Observables: what a measurement sees of a solved state, computed from the solvers' results
//! (the step between the solvers and the reports). [`density`]: density waves, density and gap
//! maps, map correlations; [`mod@spectrum`]: the quasiparticle gap or gapless arcs of an ordered
//! state.

pub mod density;
pub mod spectrum;

pub use density::{correlation, density_map, density_waves, gap_map, DensityWave};
pub use spectrum::{spectrum, Spectrum};
