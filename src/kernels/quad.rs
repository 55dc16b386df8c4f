//! Integration rules shared by the kernels: Gauss-Legendre nodes on [-1, 1] and graded panel
//! breakpoints around the sharp thermal features of the integrands (see the crate docs, [`theory::numerics`](crate::theory::numerics)).

/// Gauss-Legendre rule with `n` nodes on [-1, 1]: (nodes, weights), nodes ascending.
///
/// Newton iteration on P_n from the Chebyshev-like initial guesses, to machine precision.
pub fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    assert!(n >= 1, "a Gauss-Legendre rule needs at least one node");
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    let m = n.div_ceil(2);
    for i in 0..m {
        let mut z = (std::f64::consts::PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut dp = 0.0;
        for _ in 0..100 {
            let (p, d) = legendre_and_derivative(n, z);
            dp = d;
            let dz = p / d;
            z -= dz;
            if dz.abs() < 1e-16 {
                break;
            }
        }
        let (_, d) = legendre_and_derivative(n, z);
        dp = if d != 0.0 { d } else { dp };
        let wi = 2.0 / ((1.0 - z * z) * dp * dp);
        x[i] = -z;
        x[n - 1 - i] = z;
        w[i] = wi;
        w[n - 1 - i] = wi;
    }
    (x, w)
}

fn legendre_and_derivative(n: usize, z: f64) -> (f64, f64) {
    let (mut p0, mut p1) = (1.0, z);
    if n == 0 {
        return (1.0, 0.0);
    }
    for k in 2..=n {
        let kf = k as f64;
        let p2 = ((2.0 * kf - 1.0) * z * p1 - (kf - 1.0) * p0) / kf;
        p0 = p1;
        p1 = p2;
    }
    let d = n as f64 * (z * p1 - p0) / (z * z - 1.0);
    (p1, d)
}

/// A Gauss-Legendre rule mapped onto panels.
#[derive(Debug, Clone)]
pub struct PanelRule {
    /// Nodes on [-1, 1], ascending.
    pub nodes: Vec<f64>,
    /// Weights of the nodes.
    pub weights: Vec<f64>,
}

impl PanelRule {
    /// The `order`-node rule.
    pub fn new(order: usize) -> Self {
        let (nodes, weights) = gauss_legendre(order);
        PanelRule { nodes, weights }
    }

    /// Calls `f(x, w)` for every node of the rule mapped onto [lo, hi].
    #[inline]
    pub fn for_each_node(&self, lo: f64, hi: f64, mut f: impl FnMut(f64, f64)) {
        let half = 0.5 * (hi - lo);
        let mid = 0.5 * (hi + lo);
        for (x, w) in self.nodes.iter().zip(&self.weights) {
            f(mid + half * x, half * w);
        }
    }
}

/// A sharp feature at `at` whose width is about `scale` (same units as the axis).
#[derive(Debug, Clone, Copy)]
pub struct Feature {
    /// Where the feature sits.
    pub at: f64,
    /// Its width.
    pub scale: f64,
}

/// Panel breakpoints on [lo, hi]: every feature inside is a breakpoint, and panels grow
/// geometrically away from the features (each `growth` times the distance to the nearest feature,
/// never smaller than that feature's scale). Writes into `out` (cleared first).
pub fn graded_breakpoints(lo: f64, hi: f64, features: &[Feature], growth: f64, out: &mut Vec<f64>) {
    out.clear();
    out.push(lo);
    if hi.partial_cmp(&lo) != Some(std::cmp::Ordering::Greater) {
        return;
    }
    let mut inner: Vec<Feature> = features
        .iter()
        .copied()
        .filter(|f| f.at > lo && f.at < hi && f.scale > 0.0)
        .collect();
    inner.sort_by(|a, b| a.at.total_cmp(&b.at));
    let size_at = |x: f64| -> f64 {
        let mut s = f64::INFINITY;
        for f in features.iter().filter(|f| f.scale > 0.0) {
            // Moving away from a feature behind: the panel is `growth` times its distance; moving
            // towards one ahead: the panel's far end keeps the same ratio to the feature.
            let d = if f.at > x {
                growth * (f.at - x) / (1.0 + growth)
            } else {
                growth * (x - f.at)
            };
            s = s.min(f.scale.max(d));
        }
        s
    };
    let mut x = lo;
    let mut next_feature = 0;
    let max_panels = 10_000;
    while x < hi && out.len() < max_panels {
        let target = if next_feature < inner.len() {
            inner[next_feature].at
        } else {
            hi
        };
        let step = size_at(x).min(hi - lo);
        let mut nx = x + step;
        // Land on the feature (or the end) instead of stepping just short of it or past it.
        let min_gap = 0.25 * size_at(target).min(step);
        if nx >= target - min_gap {
            nx = target;
            if next_feature < inner.len() {
                next_feature += 1;
            }
        }
        if nx > x {
            out.push(nx);
        }
        x = nx;
    }
    if *out.last().unwrap() < hi {
        out.push(hi);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// 5-point Gauss-Legendre nodes and weights, Abramowitz and Stegun, Handbook of Mathematical
    /// Functions, Table 25.4 (15 digits). Absolute 1e-15.
    #[test]
    fn five_point_rule_matches_handbook_table() {
        let (x, w) = gauss_legendre(5);
        let xs = [0.906_179_845_938_664, 0.538_469_310_105_683, 0.0];
        let ws = [
            0.236_926_885_056_189,
            0.478_628_670_499_366,
            0.568_888_888_888_889,
        ];
        for i in 0..3 {
            assert!((x[4 - i] - xs[i]).abs() < 1e-15);
            assert!((x[i] + xs[i]).abs() < 1e-15);
            assert!((w[4 - i] - ws[i]).abs() < 1e-15);
        }
    }

    /// An n-point rule integrates polynomials of degree 2n - 1 exactly (definition of the rule).
    #[test]
    fn rule_is_exact_for_degree_2n_minus_1() {
        for n in [1, 2, 7, 12, 20] {
            let r = PanelRule::new(n);
            let deg = 2 * n - 1;
            let mut s = 0.0;
            r.for_each_node(0.0, 2.0, |x, w| s += w * x.powi(deg as i32));
            let exact = 2f64.powi(deg as i32 + 1) / (deg as f64 + 1.0);
            assert!((s / exact - 1.0).abs() < 1e-13, "n = {n}");
        }
    }

    #[test]
    fn breakpoints_hit_features_and_grow_geometrically() {
        let mut out = Vec::new();
        let feats = [
            Feature {
                at: 0.3,
                scale: 1e-3,
            },
            Feature {
                at: 0.31,
                scale: 1e-3,
            },
        ];
        graded_breakpoints(0.0, 1.0, &feats, 0.5, &mut out);
        assert_eq!(out[0], 0.0);
        assert_eq!(*out.last().unwrap(), 1.0);
        assert!(out.contains(&0.3) && out.contains(&0.31));
        assert!(out.windows(2).all(|p| p[1] > p[0]));
        // Logarithmic number of panels, not linear in 1/scale.
        assert!(out.len() < 60, "{} panels", out.len());
        let near = out
            .windows(2)
            .filter(|p| p[0] >= 0.3 && p[1] <= 0.31)
            .count();
        assert!(near >= 4);
    }
}
