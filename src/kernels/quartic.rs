//! Quartic Landau coefficient of a multi-wavevector structure from the fermion loop with four
//! insertions (see the crate docs (`crate::theory`)), with the real dispersions of one channel.
//!
//! For Delta(r) = sum_j Delta_j exp(i q_j.r) the quartic term of Omega per area and spin channel is
//!   F4 = sum_{(j1,j2,j3,j4): q_j1 - q_j2 + q_j3 - q_j4 = 0} Delta_j1 Delta_j2^* Delta_j3 Delta_j4^* B,
//!   B(q1, q2, q3, q4) = (1/2) int d^2k/(2 pi)^2 f[e1, e2, e3, e4] M1 M2^* M3 M4^*,
//! with e1 = eps_b(k), e2 = eps_a(k + q1), e3 = eps_b(k + q1 - q2), e4 = eps_a(k + q4) the energies
//! around the loop, f[...] the third divided difference of the Fermi function (the Matsubara sum
//! T sum_n prod_i 1/(i w_n - e_i)), and M the band form factors at the four vertices. Each vertex
//! acts only inside its shell |eps_a - eps_b|/2 < Lambda, as in the single-wavevector code. For one
//! wavevector F4 = B(q, q, q, q) |Delta|^4 = (beta/2) |Delta|^4 with beta of
//! [`crate::kernels::grand_potential::quartic_loop`].
//!
//! k is measured from pocket b's centre and integrated in polar coordinates about the centre of
//! the shell of the first vertex (at q1): Gauss-Legendre panels in radius, graded at every Fermi
//! crossing of the four energies and broken at every vertex's shell edge; the periodic trapezoid
//! rule in angle with ray doubling.

use crate::error::NumericalError;
use crate::kernels::grand_potential::fermi;
use crate::kernels::integrate::Accuracy;
use crate::kernels::quad::{graded_breakpoints, Feature, PanelRule};
use crate::kernels::shell::{Ray, Shell};
use crate::model::structure::Structure;
use crate::model::{band_matrix_element, Channel, Model, Pocket, Spin};
use num_complex::Complex64;
use std::f64::consts::PI;

/// Divided difference f[x_0, ..., x_k] of the Fermi function at temperature t > 0 (k <= 3): the
/// Newton table on the sorted points, where an entry whose points are separated by more than
/// CLUSTER t comes from the recursion; two closer points use the difference quotient or, when
/// nearly equal, its Taylor series; three or four close points the Cauchy integral on a circle of
/// radius t about them (the poles of f are at least pi t away and the points within 0.3 t of the
/// centre, so the trapezoid rule on the circle converges like (1/pi)^N).
pub fn fermi_divided_difference(x: &[f64], t: f64) -> f64 {
    let n = x.len();
    assert!((1..=4).contains(&n), "divided differences of order 0 to 3");
    let mut s = [0.0; 4];
    s[..n].copy_from_slice(x);
    let s = &mut s[..n];
    s.sort_by(f64::total_cmp);
    // table[i] holds f[s_i, ..., s_{i+order}] for the current order.
    let mut table = [0.0; 4];
    for (i, &xi) in s.iter().enumerate() {
        table[i] = fermi(xi, t);
    }
    for order in 1..n {
        for i in 0..n - order {
            let (lo, hi) = (s[i], s[i + order]);
            let spread = hi - lo;
            table[i] = if spread > CLUSTER * t {
                (table[i + 1] - table[i]) / spread
            } else if order == 1 {
                pair_difference(lo, hi, t)
            } else {
                dd_contour(&s[i..=i + order], t)
            };
        }
    }
    table[0]
}

const CLUSTER: f64 = 0.6;
const CONTOUR_POINTS: usize = 32;

/// f[x, y] for |x - y| <= CLUSTER t: the difference quotient, or f'(m) + f'''(m) d^2/24 (d = x - y,
/// m the midpoint; the next term is f^(5) d^4 / 1920) when the points nearly coincide.
fn pair_difference(x: f64, y: f64, t: f64) -> f64 {
    let d = y - x;
    if d > 1e-3 * t {
        return (fermi(y, t) - fermi(x, t)) / d;
    }
    let f = fermi(0.5 * (x + y), t);
    let s = f * (1.0 - f);
    let f1 = -s / t;
    let f3 = -s * (1.0 - 6.0 * s) / (t * t * t);
    f1 + f3 * d * d / 24.0
}

