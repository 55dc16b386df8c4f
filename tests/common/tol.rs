//! Named tolerances of the integration tests, each with the reason for its kind (relative or
//! absolute) and its size. Tests compare computed numbers against published values, closed forms
//! and independent integrations; the constants here say how close they must be and why.
#![allow(dead_code)]

/// Relative: the same quantity computed twice along algebraically identical routes that differ
/// only in the order of floating-point operations (a sum regrouped, a matrix diagonalised instead
/// of a closed form evaluated). Rounding alone separates them, so a few hundred ulps.
pub const ROUNDING: f64 = 1e-12;

/// Relative: two integrations of the same integral, each to 1e-7 relative (`Accuracy::default()`)
/// on different panels or rays; their difference is bounded by the sum of the two targets, with
/// room for the conservative error estimate.
pub const INTEGRATION: f64 = 1e-6;

/// Relative: two integrations of the same integral at `rtol = 1e-10`, or a shell integral against
/// a double-exponential rule at 1e-13; each is far better than this.
pub const TIGHT_INTEGRATION: f64 = 1e-9;

/// Relative: the exact-integral critical temperature where the model is exactly the weak-coupling
/// one (constant pair density of states, h_k = h). The integration target of chi (1e-7 relative)
/// gives Tc to about 1e-7/lambda, and the root is solved to 1e-10.
pub const TC_SAME_MODEL: f64 = 2e-6;

/// Absolute, in units of Tc0: a published or tabulated value quoted to four or five digits. Half a
/// unit of the last digit, plus room for the exact model's band curvature.
pub const TABLE: f64 = 3e-4;

/// Absolute, in units of Tc0 (temperatures and mismatches): the exact integral on the reference
/// pair (cutoff/E_F = 0.05) against a weak-coupling closed form. Band curvature enters at about
/// (Lambda/E_F)^2 and (q/kF)^2, a few 1e-4 here.
pub const BAND_CURVATURE: f64 = 1e-3;

/// Relative: the optimal wavevector q*. The maximum of chi over q is flat, so q* is known to about
/// the square root of the value tolerance, and band curvature shifts it by about 1e-3 at
/// cutoff/E_F = 0.05.
pub const Q_STAR: f64 = 3e-3;

/// Absolute, in units of Tc0: a special point of the phase diagram (tricritical, Lifshitz) found by
/// a root search along the uniform line of the exact model. Finite cutoff/E_F separates the two
/// points by about 4e-4 in T; the table quotes four digits.
pub const SPECIAL_POINT: f64 = 2e-3;

/// Relative: an average over the Fermi-surface angle computed by an adaptive general-purpose rule
/// at 1e-12 against a closed form of the same average.
pub const ANGULAR_AVERAGE: f64 = 1e-10;
