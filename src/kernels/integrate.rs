//! Shell integrals int_shell d^2k/(2 pi)^2 F(k) in polar coordinates about the shell's centre:
//! the periodic trapezoid rule in angle (rays doubled until converged, the estimate reported) and
//! graded Gauss-Legendre panels in radius (see the crate docs, [`theory::numerics`](crate::theory::numerics)). Every kernel that integrates over the
//! shell goes through here.

use crate::error::NumericalError;
use crate::kernels::quad::{graded_breakpoints, Feature, PanelRule};
use crate::kernels::shell::{AngularSymmetry, PairPoint, Shell};
use std::f64::consts::PI;

/// Accuracy settings of shell integrals. Solvers hold these; kernels only read them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Accuracy {
    /// Relative target for the angular (ray-doubling) convergence.
    pub rtol: f64,
    /// Gauss-Legendre nodes per radial panel.
    pub order: usize,
    /// Panel width at a thermal feature, in units of T (the crate docs, [`theory::numerics`](crate::theory::numerics): about T/4).
    pub feature_width: f64,
    /// Radial panel width relative to the distance from the nearest feature (geometric grading).
    pub growth: f64,
    /// Rays to start from (more than twice the highest angular harmonic of W and the pockets).
    pub min_rays: usize,
    /// Ray limit: reaching it without convergence is an error.
    pub max_rays: usize,
}

impl Default for Accuracy {
    fn default() -> Self {
        Accuracy {
            rtol: 1e-7,
            order: 8,
            feature_width: 0.5,
            growth: 1.0,
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
            growth: self.growth * 0.5,
            min_rays: self.min_rays,
            max_rays: self.max_rays,
        }
    }

