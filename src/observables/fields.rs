//! Fields of view of the density maps of a pattern state (after [`super::density`], before the
//! pattern report draws them): the field and the sampling follow from the wavevectors of the
//! waves, so that both an atomic-scale wave and its long-period envelope are visible, and a
//! requested field that cannot be sampled is reported. Lengths in nm, wavevectors in 1/nm.

use super::density::DensityWave;
use std::f64::consts::PI;

/// Samples per shortest period a map must have at least.
pub const POINTS_PER_PERIOD: f64 = 8.0;
/// Largest number of samples per side of a map.
pub const MAX_SAMPLES: usize = 1024;
/// Smallest number of samples per side of a map.
pub const MIN_SAMPLES: usize = 128;
/// The field when no wave is modulated, nm.
pub const FALLBACK_FOV_NM: f64 = 60.0;
/// Periods of the longest wave in an automatic field (the map shows at least two of them).
pub const ENVELOPE_PERIODS: f64 = 3.0;
/// Periods of the shortest wave in the atomic-scale field.
pub const ATOMIC_PERIODS: f64 = 6.0;
/// Ratio of the longest to the shortest period above which the automatic maps are two: a few
/// atomic periods, and a few envelope periods with the atomic-scale waves as their envelope.
pub const SCALE_SPLIT: f64 = 20.0;

/// One map to draw.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MapField {
    /// "field" (the only map), "atomic" (a few periods of the shortest wave) or "envelope" (a
    /// few periods of the longest).
    pub name: &'static str,
    /// Side of the square field, nm.
    pub fov_nm: f64,
    /// Samples per side.
    pub samples: usize,
    /// Waves with |P| above this (1/nm) are drawn as their local amplitude (the envelope map);
    /// None: every wave is drawn as it is.
    pub envelope_above_per_nm: Option<f64>,
}

/// The maps of one density kind and what the choice of their fields had to give up.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MapPlan {
    /// The maps, the finer first.
    pub maps: Vec<MapField>,
    /// The field asked for with `--fov`, nm (None: chosen from the wavevectors).
    pub requested_fov_nm: Option<f64>,
    /// Warnings: a requested field that could not be sampled, a map sampled coarser than
    /// [`POINTS_PER_PERIOD`].
    pub notes: Vec<String>,
}

impl MapPlan {
    /// The largest field of the maps, nm (where long-range correlations are taken).
    pub fn widest_fov_nm(&self) -> f64 {
        self.maps.iter().map(|m| m.fov_nm).fold(0.0, f64::max)
    }
}

/// The largest field that `MAX_SAMPLES` samples cover at `POINTS_PER_PERIOD` per period of a
/// wave of |P| = `k` (1/nm), nm.
pub fn max_fov_nm(k: f64) -> f64 {
    MAX_SAMPLES as f64 / POINTS_PER_PERIOD * 2.0 * PI / k
}

/// Samples per side for a field `fov` (nm) whose fastest variation has |P| = `k` (1/nm):
/// `POINTS_PER_PERIOD` per period, within [`MIN_SAMPLES`, `MAX_SAMPLES`]; false when that needs
/// more than `MAX_SAMPLES`.
fn samples(fov: f64, k: f64) -> (usize, bool) {
    let need = (POINTS_PER_PERIOD * fov * k / (2.0 * PI)).ceil();
    if need > MAX_SAMPLES as f64 {
        return (MAX_SAMPLES, false);
    }
    ((need as usize).clamp(MIN_SAMPLES, MAX_SAMPLES), true)
}

