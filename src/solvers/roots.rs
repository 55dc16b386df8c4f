//! Bracketed root finding with Brent's method (roots crate), reporting iterations and the final
//! bracket, and carrying errors of the function being solved through the search.

use crate::error::NumericalError;
use roots::{find_root_brent, Convergency};

/// Relative tolerance on x, absolute on y, with an iteration counter.
struct Tolerance {
    x_rel: f64,
    y_abs: f64,
    max_iter: usize,
    iterations: usize,
}

impl Convergency<f64> for Tolerance {
    fn is_root_found(&mut self, y: f64) -> bool {
        y.abs() <= self.y_abs
    }
    fn is_converged(&mut self, x1: f64, x2: f64) -> bool {
        (x1 - x2).abs() <= self.x_rel * x1.abs().max(x2.abs())
    }
    fn is_iteration_limit_reached(&mut self, iter: usize) -> bool {
        self.iterations = iter;
        iter >= self.max_iter
    }
}

/// A converged root.
#[derive(Debug, Clone, Copy)]
pub struct Root {
    pub x: f64,
    pub iterations: usize,
}

/// Root of f on [a, b] (f(a), f(b) of opposite signs) to relative tolerance `x_rel` in x.
pub fn brent_root<F>(
    what: &str,
    a: f64,
    b: f64,
    x_rel: f64,
    mut f: F,
) -> Result<Root, NumericalError>
where
    F: FnMut(f64) -> Result<f64, NumericalError>,
{
    let mut failure: Option<NumericalError> = None;
    let mut tol = Tolerance {
        x_rel,
        y_abs: 0.0,
        max_iter: 200,
        iterations: 0,
    };
    let res = find_root_brent(
        a,
        b,
        |x| match f(x) {
            Ok(v) => v,
            Err(e) => {
                if failure.is_none() {
                    failure = Some(e);
                }
                f64::NAN
            }
        },
        &mut tol,
    );
    if let Some(e) = failure {
        return Err(e);
    }
    match res {
        Ok(x) if x.is_finite() => Ok(Root {
            x,
            iterations: tol.iterations,
        }),
        Ok(_) | Err(roots::SearchError::NoConvergency) => Err(NumericalError::NotConverged {
            what: what.to_string(),
            iterations: tol.iterations,
            last_change: f64::NAN,
            target: x_rel,
        }),
        Err(roots::SearchError::NoBracketing) => Err(NumericalError::NotBracketed {
            what: what.to_string(),
            lo: a,
            hi: b,
        }),
        Err(e) => Err(NumericalError::RootSearch(format!("{what}: {e:?}"))),
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
}