type Node = (Complex64, Complex64);

/// (e^{i theta_m}, exp(e^{i theta_m})) at the contour nodes (radius t, so z/t = e^{i theta_m}).
fn contour_nodes() -> &'static [Node; CONTOUR_POINTS] {
    static NODES: std::sync::OnceLock<[Node; CONTOUR_POINTS]> = std::sync::OnceLock::new();
    NODES.get_or_init(|| {
        let zero = Complex64::new(0.0, 0.0);
        let mut out = [(zero, zero); CONTOUR_POINTS];
        for (m, o) in out.iter_mut().enumerate() {
            let th = 2.0 * PI * (m as f64 + 0.5) / CONTOUR_POINTS as f64;
            let e = Complex64::from_polar(1.0, th);
            *o = (e, e.exp());
        }
        out
    })
}

fn dd_contour(x: &[f64], t: f64) -> f64 {
    let c = 0.5 * (x[0] + x[x.len() - 1]);
    let one = Complex64::new(1.0, 0.0);
    // f(c + t e) = 1/(e^{c/t} exp(e) + 1), written without overflow.
    let a = c / t;
    let (flip, ea) = if a > 0.0 {
        (true, (-a).exp())
    } else {
        (false, a.exp())
    };
    let mut sum = Complex64::new(0.0, 0.0);
    for &(e, ee) in contour_nodes() {
        let f = if flip {
            let w = ea / ee;
            w / (one + w)
        } else {
            one / (ea * ee + one)
        };
        let z = e * t;
        let mut den = one;
        for &xi in x {
            den *= z + (c - xi);
        }
        sum += f * z / den;
    }
    sum.re / CONTOUR_POINTS as f64
}

/// One loop coefficient B with its error estimate (absolute, from ray doubling).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LoopValue {
    /// B per spin channel, meV^-3 nm^-2 (complex only with complex form factors).
    pub value: Complex64,
    /// Absolute error estimate (the last change under ray doubling).
    pub error: f64,
    /// Rays of the final angular rule.
    pub rays: usize,
}

/// B(q1, q2, q3, q4) of channel `ch` at temperature t > 0 (meV); the wavevectors (1/nm) must
/// satisfy q1 - q2 + q3 - q4 = 0.
pub fn quadruple_loop(
    model: &Model,
    ch: &Channel,
    q: [[f64; 2]; 4],
    t: f64,
    acc: &Accuracy,
) -> Result<LoopValue, NumericalError> {
    check_loop(&q, t)?;
    let (a, b) = (&model.pockets()[ch.a()], &model.pockets()[ch.b()]);
    let lp = LoopRays {
        a,
        b,
        ch,
        shell: Shell::new(a, b, ch.form(), ch.cutoff(), q[0])?,
        lambda: ch.cutoff(),
        q1: q[0],
        s2: [q[0][0] - q[1][0], q[0][1] - q[1][1]],
        q4: q[3],
        t,
        width: t * acc.feature_width,
        rule: PanelRule::new(acc.order),
        helical: matches!(
            (a.spin(), b.spin()),
            (Spin::Helical { .. }, Spin::Helical { .. })
        ),
        acc,
    };
    let mut buf = RayBuffers::default();
    let mut ray_value = |theta: f64| lp.value(theta, &mut buf);
    // Periodic trapezoid over the full circle, doubling until converged.
    let norm = 1.0 / (4.0 * PI * PI);
    let mut n = acc.min_rays.max(16);
    let mut s = Complex64::new(0.0, 0.0);
    for j in 0..n {
        s += ray_value(2.0 * PI * j as f64 / n as f64)?;
    }
    let mut value = s * (2.0 * PI / n as f64) * norm;
    let rtol = acc.rtol.max(1e-6);
    loop {
        if 2 * n > acc.max_rays {
            return Err(NumericalError::NotConverged {
                what: "four-insertion loop over the ray angle".into(),
                iterations: n,
                last_change: f64::NAN,
                target: rtol,
            });
        }
        for j in 0..n {
            s += ray_value(2.0 * PI * (j as f64 + 0.5) / n as f64)?;
        }
        n *= 2;
        let new = s * (2.0 * PI / n as f64) * norm;
        let change = (new - value).norm();
        value = new;
        // Absolute floor: a loop that cancels to nothing is judged against the plane-wave scale
        // nu / T^2.
        let floor = 1e-9 * ch.nu() / (t * t);
        if change <= rtol * value.norm() || change <= floor {
            return Ok(LoopValue {
                value,
                error: change,
                rays: n,
            });
        }
    }
}

