//! Observables: what a measurement sees of a solved state, computed from the solvers' results
//! (the step between the solvers and the reports). [`density`]: density waves, density and gap
//! maps, map correlations; [`fields`]: the fields of view and samplings of the maps; [`mod@spectrum`]: the quasiparticle gap or gapless arcs of an ordered
//! state.

pub mod density;
pub mod fields;
pub mod spectrum;

pub use density::{correlation, density_map, density_waves, envelope_map, gap_map, DensityWave};
pub use fields::{plan_maps, MapField, MapPlan};
pub use spectrum::{spectrum, Spectrum};
