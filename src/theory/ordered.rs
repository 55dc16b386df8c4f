//! Theory: the ordered state below the instability: the mean-field Hamiltonian, the grand
//! potential Omega, the gap equation, the classification of its solutions, first-order
//! transitions, fixed carrier density, several channels and several harmonics. Implemented in
//! `kernels::grand_potential`, `kernels::multichannel`, `kernels::harmonics` and
//! `solvers::{ordered, canonical, pattern_state}`.
//!
//! # Mean-field Hamiltonian of one channel and one wavevector
//!
//! At each k the pair (a at k + q, b at k) sees
//!
//! ```text
//! H_k = [[ eps_a(k + q),            Delta M_ab(k) ],
//!        [ conj(Delta M_ab(k)),     eps_b(k)      ]]
//!
//! E_+-(k) = h_k +- sqrt(xi_k^2 + |Delta M_ab(k)|^2).
//! ```
//!
//! The spectrum is gapped around h_k, not around the chemical potential: where |h_k| exceeds the
//! gap part of the shell stays gapless.
//!
//! # Grand potential
//!
//! Per area, relative to the normal state, with phi(E) = -T ln(1 + exp(-E/T)) (at T = 0,
//! phi(E) = min(E, 0)):
//!
//! ```text
//! Omega(Delta, q, T) = |Delta|^2 / g
//!     + integral_shell d^2k/(2 pi)^2 [phi(E_+) + phi(E_-) - phi(eps_a) - phi(eps_b)].
//! ```
//!
//! Reported values are the total per area (meV/nm^2): n_s times this single-channel expression,
//! and the output's units line says so.
//!
//! # Gap equation and its solutions
//!
//! Stationarity, dOmega/d|Delta|^2 = 0, reads
//!
//! ```text
//! 1/g = integral_shell d^2k/(2 pi)^2  W [f(E_-) - f(E_+)] / (2 sqrt(xi^2 + |Delta|^2 W)).
//! ```
//!
//! Several solutions can coexist at one (T, h): at T = 0 and Delta0/2 < h < Delta0 there is, besides
//! the fully gapped state, a gapless branch. All solutions are found, each is classified from
//! Omega (the lowest minimum stable, other minima metastable, maxima unstable), and the state
//! with the lowest Omega is reported. The normal state is unstable wherever g chi(q, T) > 1 at some
//! q, towards the uniform state (q = 0) or a modulated one (q*), even where Omega at q = 0 has a
//! minimum at Delta = 0; its quasiparticles are gapless on the whole Fermi surface.
//!
//! - A first-order transition lies where two minima have equal Omega.
//! - A spinodal lies where a local minimum disappears (it merges with a maximum: dOmega/dDelta and
//!   d2Omega/dDelta2 vanish together).
//!
//! # Fixed carrier density
//!
//! Optionally the net carrier number (electrons minus holes, counted from band edges and Dirac
//! points) is held fixed instead of the chemical potential. A shift of the common chemical
//! potential moves every offset, and so h, until the density matches. A first-order jump at fixed
//! chemical potential then becomes a coexistence (phase-separation) region: itself an
//! inhomogeneous state, reported as such.
//!
//! # Several channels
//!
//! Several channels, or several pockets sharing a partner, give an N x N Hermitian H_k: each
//! pocket measured from its own centre on the diagonal, the blocks Delta_c M_ab(k) of channel c
//! off the diagonal inside that channel's shell. Omega is the same expression with
//! sum_c |Delta_c|^2/g_c and the sum of phi over all N eigenvalues, less the normal pockets.
//! The single-channel 2 x 2 closed form is the case N = 2.
//!
//! A worked case: one hole pocket b shared by two identical electron pockets a1, a2 in two
//! channels of equal shells. Then b couples only to the combination (Delta_1 a1 + Delta_2 a2)/D,
//! D = sqrt(Delta_1^2 + Delta_2^2), and
//!
//! ```text
//! Omega(Delta_1, Delta_2) = Delta_1^2/g_1 + Delta_2^2/g_2 + F(D)
//! ```
//!
//! with F the quasiparticle part of one channel. For g_1 > g_2 the minimum puts all of D in
//! channel 1 (the channels compete and the stronger wins); for g_1 = g_2 only D is fixed.
//!
//! # Several harmonics
//!
//! Several wavevectors couple k to k + n q for integer combinations n of them. The harmonics are
//! truncated to a window, the larger H_k is diagonalised, and the result is checked for
//! convergence in the window. With one wavevector the window closes after one step and the
//! result is the 2 x 2 plane-wave Omega above; q = 0 is the uniform state.
