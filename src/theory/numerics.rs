//! Theory: the numerical policy of the crate: how the integrals over the pairing shell are taken,
//! how their errors are estimated, how roots and maxima are searched, which tolerances apply, and
//! why results do not depend on the number of threads. Implemented in `kernels::{quad, shell,
//! integrate}`, `solvers::{roots, optimize, tc}` and `sweeps`.
//!
//! # Integrals over the shell
//!
//! For every pocket kind the shell variable xi_k is a convex function of k. Polar coordinates are
//! centred on its minimum and xi itself is the radial variable, with the Jacobian k dk/dxi found
//! per ray (a ray needs a short safeguarded Newton search for the radius of a level of xi when
//! q != 0 or the pockets are anisotropic). An integral over the shell is then
//! integral dtheta integral dxi J(xi, theta) W K(xi, h).
//!
//! - **Angle.** The integrand is smooth and periodic, so the plain trapezoid rule converges
//!   exponentially. The rule starts with at least 8 rays (more than twice the highest angular
//!   harmonic of W and of the pocket shapes) and doubles them until the change is below the
//!   target. False convergence is guarded against: with W = sin^2(theta) one or two rays can all
//!   land on zeros of W. Only a channel with W = 1 and circular pockets may use a single ray.
//!   Where the integrand has sharp angular features, adaptive angular panels are used instead.
//! - **Radius (xi).** Gauss-Legendre panels, with breakpoints at xi = 0 and where eps_a = 0 or
//!   eps_b = 0 (xi = +-h_k on the ray), graded geometrically down to a width of order T around
//!   them; the shell edges are the ends.
//! - **Cancellation.** The Fermi-factor ratio is evaluated as
//!   sinh(xi/T) / (2 xi [cosh(xi/T) + cosh(h/T)]) with the largest exponent factored out, so that
//!   |xi|/T or |h|/T in the hundreds neither overflows nor cancels; at xi = 0 its limit is used.
//!   The grand potential uses log1p/expm1 forms of phi(E) and subtracts the normal state inside
//!   the integrand, not after integrating.
//!
//! # Error estimates
//!
//! Every integral returns a value with an error estimate and the number of rays used. The angular
//! error is the last change under ray doubling (or, on adaptive panels, the sum of the panel
//! changes): conservative, since the trapezoid rule converges exponentially. The radial rule is
//! fixed within a call and re-checked at every root with a refined accuracy; the difference is
//! added to the reported error of Tc.
//!
//! # Tolerances
//!
//! - Default accuracy: chi to 1e-7 relative, 8 Gauss-Legendre nodes per panel, panels of T/2 at
//!   the features, geometric growth 2. A coarse accuracy serves bracketing scans only; a refined
//!   one serves checks.
//! - Critical temperatures: roots to 1e-10 relative; a Tc whose estimated error exceeds 1e-5
//!   relative is rejected.
//! - Tests keep their tolerances in one module (`tests/common/tol.rs`), each with a sentence on
//!   why it is relative or absolute and how large.
//!
//! Non-convergence is an error, never a number: a numerical error names what failed to converge
//! or to bracket. In a sweep it becomes a failed point with its reason, and the run goes on.
//!
//! # Roots and maxima
//!
//! - **Tc(q).** g chi(q, T) - 1 is bracketed between a temperature floor (a small fraction of
//!   the nested Tc) and an upper bound where it is negative. Temperatures are scanned from the top
//!   for the largest sign change; because the uniform line can bend back, where no sign change is
//!   found the maximum of g chi over T is located before concluding that there is no instability.
//!   The root is then refined with Brent's method.
//! - **Modulated Tc.** At fixed T, chi is maximised over q (|q| up to a few (|h| + T)/v, and over
//!   the direction for anisotropic pockets) by a coarse scan followed by Brent refinement, which
//!   avoids local maxima; then max_q g chi(q, T) = 1 is solved for T. The maximum is flat, so q*
//!   carries fewer digits than Tc, and the output says so.
//! - **Gap equation.** Omega(Delta) is evaluated on a grid from 0 to beyond the largest possible
//!   gap; every sign change of dOmega/dDelta is refined with Brent's method; maxima are unstable,
//!   the lowest minimum stable, other minima metastable.
//! - **Phase boundaries.** The first-order line solves Omega(Delta_min) = Omega(normal) in the
//!   mismatch; spinodals are where a minimum merges with a maximum.
//! - **Landau coefficients.** From the loop formulas, cross-checked by fitting Omega/|Delta|^2 at
//!   several small Delta. The q-curvature uses Richardson-extrapolated finite differences with a
//!   step well below T/v (a step near T/v is badly biased).
//!
//! # Sweeps and threads
//!
//! Work that does not depend on the sweep point (quadrature nodes, ray geometry where the pockets
//! do not change) is done once. Parallelism is over sweep points only, never inside one integral,
//! and results are written in grid order, so the output does not depend on the number of threads.
//!
//! # Eigenvectors
//!
//! Code that needs eigenvectors of the Hermitian mean-field matrices checks the residuals of the
//! decomposition and falls back to Jacobi rotations where a general-purpose routine pairs correct
//! eigenvalues with wrong eigenvectors (nearly diagonal matrices).
