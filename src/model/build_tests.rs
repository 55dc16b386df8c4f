//! Tests of the model's constructor and typed parameter points: a model built in code equals the
//! same model from TOML, `with` equals re-parsing the edited configuration with g pinned, and a
//! common offset shift keeps nu and the mismatch in step with the shifted pockets.

use super::*;
use crate::config::{ConfigSource, Override, PinnedCouplings};

/// An anisotropic, rotated electron pocket and a displaced hole pocket (inline TOML tables).
const NESTED: &str = r#"
pocket = [
  { name = "e", kind = "electron", center = [0.0, 0.0], mass = [0.2, 0.3], offset = -100.0, angle = 10.0 },
  { name = "h", kind = "hole", center = [0.1, 0.0], mass = 0.25, offset = 101.0 },
]
channel = [{ name = "eh", pockets = ["e", "h"], lambda = 0.25, cutoff = 5.0 }]
"#;

/// A degenerate parabolic pocket given by masses (electron masses) and offset (meV).
fn parabolic(
    name: &str,
    kind: PocketKind,
    at: [f64; 3],
    mass: [f64; 2],
    offset: f64,
) -> PocketSpec {
    PocketSpec {
        name: name.into(),
        kind,
        center: [at[0], at[1]],
        angle_deg: at[2],
        dispersion: DispersionSpec::Mass { mass, offset },
        spin: SpinSpec::Degenerate,
    }
}

/// The model of `NESTED`, built in code.
fn in_code() -> Model {
    let e = parabolic(
        "e",
        PocketKind::Electron,
        [0.0, 0.0, 10.0],
        [0.2, 0.3],
        -100.0,
    );
    let h = parabolic("h", PocketKind::Hole, [0.1, 0.0, 0.0], [0.25, 0.25], 101.0);
    let eh = ChannelSpec {
        name: Some("eh".into()),
        pockets: [0, 1],
        coupling: CouplingInput::Lambda(0.25),
        cutoff: 5.0,
        spin_matrix: SpinMatrix::Identity,
        overlap: 1.0,
    };
    Model::new(vec![e, h], vec![eh], None).unwrap()
}

/// Every derived number of a channel, for exact comparison.
fn numbers(m: &Model) -> Vec<f64> {
    let mut out = Vec::new();
    for p in m.pockets() {
        out.extend([p.offset(), p.angle(), p.center()[0], p.density(), p.dos()]);
    }
    for c in m.channels() {
        let r = c.mismatch_range();
        out.extend([
            c.g(),
            c.nu(),
            c.mismatch(),
            r[0],
            r[1],
            c.cutoff(),
            c.overlap(),
        ]);
    }
    out
}

fn from_toml(text: &str, sets: &[&str], pinned: Option<&PinnedCouplings>) -> Model {
    let ovs: Vec<Override> = sets.iter().map(|s| Override::parse(s).unwrap()).collect();
    ConfigSource::from_text("test", text)
        .unwrap()
        .with_overrides(&ovs)
        .unwrap()
        .build(pinned)
        .unwrap()
}

/// The same model from specs in code and from TOML: identical numbers (bit for bit).
#[test]
fn model_in_code_equals_model_from_toml() {
    let a = in_code();
    let b = from_toml(NESTED, &[], None);
    assert_eq!(numbers(&a), numbers(&b));
    assert_eq!(a.channels()[0].label(), b.channels()[0].label());
    assert_eq!(a.warnings(), b.warnings());
}

/// `with` on typed parameters equals the edited configuration rebuilt with g pinned at the base;
/// setting lambda unpins the channel.
#[test]
fn with_equals_the_edited_configuration() {
    let base = in_code();
    let pinned = PinnedCouplings(vec![base.channels()[0].g()]);
    let cases: [(&str, Option<usize>, &str, f64); 4] = [
        ("offset", None, "h.offset=102.5", 102.5),
        ("mass", Some(1), "e.mass.y=0.35", 0.35),
        ("angle", None, "e.angle=-20", -20.0),
        ("cutoff", None, "eh.cutoff=4", 4.0),
    ];
    for (key, c, set, v) in cases {
        let target = set.split('.').next().unwrap();
        let p = base.param(target, key, c).unwrap();
        let typed = base.with(&[(p, v)]).unwrap();
        let text = from_toml(NESTED, &[set], Some(&pinned));
        assert_eq!(numbers(&typed), numbers(&text), "{set}");
    }
    let p = base.param("eh", "lambda", None).unwrap();
    let typed = base.with(&[(p, 0.3)]).unwrap();
    let text = from_toml(NESTED, &["eh.lambda=0.3"], None);
    assert_eq!(numbers(&typed), numbers(&text));
    assert!(base.param("zz", "offset", None).is_err());
    assert!(base.param("e", "colour", None).is_err());
}

/// A common offset shift moves the mismatch by the shift and recomputes nu (no stale values);
/// g stays pinned.
#[test]
fn offset_shift_recomputes_the_channel() {
    let base = in_code();
    let s = base.with(&[(Param::OffsetShift, 0.5)]).unwrap();
    let (c0, c1) = (&base.channels()[0], &s.channels()[0]);
    assert_eq!(c0.g(), c1.g());
    assert!((c1.mismatch() - c0.mismatch() - 0.5).abs() < 1e-9);
    assert_eq!(s.pockets()[1].offset(), 101.5);
    assert!(base.with(&[(Param::OffsetShift, 200.0)]).is_err());
}