/// T (meV) must be positive and the wavevectors (1/nm) conserve momentum, q1 - q2 + q3 - q4 = 0
/// to 1e-9 of the largest.
fn check_loop(q: &[[f64; 2]; 4], t: f64) -> Result<(), NumericalError> {
    if t.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
        return Err(NumericalError::NonPositiveTemperature {
            what: "the quartic coefficient".into(),
            t,
        });
    }
    let scale = q
        .iter()
        .map(|v| v[0].hypot(v[1]))
        .fold(0.0, f64::max)
        .max(1e-12);
    let miss = [
        q[0][0] - q[1][0] + q[2][0] - q[3][0],
        q[0][1] - q[1][1] + q[2][1] - q[3][1],
    ];
    if miss[0].hypot(miss[1]) > 1e-9 * scale {
        return Err(NumericalError::BadArgument(
            "the wavevectors of a loop must satisfy q1 - q2 + q3 - q4 = 0".into(),
        ));
    }
    Ok(())
}

/// The rays of one four-insertion loop: the channel, the shell of the first vertex (polar
/// centre), the loop's momentum shifts (1/nm) and the radial rule.
struct LoopRays<'m> {
    a: &'m Pocket,
    b: &'m Pocket,
    ch: &'m Channel,
    shell: Shell<'m>,
    /// The vertex cutoff, meV.
    lambda: f64,
    q1: [f64; 2],
    /// q1 - q2.
    s2: [f64; 2],
    q4: [f64; 2],
    /// k_B T, meV.
    t: f64,
    /// Feature width in energy, meV.
    width: f64,
    rule: PanelRule,
    /// Both pockets helical: the band form factors enter.
    helical: bool,
    acc: &'m Accuracy,
}

/// Breakpoint buffers reused from ray to ray.
#[derive(Default)]
struct RayBuffers {
    breaks: Vec<f64>,
    extra: Vec<f64>,
    all: Vec<f64>,
}

fn add(k: [f64; 2], s: [f64; 2]) -> [f64; 2] {
    [k[0] + s[0], k[1] + s[1]]
}

