//! Shell integrals int_shell d^2k/(2 pi)^2 F(k) in polar coordinates about the shell's centre:
//! the periodic trapezoid rule in angle (rays doubled until converged, the estimate reported) and
//! graded Gauss-Legendre panels in radius (numerics.md). Every kernel that integrates over the
//! shell goes through here.

use crate::error::NumericalError;
use crate::kernels::quad::PanelRule;
use crate::kernels::shell::{PairPoint, Shell};
use std::f64::consts::PI;

/// Accuracy settings of shell integrals. Solvers hold these; kernels only read them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Accuracy {
    /// Relative target for the angular (ray-doubling) convergence.
    pub rtol: f64,
    /// Gauss-Legendre nodes per radial panel.
    pub order: usize,
    /// Panel width at a thermal feature, in units of T (numerics.md: about T/4).
    pub feature_width: f64,
    /// Rays to start from (more than twice the highest angular harmonic of W and the pockets).
    pub min_rays: usize,
    /// Ray limit: reaching it without convergence is an error.
    pub max_rays: usize,
}

impl Default for Accuracy {
    fn default() -> Self {
        Accuracy {
            rtol: 1e-8,
            order: 8,
            feature_width: 0.25,
            min_rays: 8,
            max_rays: 1 << 14,
        }
    }
}

impl Accuracy {
    /// A stricter rule used to check the radial discretisation: more nodes, finer panels, tighter
    /// angular target.
    pub fn refined(&self) -> Accuracy {
        Accuracy {
            rtol: self.rtol * 0.1,
            order: self.order + 4,
            feature_width: self.feature_width * 0.5,
            min_rays: self.min_rays,
            max_rays: self.max_rays,
        }
    }

    /// A looser rule for coarse searches (scans before a refinement).
    pub fn coarse(&self) -> Accuracy {
        Accuracy {
            rtol: (self.rtol * 100.0).min(1e-4),
            order: self.order.saturating_sub(2).max(4),
            feature_width: self.feature_width,
            min_rays: self.min_rays,
            max_rays: self.max_rays,
        }
    }
}

/// A shell integral and its estimated error.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Estimate {
    pub value: f64,
    /// Estimated absolute error (angular doubling difference; plus the radial check where done).
    pub error: f64,
    /// Rays used.
    pub rays: usize,
}

/// Scratch space reused between rays.
#[derive(Default)]
struct Scratch {
    breaks: Vec<f64>,
}

/// int_shell d^2k/(2 pi)^2 f(k, point) with thermal features of energy width `energy_scale` at
/// xi = 0 and the two Fermi surfaces, plus `extra` (xi level, width) features.
pub fn shell_integral<F>(
    shell: &Shell,
    energy_scale: f64,
    extra: &[(f64, f64)],
    acc: &Accuracy,
    f: F,
) -> Result<Estimate, NumericalError>
where
    F: Fn([f64; 2], &PairPoint) -> f64,
{
    let rule = PanelRule::new(acc.order);
    let mut scratch = Scratch::default();
    let width = energy_scale * acc.feature_width;
    let mut ray_integral = |theta: f64| -> Result<(f64, f64), NumericalError> {
        let ray = shell.ray(theta, width, extra, &mut scratch.breaks)?;
        let mut s = 0.0;
        let mut sa = 0.0;
        for w in scratch.breaks.windows(2) {
            rule.for_each_node(w[0], w[1], |r, wr| {
                let k = shell.point_on_ray(ray.u, r);
                let p = shell.at(k);
                let v = f(k, &p) * r * wr;
                s += v;
                sa += v.abs();
            });
        }
        Ok((s, sa))
    };
    let norm = 1.0 / (4.0 * PI * PI);
    if shell.single_ray {
        let (s, _) = ray_integral(0.0)?;
        return Ok(Estimate {
            value: 2.0 * PI * s * norm,
            error: 0.0,
            rays: 1,
        });
    }
    let mut n = acc.min_rays.max(2);
    let mut sum = 0.0;
    let mut sum_abs = 0.0;
    for j in 0..n {
        let (s, sa) = ray_integral(2.0 * PI * j as f64 / n as f64)?;
        sum += s;
        sum_abs += sa;
    }
    let mut value = 2.0 * PI / n as f64 * sum * norm;
    let mut last_change = f64::INFINITY;
    while 2 * n <= acc.max_rays {
        let mut add = 0.0;
        let mut add_abs = 0.0;
        for j in 0..n {
            let (s, sa) = ray_integral(2.0 * PI * (j as f64 + 0.5) / n as f64)?;
            add += s;
            add_abs += sa;
        }
        sum += add;
        sum_abs += add_abs;
        n *= 2;
        let new = 2.0 * PI / n as f64 * sum * norm;
        let scale = 2.0 * PI / n as f64 * sum_abs * norm;
        let change = (new - value).abs();
        value = new;
        last_change = change;
        if change <= acc.rtol * value.abs().max(1e-3 * scale) || scale == 0.0 {
            return Ok(Estimate {
                value,
                error: change,
                rays: n,
            });
        }
    }
    Err(NumericalError::NotConverged {
        what: "shell integral over angle".into(),
        iterations: n,
        last_change,
        target: acc.rtol * value.abs(),
    })
}

