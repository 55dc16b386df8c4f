//! Special functions for the weak-coupling kernel: digamma and polygamma of complex argument
//! (used as psi(1/2 + i y) in the closed-form pair susceptibility and its Landau coefficients).
//!
//! Method: the recurrence psi^(n)(z) = psi^(n)(z + 1) - (-1)^n n! / z^(n+1) shifts the argument until
//! |z| >= `ASYMPTOTIC_RADIUS` (+ n) with Re z >= 1/2, where the asymptotic (Bernoulli) series is summed
//! to 14 terms; for Re z < 1/2 the reflection formulas are used for n = 0, 1, 2, and the upward
//! recurrence for n >= 3. Accuracy is about 1e-15 relative for Re z >= 1/2 (the case used in the
//! crate: z = 1/2 + i y), and better than 1e-13 relative elsewhere away from zeros of the function
//! and from poles (at z = 0, -1, -2, ... the result is not finite).

use num_complex::Complex64;
use std::f64::consts::PI;

/// The Euler-Mascheroni constant gamma = -psi(1) = 0.5772156649015328606...
pub const EULER_GAMMA: f64 = 0.577_215_664_901_532_9;

/// Below this modulus (with `n` added for polygamma of order `n`) the argument is shifted upwards
/// before the asymptotic series is used; at 10 the fourteenth Bernoulli term is below 1e-18 relative.
const ASYMPTOTIC_RADIUS: f64 = 10.0;

/// Bernoulli numbers B_2, B_4, ..., B_28 (exact rationals rounded to double).
const BERNOULLI_EVEN: [f64; 14] = [
    1.0 / 6.0,
    -1.0 / 30.0,
    1.0 / 42.0,
    -1.0 / 30.0,
    5.0 / 66.0,
    -691.0 / 2730.0,
    7.0 / 6.0,
    -3617.0 / 510.0,
    43867.0 / 798.0,
    -174611.0 / 330.0,
    854513.0 / 138.0,
    -236364091.0 / 2730.0,
    8553103.0 / 6.0,
    -23749461029.0 / 870.0,
];

/// True when z is one of the poles 0, -1, -2, ... of every polygamma function.
fn is_pole(z: Complex64) -> bool {
    z.im == 0.0 && z.re <= 0.0 && z.re == z.re.floor()
}

/// cot(pi z), written so that it neither overflows for large |Im z| nor loses the real part near
/// the real axis: with x = pi (Re z reduced to [-1/2, 1/2]), e = exp(-2 pi |Im z|),
/// cot = [2 e sin 2x - i sgn(Im z) (1 - e)(1 + e)] / [(1 - e)^2 + 4 e sin^2 x].
fn cot_pi(z: Complex64) -> Complex64 {
    let x = PI * (z.re - z.re.round());
    let y = PI * z.im;
    let e = (-2.0 * y.abs()).exp();
    let one_minus_e = -(-2.0 * y.abs()).exp_m1();
    let s = x.sin();
    let den = one_minus_e * one_minus_e + 4.0 * e * s * s;
    let re = 2.0 * e * (2.0 * x).sin() / den;
    let im = -y.signum() * one_minus_e * (1.0 + e) / den;
    // y = 0 gives signum = +1 but one_minus_e = 0, so the imaginary part is 0 as it should be.
    Complex64::new(re, im)
}

/// Digamma psi(z) = Gamma'(z)/Gamma(z) for complex z (principal branch, real on the positive axis).
///
/// Not finite at the poles z = 0, -1, -2, ...
pub fn digamma(z: Complex64) -> Complex64 {
    if is_pole(z) {
        return Complex64::new(f64::NAN, f64::NAN);
    }
    if z.re < 0.5 {
        // Reflection: psi(z) = psi(1 - z) - pi cot(pi z).
        return digamma(Complex64::new(1.0, 0.0) - z) - PI * cot_pi(z);
    }
    let mut z = z;
    let mut shift = Complex64::new(0.0, 0.0);
    while z.norm_sqr() < ASYMPTOTIC_RADIUS * ASYMPTOTIC_RADIUS {
        shift += z.inv();
        z += 1.0;
    }
    // psi(z) ~ ln z - 1/(2z) - sum_k B_2k / (2k z^2k).
    let w = z.inv();
    let w2 = w * w;
    let mut series = Complex64::new(0.0, 0.0);
    for (i, b) in BERNOULLI_EVEN.iter().enumerate().rev() {
        let k2 = 2.0 * (i as f64 + 1.0);
        series = (series + b / k2) * w2;
    }
    z.ln() - 0.5 * w - series - shift
}

/// Real digamma psi(x); not finite at x = 0, -1, -2, ...
pub fn digamma_real(x: f64) -> f64 {
    digamma(Complex64::new(x, 0.0)).re
}