/// The maps of the modulated waves of `kind`. With `requested` (nm, from `--fov`) one map of
/// that field, or, when it cannot be sampled with [`POINTS_PER_PERIOD`] points per shortest
/// period within [`MAX_SAMPLES`], of the largest field that can (said in the notes). Without,
/// the field spans [`ENVELOPE_PERIODS`] periods of the longest wave; when the longest and the
/// shortest period differ by more than [`SCALE_SPLIT`], two maps: [`ATOMIC_PERIODS`] periods of
/// the shortest wave, and the long field with the short waves drawn as their local amplitude.
pub fn plan_maps(waves: &[DensityWave], kind: &str, requested: Option<f64>) -> MapPlan {
    let ks: Vec<f64> = waves
        .iter()
        .filter(|w| w.kind == kind && w.period_nm.is_some())
        .map(|w| w.wavevector_per_nm[0].hypot(w.wavevector_per_nm[1]))
        .collect();
    let kmax = ks.iter().copied().fold(0.0, f64::max);
    let kmin = ks.iter().copied().fold(f64::INFINITY, f64::min);
    let mut notes = Vec::new();
    let maps = match requested {
        Some(fov) => vec![requested_field(fov, kmax, &mut notes)],
        None if ks.is_empty() => vec![plain("field", FALLBACK_FOV_NM, 0.0)],
        None if kmax <= SCALE_SPLIT * kmin => {
            vec![plain("field", ENVELOPE_PERIODS * 2.0 * PI / kmin, kmax)]
        }
        None => {
            let atomic = plain("atomic", ATOMIC_PERIODS * 2.0 * PI / kmax, kmax);
            let envelope = envelope_field(waves, kind, (kmin, kmax), &mut notes);
            vec![atomic, envelope]
        }
    };
    MapPlan {
        maps,
        requested_fov_nm: requested,
        notes,
    }
}

/// A map of every wave as it is, sampled for |P| up to `k` (a field chosen so that it can be).
fn plain(name: &'static str, fov: f64, k: f64) -> MapField {
    MapField {
        name,
        fov_nm: fov,
        samples: samples(fov, k).0,
        envelope_above_per_nm: None,
    }
}

/// The map of a requested field, shrunk to the largest field that can be sampled when needed.
fn requested_field(fov: f64, kmax: f64, notes: &mut Vec<String>) -> MapField {
    if kmax <= 0.0 || samples(fov, kmax).1 {
        return plain("field", fov, kmax);
    }
    let allowed = max_fov_nm(kmax);
    notes.push(format!(
        "--fov {fov} nm cannot be sampled with {POINTS_PER_PERIOD} points per shortest period ({:.5} nm) within {MAX_SAMPLES} samples per side: allowed (0, {allowed:.5}] nm; the map shows {allowed:.5} nm (without --fov the fields follow from the wavevectors, with the envelope of the short waves on a long field)",
        2.0 * PI / kmax
    ));
    plain("field", allowed, kmax)
}

