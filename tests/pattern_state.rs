//! The multi-wavevector mean field (kernels::harmonics, solvers::pattern_state) against the
//! single-wavevector and uniform kernels it must reduce to, its own identities (Omega's gradient
//! is the coherence, the truncation is exact through order 2m in Delta, rotations of the k grid),
//! and its convergence in the k grid and in the harmonic order.
//!
//! Reference model: the equal-mass circular pair of tests/common (cutoff 5 meV, E_F = 100 meV,
//! lambda = 0.25 fixed at h = 0, Tc0 = 1.134 cutoff e^-4 = 0.1038 meV), at T = 0.3 Tc0 and
//! mismatch h = 1.15 Tc0: between the uniform line (h = 1.03 Tc0) and the modulated instability
//! (h = 1.23 Tc0) of the weak-coupling theory, where a modulated state is ordered.

mod common;

use common::{model, nested_pair, nested_pair_fixed_g, tol};
use nestor::kernels::grand_potential::grand_potential;
use nestor::kernels::harmonics::{
    omega_components, ray_symmetry, HarmonicGrid, HarmonicSet, OmegaAt, RaySymmetry,
};
use nestor::kernels::{Accuracy, Shell};
use nestor::model::structure::Structure;
use nestor::model::Model;
use nestor::solvers::ordered::OrderedSolver;
use nestor::solvers::pattern_state::{
    omega_at_amplitude, solve_structure, HarmonicCheck, PatternOptions, PatternState,
};
use num_complex::Complex64;

const CUTOFF: f64 = 5.0;
const E_F: f64 = 100.0;

fn tc0() -> f64 {
    1.133_865_9 * CUTOFF * (-4.0f64).exp()
}

/// The reference pair at mismatch h (Tc0 units), g fixed at h = 0.
fn pair_at(h: f64) -> Model {
    let (_, base) = nested_pair(0.25, CUTOFF, E_F, 0.0);
    nested_pair_fixed_g(&base, CUTOFF, E_F, h * tc0()).1
}

/// The weak-coupling optimal wavevector at (t, h) in Tc0 units (the crate docs,
/// `theory::susceptibility`), in 1/nm along x for the reference pair.
fn q_star(m: &Model, t: f64, h: f64) -> f64 {
    let v = m.pockets()[0].fermi_velocity_along([1.0, 0.0]);
    let (_, q) = nestor::solvers::tc::weak::modulated_point(t, h).unwrap();
    2.0 * q * tc0() / v
}

/// Helical Dirac pair with opposite windings and a texture phase (complex vertex M_ab).
fn helical_pair() -> Model {
    common::opposite_cones(30.0, 100.3, 0.25)
}

/// Mildly anisotropic, rotated parabolic pockets of unequal masses (no angular symmetry used;
/// h_k from -0.4 to 0.8 meV along the nesting line).
fn anisotropic_pair() -> Model {
    model(
        r#"
[[pocket]]
name = "e"
kind = "electron"
center = [0.0, 0.0]
mass = [0.2, 0.205]
angle = 20.0
offset = -100.0

[[pocket]]
name = "h"
kind = "hole"
center = [0.0, 0.0]
mass = 0.2025
offset = 100.4

[[channel]]
pockets = ["e", "h"]
lambda = 0.25
cutoff = 5.0
"#,
    )
}

fn tight() -> Accuracy {
    Accuracy {
        rtol: 1e-9,
        ..Accuracy::default()
    }
}

