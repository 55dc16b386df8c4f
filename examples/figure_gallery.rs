//! Figure gallery: renders one figure of each kind from synthetic smooth functions, so the report
//! figures (the edge of the pipeline, nothing physical is computed here) can be looked at.
//!
//! Usage: `cargo run --example figure_gallery [output-dir]` (default /tmp/nestor-figure-gallery).

use nestor::reports::figures::{
    write_density_plot, write_line_plot, write_map_plot, write_region_plot, Band, Dash,
    DensityPlot, LinePlot, MapPlot, Marker, RegionPlot, Series,
};
use std::f64::consts::PI;
use std::path::PathBuf;

fn linspace(a: f64, b: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| a + (b - a) * i as f64 / (n - 1) as f64)
        .collect()
}

/// A mean-field-like order parameter: sqrt(1 - (t/tc)^2) below tc, zero above.
fn gap(t: f64, tc: f64) -> f64 {
    if t < tc {
        (1.0 - (t / tc).powi(2)).sqrt()
    } else {
        0.0
    }
}

fn line_plot() -> LinePlot {
    let ts = linspace(0.0, 1.2, 200);
    let curve = |f: &dyn Fn(f64) -> f64| ts.iter().map(|&t| (t, f(t))).collect::<Vec<_>>();
    LinePlot {
        title: "Order parameter versus temperature (synthetic)".into(),
        x_label: "T / T\u{2080}".into(),
        y_label: "\u{0394} / \u{0394}\u{2080}".into(),
        series: vec![
            Series {
                label: "uniform, \u{03b4} = 0".into(),
                points: curve(&|t| gap(t, 1.0)),
                dash: Dash::Solid,
                color: 0,
            },
            Series {
                label: "uniform, \u{03b4} = 0.4".into(),
                points: curve(&|t| 0.8 * gap(t, 0.8)),
                dash: Dash::Dashed,
                color: 1,
            },
            Series {
                label: "modulated, \u{03b4} = 0.4".into(),
                points: curve(&|t| 0.55 * gap(t, 0.9)),
                dash: Dash::Dotted,
                color: 2,
            },
        ],
        markers: vec![Marker {
            label: "first-order jump".into(),
            x: 0.62,
            y: 0.8 * gap(0.62, 0.8),
            color: 3,
        }],
        bands: vec![Band {
            label: "metastable".into(),
            lower: vec![(0.55, 0.0), (0.55, 1.05)],
            upper: vec![(0.7, 0.0), (0.7, 1.05)],
            color: 4,
        }],
        notes: vec!["coupling g = 0.35".into(), "grid 200 points".into()],
    }
}

fn map_plot() -> MapPlot {
    let xs = linspace(0.0, 2.0, 60);
    let ys = linspace(0.05, 1.0, 40);
    let mut values = Vec::new();
    let mut outline = Vec::new();
    for &t in &ys {
        for &d in &xs {
            let v = -(1.0 - t * t) * (-(d * d) / 1.2).exp() + 0.05 * (3.0 * d).sin() * t;
            let failed = (d - 1.6).abs() < 0.03 && (t - 0.3).abs() < 0.03;
            values.push(if failed { None } else { Some(v) });
            outline.push(d > 0.8 + 0.4 * t && d < 1.5 - 0.2 * t && t < 0.7);
        }
    }
    let tc: Vec<(f64, f64)> = xs
        .iter()
        .map(|&d| (d, (1.0 - 0.35 * d * d).max(0.0).sqrt()))
        .collect();
    MapPlot {
        title: "Condensation energy (synthetic)".into(),
        x_label: "pocket mismatch \u{03b4} (meV)".into(),
        y_label: "T (K)".into(),
        colorbar_label: "F \u{2212} F\u{2099} (meV/nm\u{b2})".into(),
        xs,
        ys,
        values,
        outline,
        outline_label: "modulated state wins".into(),
        series: vec![Series {
            label: "T\u{1d04} (second order)".into(),
            points: tc,
            dash: Dash::Dashed,
            color: 1,
        }],
        markers: vec![Marker {
            label: "Lifshitz point".into(),
            x: 0.95,
            y: 0.62,
            color: 4,
        }],
    }
}

