//! Plot geometry of the figures: data-to-pixel frames, data ranges, tick values and labels, grid
//! cell edges, and clipping of curves and polygons to the plotted range.

use super::canvas::Rect;
use super::{Band, InputProblem};

/// The plot rectangle with its data ranges.
#[derive(Clone, Copy, Debug)]
pub(super) struct Frame {
    pub(super) px: Rect,
    pub(super) x: (f64, f64),
    pub(super) y: (f64, f64),
}

impl Frame {
    pub(super) fn map(&self, x: f64, y: f64) -> (f64, f64) {
        let tx = (x - self.x.0) / (self.x.1 - self.x.0);
        let ty = (y - self.y.0) / (self.y.1 - self.y.0);
        (self.px.l + tx * self.px.w(), self.px.b - ty * self.px.h())
    }
    pub(super) fn inside(&self, x: f64, y: f64) -> bool {
        x >= self.x.0 && x <= self.x.1 && y >= self.y.0 && y <= self.y.1
    }
}

/// Running min/max of finite values.
#[derive(Clone, Copy, Debug)]
pub(super) struct Extent {
    pub(super) lo: f64,
    pub(super) hi: f64,
}

impl Extent {
    pub(super) fn new() -> Self {
        Extent {
            lo: f64::INFINITY,
            hi: f64::NEG_INFINITY,
        }
    }
    pub(super) fn add(&mut self, v: f64) {
        if v.is_finite() {
            self.lo = self.lo.min(v);
            self.hi = self.hi.max(v);
        }
    }
    pub(super) fn is_empty(&self) -> bool {
        self.lo > self.hi
    }
    /// A non-degenerate range: padded by `pad` × span; a single value gets a span of its own.
    pub(super) fn range(&self, pad: f64) -> (f64, f64) {
        if self.is_empty() {
            return (0.0, 1.0);
        }
        let (lo, hi) = (self.lo, self.hi);
        let span = hi - lo;
        if span <= f64::EPSILON * lo.abs().max(hi.abs()).max(f64::MIN_POSITIVE) * 16.0 {
            let d = if lo == 0.0 { 1.0 } else { 0.1 * lo.abs() };
            return (lo - d, hi + d);
        }
        (lo - pad * span, hi + pad * span)
    }
}

/// A "nice" tick step (1, 2, 2.5, 5 × 10^k) giving about `target` intervals over `span`.
pub(super) fn nice_step(span: f64, target: usize) -> f64 {
    let raw = span / target.max(1) as f64;
    if !(raw.is_finite() && raw > 0.0) {
        return 1.0;
    }
    let mag = 10f64.powf(raw.log10().floor());
    let f = raw / mag;
    let m = if f <= 1.0 {
        1.0
    } else if f <= 2.0 {
        2.0
    } else if f <= 2.5 {
        2.5
    } else if f <= 5.0 {
        5.0
    } else {
        10.0
    };
    m * mag
}

/// Tick values in `[lo, hi]` and their step.
pub(super) fn ticks(lo: f64, hi: f64, target: usize) -> (Vec<f64>, f64) {
    if !(lo.is_finite() && hi.is_finite() && hi > lo) {
        return (Vec::new(), 1.0);
    }
    let step = nice_step(hi - lo, target);
    let k0 = (lo / step - 1e-9).ceil();
    let k1 = (hi / step + 1e-9).floor();
    if k1 < k0 || k1 - k0 > 200.0 {
        return (Vec::new(), step);
    }
    let mut v = Vec::new();
    let mut k = k0;
    while k <= k1 {
        let t = k * step;
        v.push(if t.abs() < step * 1e-9 { 0.0 } else { t });
        k += 1.0;
    }
    (v, step)
}

/// Tick labels with as many decimals as the step needs; scientific notation for very large or
/// very small magnitudes.  Uses a true minus sign.
pub(super) fn tick_labels(values: &[f64], step: f64) -> Vec<String> {
    let mag = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let sci = mag >= 1e6 || (mag > 0.0 && mag < 1e-3);
    values
        .iter()
        .map(|&v| {
            let s = if v == 0.0 {
                "0".to_string()
            } else if sci {
                let e_mag = mag.log10().floor();
                let d = (e_mag - (step.log10() - 1e-9).floor()).clamp(0.0, 6.0) as usize;
                format!("{v:.d$e}")
            } else {
                let mut d = 0usize;
                while d < 10 {
                    let scaled = step * 10f64.powi(d as i32);
                    if (scaled - scaled.round()).abs() <= 1e-6 * scaled.max(1.0) {
                        break;
                    }
                    d += 1;
                }
                format!("{v:.d$}")
            };
            s.replace('-', "\u{2212}")
        })
        .collect()
}

