//! Tests of the figures: every kind written as PNG and SVG, degenerate and inconsistent inputs,
//! ticks, clipping, contours and the embedded rasters.

use super::canvas::Rect;
use super::cells::mask_contours;
use super::geometry::{clip_polygon, clip_polyline, point_in_polygon, tick_labels, ticks, Frame};
use super::output::{encode_png, with_suffix};
use super::style::{colormap, Scale};
use super::*;
use base64::engine::general_purpose::STANDARD as BASE64;
use base64::Engine as _;
use plotters::style::RGBColor;
use std::fs;
use std::path::PathBuf;
use std::sync::atomic::{AtomicU64, Ordering};

static COUNTER: AtomicU64 = AtomicU64::new(0);

fn scratch(tag: &str) -> PathBuf {
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    let dir = std::env::temp_dir().join(format!("nestor-figures-{tag}-{}-{n}", std::process::id()));
    let _ = fs::remove_dir_all(&dir);
    fs::create_dir_all(&dir).unwrap();
    dir
}

fn check_outputs(stem: &Path) {
    let png = fs::read(with_suffix(stem, "png")).unwrap();
    assert!(png.len() > 1000, "png too small: {}", png.len());
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    let svg = fs::read_to_string(with_suffix(stem, "svg")).unwrap();
    assert!(svg.contains("<svg"));
    assert!(svg.trim_end().ends_with("</svg>"));
    // No temporary files left next to the outputs.
    let dir = stem.parent().unwrap();
    for e in fs::read_dir(dir).unwrap() {
        let name = e.unwrap().file_name().to_string_lossy().into_owned();
        assert!(!name.contains(".tmp-"), "leftover {name}");
    }
}

/// Writes each plot to `<dir>/<prefix><k>` and checks both files.
fn write_each<P>(
    dir: &Path,
    prefix: &str,
    plots: &[P],
    write: impl Fn(&P, &Path) -> Result<(), FigureError>,
) {
    for (k, p) in plots.iter().enumerate() {
        let stem = dir.join(format!("{prefix}{k}"));
        write(p, &stem).unwrap();
        check_outputs(&stem);
    }
}

fn curve(f: impl Fn(f64) -> f64, n: usize) -> Vec<(f64, f64)> {
    (0..n)
        .map(|i| {
            let x = i as f64 / (n - 1) as f64;
            (x, f(x))
        })
        .collect()
}

fn line_plot() -> LinePlot {
    LinePlot {
        title: "Gap versus temperature".into(),
        x_label: "T (K)".into(),
        y_label: "\u{0394} (meV)".into(),
        series: vec![
            Series {
                label: "uniform".into(),
                points: curve(|x| (1.0 - x * x).max(0.0).sqrt(), 60),
                dash: Dash::Solid,
                color: 0,
            },
            Series {
                label: "modulated".into(),
                points: curve(|x| 0.8 * (1.0 - x).max(0.0).sqrt(), 60),
                dash: Dash::Dashed,
                color: 1,
            },
            Series {
                label: "dotted".into(),
                points: curve(|x| 0.3 + 0.1 * x, 10),
                dash: Dash::Dotted,
                color: 2,
            },
        ],
        markers: vec![Marker {
            label: "T*".into(),
            x: 0.5,
            y: 0.5,
            color: 3,
        }],
        bands: vec![Band {
            label: "metastable".into(),
            lower: curve(|x| 0.1 * x, 20),
            upper: curve(|x| 0.2 + 0.1 * x, 20),
            color: 4,
        }],
        notes: vec!["g = 0.3".into(), "mu = 0".into()],
    }
}

fn grid(nx: usize, ny: usize) -> (Vec<f64>, Vec<f64>) {
    (
        (0..nx).map(|i| i as f64 * 0.1).collect(),
        (0..ny).map(|j| 1.0 + j as f64 * 0.05).collect(),
    )
}

fn map_plot() -> MapPlot {
    let (xs, ys) = grid(30, 20);
    let mut values = Vec::new();
    let mut outline = Vec::new();
    for y in &ys {
        for x in &xs {
            let v = (x * 2.0).sin() * y;
            values.push(if (*x - 1.5).abs() < 0.05 && (*y - 1.5).abs() < 0.03 {
                None
            } else {
                Some(v)
            });
            outline.push((x - 1.5).powi(2) + (y - 1.4).powi(2) < 0.3);
        }
    }
    MapPlot {
        title: "Condensation energy".into(),
        x_label: "mismatch (meV)".into(),
        y_label: "T (K)".into(),
        colorbar_label: "E (meV)".into(),
        xs,
        ys,
        values,
        outline,
        outline_label: "modulated".into(),
        series: vec![Series {
            label: "Tc".into(),
            points: curve(|x| 1.2 + 0.5 * x, 30)
                .into_iter()
                .map(|(x, y)| (3.0 * x, y))
                .collect(),
            dash: Dash::Dashed,
            color: 1,
        }],
        markers: vec![Marker {
            label: "L".into(),
            x: 1.0,
            y: 1.4,
            color: 2,
        }],
    }
}

