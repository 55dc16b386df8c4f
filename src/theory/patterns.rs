//! Theory: multi-wavevector patterns, the four-insertion loops that rank them, the density
//! modulation that an ordered state carries, and what a tunnelling probe would measure.
//! Implemented in `model::structure`, `kernels::{quartic, weak_structures, harmonics}` and
//! `solvers::{relative_phases, pattern_state, pattern}`.
//!
//! # Structures
//!
//! A structure is a list of wavevectors q_1 .. q_n of equal length (the plane wave, the standing
//! wave q, -q, and the square, triangle, hexagon and other named sets), with equal amplitudes
//! Delta_j = |Delta| exp(i phi_j). At second order all have the same alpha (they sit on the same
//! instability line); they differ at fourth order.
//!
//! # Quartic coefficients
//!
//! The quartic term of a structure is a sum over the ordered index quadruples that conserve
//! momentum:
//!
//! ```text
//! F4 = sum_{q_j1 - q_j2 + q_j3 - q_j4 = 0}  B(q_j1, q_j2, q_j3, q_j4) exp(i (phi_j1 - phi_j2 + phi_j3 - phi_j4)) |Delta|^4
//! ```
//!
//! with B the fermion loop with four insertions of the order parameter. The imaginary parts cancel
//! between a quadruple and its mirror (j2, j1, j4, j3). For one wavevector 2 B(q, q, q, q) is the
//! plane-wave beta of [`super::landau`], and at q = 0 it is the uniform beta.
//!
//! The preferred structure at quartic order has the smallest positive F4/n^2, with the relative
//! phases chosen to minimise it; a negative F4 means the transition is of first order for that
//! structure and higher orders decide. These loops are checked against finite differences of the
//! full nonlinear Omega at small amplitude. The nonlinear (self-consistent) state of each
//! candidate is then computed with the harmonics of [`super::ordered`], and may reorder
//! candidates whose quartic coefficients are close.
//!
//! In weak coupling (linearised dispersion, Q = v q/2) each loop is a sum over Matsubara
//! frequencies w_n = (2n + 1) pi T and an average over the Fermi-surface angle. For the plane wave
//! the four propagators share one energy, e = i w_n - h - Q cos(theta); the frequency sum at fixed
//! angle then closes in psi'', and B(q, q, q, q) is the angular average of half the uniform beta
//! taken at the shifted mismatch h + Q cos(theta). For other quadruples the sum is taken
//! numerically, with the tail beyond a cut in n summed by polygamma functions.
//!
//! # Density modulation
//!
//! The interband coherence of a state is, per area and spin channel,
//!
//! ```text
//! |<c_a^dagger(r) c_b(r)>| = |Delta(r)| / g,          <c_a^dagger c_b> = -conj(Delta) / g
//! ```
//!
//! (with H_k as written in [`super::ordered`]). For M = 1 the charge density, for M = sigma_i the
//! spin density along i, is modulated at
//!
//! ```text
//! P_j = K_a - K_b + q_j   (folded into the first zone),   amplitude 2 n_s |m_ab Delta_j| / g,
//! ```
//!
//! where m_ab is the orbital overlap factor, an input (default 1: the coherence itself is then
//! reported). A multi-wavevector state also modulates the intraband densities at q_i - q_j, at
//! second order in the amplitude: unpaired carriers collect where |Delta(r)| is small. Reports give
//! wavevectors, periods (nm) and amplitudes, and a real-space map.
//!
//! # What a tunnelling probe measures
//!
//! Not computed by the crate yet: this section and the next state the definitions that the
//! tunnelling and two-dimensional-transition outputs will follow.
//!
//! - Local density of states of a mean-field state with eigenpairs (E_n, psi_n(r)):
//!   N(r, E) = sum_n |psi_n(r)|^2 delta(E - E_n), per spin channel, times n_s. For a uniform state
//!   with constant pair density of states nu, E = h +- sqrt(xi^2 + Delta^2), and the shell average
//!   is a BCS form centred at h:
//!
//! ```text
//! N(E) = 2 nu |E - h| / sqrt((E - h)^2 - Delta^2)     for |E - h| > Delta, zero inside.
//! ```
//!
//! - The interband coherence modulates N(r, E) at K_a - K_b (+ q_j), with an amplitude that
//!   changes sign with E - h: the contrast reverses across the gap.
//! - The tunnelling conductance at bias V (sample at V relative to the tip, flat tip density of
//!   states) is proportional to integral dE N(r, E) (-df/dE)(E - eV), f at the sample temperature.
//!   Lifetime broadening in the Dynes form replaces E by E + i Gamma inside the BCS square root.
//! - The constant-current topograph at set point V_s follows integral_0^{eV_s} N(r, E) dE.
//!
//! # The two-dimensional transition
//!
//! In two dimensions the mean-field Tc is an upper bound; the Kosterlitz-Thouless temperature
//! follows from the universal jump of the phase stiffness J of [`super::landau`],
//! k_B T_KT = (pi/2) J(T_KT), with sqrt(det J) for an anisotropic stiffness. In weak coupling with
//! E_F much larger than Tc the stiffness is large and T_KT lies just below the mean-field Tc.
