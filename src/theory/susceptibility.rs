//! Theory: the normal-state pair susceptibility chi(q, T) and the critical temperatures it
//! defines, with the weak-coupling closed form that serves as fast path and cross-check.
//! Implemented in `kernels::susceptibility`, `kernels::weak` and `solvers::tc`.
//!
//! # The pair susceptibility
//!
//! For one channel at relative wavevector q and temperature T (per spin channel,
//! 1/(meV nm^2)):
//!
//! ```text
//! chi(q, T) = integral_shell d^2k/(2 pi)^2  W(k) [f(eps_b(k)) - f(eps_a(k + q))] / [eps_a(k + q) - eps_b(k)]
//! ```
//!
//! with f(E) = 1/(exp(E/T) + 1). Where the two energies meet the ratio tends to -f'(eps). In the
//! variables of [`super::channels`] (eps_a = h + xi, eps_b = h - xi) the kernel is
//!
//! ```text
//! [f(h - xi) - f(h + xi)] / (2 xi) = sinh(xi/T) / (2 xi [cosh(xi/T) + cosh(h/T)]),
//! ```
//!
//! which tends to 1/(2T [1 + cosh(h/T)]) at xi = 0. The second form has no cancellation and is
//! the one evaluated (see [`super::numerics`]).
//!
//! # Critical temperatures
//!
//! The normal state is unstable at (q, T) when
//!
//! ```text
//! g chi(q, T) >= 1.
//! ```
//!
//! - Tc(q) is the largest T with g chi(q, T) = 1.
//! - The uniform Tc is Tc(0).
//! - The modulated Tc is the maximum of Tc(q) over the magnitude and direction of q, reached at
//!   q*. When q* = 0 the uniform state wins; the reports give both temperatures and q*.
//!
//! The uniform line (the set of (h, T) with g chi(0, T) = 1) bends back near its largest h: at a
//! given h the equation can have two close roots or none. The largest root is the physical one.
//!
//! # Weak coupling
//!
//! When Lambda and Tc are small against the Fermi energies, and the two pockets are circular with
//! equal velocities v, the pair density of states is constant over the shell and the Tc equation
//! becomes
//!
//! ```text
//! 1 = lambda integral_0^Lambda dxi [tanh((xi + h)/2T) + tanh((xi - h)/2T)] / (2 xi).
//! ```
//!
//! At h = 0 this gives the nested critical temperature
//!
//! ```text
//! Tc0 = (2 e^gamma / pi) Lambda exp(-1/lambda) = 1.133866 Lambda exp(-1/lambda)
//! ```
//!
//! (gamma = 0.5772... is Euler's constant), and at finite h and q, to leading order in T/Lambda,
//!
//! ```text
//! ln(Tc0/T) = < Re psi(1/2 + i (h + v q cos(theta)/2) / (2 pi T)) >_theta - psi(1/2)
//! ```
//!
//! with psi the digamma function and the average over the Fermi-surface angle theta (v q is
//! hbar v q in meV). Tc0 sets the natural units of the weak-coupling results: t = T/Tc0,
//! h/Tc0 and Q = v q/(2 Tc0).
//!
//! This closed form is a fast path for the channels it applies to and an independent check of the
//! full shell integral; it never replaces the full integral where its assumptions fail. For the
//! equal-mass parabolic pair the exact q = 0 equation differs from it only by terms of order
//! exp(-(Lambda - |h|)/T); at q != 0 band curvature enters at order (q/kF)^2.
//!
//! # Symmetries used by the searches
//!
//! For the dispersions modelled here chi(q) = chi(-q), and chi(q) tends to chi(0) continuously
//! and quadratically as q -> 0. The maximum of chi over q is flat, so q* is known to fewer digits
//! than Tc.