fn region_plot() -> RegionPlot {
    let (xs, ys) = grid(25, 18);
    let mut regions = Vec::new();
    for y in &ys {
        for x in &xs {
            regions.push(if *y > 1.0 + 0.3 * x {
                Some(0)
            } else if *x > 1.2 {
                Some(2)
            } else {
                Some(1)
            });
        }
    }
    regions[3] = None;
    RegionPlot {
        title: "Phase diagram".into(),
        x_label: "mismatch (meV)".into(),
        y_label: "T (K)".into(),
        xs,
        ys,
        regions,
        region_names: vec!["normal".into(), "uniform".into(), "modulated".into()],
        series: vec![Series {
            label: "second order".into(),
            points: curve(|x| 1.0 + 0.3 * 2.4 * x, 20)
                .into_iter()
                .map(|(x, y)| (2.4 * x, y))
                .collect(),
            dash: Dash::Solid,
            color: 6,
        }],
        bands: vec![Band {
            label: "metastable".into(),
            lower: vec![(1.1, 1.0), (1.1, 1.3)],
            upper: vec![(1.3, 1.0), (1.3, 1.3)],
            color: 1,
        }],
        markers: vec![Marker {
            label: "tricritical".into(),
            x: 1.2,
            y: 1.36,
            color: 3,
        }],
        labels: vec![("normal".into(), 0.5, 1.7)],
    }
}

fn density_plot(n: usize) -> DensityPlot {
    let fov = 20.0;
    let q = 2.0 * std::f64::consts::PI / 4.0;
    let mut density = Vec::new();
    for j in 0..n {
        for i in 0..n {
            let x = -fov / 2.0 + (i as f64 + 0.5) * fov / n as f64;
            let y = -fov / 2.0 + (j as f64 + 0.5) * fov / n as f64;
            density.push(1.0 + 0.1 * (q * x).cos() + 0.05 * (q * y).cos());
        }
    }
    DensityPlot {
        title: "Charge density".into(),
        fov_nm: fov,
        n,
        density,
        colorbar_label: "n (1/nm\u{b2})".into(),
        peaks: vec![
            (q, 0.0, 0.05, "Q1".into()),
            (-q, 0.0, 0.05, "".into()),
            (0.0, q, 0.025, "Q2".into()),
        ],
        k_extent: 3.0,
    }
}