/// One wavevector: the window closes at {b_p, a_{p+q}}, so the central-element Omega is the
/// 2 x 2 plane-wave Omega of grand_potential.rs (identity), for a degenerate pair, a helical
/// pair with a complex vertex and an anisotropic pair; and q = 0 gives the uniform Omega.
/// Relative 1e-6: both integrate to about 1e-7 on different grids.
#[test]
fn one_wavevector_and_uniform_reduce_to_the_two_by_two_omega() {
    let m = pair_at(1.15);
    let t = 0.3 * tc0();
    let q = q_star(&m, 0.3, 1.15);
    let cases: Vec<(Model, [f64; 2], f64, f64)> = vec![
        (m.clone(), [q, 0.0], 0.8 * tc0(), t),
        (m.clone(), [0.0, 0.0], 1.2 * tc0(), t),
        (helical_pair(), [0.6 * q, -0.4 * q], 0.1, 0.04),
        (helical_pair(), [0.0, 0.0], 0.1, 0.04),
        (anisotropic_pair(), [0.7 * q, 0.5 * q], 0.1, 0.05),
        (anisotropic_pair(), [0.0, 0.0], 0.1, 0.05),
    ];
    for (mm, qv, delta, t) in cases {
        let ch = &mm.channels()[0];
        let shell = Shell::for_channel(&mm, ch, qv).unwrap();
        let reference = grand_potential(&shell, ch.g(), ch.mismatch(), delta, t, &tight()).unwrap();
        let ours = omega_components(
            &mm,
            0,
            &[qv],
            &[(qv, Complex64::from_polar(delta, 0.4))],
            t,
            2,
            &HarmonicGrid::default(),
        );
        eprintln!(
            "q {qv:?} delta {delta} t {t}: {:?} vs {}",
            ours.as_ref().map(|o| (o.omega, o.error)),
            reference.value
        );
        let ours = ours.unwrap();
        let rel = ours.omega / reference.value - 1.0;
        assert!(
            rel.abs() < 1e-6 && ours.error.unwrap() < 1e-5 * ours.omega.abs(),
            "q = {qv:?}: {} vs {} (rel {rel:.2e})",
            ours.omega,
            reference.value
        );
    }
}

/// The self-consistent one-wavevector state is the plane-wave solution of OrderedSolver at the
/// same q (identity): the gap and Omega agree to relative 1e-6, and the coherence at q is
/// -Delta/g (the crate docs, `theory::patterns`). The truncation check is exact (the window
/// closes).
#[test]
fn self_consistent_plane_wave_matches_the_ordered_solver() {
    let m = pair_at(1.15);
    let t = 0.3 * tc0();
    let q = [q_star(&m, 0.3, 1.15), 0.0];
    let os = OrderedSolver::default();
    let (_, sols) = os.stationary_points(&m, &m.channels()[0], q, t).unwrap();
    let best = sols
        .iter()
        .filter(|s| s.minimum)
        .max_by(|a, b| a.delta.total_cmp(&b.delta))
        .expect("a plane-wave minimum at this point");
    let st = solve_structure(
        &m,
        0,
        &[q],
        &[0.0],
        t,
        1.3 * best.delta,
        &PatternOptions::default(),
    )
    .unwrap();
    let d = st.components[0].1.norm();
    assert!(
        (d / best.delta - 1.0).abs() < tol::INTEGRATION,
        "{d} vs {}",
        best.delta
    );
    assert!(
        (st.omega / best.omega - 1.0).abs() < tol::INTEGRATION,
        "{} vs {}",
        st.omega,
        best.omega
    );
    assert_eq!(st.harmonic_change, 0.0);
    let g = m.channels()[0].g();
    let c = st.coherence[0].1;
    assert!((c + st.components[0].1 / g).norm() < tol::INTEGRATION * d / g);
    eprintln!(
        "plane wave: Delta = {d:.8e} meV ({} iterations), Omega = {:.8e} meV/nm^2",
        st.iterations, st.omega
    );
}