/// The long field of the envelope map: waves faster than the geometric mean of the extreme |P|
/// are drawn as their local amplitude, which varies with their differences P_i - P_j.
fn envelope_field(
    waves: &[DensityWave],
    kind: &str,
    (kmin, kmax): (f64, f64),
    notes: &mut Vec<String>,
) -> MapField {
    let split = (kmin * kmax).sqrt();
    let ps: Vec<[f64; 2]> = waves
        .iter()
        .filter(|w| w.kind == kind && w.period_nm.is_some())
        .map(|w| w.wavevector_per_nm)
        .collect();
    let norm = |p: &[f64; 2]| p[0].hypot(p[1]);
    let (fast, slow): (Vec<[f64; 2]>, Vec<[f64; 2]>) = ps.iter().partition(|p| norm(p) > split);
    let mut k = slow.iter().map(norm).fold(0.0, f64::max);
    for a in &fast {
        for b in &fast {
            k = k.max((a[0] - b[0]).hypot(a[1] - b[1]));
        }
    }
    let fov = ENVELOPE_PERIODS * 2.0 * PI / kmin;
    let (n, ok) = samples(fov, k);
    if !ok {
        notes.push(format!(
            "the envelope map of {fov:.5} nm varies on {:.5} nm and is sampled with fewer than {POINTS_PER_PERIOD} points per period ({MAX_SAMPLES} samples per side)",
            2.0 * PI / k
        ));
    }
    MapField {
        name: "envelope",
        fov_nm: fov,
        samples: n,
        envelope_above_per_nm: Some(split),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn wave(p: [f64; 2], order: u8) -> DensityWave {
        DensityWave {
            kind: "charge",
            order,
            wavevector_per_nm: p,
            folded_into_first_zone: false,
            period_nm: Some(2.0 * PI / p[0].hypot(p[1])),
            amplitude_per_nm2: 1e-3,
            phase: 0.0,
        }
    }

    /// The stripe of the nested reference pair: |q| = 0.00096/nm (a 6.5 micrometre period). The
    /// old fixed 60 nm field held 0.009 of a period; the automatic field holds at least two.
    #[test]
    fn default_field_holds_two_envelope_periods() {
        let q = 0.00096;
        let waves = [
            wave([q, 0.0], 1),
            wave([-q, 0.0], 1),
            wave([2.0 * q, 0.0], 2),
        ];
        let plan = plan_maps(&waves, "charge", None);
        assert_eq!(plan.maps.len(), 1);
        let m = &plan.maps[0];
        assert!(m.fov_nm * q / (2.0 * PI) >= 2.0, "{m:?}");
        assert!(m.samples as f64 >= POINTS_PER_PERIOD * m.fov_nm * 2.0 * q / (2.0 * PI));
        assert!(plan.notes.is_empty());
    }

    /// An atomic-scale wave (0.8 nm) with a 400 nm envelope: two maps, a few atomic periods
    /// sampled at 8 points per period, and a field of at least two envelope periods.
    #[test]
    fn atomic_wave_with_long_envelope_gives_two_maps() {
        let k = 2.0 * PI / 0.8;
        let q = 2.0 * PI / 800.0;
        let waves = [
            wave([k + q, 0.0], 1),
            wave([k - q, 0.0], 1),
            wave([2.0 * q, 0.0], 2),
        ];
        let plan = plan_maps(&waves, "charge", None);
        assert_eq!(plan.maps.len(), 2, "{plan:?}");
        let (atomic, envelope) = (&plan.maps[0], &plan.maps[1]);
        assert_eq!(atomic.name, "atomic");
        assert!(atomic.fov_nm < 10.0 && atomic.fov_nm > 2.0 * 0.8);
        let kmax = k + q;
        assert!(atomic.samples as f64 >= POINTS_PER_PERIOD * atomic.fov_nm * kmax / (2.0 * PI));
        assert_eq!(envelope.name, "envelope");
        assert!(envelope.fov_nm >= 2.0 * 400.0);
        assert!(envelope.envelope_above_per_nm.unwrap() < k - q);
        assert!(plan.notes.is_empty(), "{:?}", plan.notes);
    }

    /// A requested field too large for the atomic wave is shrunk to the largest that can be
    /// sampled, and the note names --fov and the allowed range.
    #[test]
    fn too_large_requested_field_is_reported() {
        let k = 2.0 * PI / 0.8;
        let waves = [wave([k, 0.0], 1)];
        let plan = plan_maps(&waves, "charge", Some(5000.0));
        let allowed = max_fov_nm(k);
        assert!((allowed - 102.4).abs() < 1e-9);
        assert_eq!(plan.maps[0].fov_nm, allowed);
        assert_eq!(plan.maps[0].samples, MAX_SAMPLES);
        assert!(plan.notes[0].contains("--fov 5000 nm"));
        assert!(plan.notes[0].contains("allowed (0, 102.40000] nm"));
        // A field that can be sampled is kept, without notes.
        let plan = plan_maps(&waves, "charge", Some(50.0));
        assert_eq!(plan.maps[0].fov_nm, 50.0);
        assert!(plan.notes.is_empty());
    }
}