#[test]
fn line_plot_writes_png_and_svg() {
    let dir = scratch("line");
    let stem = dir.join("line");
    write_line_plot(&line_plot(), &stem).unwrap();
    check_outputs(&stem);
    let svg = fs::read_to_string(with_suffix(&stem, "svg")).unwrap();
    assert!(svg.starts_with("<svg width=\"900\" height=\"650\" viewBox=\"0 0 3600 2600\""));
    // Writing again replaces the files.
    write_line_plot(&line_plot(), &stem).unwrap();
    check_outputs(&stem);
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn grid_plots_write_png_and_svg() {
    let dir = scratch("grid");
    write_each(&dir, "map", &[map_plot()], write_map_plot);
    write_each(&dir, "region", &[region_plot()], write_region_plot);
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn density_plot_writes_png_and_svg_with_embedded_image() {
    let dir = scratch("density");
    let stem = dir.join("density");
    write_density_plot(&density_plot(64), &stem).unwrap();
    check_outputs(&stem);
    let svg = fs::read_to_string(with_suffix(&stem, "svg")).unwrap();
    assert!(svg.contains("<image"));
    assert!(svg.contains("data:image/png;base64,iVBORw0KGgo"));
    assert!(!svg.contains("fill=\"#010203\""));
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn degenerate_line_plots_do_not_panic() {
    let dir = scratch("degenerate-line");
    let nan = f64::NAN;
    let lines = [
        LinePlot::default(),
        LinePlot {
            series: vec![Series {
                label: "nan".into(),
                points: vec![(nan, nan), (1.0, nan), (f64::INFINITY, 2.0)],
                ..Default::default()
            }],
            markers: vec![Marker {
                x: nan,
                ..Default::default()
            }],
            notes: vec!["".into()],
            ..Default::default()
        },
        LinePlot {
            series: vec![Series {
                label: "one point".into(),
                points: vec![(1.0, 2.0)],
                dash: Dash::Dotted,
                ..Default::default()
            }],
            bands: vec![Band {
                label: "degenerate".into(),
                lower: vec![(1.0, 2.0)],
                ..Default::default()
            }],
            ..Default::default()
        },
        LinePlot {
            series: vec![Series {
                label: "gap".into(),
                points: vec![(0.0, 0.0), (1.0, 1.0), (2.0, nan), (3.0, 1.0), (4.0, 0.0)],
                ..Default::default()
            }],
            ..Default::default()
        },
    ];
    write_each(&dir, "line", &lines, write_line_plot);
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn degenerate_grid_plots_do_not_panic() {
    let dir = scratch("degenerate-grid");
    let nan = f64::NAN;
    let maps = [
        MapPlot::default(),
        MapPlot {
            xs: vec![1.0],
            ys: vec![2.0],
            values: vec![None],
            outline: vec![true],
            outline_label: "x".into(),
            ..Default::default()
        },
        MapPlot {
            xs: vec![0.0, 1.0],
            ys: vec![0.0, 1.0],
            values: vec![Some(nan), Some(1.0), Some(1.0), Some(1.0)],
            ..Default::default()
        },
        MapPlot {
            xs: vec![3.0, 2.0, 1.0],
            ys: vec![0.0],
            values: vec![Some(1.0), Some(2.0), Some(3.0)],
            ..Default::default()
        },
    ];
    write_each(&dir, "map", &maps, write_map_plot);
    let regions = [
        RegionPlot::default(),
        RegionPlot {
            xs: vec![0.0],
            ys: vec![0.0],
            regions: vec![Some(7)],
            labels: vec![("outside".into(), 5.0, 5.0)],
            ..Default::default()
        },
    ];
    write_each(&dir, "region", &regions, write_region_plot);
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn degenerate_density_plots_do_not_panic() {
    let dir = scratch("degenerate-density");
    let nan = f64::NAN;
    let mut one = density_plot(1);
    one.peaks.push((nan, 0.0, 1.0, "nan".into()));
    one.k_extent = nan;
    let mut holes = density_plot(8);
    holes.density[5] = nan;
    holes.peaks.clear();
    let plots = [DensityPlot::default(), one, holes];
    write_each(&dir, "density", &plots, write_density_plot);
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn inconsistent_inputs_are_reported() {
    let dir = scratch("invalid");
    let stem = dir.join("bad");
    let mut m = map_plot();
    m.values.pop();
    let e = write_map_plot(&m, &stem).unwrap_err();
    assert!(matches!(e, FigureError::InvalidInput { .. }), "{e}");
    assert!(e.to_string().contains("bad"));
    let mut m = map_plot();
    m.outline.truncate(3);
    assert!(matches!(
        write_map_plot(&m, &stem),
        Err(FigureError::InvalidInput { .. })
    ));
    let mut m = map_plot();
    m.xs[3] = m.xs[2];
    assert!(matches!(
        write_map_plot(&m, &stem),
        Err(FigureError::InvalidInput { .. })
    ));
    let mut r = region_plot();
    r.ys[0] = f64::NAN;
    assert!(matches!(
        write_region_plot(&r, &stem),
        Err(FigureError::InvalidInput { .. })
    ));
    let mut d = density_plot(4);
    d.density.push(1.0);
    assert!(matches!(
        write_density_plot(&d, &stem),
        Err(FigureError::InvalidInput { .. })
    ));
    let mut d = density_plot(4);
    d.fov_nm = 0.0;
    assert!(matches!(
        write_density_plot(&d, &stem),
        Err(FigureError::InvalidInput { .. })
    ));
    assert_eq!(fs::read_dir(&dir).unwrap().count(), 0);
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn missing_directory_fails_without_leftovers() {
    let dir = scratch("missing");
    let stem = dir.join("no-such-dir").join("fig");
    let e = write_line_plot(&line_plot(), &stem).unwrap_err();
    assert!(matches!(e, FigureError::Io { .. }), "{e}");
    assert!(e.to_string().contains("no-such-dir"));
    assert!(write_density_plot(&density_plot(4), &stem).is_err());
    assert_eq!(fs::read_dir(&dir).unwrap().count(), 0);
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn ticks_and_labels() {
    let (t, step) = ticks(0.0, 1.0, 5);
    assert_eq!(step, 0.2);
    assert_eq!(t.len(), 6);
    assert_eq!(
        tick_labels(&t, step),
        vec!["0", "0.2", "0.4", "0.6", "0.8", "1.0"]
    );
    let (t, step) = ticks(-2.0, 2.0, 4);
    assert_eq!(tick_labels(&t, step)[0], "\u{2212}2");
    let (t, step) = ticks(0.0, 0.75, 3);
    assert_eq!(step, 0.25);
    assert_eq!(tick_labels(&t, step)[1], "0.25");
    let (t, step) = ticks(0.0, 3e-5, 3);
    assert!(tick_labels(&t, step)[1].contains('e'));
    assert!(ticks(1.0, 1.0, 5).0.is_empty());
    assert!(ticks(f64::NAN, 1.0, 5).0.is_empty());
}

#[test]
fn clipping() {
    let f = Frame {
        px: Rect::new(0.0, 0.0, 100.0, 100.0),
        x: (0.0, 1.0),
        y: (0.0, 1.0),
    };
    let pieces = clip_polyline(&[(-1.0, 0.5), (0.5, 0.5), (2.0, 0.5)], &f);
    assert_eq!(pieces, vec![vec![(0.0, 0.5), (0.5, 0.5), (1.0, 0.5)]]);
    let pieces = clip_polyline(
        &[
            (0.2, 0.2),
            (0.3, 0.3),
            (f64::NAN, 0.0),
            (0.4, 0.4),
            (0.5, 2.0),
            (0.6, 0.5),
        ],
        &f,
    );
    assert_eq!(pieces.len(), 3);
    let square = clip_polygon(&[(-1.0, -1.0), (2.0, -1.0), (2.0, 2.0), (-1.0, 2.0)], &f);
    assert_eq!(square.len(), 4);
    assert!(square.iter().all(|p| f.inside(p.0, p.1)));
    assert!(point_in_polygon((0.5, 0.5), &square));
    assert!(!point_in_polygon((1.5, 0.5), &square));
}

#[test]
fn contours_of_a_mask() {
    // A single cell: one closed chain of 4 edges (5 vertices).
    let chains = mask_contours(&[true], 1, 1);
    assert_eq!(chains.len(), 1);
    assert_eq!(chains[0].len(), 5);
    assert_eq!(chains[0].first(), chains[0].last());
    // An L shape in a 2x2 grid: one chain of 8 edges.
    let chains = mask_contours(&[true, true, true, false], 2, 2);
    assert_eq!(chains.iter().map(|c| c.len() - 1).sum::<usize>(), 8);
    assert!(mask_contours(&[false; 4], 2, 2).is_empty());
}

#[test]
fn colormap_ends() {
    assert_eq!(colormap(0.0), RGBColor(0x44, 0x01, 0x54));
    assert_eq!(colormap(1.0), RGBColor(0xFD, 0xE7, 0x25));
    assert_eq!(colormap(f64::NAN), colormap(0.0));
}

/// Decodes a PNG; returns its size and its 8-bit RGB pixels.
fn decode_png(bytes: &[u8]) -> (u32, u32, Vec<u8>) {
    let decoder = png::Decoder::new(bytes);
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0u8; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!(info.color_type, png::ColorType::Rgb);
    assert_eq!(info.bit_depth, png::BitDepth::Eight);
    buf.truncate(info.buffer_size());
    (info.width, info.height, buf)
}

#[test]
fn png_encoder_round_trip() {
    let rgb = [255, 0, 0, 0, 0, 255, 10, 20, 30, 40, 50, 60];
    let (w, h, pixels) = decode_png(&encode_png(2, 2, &rgb).unwrap());
    assert_eq!((w, h), (2, 2));
    assert_eq!(pixels, rgb);
    assert!(encode_png(2, 2, &rgb[..9]).is_err());
}

#[test]
fn written_png_has_the_figure_size() {
    let dir = scratch("png-size");
    let stem = dir.join("line");
    write_line_plot(&line_plot(), &stem).unwrap();
    let (w, h, pixels) = decode_png(&fs::read(with_suffix(&stem, "png")).unwrap());
    assert_eq!((w, h), (900, 650));
    // The corner is page background, white.
    assert_eq!(pixels[..3], [255, 255, 255]);
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn raster_embedded_in_svg_is_a_valid_png() {
    let dir = scratch("embedded");
    let stem = dir.join("density");
    let plot = density_plot(8);
    write_density_plot(&plot, &stem).unwrap();
    let svg = fs::read_to_string(with_suffix(&stem, "svg")).unwrap();
    let prefix = "data:image/png;base64,";
    let start = svg.find(prefix).unwrap() + prefix.len();
    let end = start + svg[start..].find('"').unwrap();
    let (w, h, pixels) = decode_png(&BASE64.decode(&svg[start..end]).unwrap());
    // Embedded at 256 pixels per side (at least the data resolution), colour-mapped density.
    assert_eq!((w, h), (256, 256));
    let scale = Scale::from_values(plot.density.iter().copied());
    assert_eq!(pixels, plot.raster(&scale, 256, 256));
    fs::remove_dir_all(&dir).unwrap();
}
