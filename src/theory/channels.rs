//! Theory: a pairing channel between an electron-like and a hole-like pocket: the shell
//! variable, the local mismatch, the band form factor, the pair density of states, the coupling
//! and the number of spin channels. Implemented in `model` (form factors, channels) and
//! `kernels::susceptibility` (nesting-line quantities); `config` converts lambda to g.
//!
//! # Shell variable and local mismatch
//!
//! A channel pairs an electron-like pocket a with a hole-like pocket b through an attractive
//! electron-hole contact coupling g > 0 (energy times area, meV nm^2), acting in the shell
//! |xi_k| < Lambda (the cutoff, meV). For a pair with relative wavevector q (1/nm) the two
//! energies at k combine into
//!
//! ```text
//! xi_k = [eps_a(k + q) - eps_b(k)] / 2        (the shell variable)
//! h_k  = [eps_a(k + q) + eps_b(k)] / 2        (the local mismatch)
//! ```
//!
//! so that eps_a = h_k + xi_k and eps_b = h_k - xi_k. The nesting line is xi_k = 0 at q = 0.
//!
//! # The mismatch h of a channel
//!
//! The channel's mismatch h (reported as `mismatch`, meV) is h_k on the nesting line, averaged
//! with the weight W/|grad xi| of the pair density of states; its minimum and maximum along the
//! line are reported too where it varies. Closed forms:
//!
//! ```text
//! two parabolic pockets, equal mass        h = (E0_a + E0_b) / 2
//! two isotropic parabolic pockets          h = (m_a E0_a + m_b E0_b) / (m_a + m_b)
//! two Dirac cones                          h = (v_b ED_a + v_a ED_b) / (v_a + v_b)
//! ```
//!
//! In the equal-mass case h is half the difference of the two Fermi energies, hole minus electron:
//! h > 0 means the hole pocket is larger. Unequal masses or velocities make h_k vary across the
//! shell; only the equal-mass parabolic pair has h_k = h everywhere.
//!
//! # Order parameter and spin matrix
//!
//! The order parameter is
//!
//! ```text
//! Delta(r) = sum_j Delta_j exp(i (K_a - K_b + q_j) . r).
//! ```
//!
//! A single wavevector with q = 0 is the uniform state; a single q != 0 is the plane-wave
//! (single-wavevector modulated) state; several q_j form a pattern (see [`super::patterns`]).
//!
//! The order has a 2 x 2 spin matrix M: the identity (charge order, spin conserving) by default,
//! or sigma_x, sigma_y, sigma_z (spin order). Between the band states it becomes the band form
//! factor and its weight,
//!
//! ```text
//! M_ab(k) = <chi_a(k + q)| M |chi_b(k)>,        W(k) = |M_ab(k)|^2.
//! ```
//!
//! - Two degenerate pockets: each spin channel is separate with W = 1 (not counted twice).
//! - A degenerate and a helical pocket: the degenerate pocket's spin is summed,
//!   W = sum_sigma |<sigma|M|chi>|^2 = 1, in a single channel.
//! - Two helical pockets and M = 1:
//!
//! ```text
//! W = [1 + s_a s_b cos((w_a theta_a + phi_a) - (w_b theta_b + phi_b))] / 2.
//! ```
//!
//! For an upper and a lower cone with the same texture (s_a s_b = -1, equal windings and phases)
//! W vanishes identically: no charge order forms there. Opposite windings give W = sin^2 of the
//! angle (for equal phases), an anisotropic gap.
//!
//! # Pair density of states and couplings
//!
//! ```text
//! nu_ab = integral d^2k/(2 pi)^2 W(k) delta(xi_k)        at q = 0, per spin channel, 1/(meV nm^2)
//! lambda = g nu_ab                                       dimensionless
//! ```
//!
//! For two parabolic pockets of equal mass m, nu_ab = m/(2 pi hbar^2), constant in energy.
//!
//! A user may give lambda instead of g. It is converted to g once, at the base configuration (the
//! file after any `--set` overrides, before any sweep), and g is then held fixed across a sweep:
//! a sweep changes the physics, not the coupling. Giving lambda where nu_ab = 0 is an input error
//! (the coupling must then be given as g).
//!
//! # Spin channels
//!
//! n_s = 2 for two degenerate pockets (the two spin channels are identical copies), otherwise
//! n_s = 1. nu_ab, g, lambda, chi, the Landau coefficients and Delta/g are per spin channel; totals
//! (Omega, densities, density-modulation amplitudes) are multiplied by n_s.
//!
//! # The shell and its limits
//!
//! The pairing acts where |xi_k| < Lambda. For parabolic pockets a shell that reaches past a band
//! bottom is legal but questionable (a warning). For a Dirac pocket the shell must not reach the
//! Dirac point, where the branch and the spinor are undefined: that is an input error.