    /// A looser rule for coarse searches (scans before a refinement).
    pub fn coarse(&self) -> Accuracy {
        Accuracy {
            rtol: (self.rtol * 1000.0).min(1e-4),
            order: self.order.saturating_sub(2).max(4),
            feature_width: self.feature_width,
            growth: self.growth,
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

/// Angular trapezoid rule with ray doubling, over the part of the circle the symmetry needs.
/// `ray(theta)` returns N values; `converged(change, value)` decides when to stop. Returns the
/// integrals over the full circle (of the ray values, times 1/(2 pi)^2), the last changes and the
/// number of rays.
fn angular_doubling<const N: usize, R, C>(
    symmetry: AngularSymmetry,
    acc: &Accuracy,
    mut ray: R,
    converged: C,
) -> Result<([f64; N], [f64; N], usize), NumericalError>
where
    R: FnMut(f64) -> Result<[f64; N], NumericalError>,
    C: Fn(&[f64; N], &[f64; N]) -> bool,
{
    let norm = 1.0 / (4.0 * PI * PI);
    let (span, closed, factor) = match symmetry {
        AngularSymmetry::SingleRay => {
            let v = ray(0.0)?;
            return Ok((v.map(|x| 2.0 * PI * x * norm), [0.0; N], 1));
        }
        AngularSymmetry::None => (2.0 * PI, false, 1.0),
        AngularSymmetry::Inversion => (PI, false, 2.0),
        AngularSymmetry::Mirror => (PI, true, 2.0),
    };
    let full_min = acc.min_rays.max(4);
    let mut n = if factor > 1.0 { full_min / 2 } else { full_min };
    let mut sum = [0.0; N];
    let mut add = |sum: &mut [f64; N], theta: f64, w: f64| -> Result<(), NumericalError> {
        let v = ray(theta)?;
        for i in 0..N {
            sum[i] += w * v[i];
        }
        Ok(())
    };
    for j in 0..n {
        add(
            &mut sum,
            span * j as f64 / n as f64,
            if closed && j == 0 { 0.5 } else { 1.0 },
        )?;
    }
    if closed {
        add(&mut sum, span, 0.5)?;
    }
    let scale = |sum: &[f64; N], n: usize| sum.map(|x| factor * span / n as f64 * x * norm);
    let mut value = scale(&sum, n);
    let mut change = [f64::INFINITY; N];
    while 2 * n * factor as usize <= TRAPEZOID_RAYS.min(acc.max_rays) {
        for j in 0..n {
            add(&mut sum, span * (j as f64 + 0.5) / n as f64, 1.0)?;
        }
        n *= 2;
        let new = scale(&sum, n);
        for i in 0..N {
            change[i] = (new[i] - value[i]).abs();
        }
        value = new;
        if converged(&change, &value) {
            return Ok((value, change, n * factor as usize));
        }
    }
    // Sharp angular structure (low T, q != 0, anisotropic pockets): adaptive Gauss-Legendre
    // panels in angle, each accepted when its two halves agree with it.
    let used = n * factor as usize;
    let uniform: Vec<f64> = (0..=ADAPTIVE_PANELS)
        .map(|j| span * j as f64 / ADAPTIVE_PANELS as f64)
        .collect();
    adaptive_angles(
        span,
        factor,
        acc,
        used,
        &uniform,
        Some(value),
        &mut ray,
        &converged,
    )
}

/// Panels of the adaptive angular rule where no features are known.
const ADAPTIVE_PANELS: usize = 32;

/// The part of the circle a symmetry needs: (span, closed, factor): the integral over the full
/// circle is `factor` times the integral over [0, span] (closed: a mirror, with both ends on the
/// symmetry lines).
fn angular_span(symmetry: AngularSymmetry) -> (f64, bool, f64) {
    match symmetry {
        AngularSymmetry::SingleRay | AngularSymmetry::None => (2.0 * PI, false, 1.0),
        AngularSymmetry::Inversion => (PI, false, 2.0),
        AngularSymmetry::Mirror => (PI, true, 2.0),
    }
}

/// Rays of the periodic trapezoid rule before switching to adaptive panels.
const TRAPEZOID_RAYS: usize = 512;

/// One Gauss-Legendre panel [a, b] in angle of the ray sums, times `factor` / (2 pi)^2; counts
/// the rays in `used`.
fn angular_panel<const N: usize, R>(
    rule: &PanelRule,
    ray: &mut R,
    factor: f64,
    a: f64,
    b: f64,
    used: &mut usize,
) -> Result<[f64; N], NumericalError>
where
    R: FnMut(f64) -> Result<[f64; N], NumericalError>,
{
    let norm = 1.0 / (4.0 * PI * PI);
    let mut out = [0.0; N];
    let mut failure = None;
    rule.for_each_node(a, b, |th, w| {
        if failure.is_some() {
            return;
        }
        match ray(th) {
            Ok(v) => {
                for i in 0..N {
                    out[i] += w * v[i];
                }
            }
            Err(e) => failure = Some(e),
        }
    });
    *used += rule.nodes.len();
    match failure {
        Some(e) => Err(e),
        None => Ok(out.map(|x| factor * x * norm)),
    }
}

/// Adaptive Gauss-Legendre panels in angle over [0, span], starting from the panels between
/// `breaks`: each panel is accepted when its two halves agree with it to its share (by width) of
/// the target, relative to `first_guess` (by default the sum over the starting panels).
#[allow(clippy::too_many_arguments)]
fn adaptive_angles<const N: usize, R, C>(
    span: f64,
    factor: f64,
    acc: &Accuracy,
    mut used: usize,
    breaks: &[f64],
    first_guess: Option<[f64; N]>,
    ray: &mut R,
    converged: &C,
) -> Result<([f64; N], [f64; N], usize), NumericalError>
where
    R: FnMut(f64) -> Result<[f64; N], NumericalError>,
    C: Fn(&[f64; N], &[f64; N]) -> bool,
{
    let rule = PanelRule::new(8);
    let mut panel =
        |a: f64, b: f64, used: &mut usize| angular_panel(&rule, ray, factor, a, b, used);
    let mut stack: Vec<(f64, f64, [f64; N])> = Vec::new();
    let mut base = [0.0; N];
    for w in breaks.windows(2) {
        let v = panel(w[0], w[1], &mut used)?;
        for i in 0..N {
            base[i] += v[i];
        }
        stack.push((w[0], w[1], v));
    }
    // Largest panels first off the stack matters little; keep the order of the angle.
    stack.reverse();
    let budget = acc.max_rays.max(1 << 17);
    let mut total = [0.0; N];
    let mut total_change = [0.0; N];
    let guess = first_guess.unwrap_or(base);
    while let Some((a, b, coarse)) = stack.pop() {
        if used > budget {
            return Err(NumericalError::NotConverged {
                what: "shell integral over the ray angle (adaptive panels)".into(),
                iterations: used,
                last_change: f64::NAN,
                target: acc.rtol * guess[0].abs(),
            });
        }
        let m = 0.5 * (a + b);
        let l = panel(a, m, &mut used)?;
        let r = panel(m, b, &mut used)?;
        let mut fine = [0.0; N];
        let mut scaled = [0.0; N];
        for i in 0..N {
            fine[i] = l[i] + r[i];
            scaled[i] = (fine[i] - coarse[i]).abs() * span / (b - a);
        }
        if converged(&scaled, &guess) || b - a < 1e-9 * span {
            for i in 0..N {
                total[i] += fine[i];
                total_change[i] += (fine[i] - coarse[i]).abs();
            }
        } else {
            stack.push((a, m, l));
            stack.push((m, b, r));
        }
    }
    Ok((total, total_change, used))
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
    shell_integral_with(shell, energy_scale, extra, acc, false, f)
}

/// As [`shell_integral`], for integrands whose angular structure comes only from the crossings
/// (and near-touchings) of the two Fermi surfaces, i.e. from the zeros and small minima of
/// h_k along the nesting line, smeared over `energy_scale` (the pair susceptibility). Where
/// those make the angular integrand sharp, the angular rule starts directly from adaptive
/// Gauss-Legendre panels graded around them, instead of doubling the trapezoid rule first.
pub fn shell_integral_graded<F>(
    shell: &Shell,
    energy_scale: f64,
    extra: &[(f64, f64)],
    acc: &Accuracy,
    f: F,
) -> Result<Estimate, NumericalError>
where
    F: Fn([f64; 2], &PairPoint) -> f64,
{
    shell_integral_with(shell, energy_scale, extra, acc, true, f)
}

/// Samples of h along the nesting line used to locate the angular features.
const FEATURE_SAMPLES: usize = 32;

/// Graded angular panels: the panel at a feature is this many times `feature_width` times the
/// feature's width, panels grow by this many times `growth` times the distance to it, and no
/// panel is wider than the span over `MIN_ANGULAR_PANELS` (the adaptive rule refines them).
const ANGULAR_WIDTH: f64 = 8.0;
const ANGULAR_GROWTH: f64 = 4.0;
const MIN_ANGULAR_PANELS: usize = 4;

/// Angles where the Fermi surfaces cross (h = 0 on the nesting line, width energy_scale / |h'|)
/// or come closest (a local minimum of |h|, width sqrt(2 max(|h|, energy_scale) / |h''|)),
/// over [0, span]. Returns (angle, width) pairs.
fn angular_features(
    shell: &Shell,
    energy_scale: f64,
    span: f64,
    closed: bool,
) -> Result<Vec<(f64, f64)>, NumericalError> {
    if shell.xi_centre >= 0.0 || energy_scale.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater)
    {
        return Ok(Vec::new());
    }
    let h0 = |th: f64| -> Result<f64, NumericalError> {
        let u = [th.cos(), th.sin()];
        let r0 = shell.xi_radius(u, 0.0)?;
        Ok(shell.at(shell.point_on_ray(u, r0)).h())
    };
    let m = FEATURE_SAMPLES;
    let dth = span / m as f64;
    let mut hv = Vec::with_capacity(m + 1);
    for j in 0..=m {
        hv.push(h0(dth * j as f64)?);
    }
    // Neighbours across the ends: periodic, or mirrored about the end points.
    let at = |j: isize| -> f64 {
        let mi = m as isize;
        if closed {
            let j = if j < 0 {
                -j
            } else if j > mi {
                2 * mi - j
            } else {
                j
            };
            hv[j as usize]
        } else {
            hv[j.rem_euclid(mi) as usize]
        }
    };
    let mut out = crossing_features(&hv, dth, span, energy_scale, &h0)?;
    out.extend(closest_approaches(&at, m, dth, span, energy_scale, closed));
    Ok(out)
}

/// The angles where h on the nesting line changes sign between samples `hv` (spaced `dth`),
/// each refined by Illinois false position on `h0`, with the width energy_scale / |h'|.
fn crossing_features<H>(
    hv: &[f64],
    dth: f64,
    span: f64,
    energy_scale: f64,
    h0: &H,
) -> Result<Vec<(f64, f64)>, NumericalError>
where
    H: Fn(f64) -> Result<f64, NumericalError>,
{
    let m = hv.len() - 1;
    let mut out = Vec::new();
    for j in 0..m {
        let (a, b) = (hv[j], hv[j + 1]);
        if a == 0.0 || a.signum() == b.signum() {
            continue;
        }
        // Illinois false position for the crossing.
        let (mut x0, mut x1, mut f0, mut f1) = (dth * j as f64, dth * (j + 1) as f64, a, b);
        let mut side = 0;
        for _ in 0..100 {
            let x = (x0 * f1 - x1 * f0) / (f1 - f0);
            let fx = h0(x)?;
            if fx == 0.0 || (x1 - x0).abs() < 1e-10 * span {
                x0 = x;
                x1 = x;
                break;
            }
            if fx.signum() == f1.signum() {
                x1 = x;
                f1 = fx;
                if side == -1 {
                    f0 *= 0.5;
                }
                side = -1;
            } else {
                x0 = x;
                f0 = fx;
                if side == 1 {
                    f1 *= 0.5;
                }
                side = 1;
            }
        }
        let x = 0.5 * (x0 + x1);
        let d = 1e-6 * span;
        let slope = (h0(x + d)? - h0(x - d)?) / (2.0 * d);
        out.push((x, (energy_scale / slope.abs()).min(span)));
    }
    Ok(out)
}

/// The local minima of |h| on the nesting line without a sign change (closest approach of the
/// Fermi surfaces), from a parabola through three samples of `at` (spaced `dth`), with the width
/// sqrt(2 max(|h|, energy_scale) / |h''|).
fn closest_approaches<A>(
    at: &A,
    m: usize,
    dth: f64,
    span: f64,
    energy_scale: f64,
    closed: bool,
) -> Vec<(f64, f64)>
where
    A: Fn(isize) -> f64,
{
    let mut out = Vec::new();
    for j in 0..=m as isize {
        if !closed && j == m as isize {
            break;
        }
        let (l, c, r) = (at(j - 1), at(j), at(j + 1));
        if !(c.abs() <= l.abs() && c.abs() <= r.abs())
            || l.signum() != c.signum()
            || r.signum() != c.signum()
        {
            continue;
        }
        // Parabola through the three samples: minimum of |h| and its curvature.
        let curv = (l + r - 2.0 * c) / (dth * dth);
        if curv == 0.0 {
            continue;
        }
        let shift = (-(r - l) / (2.0 * dth * curv)).clamp(-dth, dth);
        let hm = c + 0.5 * (r - l) / (2.0 * dth) * shift + 0.5 * curv * shift * shift;
        let x = (dth * j as f64 + shift).clamp(0.0, span);
        let width = (2.0 * hm.abs().max(energy_scale) / curv.abs()).sqrt();
        out.push((x, width.min(span)));
    }
    out
}

/// Panel breakpoints in angle over [0, span], graded around the features (and their images
/// across the ends of the span).
fn angular_breaks(features: &[(f64, f64)], span: f64, closed: bool, acc: &Accuracy) -> Vec<f64> {
    let mut feats = Vec::with_capacity(3 * features.len());
    for &(x, w) in features {
        let scale = w * ANGULAR_WIDTH * acc.feature_width;
        let images = if closed {
            [x, -x, 2.0 * span - x]
        } else {
            [x, x - span, x + span]
        };
        for at in images {
            feats.push(Feature { at, scale });
        }
    }
    let mut out = Vec::new();
    graded_breakpoints(0.0, span, &feats, ANGULAR_GROWTH * acc.growth, &mut out);
    // Panels no wider than the coarsest uniform start.
    let mut fine = Vec::with_capacity(out.len() + ADAPTIVE_PANELS);
    let widest = span / MIN_ANGULAR_PANELS as f64;
    for w in out.windows(2) {
        let k = ((w[1] - w[0]) / widest).ceil().max(1.0) as usize;
        for i in 0..k {
            fine.push(w[0] + (w[1] - w[0]) * i as f64 / k as f64);
        }
    }
    fine.push(span);
    fine
}

fn shell_integral_with<F>(
    shell: &Shell,
    energy_scale: f64,
    extra: &[(f64, f64)],
    acc: &Accuracy,
    graded: bool,
    f: F,
) -> Result<Estimate, NumericalError>
where
    F: Fn([f64; 2], &PairPoint) -> f64,
{
    let rule = PanelRule::new(acc.order);
    let mut breaks = Vec::new();
    let width = energy_scale * acc.feature_width;
    let ray_integral = |theta: f64| -> Result<[f64; 2], NumericalError> {
        let ray = shell.ray(theta, width, extra, acc.growth, &mut breaks)?;
        let mut s = 0.0;
        let mut sa = 0.0;
        for w in breaks.windows(2) {
            rule.for_each_node(w[0], w[1], |r, wr| {
                let k = shell.point_on_ray(ray.u, r);
                let p = shell.at(k);
                let v = f(k, &p) * r * wr;
                s += v;
                sa += v.abs();
            });
        }
        Ok([s, sa])
    };
    let converged =
        |c: &[f64; 2], v: &[f64; 2]| c[0] <= acc.rtol * v[0].abs().max(1e-3 * v[1]) || v[1] == 0.0;
    let (span, closed, factor) = angular_span(shell.symmetry);
    let features = if graded && shell.symmetry != AngularSymmetry::SingleRay {
        angular_features(shell, energy_scale, span, closed)?
    } else {
        Vec::new()
    };
    let breaks = if features.is_empty() {
        None
    } else {
        let breaks = angular_breaks(&features, span, closed, acc);
        // Rays each rule is expected to need over [0, span]: the trapezoid about ln(1/rtol)
        // per narrowest width (plus the adaptive fallback where that passes its limit); the
        // graded panels 24 per panel (a panel and its two halves).
        let narrowest = features.iter().map(|f| f.1).fold(f64::INFINITY, f64::min);
        let full = (1.0 / acc.rtol).ln().max(1.0) / narrowest;
        let mut trapezoid = full * span / (2.0 * PI);
        if full > TRAPEZOID_RAYS as f64 {
            trapezoid += (24 * ADAPTIVE_PANELS) as f64;
        }
        let graded = (24 * (breaks.len() - 1)) as f64;
        (graded < trapezoid).then_some(breaks)
    };
    let (value, change, rays) = if let Some(breaks) = breaks {
        let mut ray = ray_integral;
        adaptive_angles::<2, _, _>(span, factor, acc, 0, &breaks, None, &mut ray, &converged)?
    } else {
        angular_doubling::<2, _, _>(shell.symmetry, acc, ray_integral, converged)?
    };
    Ok(Estimate {
        value: value[0],
        error: change[0],
        rays,
    })
}

/// Integral over the nesting line xi = 0 (at the shell's q): int dl/(2 pi)^2 f(k)/|grad xi|,
/// i.e. int d^2k/(2 pi)^2 delta(xi_k) f(k), for N functions at once. The first function must be
/// positive; the others converge relative to it.
pub fn nesting_line_integral<const N: usize, F>(
    shell: &Shell,
    acc: &Accuracy,
    f: F,
) -> Result<[Estimate; N], NumericalError>
where
    F: Fn([f64; 2], &PairPoint) -> [f64; N],
{
    if shell.xi_centre >= 0.0 {
        return Ok([Estimate {
            value: 0.0,
            error: 0.0,
            rays: 0,
        }; N]);
    }
    let ray = |theta: f64| -> Result<[f64; N], NumericalError> {
        let u = [theta.cos(), theta.sin()];
        let r0 = shell.xi_radius(u, 0.0)?;
        let slope = shell.xi_slope(u, r0);
        let k = shell.point_on_ray(u, r0);
        let p = shell.at(k);
        Ok(f(k, &p).map(|v| v * r0 / slope))
    };
    let (value, change, rays) = angular_doubling::<N, _, _>(shell.symmetry, acc, ray, |c, v| {
        (0..N).all(|i| c[i] <= acc.rtol * v[i].abs().max(v[0].abs()))
    })?;
    let mut out = [Estimate {
        value: 0.0,
        error: 0.0,
        rays,
    }; N];
    for i in 0..N {
        out[i].value = value[i];
        out[i].error = change[i];
    }
    Ok(out)
}

#[cfg(test)]
#[path = "integrate_tests.rs"]
mod tests;