/// Integral over the nesting line xi = 0 (at the shell's q): int dl/(2 pi)^2 f(k)/|grad xi|,
/// i.e. int d^2k/(2 pi)^2 delta(xi_k) f(k). Returns the estimate for each of the functions.
pub fn nesting_line_integral<const N: usize, F>(
    shell: &Shell,
    acc: &Accuracy,
    f: F,
) -> Result<[Estimate; N], NumericalError>
where
    F: Fn([f64; 2], &PairPoint) -> [f64; N],
{
    let norm = 1.0 / (4.0 * PI * PI);
    let ray = |theta: f64| -> Result<[f64; N], NumericalError> {
        let u = [theta.cos(), theta.sin()];
        let r0 = shell.xi_radius(u, 0.0)?;
        let slope = shell.xi_slope(u, r0);
        let k = shell.point_on_ray(u, r0);
        let p = shell.at(k);
        let vals = f(k, &p);
        let mut out = [0.0; N];
        for i in 0..N {
            out[i] = vals[i] * r0 / slope;
        }
        Ok(out)
    };
    if shell.xi_centre >= 0.0 {
        return Ok([Estimate {
            value: 0.0,
            error: 0.0,
            rays: 0,
        }; N]);
    }
    let mk = |sum: &[f64; N], n: usize| -> [f64; N] {
        let mut v = [0.0; N];
        for i in 0..N {
            v[i] = 2.0 * PI / n as f64 * sum[i] * norm;
        }
        v
    };
    if shell.single_ray {
        let s = ray(0.0)?;
        let v = mk(&s, 1);
        return Ok(v.map(|value| Estimate {
            value,
            error: 0.0,
            rays: 1,
        }));
    }
    let mut n = acc.min_rays.max(2);
    let mut sum = [0.0; N];
    for j in 0..n {
        let s = ray(2.0 * PI * j as f64 / n as f64)?;
        for i in 0..N {
            sum[i] += s[i];
        }
    }
    let mut value = mk(&sum, n);
    while 2 * n <= acc.max_rays {
        for j in 0..n {
            let s = ray(2.0 * PI * (j as f64 + 0.5) / n as f64)?;
            for i in 0..N {
                sum[i] += s[i];
            }
        }
        n *= 2;
        let new = mk(&sum, n);
        let mut ok = true;
        let mut err = [0.0; N];
        for i in 0..N {
            err[i] = (new[i] - value[i]).abs();
            // The first function is the positive weight; others are measured against it.
            let scale = new[i].abs().max(new[0].abs());
            if err[i] > acc.rtol * scale && scale > 0.0 {
                ok = false;
            }
        }
        value = new;
        if ok {
            let mut out = [Estimate {
                value: 0.0,
                error: 0.0,
                rays: n,
            }; N];
            for i in 0..N {
                out[i].value = value[i];
                out[i].error = err[i];
            }
            return Ok(out);
        }
    }
    Err(NumericalError::NotConverged {
        what: "integral over the nesting line".into(),
        iterations: n,
        last_change: f64::NAN,
        target: acc.rtol,
    })
}
