//! Theory: the check values the tests compare against, each with where it comes from. They are
//! weak-coupling results for two circular pockets of equal velocity in two dimensions; the tests
//! in `tests/` name the source beside each comparison.
//!
//! # Why published results apply
//!
//! With eps_a = xi + h and eps_b = -xi + h the electron-hole problem maps onto pairing with a
//! spin-split Fermi surface (a superconductor in a Zeeman field, h playing the role of the
//! field): Rice, Phys. Rev. B 2, 3619 (1970); Volkov, Kopaev, Rusinov, Sov. Phys. JETP 41, 952
//! (1975). Results known for that problem therefore carry over, with Tc0 the nested critical
//! temperature and Delta0 the T = 0 gap at h = 0.
//!
//! # Table
//!
//! | quantity | value | source |
//! |---|---|---|
//! | Delta0 / Tc0 | pi e^{-gamma} = 1.763877 | Bardeen, Cooper, Schrieffer, Phys. Rev. 108, 1175 (1957) |
//! | Tc0 / Lambda | (2 e^gamma / pi) e^{-1/lambda} = 1.133866 e^{-1/lambda} | same |
//! | Delta0 at finite cutoff, constant pair density of states | Delta0 = Lambda / sinh(1/lambda) exactly; at lambda = 0.25, Delta0/Tc0 = 1.76447 rather than 1.76388 | follows from the T = 0 gap equation (common practice) |
//! | anisotropic gap, W = sin^2(theta) (opposite windings) | Delta_max / Tc = `pi e^{-gamma} exp(-<W ln W> / (2 <W>))` = 2.1397 | the d-wave weak-coupling ratio, e.g. Won and Maki, Phys. Rev. B 49, 1397 (1994); the value follows from the formula, with `<W ln W> = 1/2 - ln 2` and `<W> = 1/2` |
//! | first-order jump at T = 0 among q = 0 states | h = Delta0 / sqrt(2) = 1.247249 Tc0 (a plane-wave state may already win there) | Clogston, Phys. Rev. Lett. 9, 266 (1962); Chandrasekhar, Appl. Phys. Lett. 1, 7 (1962) |
//! | uniform solution ceases at T = 0 | h = Delta0; the gapless branch for Delta0/2 < h < Delta0 is unstable | Sarma, J. Phys. Chem. Solids 24, 1029 (1963) |
//! | tricritical point | T = 0.5615 Tc0, h = 1.0728 Tc0 = 0.6082 Delta0 | Sarma (1963); Saint-James, Sarma, Thomas, Type II Superconductivity (1969) |
//! | Lifshitz point, weak coupling | coincides with the tricritical point (derived in [`super::landau`]); finite cutoff/E_F separates them, by about 4e-4 in T at cutoff/E_F = 0.05 (computed with this crate) | Buzdin and Kachkachi, Phys. Lett. A 225, 341 (1997) |
//! | modulated instability, T -> 0 | h -> Delta0, v q*/(2h) -> 1 | Burkhardt, Rainer, Ann. Phys. 3, 181 (1994); Shimahara, Phys. Rev. B 50, 12760 (1994) |
//! | modulated instability, T = 0.2 Tc0 | h = 1.3519 Tc0, v q*/2 = 1.5023 Tc0 (band curvature shifts q* by about 1e-3 relative at cutoff/E_F = 0.05) | the digamma equation of [`super::susceptibility`] solved with mpmath 1.3 at 30 digits |
//! | uniform line, T = 0.2 Tc0 | h = 0.9658 Tc0 | same |
//! | modulated line, T = 0.05 / 0.02 / 0.01 Tc0 | h = 1.6189 / 1.6959 / 1.7262 Tc0; v q*/(2h) = 1.0551 / 1.0275 / 1.0158 (the T -> 0 limit is approached about linearly in T) | same |
//! | nose of the uniform line | largest h = 1.0855 Tc0, at T = 0.48 Tc0 | same (mpmath `findroot` on a grid of T) |
//! | preferred structure along the modulated line as T falls | stripe, then triangle, square, hexagon | Shimahara, J. Phys. Soc. Jpn. 67, 1872 (1998) |
//! | standing wave against plane wave near the modulated line | the standing wave has the smaller positive quartic coefficient per n^2 | Larkin and Ovchinnikov, Sov. Phys. JETP 20, 762 (1965), for the same comparison in three dimensions |
//! | (not computed yet) BCS density of states, broadening | N(E) = 2 nu abs(E - h)/sqrt((E - h)^2 - Delta^2); Dynes form E -> E + i Gamma | Dynes, Narayanamurti, Garno, Phys. Rev. Lett. 41, 1509 (1978) |
//! | (not computed yet) two-dimensional transition | k_B T_KT = (pi/2) J(T_KT) | Nelson and Kosterlitz, Phys. Rev. Lett. 39, 1201 (1977) |
//! | (not computed yet) gapless branch and phase stiffness | a negative stiffness eigenvalue on the gapless branch | Wu and Yip, Phys. Rev. A 67, 053603 (2003) |
//!
//! # How the tests use the table
//!
//! A test that compares the full shell integral with a weak-coupling value chooses Lambda/E_F and
//! Tc0/Lambda small enough for the weak-coupling limit to hold, and states the tolerance that
//! follows (band curvature at order (Lambda/E_F)^2 and (q/kF)^2). A reference computed by the
//! same formula as the code checks nothing: where a citation is not checked against the paper
//! itself, the tests add a second, independent route (a closed form, a general-purpose
//! integrator, a brute-force enumeration).