/// The coherence is the Wirtinger derivative of Omega on a fixed grid,
/// dOmega/d conj(Delta_G) = Delta_G/g + C_G (identity): central differences along the real and
/// imaginary direction of a first harmonic and of a higher harmonic that is still zero, on a
/// stripe with complex, unequal components. Relative 1e-5 of the gradient's scale.
#[test]
fn coherence_is_the_gradient_of_omega() {
    let m = pair_at(1.15);
    let t = 0.3 * tc0();
    let q = q_star(&m, 0.3, 1.15);
    let set = HarmonicSet::new(&[[q, 0.0], [-q, 0.0]], 3).unwrap();
    let x = set
        .place(&[
            ([q, 0.0], Complex64::from_polar(0.6 * tc0(), 0.3)),
            ([-q, 0.0], Complex64::from_polar(0.45 * tc0(), -1.1)),
        ])
        .unwrap();
    let grid = HarmonicGrid {
        rays: 24,
        radial_panels: 12,
        ..HarmonicGrid::default()
    };
    let sym = ray_symmetry(&m, 0, &set, &x);
    assert_eq!(sym, RaySymmetry::Full);
    let at = |x: &[Complex64]| {
        OmegaAt::new(&m, 0, &set, x, t)
            .on_grid(&grid, &sym)
            .unwrap()
    };
    let base = at(&x);
    let scale = base.gradient[0].norm();
    let step = 1e-4 * tc0();
    let g3 = set.index([3.0 * q, 0.0]).unwrap();
    for g in [0, g3] {
        for dir in [Complex64::new(1.0, 0.0), Complex64::new(0.0, 1.0)] {
            let mut xp = x.clone();
            let mut xm = x.clone();
            xp[g] += dir * step;
            xm[g] -= dir * step;
            let fd = (at(&xp).omega - at(&xm).omega) / (2.0 * step);
            // dOmega along dir = 2 Re(conj(dir) gradient)... for Omega real: dOmega/dt at
            // Delta + t dir is 2 Re(conj(grad) dir) with grad = dOmega/d conj(Delta).
            let analytic = 2.0 * (base.gradient[g].conj() * dir).re;
            assert!(
                (fd - analytic).abs() < 1e-5 * 2.0 * scale,
                "G index {g}, dir {dir}: {fd:.8e} vs {analytic:.8e}"
            );
        }
    }
}

/// Every closed walk of length 2l from the centre stays within l steps, so the order-m windows
/// give Omega exactly through order 2m in Delta (common practice of moment expansions; the claim
/// the construction rests on): at amplitudes A and A/2 on a stripe, Omega_1 - Omega_2 scales as
/// A^4 (ratio 16, A = 0.1 Tc0) and Omega_2 - Omega_3 as A^6 (ratio 64, A = 0.2 Tc0), up to
/// corrections of relative order (A/(pi T))^2, a few per cent here (tolerance 5%).
#[test]
fn truncation_is_exact_through_order_2m() {
    let m = pair_at(1.15);
    let t = 0.3 * tc0();
    let q = q_star(&m, 0.3, 1.15);
    let qs = [[q, 0.0], [-q, 0.0]];
    let grid = HarmonicGrid {
        rays: 48,
        radial_panels: 32,
        ..HarmonicGrid::default()
    };
    let omega = |order: usize, a: f64| {
        let set = HarmonicSet::new(&qs, order).unwrap();
        let x = set
            .place(&[
                (qs[0], Complex64::new(a, 0.0)),
                (qs[1], Complex64::new(a, 0.0)),
            ])
            .unwrap();
        let sym = ray_symmetry(&m, 0, &set, &x);
        OmegaAt::new(&m, 0, &set, &x, t)
            .omega_only()
            .on_grid(&grid, &sym)
            .unwrap()
            .omega
    };
    let d12 = |a: f64| omega(1, a) - omega(2, a);
    let d23 = |a: f64| omega(2, a) - omega(3, a);
    let (a4, a6) = (0.1 * tc0(), 0.2 * tc0());
    let r4 = d12(a4) / d12(0.5 * a4);
    let r6 = d23(a6) / d23(0.5 * a6);
    eprintln!("ratios: m = 1 -> 2 {r4:.3} (16), m = 2 -> 3 {r6:.3} (64)");
    assert!((r4 / 16.0 - 1.0).abs() < 0.05, "{r4}");
    assert!((r6 / 64.0 - 1.0).abs() < 0.05, "{r6}");
}

