//! The model's physics, conventions, equations and numerical policy: documentation only, no code.
//! It sits beside the pipeline (config -> model -> kernels -> solvers -> sweeps -> reports) and
//! states what each stage computes, so that a comment elsewhere can point here instead of to notes
//! outside the repository.
//!
//! # What the crate computes
//!
//! A two-dimensional electron system (typically a crystal surface) has small Fermi-surface
//! pockets at a few points of its Brillouin zone. When an electron-like pocket and a hole-like
//! pocket have nearly the same shape, an attractive electron-hole interaction can bind electrons
//! of one to holes of the other: the normal metal becomes unstable towards an excitonic
//! (electron-hole) condensate whose order parameter oscillates in space with the wavevector that
//! separates the two pockets. The crate treats this in mean-field theory, one channel (a pair of
//! pockets) at a time or several channels together, and answers:
//!
//! - at which temperature the normal state becomes unstable, uniformly or towards a modulated
//!   state, and at which wavevector ([`susceptibility`]);
//! - which ordered states exist below it, which one is stable, and where transitions are of
//!   first order ([`ordered`], [`landau`]);
//! - which multi-wavevector pattern (stripe, square, triangle, hexagon, ...) forms, and what
//!   density modulation it carries ([`patterns`]).
//!
//! # Approximations
//!
//! - **Mean field.** The electron-hole interaction is decoupled in the pairing channel only; the
//!   order parameter is a classical field and its fluctuations are left out. In two dimensions
//!   the mean-field Tc is therefore an upper bound on the true transition (the
//!   Kosterlitz-Thouless temperature of [`patterns`] is defined there but not computed yet).
//! - **Contact coupling in a shell.** The interaction is a constant g acting only between states
//!   whose shell variable lies within the cutoff, |xi_k| < Lambda; Lambda stands in for the
//!   energy range over which the real interaction is attractive and unscreened.
//! - **Small pockets.** Each pocket is described by its own low-energy dispersion about its zone
//!   point; momenta are measured from the pocket centres, and the ordering wavevector is the
//!   separation of the centres plus the small q of the order.
//! - **Rigid bands.** The dispersions do not change with the order, apart from the common shift of
//!   the chemical potential in the fixed-density mode.
//!
//! # How to read these pages
//!
//! | page | contents |
//! |---|---|
//! | [`pockets`] | the pocket kinds, their dispersions, the spin structure of helical pockets |
//! | [`channels`] | a pairing channel: shell variable, local mismatch, form factor, pair density of states, coupling, spin channels |
//! | [`susceptibility`] | the pair susceptibility chi(q, T), the critical temperatures, the weak-coupling limit |
//! | [`ordered`] | the mean-field Hamiltonian, the grand potential, the gap equation, several channels and several harmonics, fixed density |
//! | [`landau`] | the Landau expansion on the instability line, tricritical and Lifshitz points |
//! | [`patterns`] | multi-wavevector structures, four-insertion loops, density modulation, tunnelling observables, phase stiffness |
//! | [`units`] | units of input and output, physical constants |
//! | [`numerics`] | integration rules, error estimates, root and maximum searches, tolerances, thread independence |
//! | [`checks`] | the check values the tests compare against, with their published sources |
//!
//! # Conventions in one place
//!
//! - Energies are measured from the common chemical potential of the surface (grand-canonical by
//!   default: the bulk pins it). Every T in a formula is k_B T, an energy in meV.
//! - The mismatch h is half the difference of the two Fermi energies, hole minus electron:
//!   h > 0 means the hole pocket is the larger one. For two parabolic pockets of equal mass
//!   h = (E0_a + E0_b)/2 with E0 the band edges.
//! - Pair density of states nu_ab, coupling g, dimensionless coupling lambda = g nu_ab, the
//!   susceptibility chi, the Landau coefficients and the coherence Delta/g are per spin channel.
//!   Totals (the grand potential Omega, carrier densities, density-modulation amplitudes) carry
//!   the number of equivalent spin channels n_s (2 for two spin-degenerate pockets, else 1).
//! - Units: meV, K, 1/nm, meV nm (hbar v), electron masses, meV nm^2 (g), per nm^2 (densities).
//!
//! Formulas are written in plain text (`psi` the digamma function, `f` the Fermi function,
//! `integral_shell d^2k/(2 pi)^2` the momentum integral over the pairing shell).

pub mod channels;
pub mod checks;
pub mod landau;
pub mod numerics;
pub mod ordered;
pub mod patterns;
pub mod pockets;
pub mod susceptibility;
pub mod units;