/// `v` with `digits` significant digits, trailing zeros dropped, true minus sign.
pub(super) fn fmt_significant(v: f64, digits: usize) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    if v == 0.0 {
        return "0".to_string();
    }
    let e = v.abs().log10().floor();
    let s = if !(-4.0..6.0).contains(&e) {
        format!("{:.*e}", digits.saturating_sub(1), v)
    } else {
        let d = (digits as f64 - 1.0 - e).max(0.0) as usize;
        let t = format!("{v:.d$}");
        if t.contains('.') {
            t.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            t
        }
    };
    s.replace('-', "\u{2212}")
}

/// Cell edges from cell centres (midpoints; the outer edges extrapolated by half a spacing).
pub(super) fn cell_edges(cs: &[f64]) -> Vec<f64> {
    match cs.len() {
        0 => Vec::new(),
        1 => {
            let c = cs[0];
            let d = if c == 0.0 { 0.5 } else { 0.05 * c.abs() };
            vec![c - d, c + d]
        }
        n => {
            let mut e = Vec::with_capacity(n + 1);
            e.push(cs[0] - 0.5 * (cs[1] - cs[0]));
            for i in 0..n - 1 {
                e.push(0.5 * (cs[i] + cs[i + 1]));
            }
            e.push(cs[n - 1] + 0.5 * (cs[n - 1] - cs[n - 2]));
            e
        }
    }
}

/// Checks a grid description: finite, strictly monotonic axes and a matching cell count.
pub(super) fn check_grid(
    xs: &[f64],
    ys: &[f64],
    cells: usize,
    what: &'static str,
) -> Result<(), InputProblem> {
    for (axis, values) in [("xs", xs), ("ys", ys)] {
        if values.iter().any(|v| !v.is_finite()) {
            return Err(InputProblem::NonFiniteAxis { axis });
        }
        if cell_edges(values).iter().any(|v| !v.is_finite()) {
            return Err(InputProblem::AxisTooLarge { axis });
        }
        let up = values.windows(2).all(|w| w[1] > w[0]);
        let down = values.windows(2).all(|w| w[1] < w[0]);
        if !(up || down) {
            return Err(InputProblem::NotMonotonic { axis });
        }
    }
    if xs.len().checked_mul(ys.len()) != Some(cells) {
        return Err(InputProblem::CellCount {
            what,
            cells,
            nx: xs.len(),
            ny: ys.len(),
        });
    }
    Ok(())
}

/// Clips segment `p`–`q` to the rectangle (Liang–Barsky); `None` if it misses.
pub(super) fn clip_segment(
    p: (f64, f64),
    q: (f64, f64),
    x: (f64, f64),
    y: (f64, f64),
) -> Option<((f64, f64), (f64, f64))> {
    let (dx, dy) = (q.0 - p.0, q.1 - p.1);
    let mut t0 = 0.0f64;
    let mut t1 = 1.0f64;
    for (pk, qk) in [
        (-dx, p.0 - x.0),
        (dx, x.1 - p.0),
        (-dy, p.1 - y.0),
        (dy, y.1 - p.1),
    ] {
        if pk == 0.0 {
            if qk < 0.0 {
                return None;
            }
        } else {
            let t = qk / pk;
            if pk < 0.0 {
                t0 = t0.max(t);
            } else {
                t1 = t1.min(t);
            }
        }
    }
    if t0 > t1 {
        return None;
    }
    Some((
        (p.0 + t0 * dx, p.1 + t0 * dy),
        (p.0 + t1 * dx, p.1 + t1 * dy),
    ))
}