/// The sector rule is exact: with the hexagon's sixfold rotation (equal phases), Omega, the
/// coherences and the intraband components on one sector equal those on the full circle through
/// the same ray angles, to rounding (identity; relative 1e-11).
#[test]
fn sector_rule_equals_the_full_circle() {
    let m = pair_at(1.15);
    let t = 0.3 * tc0();
    let q = q_star(&m, 0.3, 1.15);
    let s = Structure::named("hexagon", [q, 0.0]).unwrap();
    let set = HarmonicSet::new(&s.wavevectors, 2).unwrap();
    let comps: Vec<_> = s
        .wavevectors
        .iter()
        .map(|g| (*g, Complex64::new(0.3 * tc0(), 0.0)))
        .collect();
    let x = set.place(&comps).unwrap();
    let sym = ray_symmetry(&m, 0, &set, &x);
    assert_eq!(sym.fold(), 6);
    let grid = HarmonicGrid {
        rays: 12,
        radial_panels: 6,
        panel_temperatures: 1e3,
        ..HarmonicGrid::default()
    };
    let qd = set.difference_wavevectors();
    let sector = OmegaAt::new(&m, 0, &set, &x, t)
        .with_intraband(&qd)
        .on_grid(&grid, &sym)
        .unwrap();
    let full = OmegaAt::new(&m, 0, &set, &x, t)
        .with_intraband(&qd)
        .on_grid(&grid, &RaySymmetry::Full)
        .unwrap();
    assert!((sector.omega / full.omega - 1.0).abs() < 1e-11);
    let cs = full.coherence[0].norm();
    for (a, b) in sector.coherence.iter().zip(&full.coherence) {
        assert!((a - b).norm() < 1e-11 * cs);
    }
    let ns = full.intraband[0].1.norm();
    for (a, b) in sector.intraband.iter().zip(&full.intraband) {
        assert!((a.1 - b.1).norm() < 1e-11 * ns && (a.2 - b.2).norm() < 1e-11 * ns);
    }
}

/// The result does not depend on the number of threads (rays are summed in ray order): one
/// thread and two threads give identical bits (common practice for parallel reductions).
#[test]
fn independent_of_the_thread_count() {
    let m = pair_at(1.15);
    let t = 0.3 * tc0();
    let q = q_star(&m, 0.3, 1.15);
    let s = Structure::named("square", [q, 0.0]).unwrap();
    let set = HarmonicSet::new(&s.wavevectors, 2).unwrap();
    let comps: Vec<_> = s
        .wavevectors
        .iter()
        .zip([0.0, 0.5, 1.0, 2.0])
        .map(|(g, p)| (*g, Complex64::from_polar(0.3 * tc0(), p)))
        .collect();
    let x = set.place(&comps).unwrap();
    let grid = HarmonicGrid {
        rays: 8,
        radial_panels: 6,
        panel_temperatures: 1e3,
        ..HarmonicGrid::default()
    };
    let run = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| {
                OmegaAt::new(&m, 0, &set, &x, t)
                    .on_grid(&grid, &RaySymmetry::Full)
                    .unwrap()
            })
    };
    let (one, two) = (run(1), run(2));
    assert_eq!(one.omega.to_bits(), two.omega.to_bits());
    assert!(one.coherence == two.coherence);
}

/// Changes of Omega of the order-3 stripe `s3` (wavevectors `qs`, temperature `t` in meV) from a
/// coarse grid to the doubled grid and from the doubled to the quadrupled one, meV/nm^2.
fn grid_changes(m: &Model, qs: &[[f64; 2]], s3: &PatternState, t: f64) -> (f64, f64) {
    let set3 = HarmonicSet::new(qs, 3).unwrap();
    let x3: Vec<Complex64> = s3.components.iter().map(|c| c.1).collect();
    let sym3 = ray_symmetry(m, 0, &set3, &x3);
    let coarse = HarmonicGrid {
        rays: 16,
        radial_panels: 8,
        panel_temperatures: 8.0,
        ..HarmonicGrid::default()
    };
    let on = |gr: &HarmonicGrid| {
        OmegaAt::new(m, 0, &set3, &x3, t)
            .omega_only()
            .on_grid(gr, &sym3)
            .unwrap()
            .omega
    };
    let (o1, o2, o4) = (
        on(&coarse),
        on(&coarse.doubled()),
        on(&coarse.doubled().doubled()),
    );
    eprintln!(
        "grid changes: {:.2e}, {:.2e}",
        (o2 - o1).abs(),
        (o4 - o2).abs()
    );
    ((o2 - o1).abs(), (o4 - o2).abs())
}

