//! Bracketed root finding with Brent's method (roots crate), reporting iterations and the final
//! bracket, and carrying errors of the function being solved through the search. The one root
//! finder of the crate: the critical temperatures, the instability lines and the gap equations
//! all solve through it.

use crate::error::NumericalError;
use roots::{find_root_brent, Convergency};

/// Convergence in x: |x1 - x2| <= x_abs + x_rel max(|x1|, |x2|); an iteration counter.
struct Tolerance {
    x_rel: f64,
    x_abs: f64,
    max_iter: usize,
    iterations: usize,
}

impl Convergency<f64> for Tolerance {
    fn is_root_found(&mut self, y: f64) -> bool {
        y == 0.0
    }
    fn is_converged(&mut self, x1: f64, x2: f64) -> bool {
        (x1 - x2).abs() <= self.x_abs + self.x_rel * x1.abs().max(x2.abs())
    }
    fn is_iteration_limit_reached(&mut self, iter: usize) -> bool {
        self.iterations = iter;
        iter >= self.max_iter
    }
}

/// A converged root.
#[derive(Debug, Clone, Copy)]
pub struct Root {
    /// The root.
    pub x: f64,
    /// Brent iterations used.
    pub iterations: usize,
}

/// Tolerance of a root in x: converged when the bracket is narrower than `abs + rel |x|`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RootTol {
    /// Absolute part (units of x).
    pub abs: f64,
    /// Relative part.
    pub rel: f64,
}

impl RootTol {
    /// Relative tolerance only.
    pub fn relative(rel: f64) -> Self {
        RootTol { abs: 0.0, rel }
    }
    /// Absolute tolerance only.
    pub fn absolute(abs: f64) -> Self {
        RootTol { abs, rel: 0.0 }
    }
}

/// A bracket [a, b] with the function values at its ends where already known (they are not
/// evaluated again).
#[derive(Debug, Clone, Copy)]
pub struct Bracket {
    /// One end.
    pub a: f64,
    /// The other end.
    pub b: f64,
    /// f(a), if known.
    pub fa: Option<f64>,
    /// f(b), if known.
    pub fb: Option<f64>,
}

impl Bracket {
    /// A bracket with both end values known.
    pub fn known(a: f64, fa: f64, b: f64, fb: f64) -> Self {
        Bracket {
            a,
            b,
            fa: Some(fa),
            fb: Some(fb),
        }
    }
}

/// Root of f on [a, b] (f(a), f(b) of opposite signs) to relative tolerance `x_rel` in x.
pub fn brent_root<F>(what: &str, a: f64, b: f64, x_rel: f64, f: F) -> Result<Root, NumericalError>
where
    F: FnMut(f64) -> Result<f64, NumericalError>,
{
    let bracket = Bracket {
        a,
        b,
        fa: None,
        fb: None,
    };
    brent_root_in(what, bracket, RootTol::relative(x_rel), f)
}

/// Root of f in `bracket` to `tol`, for any error type of f that can hold a [`NumericalError`].
///
/// The roots crate evaluates the bracket's ends again at every step; every value (and the known
/// end values) is remembered, so each abscissa is evaluated once.
pub fn brent_root_in<F, E>(what: &str, bracket: Bracket, tol: RootTol, mut f: F) -> Result<Root, E>
where
    F: FnMut(f64) -> Result<f64, E>,
    E: From<NumericalError>,
{
    let (a, b) = (bracket.a, bracket.b);
    let mut failure: Option<E> = None;
    let mut memo: Vec<(f64, f64)> = [(a, bracket.fa), (b, bracket.fb)]
        .into_iter()
        .filter_map(|(x, v)| v.map(|v| (x, v)))
        .collect();
    let mut tolerance = Tolerance {
        x_rel: tol.rel,
        x_abs: tol.abs,
        max_iter: 200,
        iterations: 0,
    };
    let res = find_root_brent(
        a,
        b,
        |x| {
            if let Some(&(_, v)) = memo.iter().find(|m| m.0 == x) {
                return v;
            }
            if failure.is_some() {
                return f64::NAN;
            }
            match f(x) {
                Ok(v) => {
                    memo.push((x, v));
                    v
                }
                Err(e) => {
                    failure = Some(e);
                    f64::NAN
                }
            }
        },
        &mut tolerance,
    );
    if let Some(e) = failure {
        return Err(e);
    }
    let iterations = tolerance.iterations;
    match res {
        Ok(x) if x.is_finite() => Ok(Root { x, iterations }),
        Ok(_) | Err(roots::SearchError::NoConvergency) => Err(NumericalError::NotConverged {
            what: what.to_string(),
            iterations,
            last_change: f64::NAN,
            target: tol.rel.max(tol.abs),
        }
        .into()),
        Err(roots::SearchError::NoBracketing) => Err(NumericalError::NotBracketed {
            what: what.to_string(),
            lo: a,
            hi: b,
        }
        .into()),
        Err(e) => Err(NumericalError::RootSearch(format!("{what}: {e:?}")).into()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_a_root_and_reports_no_bracket() {
        let r = brent_root("cubic", 0.0, 2.0, 1e-14, |x| Ok(x * x * x - 2.0)).unwrap();
        assert!((r.x - 2f64.cbrt()).abs() < 1e-13);
        assert!(matches!(
            brent_root("none", 2.0, 3.0, 1e-12, |x| Ok(x * x + 1.0)),
            Err(NumericalError::NotBracketed { .. })
        ));
        let err = brent_root("failing", 0.0, 1.0, 1e-12, |_| {
            Err(NumericalError::RootSearch("boom".into()))
        });
        assert_eq!(err.unwrap_err(), NumericalError::RootSearch("boom".into()));
    }

    /// Known end values are not evaluated again, and no abscissa is evaluated twice.
    #[test]
    fn known_ends_and_absolute_tolerance() {
        let mut seen = Vec::new();
        let f = |x: f64| {
            assert!(!seen.contains(&x.to_bits()), "x = {x} evaluated twice");
            seen.push(x.to_bits());
            Ok::<f64, NumericalError>(x.cos() - x)
        };
        let bracket = Bracket::known(0.0, 1.0, 1.0, 1f64.cos() - 1.0);
        let r = brent_root_in("cos x = x", bracket, RootTol::absolute(1e-13), f).unwrap();
        // The Dottie number (Kaplan, Math. Mag. 80, 73 (2007)), 15 digits.
        assert!((r.x - 0.739_085_133_215_161).abs() < 1e-12);
    }
}
