//! Theory: the Landau expansion of Omega on the instability line, and the two special points it
//! locates (tricritical, Lifshitz). Implemented in `kernels::grand_potential` (loop quartic
//! coefficient), `kernels::weak` (closed forms), `solvers::tc` (q-curvature) and
//! `sweeps::phase_map`.
//!
//! # The expansion
//!
//! Near the instability, per spin channel,
//!
//! ```text
//! Omega = alpha(q, T) |Delta|^2 + (beta/2) |Delta|^4 + (gamma6/3) |Delta|^6 + ...,
//! alpha(q, T) = 1/g - chi(q, T).
//! ```
//!
//! - Where beta < 0 on the line where the second-order transition would lie, the transition is
//!   of first order instead; the tricritical point is where beta = 0.
//! - Where the curvature of alpha in q at q = 0 turns negative, a modulated state wins. The
//!   Lifshitz point is where it changes sign; for anisotropic pockets the lowest eigenvalue of
//!   the 2 x 2 Hessian of alpha in q decides. On a Tc scan it shows as the point where q* leaves
//!   zero, when q* grows continuously.
//!
//! Both points are defined on the uniform second-order line g chi(0, T) = 1 (continued past where
//! another state preempts it, if needed), and for each the reports say whether it lies on the
//! actual phase boundary.
//!
//! # Weak coupling
//!
//! In the weak-coupling model of [`super::susceptibility`], per spin channel,
//!
//! ```text
//! beta = nu (-Re psi''(1/2 + i h/(2 pi T))) / (16 pi^2 T^2),
//! ```
//!
//! and expanding the digamma Tc equation to second order in Q = v q/2 gives a q^2 coefficient of
//! the margin proportional to `<cos^2 theta> Re psi''(1/2 + i h/(2 pi T))`: the same function of
//! (h, T) as beta, with opposite sign. Both therefore vanish at the same point of the uniform
//! line, t = 0.5615, h = 1.0728 Tc0: in weak coupling the tricritical and Lifshitz points
//! coincide. Beyond weak coupling (unequal masses, finite Lambda/E_F, form factors) they
//! separate, and the crate finds them by separate root searches.
//!
//! # Phase stiffness
//!
//! Not computed by the crate yet (the definition that a stiffness output will follow).
//!
//! Writing Delta(r) = |Delta| exp(i phi(r)), Omega per area costs (J/2) |grad phi|^2, so
//!
//! ```text
//! J_ij = d^2 Omega / dq_i dq_j   at q = 0,
//! ```
//!
//! for the plane wave |Delta| exp(i q.r) at fixed |Delta| (Omega in meV/nm^2, q in 1/nm, J in meV).
//! Near Tc, J = 2 c |Delta|^2 with c the q^2 coefficient of alpha. A negative eigenvalue of J means
//! that the uniform state is unstable towards modulation; on the gapless branch of
//! [`super::ordered`] this is the case.