/// The self-consistent stripe (q, -q) on the modulated side is ordered and stationary:
/// dOmega/dlambda along Delta -> lambda Delta at lambda = 1 (central difference, step 1e-3) is
/// below 1e-3 of its value at lambda = 0.7, and the coherence is -Delta_G/g at every first harmonic
/// (the crate docs, `theory::patterns`; relative 1e-6). The intraband components at +-2q are
/// complex conjugates (hermiticity; identity). Harmonic and grid changes are small and decrease
/// when refined: Omega changes from order 2 to 3 more than from 3 to 4, and the doubled grid
/// changes more than the quadrupled one.
#[test]
fn stripe_is_stationary_and_converges() {
    let m = pair_at(1.15);
    let t = 0.3 * tc0();
    let q = q_star(&m, 0.3, 1.15);
    let qs = [[q, 0.0], [-q, 0.0]];
    let g = m.channels()[0].g();
    let solve = |order: usize, check: HarmonicCheck| {
        let t0 = std::time::Instant::now();
        let opts = PatternOptions {
            order,
            harmonic_check: check,
            ..PatternOptions::default()
        };
        let s = solve_structure(&m, 0, &qs, &[0.0, 0.0], t, 0.5 * tc0(), &opts).unwrap();
        eprintln!(
            "stripe order {order}: Omega {:.8e} +- {:.1e}, Delta_q/Tc0 {:.6}, {} iterations, harmonic change {:.2e}, grid change {:.2e}, {:?}",
            s.omega,
            s.omega_error,
            s.components[0].1.re / tc0(),
            s.iterations,
            s.harmonic_change,
            s.grid_change,
            t0.elapsed()
        );
        s
    };
    let s2 = solve(2, HarmonicCheck::Resolve);
    assert!(!s2.normal && s2.omega < 0.0);
    for (i, (gv, c)) in s2.coherence.iter().enumerate() {
        assert_eq!(*gv, s2.components[i].0);
        let d = s2.components[i].1;
        assert!((c + d / g).norm() < tol::INTEGRATION * d.norm() / g);
    }
    let (p, mq) = (&s2.intraband[0], &s2.intraband[1]);
    assert!((p.0[0] + mq.0[0]).abs() < 1e-12);
    assert!((p.1 - mq.1.conj()).norm() < 1e-9 * p.1.norm());
    assert!((p.2 - mq.2.conj()).norm() < 1e-9 * p.2.norm());
    // Stationarity along the amplitude.
    let set = HarmonicSet::new(&qs, 2).unwrap();
    let x: Vec<Complex64> = s2.components.iter().map(|c| c.1).collect();
    let sym = ray_symmetry(&m, 0, &set, &x);
    let om = |lam: f64| {
        let y: Vec<Complex64> = x.iter().map(|d| d * lam).collect();
        OmegaAt::new(&m, 0, &set, &y, t)
            .omega_only()
            .on_grid(&s2.grid, &sym)
            .unwrap()
            .omega
    };
    let h = 1e-3;
    let slope = |lam: f64| (om(lam + h) - om(lam - h)) / (2.0 * h);
    let (s1, s07) = (slope(1.0), slope(0.7));
    eprintln!("dOmega/dlambda: {s1:.3e} at the solution, {s07:.3e} at 0.7");
    assert!(s1.abs() < 1e-3 * s07.abs());
    // Harmonics: 2 -> 3 (from the order-2 solve) and 3 -> 4.
    let s3 = solve(3, HarmonicCheck::Resolve);
    assert!(s3.harmonic_change < s2.harmonic_change);
    assert!(s2.harmonic_change < 0.05 * s2.omega.abs());
    assert!(s3.harmonic_change < 0.01 * s3.omega.abs());
    // Grid: the solution on the doubled and quadrupled grids.
    let (coarse_change, fine_change) = grid_changes(&m, &qs, &s3, t);
    assert!(fine_change < coarse_change);
    assert!(s3.grid_change < 1e-5 * s3.omega.abs());
}

