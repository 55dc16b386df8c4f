//! Physical constants and unit conversions used at the edges of the pipeline.
//!
//! Internally every energy, including k_B T, is in meV; momenta in 1/nm; hbar v in meV nm;
//! masses in electron masses; the coupling g in meV nm^2; densities per nm^2.

/// Boltzmann constant in meV/K (CODATA 2018, exact by the 2019 SI: 8.617333262e-5 eV/K).
pub const K_B_MEV_PER_K: f64 = 0.086_173_332_62;

/// hbar^2 / (2 m_e) in meV nm^2 (CODATA 2018: 3.80998212 eV Angstrom^2).
pub const HBAR2_OVER_2ME: f64 = 38.099_821_2;

/// Temperature in kelvin to k_B T in meV.
pub fn kelvin_to_mev(t_kelvin: f64) -> f64 {
    t_kelvin * K_B_MEV_PER_K
}

/// k_B T in meV to temperature in kelvin.
pub fn mev_to_kelvin(t_mev: f64) -> f64 {
    t_mev / K_B_MEV_PER_K
}

#[cfg(test)]
mod tests {
    use super::*;

    /// CODATA 2018 recommended values (NIST, physics.nist.gov/constants):
    /// hbar = 1.054571817e-34 J s, m_e = 9.1093837015e-31 kg, e = 1.602176634e-19 C (exact),
    /// k_B = 1.380649e-23 J/K (exact). Relative tolerance 1e-8: the stored constants carry 9 digits.
    #[test]
    fn constants_agree_with_codata_2018() {
        let hbar = 1.054_571_817e-34;
        let m_e = 9.109_383_701_5e-31;
        let e = 1.602_176_634e-19;
        let k_b = 1.380_649e-23;
        let hbar2_2me_mev_nm2 = hbar * hbar / (2.0 * m_e) / e * 1e3 * 1e18;
        assert!((hbar2_2me_mev_nm2 / HBAR2_OVER_2ME - 1.0).abs() < 1e-8);
        let kb_mev = k_b / e * 1e3;
        assert!((kb_mev / K_B_MEV_PER_K - 1.0).abs() < 1e-9);
        assert!((mev_to_kelvin(kelvin_to_mev(12.5)) - 12.5).abs() < 1e-12);
    }
}
