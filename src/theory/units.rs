//! Theory: units of every input and output, and the physical constants used to convert between
//! them. Implemented in `units` (constants, K <-> meV).
//!
//! | quantity | unit |
//! |---|---|
//! | energy (offsets, cutoff, mismatch, gaps) | meV |
//! | temperature | K in input and output; k_B T in meV inside every formula |
//! | momentum, wavevector | 1/nm |
//! | velocity | hbar v in meV nm (1 eV Angstrom = 100 meV nm) |
//! | mass | electron masses |
//! | coupling g | meV nm^2 (per spin channel) |
//! | pair density of states nu, susceptibility chi | 1/(meV nm^2) (per spin channel) |
//! | grand potential Omega | meV/nm^2 (total: n_s times one spin channel) |
//! | carrier density | 1/nm^2 |
//! | phase stiffness J | meV |
//!
//! Constants (CODATA 2018):
//!
//! ```text
//! k_B             = 0.08617333262 meV/K
//! hbar^2 / (2 m_e) = 38.0998212 meV nm^2
//! ```
//!
//! The second fixes the parabolic dispersions: for a mass m (in electron masses),
//! hbar^2 k^2/(2m) = 38.0998212 k^2 / m meV with k in 1/nm, and the pair density of states of two
//! parabolic pockets of equal mass is m/(2 pi hbar^2) = m / (4 pi 38.0998212) 1/(meV nm^2).
//!
//! Sign conventions: energies from the common chemical potential; h > 0 when the hole pocket is
//! the larger one; g > 0 is attractive; rotation angles counter-clockwise, in degrees.