/// The intraband density components are second order in the amplitude (the crate docs,
/// `theory::patterns`): at fixed equal first-harmonic amplitudes A and A/2 (no self-consistency) on
/// a square, n_s(Q) at Q = q_i - q_j scales as A^2 (ratio 4, up to relative corrections of order
/// (A/(v q))^2, tolerance 10%), and omega_at_amplitude returns the same Omega as the kernel with an
/// error estimate below its target.
#[test]
fn intraband_components_are_second_order() {
    let m = pair_at(1.15);
    let t = 0.3 * tc0();
    let q = q_star(&m, 0.3, 1.15);
    let s = Structure::named("square", [q, 0.0]).unwrap();
    let grid = HarmonicGrid {
        rays: 16,
        radial_panels: 12,
        rtol: 1e-4,
        ..HarmonicGrid::default()
    };
    let at = |a: f64| {
        let comps: Vec<_> = s
            .wavevectors
            .iter()
            .map(|g| (*g, Complex64::new(a, 0.0)))
            .collect();
        omega_components(&m, 0, &s.wavevectors, &comps, t, 2, &grid).unwrap()
    };
    let a = 0.1 * tc0();
    let (big, small) = (at(a), at(0.5 * a));
    for (x, y) in big.intraband.iter().zip(&small.intraband) {
        for (u, v) in [(x.1, y.1), (x.2, y.2)] {
            let r = u.norm() / v.norm();
            assert!((r / 4.0 - 1.0).abs() < 0.1, "Q = {:?}: ratio {r}", x.0);
        }
    }
    let (value, error) =
        omega_at_amplitude(&m, 0, &s.wavevectors, &[0.0; 4], a, t, 2, &grid).unwrap();
    assert!((value / big.omega - 1.0).abs() < 1e-9);
    assert!(error <= 1e-4 * value.abs());
    // The same through OmegaAt::converged with an explicit set.
    let set = HarmonicSet::new(&s.wavevectors, 2).unwrap();
    let x = set
        .place(&[(s.wavevectors[0], Complex64::new(a, 0.0))])
        .unwrap();
    let one = OmegaAt::new(&m, 0, &set, &x, t)
        .omega_only()
        .converged(&grid)
        .unwrap();
    assert!(one.omega.is_finite() && one.error.is_some());
}

/// Unpaired carriers collect where |Delta(r)| is small (the crate docs, `theory::patterns`): on a
/// stripe at fixed amplitude, the |Delta|^2 component at 2q is Delta_q conj(Delta_-q) > 0; with the
/// hole pocket larger (h > 0) the unpaired carriers are holes of b, so the b-electron density
/// n_b(2q) follows |Delta|^2 (positive); with the electron pocket larger (h < 0) the a-electrons
/// collect at the nodes, n_a(2q) < 0.
#[test]
fn unpaired_carriers_collect_where_the_gap_is_small() {
    let t = 0.3 * tc0();
    let grid = HarmonicGrid {
        rays: 16,
        radial_panels: 12,
        rtol: 1e-4,
        ..HarmonicGrid::default()
    };
    for h in [1.15, -1.15] {
        let m = pair_at(h);
        let q = q_star(&m, 0.3, 1.15);
        let qs = [[q, 0.0], [-q, 0.0]];
        let d = Complex64::new(0.4 * tc0(), 0.0);
        let r = omega_components(&m, 0, &qs, &[(qs[0], d), (qs[1], d)], t, 2, &grid).unwrap();
        let (qv, na, nb) = r.intraband[0];
        assert!((qv[0] - 2.0 * q).abs() < 1e-12 * q);
        eprintln!("h = {h} Tc0: n_a(2q) = {na:.4e}, n_b(2q) = {nb:.4e} per nm^2");
        if h > 0.0 {
            assert!(nb.re > 0.0 && nb.im.abs() < 1e-9 * nb.re);
        } else {
            assert!(na.re < 0.0 && na.im.abs() < 1e-9 * na.re.abs());
        }
    }
}