impl LoopRays<'_> {
    /// Value along the ray of every quantity that has a feature: the two further Fermi crossings
    /// and the three further shell edges (meV).
    fn fields(&self, k: [f64; 2]) -> [f64; 5] {
        let (a, b, lambda) = (self.a, self.b, self.lambda);
        let ka = add(k, self.q1);
        let kb2 = add(k, self.s2);
        let ka4 = add(k, self.q4);
        let (ea1, eb2, ea4, eb0) = (a.energy(ka), b.energy(kb2), a.energy(ka4), b.energy(k));
        [
            eb2,
            ea4,
            0.5 * (ea1 - eb2).abs() - lambda,
            0.5 * (ea4 - eb2).abs() - lambda,
            0.5 * (ea4 - eb0).abs() - lambda,
        ]
    }

    /// The ray integral at angle theta (before the angular weight).
    fn value(&self, theta: f64, buf: &mut RayBuffers) -> Result<Complex64, NumericalError> {
        let acc = self.acc;
        let ray = self
            .shell
            .ray(theta, self.width, &[], acc.growth, &mut buf.breaks)?;
        let (feats, edges) = self.features(&ray);
        graded_breakpoints(ray.r_lo, ray.r_hi, &feats, acc.growth, &mut buf.extra);
        let all = &mut buf.all;
        all.clear();
        all.extend_from_slice(&buf.breaks);
        all.extend_from_slice(&buf.extra);
        all.extend_from_slice(&edges);
        all.sort_by(f64::total_cmp);
        all.dedup_by(|x, y| (*x - *y).abs() <= 1e-14 * y.abs().max(1e-300));
        let mut sum = Complex64::new(0.0, 0.0);
        for w in all.windows(2) {
            self.rule.for_each_node(w[0], w[1], |r, wr| {
                if let Some(v) = self.integrand(self.shell.point_on_ray(ray.u, r)) {
                    sum += v * (r * wr);
                }
            });
        }
        Ok(sum)
    }

    /// The Fermi crossings (as graded features) and the shell edges along the ray: sign changes
    /// of the feature fields on a uniform sampling, refined by bisection.
    fn features(&self, ray: &Ray) -> (Vec<Feature>, Vec<f64>) {
        const SAMPLES: usize = 48;
        let at = |r: f64| self.shell.point_on_ray(ray.u, r);
        let mut feats: Vec<Feature> = Vec::new();
        let mut edges: Vec<f64> = Vec::new();
        let span = ray.r_hi - ray.r_lo;
        let mut prev = self.fields(at(ray.r_lo));
        let mut r_prev = ray.r_lo;
        for i in 1..=SAMPLES {
            let r = ray.r_lo + span * i as f64 / SAMPLES as f64;
            let cur = self.fields(at(r));
            for f in 0..5 {
                if (prev[f] > 0.0) != (cur[f] > 0.0) {
                    let root = self.bisect(ray, f, r_prev, r, prev[f]);
                    if f < 2 {
                        // Slope of the energy along the ray, for the feature width.
                        let dr = 1e-6 * span.max(1e-12);
                        let d = (self.fields(at(root + dr))[f] - self.fields(at(root - dr))[f])
                            / (2.0 * dr);
                        feats.push(Feature {
                            at: root,
                            scale: self.width / d.abs().max(1e-300),
                        });
                    } else {
                        edges.push(root);
                    }
                }
            }
            prev = cur;
            r_prev = r;
        }
        (feats, edges)
    }

    /// The sign change of field f in [lo, hi] (value `flo` at lo) by bisection.
    fn bisect(&self, ray: &Ray, f: usize, mut lo: f64, mut hi: f64, mut flo: f64) -> f64 {
        for _ in 0..60 {
            let mid = 0.5 * (lo + hi);
            let fm = self.fields(self.shell.point_on_ray(ray.u, mid))[f];
            if (fm > 0.0) == (flo > 0.0) {
                lo = mid;
                flo = fm;
            } else {
                hi = mid;
            }
            if hi - lo <= 1e-14 * hi.abs().max(1e-12) {
                break;
            }
        }
        0.5 * (lo + hi)
    }

    /// (1/2) f[e1, e2, e3, e4] M1 M2^* M3 M4^* at k, or None outside any vertex's shell.
    fn integrand(&self, k: [f64; 2]) -> Option<Complex64> {
        let (a, b, lambda) = (self.a, self.b, self.lambda);
        let ka = add(k, self.q1);
        let kb2 = add(k, self.s2);
        let ka4 = add(k, self.q4);
        let e = [b.energy(k), a.energy(ka), b.energy(kb2), a.energy(ka4)];
        if 0.5 * (e[1] - e[0]).abs() >= lambda
            || 0.5 * (e[1] - e[2]).abs() >= lambda
            || 0.5 * (e[3] - e[2]).abs() >= lambda
            || 0.5 * (e[3] - e[0]).abs() >= lambda
        {
            return None;
        }
        let mut v = Complex64::new(0.5 * fermi_divided_difference(&e, self.t), 0.0);
        if self.helical {
            let m = |pa, pb| band_matrix_element(a, b, self.ch.spin_matrix(), pa, pb);
            v *= m(ka, k) * m(ka, kb2).conj() * m(ka4, kb2) * m(ka4, k).conj();
        }
        Some(v)
    }
}

