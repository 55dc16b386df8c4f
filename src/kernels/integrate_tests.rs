//! Tests of the shell and nesting-line integrals (`kernels::integrate`).
use super::*;
use crate::config::ConfigSource;
use crate::kernels::susceptibility::pair_kernel;

/// The graded angular rule (used by the susceptibility where the Fermi surfaces cross at
/// low T) and the trapezoid-then-adaptive rule integrate the same chi to their targets:
/// at T = 5e-3 Tc0 and q beyond the crossing, relative 1e-9 at rtol 1e-10, with the
/// graded rule using fewer rays.
#[test]
fn graded_angles_agree_with_the_trapezoid_rule() {
    let text = r#"
[[pocket]]
name = "e"
kind = "electron"
center = [0.0, 0.0]
mass = 0.2
offset = -100.0

[[pocket]]
name = "h"
kind = "hole"
center = [0.0, 0.0]
mass = 0.2
offset = 100.5

[[channel]]
pockets = ["e", "h"]
lambda = 0.25
cutoff = 5.0
"#;
    let m = ConfigSource::from_text("test", text)
        .unwrap()
        .build(None)
        .unwrap();
    let shell = Shell::for_channel(&m, &m.channels()[0], [0.0058, 0.0]).unwrap();
    let t = 5.2e-4;
    let acc = Accuracy {
        rtol: 1e-10,
        ..Accuracy::default()
    };
    let f = |_: [f64; 2], p: &PairPoint| p.w * pair_kernel(p.xi(), p.h(), t);
    let plain = shell_integral(&shell, t, &[], &acc, f).unwrap();
    let graded = shell_integral_graded(&shell, t, &[], &acc, f).unwrap();
    assert!(
        (graded.value / plain.value - 1.0).abs() < 1e-9,
        "{} vs {}",
        graded.value,
        plain.value
    );
    assert!(graded.error < 1e-9 * graded.value);
    assert!(
        graded.rays < plain.rays,
        "{} vs {}",
        graded.rays,
        plain.rays
    );
}