/// Splits a curve at non-finite points and clips it to the frame's data range.  Pieces of one
/// point are isolated finite points inside the range.
pub(super) fn clip_polyline(pts: &[(f64, f64)], f: &Frame) -> Vec<Vec<(f64, f64)>> {
    let finite = |p: &(f64, f64)| p.0.is_finite() && p.1.is_finite();
    let mut out: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut i = 0;
    while i < pts.len() {
        if !finite(&pts[i]) {
            i += 1;
            continue;
        }
        let start = i;
        while i < pts.len() && finite(&pts[i]) {
            i += 1;
        }
        let run = &pts[start..i];
        if run.len() == 1 {
            if f.inside(run[0].0, run[0].1) {
                out.push(vec![run[0]]);
            }
            continue;
        }
        let mut cur: Vec<(f64, f64)> = Vec::new();
        for w in run.windows(2) {
            match clip_segment(w[0], w[1], f.x, f.y) {
                None => {
                    if cur.len() > 1 {
                        out.push(std::mem::take(&mut cur));
                    }
                    cur.clear();
                }
                Some((a, b)) => {
                    if cur.last() != Some(&a) {
                        if cur.len() > 1 {
                            out.push(std::mem::take(&mut cur));
                        }
                        cur.clear();
                        cur.push(a);
                    }
                    cur.push(b);
                    if b != w[1] {
                        out.push(std::mem::take(&mut cur));
                    }
                }
            }
        }
        if cur.len() > 1 {
            out.push(cur);
        }
    }
    out
}

/// Clips a polygon to the frame's data range (Sutherland–Hodgman).
pub(super) fn clip_polygon(poly: &[(f64, f64)], f: &Frame) -> Vec<(f64, f64)> {
    let mut pts: Vec<(f64, f64)> = poly
        .iter()
        .copied()
        .filter(|p| p.0.is_finite() && p.1.is_finite())
        .collect();
    // Each edge: keep points with `inside(p)`, intersect on the coordinate `axis` at `v`.
    let edges: [(usize, f64, bool); 4] = [
        (0, f.x.0, true),
        (0, f.x.1, false),
        (1, f.y.0, true),
        (1, f.y.1, false),
    ];
    for (axis, v, keep_above) in edges {
        if pts.is_empty() {
            break;
        }
        let coord = |p: &(f64, f64)| if axis == 0 { p.0 } else { p.1 };
        let inside = |p: &(f64, f64)| {
            if keep_above {
                coord(p) >= v
            } else {
                coord(p) <= v
            }
        };
        let mut out = Vec::with_capacity(pts.len() + 4);
        for i in 0..pts.len() {
            let a = pts[i];
            let b = pts[(i + 1) % pts.len()];
            let (ia, ib) = (inside(&a), inside(&b));
            if ia {
                out.push(a);
            }
            if ia != ib {
                let t = (v - coord(&a)) / (coord(&b) - coord(&a));
                out.push((a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1)));
            }
        }
        pts = out;
    }
    pts
}

/// Even-odd point-in-polygon test.
pub(super) fn point_in_polygon(p: (f64, f64), poly: &[(f64, f64)]) -> bool {
    let mut inside = false;
    let n = poly.len();
    let mut j = n.wrapping_sub(1);
    for i in 0..n {
        let (a, b) = (poly[i], poly[j]);
        if (a.1 > p.1) != (b.1 > p.1) && p.0 < (b.0 - a.0) * (p.1 - a.1) / (b.1 - a.1) + a.0 {
            inside = !inside;
        }
        j = i;
    }
    inside
}

/// Points every `step` device pixels along a device-pixel polyline.
pub(super) fn densify(pts: &[(f64, f64)], step: f64, out: &mut Vec<(f64, f64)>) {
    if let Some(first) = pts.first() {
        out.push(*first);
    }
    for w in pts.windows(2) {
        let d = (w[1].0 - w[0].0).hypot(w[1].1 - w[0].1);
        let n = (d / step).ceil().clamp(1.0, 10_000.0) as usize;
        for k in 1..=n {
            let t = k as f64 / n as f64;
            out.push((
                w[0].0 + t * (w[1].0 - w[0].0),
                w[0].1 + t * (w[1].1 - w[0].1),
            ));
        }
    }
}

/// The polygon of a band: `lower` then `upper` reversed (or `lower` alone), finite points only.
pub(super) fn band_polygon(b: &Band) -> Vec<(f64, f64)> {
    b.lower
        .iter()
        .chain(b.upper.iter().rev())
        .copied()
        .filter(|p| p.0.is_finite() && p.1.is_finite())
        .collect()
}