/// The loop coefficient of every momentum-conserving quadruple of a structure, in the order of
/// [`Structure::quadruples`]. Quadruples related by a rotation or reflection of all four
/// wavevectors share one integral when the channel is isotropic (circular pockets, a rotation-
/// and mirror-invariant form factor); every distinct loop is integrated once, in parallel.
pub fn structure_loops(
    model: &Model,
    ch: &Channel,
    structure: &Structure,
    t: f64,
    acc: &Accuracy,
) -> Result<Vec<([usize; 4], LoopValue)>, NumericalError> {
    use rayon::prelude::*;
    let quads = structure.quadruples();
    let (a, b) = (&model.pockets()[ch.a()], &model.pockets()[ch.b()]);
    let isotropic = a.is_isotropic()
        && b.is_isotropic()
        && ch.form().is_rotation_invariant()
        && ch.form().is_mirror_symmetric();
    let qs = &structure.wavevectors;
    let scale = structure.q_max().max(1e-300);
    let key = |j: &[usize; 4]| -> Vec<i64> {
        let v: Vec<[f64; 2]> = j.iter().map(|&i| qs[i]).collect();
        let round = |x: f64| (x / (scale * scale) * 1e8).round() as i64;
        if isotropic {
            // The Gram matrix fixes the four vectors up to rotations and reflections.
            let mut out = Vec::with_capacity(10);
            for p in 0..4 {
                for r in p..4 {
                    out.push(round(v[p][0] * v[r][0] + v[p][1] * v[r][1]));
                }
            }
            out
        } else {
            v.iter()
                .flat_map(|x| [round(x[0] * scale), round(x[1] * scale)])
                .collect()
        }
    };
    let keys: Vec<Vec<i64>> = quads.iter().map(key).collect();
    let mut distinct: Vec<usize> = Vec::new();
    let mut class = Vec::with_capacity(quads.len());
    for (i, k) in keys.iter().enumerate() {
        match distinct.iter().position(|&d| keys[d] == *k) {
            Some(c) => class.push(c),
            None => {
                class.push(distinct.len());
                distinct.push(i);
            }
        }
    }
    let values: Vec<LoopValue> = distinct
        .par_iter()
        .map(|&i| {
            let j = quads[i];
            quadruple_loop(model, ch, [qs[j[0]], qs[j[1]], qs[j[2]], qs[j[3]]], t, acc)
        })
        .collect::<Result<_, _>>()?;
    Ok(quads
        .iter()
        .zip(class)
        .map(|(j, c)| (*j, values[c]))
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Divided differences of the Fermi function against closed forms: f[x, y] = (f(x) -
    /// f(y))/(x - y) for separated points, the confluent limit f[x, x, x, x] = f'''(x)/6, and a
    /// mixed case against a direct Matsubara sum T sum_n prod 1/(i w_n - x_i) (common practice:
    /// the Matsubara sum of a product of poles is the divided difference of f).
    #[test]
    fn divided_differences_of_the_fermi_function() {
        let t = 0.7;
        let (x, y) = (0.3, -1.9);
        let want = (fermi(x, t) - fermi(y, t)) / (x - y);
        assert!((fermi_divided_difference(&[x, y], t) - want).abs() < 1e-14);
        // f''' = s (6 s - 1)/t^3 with s = f (1 - f), sign (-1)^3 absorbed: f' = -s/t.
        let f = fermi(x, t);
        let s = f * (1.0 - f);
        let f3 = -s * (1.0 - 6.0 * s) / t.powi(3);
        let got = fermi_divided_difference(&[x, x, x, x], t);
        assert!(
            (got - f3 / 6.0).abs() < 1e-13 * f3.abs().max(1.0),
            "{got} vs {}",
            f3 / 6.0
        );
        for pts in [
            [0.1, 0.15, 2.0, -3.0],
            [0.0, 0.0, 0.4, 0.41],
            [-0.2, 0.9, 1.7, 2.8],
        ] {
            let mut sum = 0.0;
            let n_max = 400_000;
            for n in 0..n_max {
                let w = (2 * n + 1) as f64 * PI * t;
                let mut p = Complex64::new(1.0, 0.0);
                for &xi in &pts {
                    p *= Complex64::new(-xi, w);
                }
                sum += 2.0 * (1.0 / p).re;
            }
            sum *= t;
            let got = fermi_divided_difference(&pts, t);
            assert!((got - sum).abs() < 1e-9, "{pts:?}: {got} vs {sum}");
        }
    }
}