/// Polygamma psi^(n)(z) = d^n psi / dz^n for complex z; n = 0 is the digamma function.
///
/// For Re z >= 1/2 any n works (accuracy degrades slowly as n grows past ~10); for Re z < 1/2 the
/// reflection formula is used for n = 1, 2 and the upward recurrence for n >= 3 (slow and less
/// accurate far out on the negative real side; NaN for Re z < -1e6, which would need more than a
/// million steps). Not finite at the poles z = 0, -1, -2, ...
pub fn polygamma(n: u32, z: Complex64) -> Complex64 {
    if n == 0 {
        return digamma(z);
    }
    if is_pole(z) {
        return Complex64::new(f64::NAN, f64::NAN);
    }
    let one = Complex64::new(1.0, 0.0);
    if z.re < 0.5 && n <= 2 {
        let c = cot_pi(z);
        let csc2 = one + c * c;
        return match n {
            // psi'(z) = pi^2 csc^2(pi z) - psi'(1 - z)
            1 => PI * PI * csc2 - polygamma(1, one - z),
            // psi''(z) = psi''(1 - z) - 2 pi^3 cot(pi z) csc^2(pi z)
            _ => polygamma(2, one - z) - 2.0 * PI * PI * PI * c * csc2,
        };
    }
    if z.re < -1e6 || z.re.is_nan() {
        return Complex64::new(f64::NAN, f64::NAN);
    }
    let nf = n as f64;
    let radius = ASYMPTOTIC_RADIUS + nf;
    let mut z = z;
    // Sum of 1/z^(n+1) over the shifted points.
    let mut shift = Complex64::new(0.0, 0.0);
    while z.re < 0.5 || z.norm_sqr() < radius * radius {
        shift += z.powi(-(n as i32 + 1));
        z += 1.0;
    }
    // (n-1)! and n!
    let fact_nm1: f64 = (1..n).map(|j| j as f64).product();
    let fact_n = fact_nm1 * nf;
    // (-1)^(n+1)
    let sign = if n % 2 == 1 { 1.0 } else { -1.0 };
    // psi^(n)(z) ~ (-1)^(n+1) w^n [(n-1)! + n! w/2 + sum_k B_2k (2k+n-1)!/(2k)! w^2k], w = 1/z.
    let w = z.inv();
    let w2 = w * w;
    let mut series = Complex64::new(0.0, 0.0);
    for (i, b) in BERNOULLI_EVEN.iter().enumerate().rev() {
        let k2 = 2 * (i as u32 + 1);
        let rising: f64 = (k2 + 1..k2 + n).map(|j| j as f64).product();
        series = (series + b * rising) * w2;
    }
    let asymptotic = sign * w.powi(n as i32) * (fact_nm1 + 0.5 * fact_n * w + series);
    // psi^(n)(z) = psi^(n)(z + m) - (-1)^n n! sum 1/(z + j)^(n+1) = ... + (-1)^(n+1) n! sum.
    asymptotic + sign * fact_n * shift
}

// Reference values are pasted with all the digits the reference library printed (some of them
// are close to pi/2), so the digit-count and approximate-constant lints do not apply.
#[cfg(test)]
#[allow(clippy::excessive_precision, clippy::approx_constant)]
mod tests {
    use super::*;

    /// Relative tolerance against 30-digit references: the shifted asymptotic series and the
    /// recurrence lose a few units of 1e-16 each; 1e-12 leaves room for the reflection formula
    /// and for the mild cancellation in psi(1/2 + i y) at small y, while still catching any
    /// wrong coefficient (which would show at 1e-6 or worse).
    const REL_TOL: f64 = 1e-12;

    fn rel_err(got: Complex64, want: Complex64) -> f64 {
        (got - want).norm() / want.norm()
    }

    fn c(re: f64, im: f64) -> Complex64 {
        Complex64::new(re, im)
    }