fn region_plot() -> RegionPlot {
    let xs = linspace(0.0, 2.0, 80);
    let ys = linspace(0.0, 1.0, 50);
    let t2 = |d: f64| (1.0 - 0.3 * d * d).max(0.0).sqrt();
    let d1 = |t: f64| 1.0 + 0.25 * t;
    let mut regions = Vec::new();
    for &t in &ys {
        for &d in &xs {
            regions.push(Some(if t > t2(d) {
                0
            } else if d < d1(t) {
                1
            } else {
                2
            }));
        }
    }
    let second: Vec<(f64, f64)> = xs.iter().map(|&d| (d, t2(d))).collect();
    let tt = linspace(0.0, 0.85, 30);
    let first: Vec<(f64, f64)> = tt.iter().map(|&t| (d1(t), t)).collect();
    RegionPlot {
        title: "Phase diagram (synthetic)".into(),
        x_label: "pocket mismatch \u{03b4} (meV)".into(),
        y_label: "T (K)".into(),
        xs,
        ys,
        regions,
        region_names: vec![
            "normal".into(),
            "uniform excitonic".into(),
            "modulated excitonic".into(),
        ],
        series: vec![
            Series {
                label: "second order".into(),
                points: second,
                dash: Dash::Solid,
                color: 6,
            },
            Series {
                label: "first order".into(),
                points: first,
                dash: Dash::Dashed,
                color: 6,
            },
        ],
        bands: vec![Band {
            label: "metastability (spinodals)".into(),
            lower: tt.iter().map(|&t| (d1(t) - 0.12 * (1.0 - t), t)).collect(),
            upper: tt.iter().map(|&t| (d1(t) + 0.1 * (1.0 - t), t)).collect(),
            color: 0,
        }],
        markers: vec![Marker {
            label: "tricritical point".into(),
            x: d1(0.85),
            y: 0.85,
            color: 3,
        }],
        labels: vec![
            ("normal".into(), 1.6, 0.9),
            ("uniform".into(), 0.45, 0.35),
            ("modulated".into(), 1.6, 0.3),
        ],
    }
}

fn density_plot() -> DensityPlot {
    let n = 200;
    let fov = 40.0;
    let q1 = 2.0 * PI / 5.0;
    let q2 = 2.0 * PI / 8.0;
    let mut density = Vec::with_capacity(n * n);
    for j in 0..n {
        for i in 0..n {
            let x = -fov / 2.0 + (i as f64 + 0.5) * fov / n as f64;
            let y = -fov / 2.0 + (j as f64 + 0.5) * fov / n as f64;
            density.push(
                2.0 + 0.12 * (q1 * x).cos() + 0.05 * (q2 * (0.5 * x + 0.866 * y)).cos()
                    - 0.3 * (-(x * x + y * y) / 30.0).exp(),
            );
        }
    }
    DensityPlot {
        title: "Modulated density (synthetic)".into(),
        fov_nm: fov,
        n,
        density,
        colorbar_label: "n (1/nm\u{b2})".into(),
        peaks: vec![
            (q1, 0.0, 0.06, "Q\u{2081}".into()),
            (-q1, 0.0, 0.06, String::new()),
            (0.5 * q2, 0.866 * q2, 0.025, "Q\u{2082}".into()),
            (-0.5 * q2, -0.866 * q2, 0.025, String::new()),
        ],
        k_extent: 2.0,
    }
}

fn main() {
    let dir = std::env::args()
        .nth(1)
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from("/tmp/nestor-figure-gallery"));
    if let Err(e) = std::fs::create_dir_all(&dir) {
        eprintln!("cannot create {}: {e}", dir.display());
        std::process::exit(1);
    }
    let results = [
        write_line_plot(&line_plot(), &dir.join("line")),
        write_map_plot(&map_plot(), &dir.join("map")),
        write_region_plot(&region_plot(), &dir.join("region")),
        write_density_plot(&density_plot(), &dir.join("density")),
    ];
    let mut failed = false;
    for r in results {
        if let Err(e) = r {
            eprintln!("{e}");
            failed = true;
        }
    }
    if failed {
        std::process::exit(1);
    }
    println!("figures written to {}", dir.display());
}
