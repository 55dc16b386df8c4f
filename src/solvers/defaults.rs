//! Physics defaults the command line asks the library for (after the model, before the solvers
//! run): the chemical-potential window of the fixed-density search, the pairs of channels that
//! share a pocket and are ordered together, and the parameter varied to reach the modulated
//! instability line. Energies in meV.

use crate::model::Model;

/// Half-width (meV) of the chemical-potential window searched at fixed net carrier density for
/// channel `channel` at temperature t (meV): 2 (|h| + Delta_0) + 4 T with Delta_0 =
/// cutoff/sinh(1/lambda) the T = 0 uniform gap of a constant pair density of states (lambda at
/// least 1e-3), capped at half the smallest |offset| of the pockets so that no band edge or
/// Dirac point is crossed.
pub fn fixed_density_window(model: &Model, channel: usize, t: f64) -> f64 {
    let ch = &model.channels()[channel];
    let lambda = ch.lambda().max(1e-3);
    let d0 = ch.cutoff() / (1.0 / lambda).sinh();
    let min_offset = model
        .pockets()
        .iter()
        .map(|p| p.offset().abs())
        .fold(f64::INFINITY, f64::min);
    (2.0 * (ch.mismatch().abs() + d0) + 4.0 * t).min(0.5 * min_offset)
}

/// The pairs of channels (indices, i < j, in order) that share a pocket and have the same number
/// of spin channels: their uniform states are ordered together.
pub fn pocket_sharing_pairs(model: &Model) -> Vec<[usize; 2]> {
    let mut out = Vec::new();
    for i in 0..model.channels().len() {
        for j in i + 1..model.channels().len() {
            let (ci, cj) = (&model.channels()[i], &model.channels()[j]);
            let share = [ci.a(), ci.b()]
                .iter()
                .any(|p| *p == cj.a() || *p == cj.b());
            if share && ci.spin_channels() == cj.spin_channels() {
                out.push([i, j]);
            }
        }
    }
    out
}

/// The parameter varied by default to reach the modulated instability line of channel
/// `channel`: the offset (meV) of its hole-like pocket b, as `NAME.offset`.
pub fn default_line_path(model: &Model, channel: usize) -> String {
    let ch = &model.channels()[channel];
    format!("{}.offset", model.pockets()[ch.b()].name())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::config::ConfigSource;

    fn demo() -> Model {
        ConfigSource::from_text("demo", include_str!("../../configs/demo_surface.toml"))
            .unwrap()
            .build(None)
            .unwrap()
    }

    /// The window by its formula at T = 0 (2 (|h| + Delta_0), below the cap on the demo surface)
    /// and capped at half the smallest |offset| (50 meV: the electron band bottoms) at high T.
    #[test]
    fn fixed_density_window_formula_and_cap() {
        let m = demo();
        let ch = &m.channels()[0];
        let d0 = ch.cutoff() / (1.0 / ch.lambda().max(1e-3)).sinh();
        let w0 = fixed_density_window(&m, 0, 0.0);
        assert!(w0 > 0.0 && w0 <= 25.0);
        if 2.0 * (ch.mismatch().abs() + d0) < 25.0 {
            assert!((w0 - 2.0 * (ch.mismatch().abs() + d0)).abs() < 1e-12);
        }
        assert_eq!(fixed_density_window(&m, 0, 100.0), 25.0);
    }

    /// The demo surface's channels XG and YG share the Dirac pocket G (one spin channel each).
    #[test]
    fn demo_channels_share_a_pocket() {
        let m = demo();
        assert_eq!(pocket_sharing_pairs(&m), vec![[0, 1]]);
    }

    /// The default line parameter of XG is the offset of its hole-like pocket, the Dirac cone G.
    #[test]
    fn default_line_path_is_the_hole_pocket_offset() {
        assert_eq!(default_line_path(&demo(), 0), "G.offset");
    }
}
