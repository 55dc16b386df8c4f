//! Theory: the pockets of the two-dimensional electron system, their dispersions and spin
//! structure. This is what `config` validates and `model::pocket` implements.
//!
//! # Pockets and their dispersions
//!
//! A pocket is a small, closed two-dimensional Fermi surface centred at a point K of the surface
//! Brillouin zone. Its momentum k is measured from K, in 1/nm. All energies are measured from the
//! common chemical potential, so the Fermi surface is the zero of the dispersion eps(k).
//!
//! Three kinds are modelled:
//!
//! ```text
//! electron   eps(k) = +hbar^2 (kx^2/mx + ky^2/my)/2 + E0,     E0 < 0
//! hole       eps(k) = -hbar^2 (kx^2/mx + ky^2/my)/2 + E0,     E0 > 0
//! Dirac      eps(k) = s hbar sqrt(vx^2 kx^2 + vy^2 ky^2) + ED,
//!            s = +1 (electron-like) when ED < 0, s = -1 (hole-like) when ED > 0
//! ```
//!
//! The masses mx, my are in electron masses. An isotropic parabolic pocket may instead be given by
//! its Fermi momentum kF and Fermi velocity vF; then m = hbar kF / vF and E0 = -hbar kF vF / 2 for
//! an electron pocket, +hbar kF vF / 2 for a hole pocket. A Dirac pocket with ED = 0 has no Fermi
//! surface: the model rejects it (in a sweep that point fails, with its reason). An optional
//! rotation angle (degrees, counter-clockwise from x to the pocket's first axis) turns an
//! anisotropic pocket.
//!
//! The "offset" of a pocket is E0 or ED. Carrier densities (per nm^2) are counted from the band
//! edge or the Dirac point: electrons for an electron-like pocket, holes for a hole-like one.
//!
//! # Spin structure
//!
//! Each pocket is either
//!
//! - **degenerate**: both spin states exist at every k, as in an ordinary band with weak
//!   spin-orbit coupling; or
//! - **helical**: a single state per k, with the spinor
//!
//! ```text
//! chi(theta) = (1, s exp(i (w theta + phi))) / sqrt(2)
//! ```
//!
//! where w = +1 or -1 is the winding, phi a texture phase (degrees in the input), s = +1 for an
//! electron-like and -1 for a hole-like pocket, and theta the polar angle of k. For an anisotropic
//! Dirac cone theta is the angle of the velocity-weighted momentum, theta = arg R(angle) (vx kx',
//! vy ky'), with k' the momentum in the cone's own axes. Surface Dirac states are helical.
//!
//! # Rotating a configuration
//!
//! Turning a whole configuration (pocket centres, pocket axes) by an angle alpha leaves the
//! physics unchanged only if each helical texture phase moves with it, as
//!
//! ```text
//! phi -> phi + (1 - w) alpha.
//! ```
//!
//! For winding +1 the phase is unchanged; for winding -1 it moves by 2 alpha. The tests use this
//! rule to check that critical temperatures and optimal wavevectors do not depend on the frame.
//!
//! # Shape requirements
//!
//! The pairing shell of a channel (see [`super::channels`]) is parametrised in polar coordinates
//! about the minimum of the shell variable xi, which requires xi to be convex: electron-like
//! pockets convex, hole-like pockets concave. All three kinds satisfy this.