    /// References from mpmath 1.3 at 30 digits (mp.dps = 30), recomputed by:
    /// ```text
    /// from mpmath import mp, psi, mpc, nstr
    /// mp.dps = 30
    /// for n, z in [(0, mpc(0.5, 0.3)), (0, mpc(0.5, 7)), ...]:
    ///     v = psi(n, z); print(n, z, nstr(v.real, 25), nstr(v.imag, 25))
    /// ```
    /// (the arguments are the doubles nearest to the decimal values, as in the Rust literals).
    const REFERENCES: [(u32, f64, f64, f64, f64); 19] = [
        (
            0,
            0.5,
            0.3,
            -1.397932629405807328448547,
            1.156669383324237798032454,
        ),
        (
            0,
            0.5,
            7.0,
            1.945056738569090459868051,
            1.570796326794896618982504,
        ),
        (
            0,
            0.5,
            300.0,
            5.703782011692337885433571,
            1.570796326794896619231322,
        ),
        (
            0,
            0.5,
            1e4,
            9.210340371559516068676132,
            1.570796326794896619231322,
        ),
        (
            0,
            0.5,
            -2.5,
            0.9094174893708239845752132,
            -1.570795853351527848131558,
        ),
        (0, 3.7, 0.0, 1.167153539361511440947651, 0.0),
        (0, 0.25, 0.0, -4.22745353337626540808953, 0.0),
        (
            0,
            -2.3,
            0.4,
            1.50273394644692294278374,
            2.813233042408326234121893,
        ),
        (0, -0.7, 0.0, -2.073952793628703783102046, 0.0),
        (
            1,
            0.5,
            0.3,
            2.259034075905334196025077,
            -2.828996786115695710827339,
        ),
        (
            1,
            0.5,
            40.0,
            3.470053714567797343889869e-38,
            -0.02500130236830496933813685,
        ),
        (
            1,
            2.2,
            -1.1,
            0.4154403524074630121752402,
            0.2586830172485662548540648,
        ),
        (
            1,
            -1.3,
            0.6,
            -0.1790995062641641103084296,
            0.6824682812466959551443855,
        ),
        (
            2,
            0.5,
            0.1,
            -13.32867373807703088506654,
            8.5596469146813540725682,
        ),
        (
            2,
            0.5,
            2.0,
            0.2690019319138477759204516,
            0.0004325119745960446382838803,
        ),
        (
            2,
            0.5,
            300.0,
            0.00001111114197550869016097608,
            7.312589085049360712421224e-42,
        ),
        (2, 1.5, 0.0, -0.8287966442343199955963343, 0.0),
        (
            2,
            -1.3,
            0.6,
            -5.329937224294777022414413,
            2.020727669218908276811072,
        ),
        (
            3,
            0.5,
            1.0,
            -1.433642885277068284732797,
            3.119995621673237200049521,
        ),
    ];

    #[test]
    fn polygamma_matches_mpmath_references() {
        for &(n, re, im, want_re, want_im) in REFERENCES.iter() {
            let got = polygamma(n, c(re, im));
            let err = rel_err(got, c(want_re, want_im));
            assert!(
                err < REL_TOL,
                "psi({n}, {re}+{im}i) = {got}, want {want_re}+{want_im}i, rel err {err:e}"
            );
        }
    }

    /// Closed forms at z = 1/2 (Abramowitz and Stegun 6.3.3, 6.4.4): psi(1/2) = -gamma - 2 ln 2,
    /// psi'(1/2) = pi^2/2, psi''(1/2) = -14 zeta(3); mpmath 1.3 at 30 digits gives
    /// -1.963510026021423479440976, 4.934802200544679309417245, -16.82879664423431999559633.
    #[test]
    fn closed_forms_at_one_half() {
        let half = c(0.5, 0.0);
        let zeta3 = 1.202_056_903_159_594_3_f64;
        let cases = [
            (
                0,
                -EULER_GAMMA - 2.0 * 2f64.ln(),
                -1.963510026021423479440976,
            ),
            (1, PI * PI / 2.0, 4.934802200544679309417245),
            (2, -14.0 * zeta3, -16.82879664423431999559633),
        ];
        for (n, closed, mp) in cases {
            let got = polygamma(n, half).re;
            assert!(
                ((got - closed) / closed).abs() < REL_TOL,
                "n = {n}: {got} vs {closed}"
            );
            assert!(((got - mp) / mp).abs() < REL_TOL, "n = {n}: {got} vs {mp}");
            assert_eq!(polygamma(n, half).im, 0.0);
        }
        assert!((digamma_real(1.0) + EULER_GAMMA).abs() < 1e-15);
    }

    /// Identities that hold for every z: the recurrence and the conjugate symmetry.
    #[test]
    fn recurrence_and_conjugation() {
        for &(re, im) in &[
            (0.5, 0.0),
            (0.5, 3.3),
            (1.7, -0.4),
            (0.5, 25.0),
            (-3.4, 1.2),
        ] {
            let z = c(re, im);
            for n in 0..=3u32 {
                let lhs = polygamma(n, z + 1.0);
                let sign = if n % 2 == 0 { 1.0 } else { -1.0 };
                let fact: f64 = (1..=n).map(|j| j as f64).product();
                let rhs = polygamma(n, z) + sign * fact * z.powi(-(n as i32 + 1));
                assert!(rel_err(lhs, rhs) < REL_TOL, "recurrence n = {n}, z = {z}");
                let conj = polygamma(n, z.conj()).conj();
                assert!(
                    rel_err(conj, polygamma(n, z)) < REL_TOL,
                    "conjugation n = {n}"
                );
            }
        }
    }

    #[test]
    fn poles_are_not_finite() {
        for n in 0..3 {
            assert!(!polygamma(n, c(0.0, 0.0)).re.is_finite());
            assert!(!polygamma(n, c(-2.0, 0.0)).re.is_finite());
        }
    }
}
