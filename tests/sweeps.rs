//! Sweeps: thread-count independence, failed points recorded without stopping the sweep, the
//! Lifshitz point on a curve, q* -> 0 continuously there, and the default top temperature of a
//! phase diagram.

mod common;

use common::nested_pair;
use nestor::config::parse_range;
use nestor::config::ConfigSource;
use nestor::model::Model;
use nestor::solvers::tc_channel::Method;
use nestor::solvers::TcSolver;
use nestor::sweeps::defaults::default_t_max;
use nestor::sweeps::lifshitz::scan_lifshitz;
use nestor::sweeps::tc_scan::{scan_tc, ScanPoint};
use nestor::sweeps::Grid;

/// A Tc scan over `grid` by the exact method with the default solver, on all threads.
fn exact_scan(src: &ConfigSource, m: &Model, grid: &Grid) -> Vec<ScanPoint> {
    scan_tc(
        src,
        m,
        grid,
        &TcSolver::default(),
        Method::Exact,
        None,
        false,
    )
    .unwrap()
}

/// The same sweep on one and on two threads gives bit-identical results in the same order
/// (rayon maps over points and collects in grid order).
#[test]
fn results_do_not_depend_on_the_thread_count() {
    let (src, m) = nested_pair(0.25, 5.0, 100.0, 0.0);
    let grid = Grid::new(vec![
        parse_range("h.offset=100.0:100.24:4").unwrap(),
        parse_range("eh.cutoff=4.5:5.5:3").unwrap(),
    ])
    .unwrap();
    let s = TcSolver::default();
    let one = scan_tc(&src, &m, &grid, &s, Method::Exact, Some(1), false).unwrap();
    let two = scan_tc(&src, &m, &grid, &s, Method::Exact, Some(2), false).unwrap();
    assert_eq!(one.len(), 12);
    for (a, b) in one.iter().zip(&two) {
        assert_eq!(a.values, b.values);
        let (ra, rb) = (a.result.as_ref().unwrap(), b.result.as_ref().unwrap());
        assert_eq!(ra[0].uniform.tc.to_bits(), rb[0].uniform.tc.to_bits());
        assert_eq!(
            ra[0].modulated.tc.tc.to_bits(),
            rb[0].modulated.tc.tc.to_bits()
        );
        assert_eq!(ra[0].modulated.q, rb[0].modulated.q);
    }
}

/// A point whose overrides make the configuration invalid (an electron band edge above the
/// chemical potential) is recorded with its reason; the other points are computed.
#[test]
fn a_failed_point_is_recorded_and_the_sweep_goes_on() {
    let (src, m) = nested_pair(0.25, 5.0, 100.0, 0.0);
    let grid = Grid::new(vec![parse_range("e.offset=-100:10:2").unwrap()]).unwrap();
    let pts = exact_scan(&src, &m, &grid);
    assert!(pts[0].result.is_ok());
    let err = pts[1].result.as_ref().unwrap_err().to_string();
    assert!(err.contains("offset"), "{err}");
}

/// Along the mismatch at fixed g, q* leaves zero at the Lifshitz point (h = 1.0728 Tc0 in weak
/// coupling, the crate docs, `theory::checks`) and grows continuously from zero beyond it: q*^2
/// grows about linearly in h - h_L, so q* at the first modulated points is small and increasing.
#[test]
fn q_star_leaves_zero_continuously_at_the_lifshitz_point() {
    let (src, m) = nested_pair(0.25, 5.0, 100.0, 0.0);
    let tc0 = 1.133_865_9 * 5.0 * (-4.0f64).exp();
    // Hole band edge E_F + 2h (electron edge fixed at -E_F): h from 1.05 to 1.11 Tc0.
    let (h0, h1, n) = (1.05, 1.11, 7);
    let range = format!(
        "h.offset={}:{}:{n}",
        100.0 + 2.0 * h0 * tc0,
        100.0 + 2.0 * h1 * tc0
    );
    let grid = Grid::new(vec![parse_range(&range).unwrap()]).unwrap();
    let pts = exact_scan(&src, &m, &grid);
    let q: Vec<f64> = pts
        .iter()
        .map(|p| p.result.as_ref().unwrap()[0].q_star())
        .collect();
    let found = scan_lifshitz(&src, &m, &grid, &pts, &TcSolver::default(), None).unwrap();
    assert_eq!(found[0].points.len(), 1, "{:?}", found[0]);
    let x = found[0].points[0].value;
    let h_l = (x - 100.0) / 2.0 / tc0;
    assert!((h_l - 1.0728).abs() < 0.011, "Lifshitz h = {h_l} Tc0");
    let first = q.iter().position(|&v| v > 0.0).unwrap();
    assert!(first > 0);
    assert!(q[first..].windows(2).all(|w| w[1] > w[0]), "{q:?}");
    // Continuity: extrapolating q*^2 linearly from the first two modulated points reaches zero
    // within one grid step before the first modulated point, and q* there is small.
    let xs: Vec<f64> = pts.iter().map(|p| p.values[0]).collect();
    let dx = xs[1] - xs[0];
    let (x1, x2, q1, q2) = (xs[first], xs[first + 1], q[first], q[first + 1]);
    let x0 = x1 - q1 * q1 * (x2 - x1) / (q2 * q2 - q1 * q1);
    assert!(
        x0 > x1 - 1.5 * dx && x0 <= x1,
        "q*^2 extrapolates to zero at {x0}, first modulated point {x1}"
    );
    assert!(q1 < 0.6 * q[q.len() - 1], "{q:?}");
}

/// The default top of a phase diagram's temperature axis covers a Tc maximum between the grid
/// points: along h.offset = 99.5 .. 100.5 in four points the maximum (perfect nesting, 100) lies
/// between the second and third. The old default sampled only the first, middle and last points
/// and gave 1.2 Tc(100.167), about 0.72 of 1.2 Tc(100).
#[test]
fn default_t_max_covers_a_maximum_between_grid_points() {
    let (src, m) = nested_pair(0.25, 5.0, 100.0, 0.0);
    let grid = Grid::new(vec![parse_range("h.offset=99.5:100.5:4").unwrap()]).unwrap();
    let tc = TcSolver::default();
    let t_max = default_t_max(&src, &m, &grid, 0, &tc)
        .unwrap()
        .expect("unstable along the axis");
    let peak = tc.uniform(&m, &m.channels()[0]).unwrap().tc;
    assert!(
        t_max >= 1.2 * peak * (1.0 - 1e-7),
        "default {t_max} meV, 1.2 Tc at perfect nesting {}",
        1.2 * peak
    );
    assert!(t_max <= 1.2 * peak * (1.0 + 1e-7), "{t_max}");
}
