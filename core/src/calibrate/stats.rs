//! The chi-square distribution's quantiles, for the confidence bounds of Allan deviations.
//!
//! `P(a, x)`, the regularised lower incomplete gamma function, by its series for
//! `x < a + 1` and by the continued fraction of `Q = 1 − P` otherwise (M. Abramowitz and I.
//! A. Stegun, *Handbook of Mathematical Functions*, 1964, 6.5.29 and 6.5.31; the fraction
//! evaluated by the modified Lentz method, W. J. Lentz, Appl. Opt. 15, 1976); `ln Γ` by
//! Stirling's series after shifting the argument above 15 (A&S 6.1.40). The quantile solves
//! `P(ν/2, x/2) = p` by Newton's method from the Wilson–Hilferty approximation (E. B. Wilson
//! and M. M. Hilferty, PNAS 17, 1931), kept inside a bracket that bisection shrinks when a
//! Newton step leaves it.

use crate::error::{Error, Result};
use crate::math;

/// `ln Γ(z)` for `z > 0`.
pub(crate) fn ln_gamma(z: f64) -> f64 {
    let mut shift = 0.0;
    let mut z = z;
    while z < 15.0 {
        shift -= math::ln(z);
        z += 1.0;
    }
    // Stirling's series: B_2k / (2k (2k − 1) z^(2k−1)).
    const COEFFICIENTS: [f64; 8] = [
        1.0 / 12.0,
        -1.0 / 360.0,
        1.0 / 1260.0,
        -1.0 / 1680.0,
        1.0 / 1188.0,
        -691.0 / 360_360.0,
        1.0 / 156.0,
        -3617.0 / 122_400.0,
    ];
    let inverse = 1.0 / z;
    let inverse2 = inverse * inverse;
    let mut series = 0.0;
    let mut power = inverse;
    for c in COEFFICIENTS {
        series += c * power;
        power *= inverse2;
    }
    shift + (z - 0.5) * math::ln(z) - z + 0.5 * math::ln(2.0 * core::f64::consts::PI) + series
}

/// The regularised incomplete gamma functions `(P(a, x), Q(a, x) = 1 − P)` for `a > 0`,
/// `x ≥ 0`, each accurate to a few ulp of itself (the smaller one is computed directly).
pub(crate) fn gamma_regularised(a: f64, x: f64) -> (f64, f64) {
    if x <= 0.0 {
        return (0.0, 1.0);
    }
    let prefix = a * math::ln(x) - x - ln_gamma(a);
    if x < a + 1.0 {
        // Σ xⁿ / (a (a+1) ... (a+n)), times e^{−x} x^a / Γ(a).
        let (mut term, mut sum, mut denominator) = (1.0 / a, 1.0 / a, a);
        for _ in 0..10_000 {
            denominator += 1.0;
            term *= x / denominator;
            sum += term;
            if term.abs() < sum.abs() * 1e-17 {
                break;
            }
        }
        let p = (sum * math::exp(prefix)).min(1.0);
        (p, 1.0 - p)
    } else {
        // Q(a, x) = e^{−x} x^a / Γ(a) · 1/(x + 1 − a − 1·(1 − a)/(x + 3 − a − ...)).
        let tiny = 1e-300;
        let mut b = x + 1.0 - a;
        let mut c = 1.0 / tiny;
        let mut d = 1.0 / b;
        let mut h = d;
        for i in 1..10_000 {
            let an = -f64::from(i) * (f64::from(i) - a);
            b += 2.0;
            d = an * d + b;
            if d.abs() < tiny {
                d = tiny;
            }
            c = b + an / c;
            if c.abs() < tiny {
                c = tiny;
            }
            d = 1.0 / d;
            let delta = d * c;
            h *= delta;
            if (delta - 1.0).abs() < 1e-16 {
                break;
            }
        }
        let q = (math::exp(prefix) * h).min(1.0);
        (1.0 - q, q)
    }
}

/// The standard normal quantile: the rational approximation of A&S 26.2.23 (absolute error
/// below 4.5e-4) as a start, refined by Newton steps on `Φ(z) = erfc(−z/√2)/2` (to about
/// 1e-15 relative in the tail probability).
fn normal_quantile(p: f64) -> f64 {
    let mut z = normal_quantile_rough(p);
    for _ in 0..4 {
        // Work on the smaller tail so that p near 1 keeps its precision.
        let (tail, sign) = if p < 0.5 { (p, -1.0) } else { (1.0 - p, 1.0) };
        let zt = sign * z; // the upper-tail variable, positive away from the median
        let q = 0.5 * math::erfc(zt / core::f64::consts::SQRT_2);
        let density = math::exp(-0.5 * zt * zt) / math::sqrt(2.0 * core::f64::consts::PI);
        if density <= 0.0 {
            break;
        }
        // q(zt) = tail: zt ← zt + (q − tail)/φ(zt).
        let next = zt + (q - tail) / density;
        z = sign * next;
    }
    z
}

/// The A&S 26.2.23 approximation (absolute error below 4.5e-4).
fn normal_quantile_rough(p: f64) -> f64 {
    let q = if p < 0.5 { p } else { 1.0 - p };
    let t = math::sqrt(-2.0 * math::ln(q));
    let z =
        t - (2.515_517 + 0.802_853 * t + 0.010_328 * t * t) / (1.0 + 1.432_788 * t + 0.189_269 * t * t + 0.001_308 * t * t * t);
    if p < 0.5 { -z } else { z }
}

/// The quantile of the chi-square distribution with `degrees_of_freedom` (any positive real)
/// at probability `p` in (0, 1): the `x` with `P(χ² ≤ x) = p`, to about 1e-13 relative.
///
/// # Errors
/// [`Error::OutOfRange`] naming `p` outside (0, 1); [`Error::NotPositive`] naming
/// `degrees_of_freedom`.
///
/// ```
/// use rotaframe::calibrate::chi_square_quantile;
/// // The median of χ² with 2 degrees of freedom is 2 ln 2 (an exponential distribution).
/// assert!((chi_square_quantile(0.5, 2.0).unwrap() - 2.0 * 2f64.ln()).abs() < 1e-13);
/// ```
pub fn chi_square_quantile(p: f64, degrees_of_freedom: f64) -> Result<f64> {
    chi_square_quantile_checked(p, degrees_of_freedom)
}

/// Above this many degrees of freedom the Wilson–Hilferty cube-root transformation (its
/// relative error falls as 1/ν², about 1e-13 here) replaces the incomplete-gamma iteration,
/// whose series and continued fraction need `O(√ν)` terms.
const LARGE_DEGREES: f64 = 1.0e6;

/// `ν (1 − 2/(9ν) + z_p √(2/(9ν)))³`.
fn wilson_hilferty(p: f64, nu: f64) -> f64 {
    let h = 2.0 / (9.0 * nu);
    let w = 1.0 - h + normal_quantile(p) * math::sqrt(h);
    nu * w * w * w
}

fn chi_square_quantile_checked(p: f64, degrees_of_freedom: f64) -> Result<f64> {
    if !(p > 0.0 && p < 1.0) {
        return Err(Error::OutOfRange { quantity: "p", value: p, min: 0.0, max: 1.0 });
    }
    if degrees_of_freedom.is_nan() || degrees_of_freedom <= 0.0 || degrees_of_freedom.is_infinite() {
        return Err(Error::NotPositive { quantity: "degrees_of_freedom", value: degrees_of_freedom });
    }
    let nu = degrees_of_freedom;
    if nu > LARGE_DEGREES {
        return Ok(wilson_hilferty(p, nu));
    }
    let a = 0.5 * nu;
    // F(x) − p, from whichever tail is small, so that p near 1 keeps its precision.
    let complement = 1.0 - p;
    let excess = |x: f64| {
        let (lower, upper) = gamma_regularised(a, 0.5 * x);
        if p <= 0.5 { lower - p } else { complement - upper }
    };
    let ln_density_norm = -a * math::ln(2.0) - ln_gamma(a);
    // Wilson–Hilferty start, and a bracket [lo, hi] with cdf(lo) < p < cdf(hi).
    let z = normal_quantile_rough(p);
    let h = 2.0 / (9.0 * nu);
    let w = 1.0 - h + z * math::sqrt(h);
    let mut x = if w > 0.0 { nu * w * w * w } else { nu * 0.01 };
    let (mut lo, mut hi) = (0.0f64, nu.max(1.0));
    // At most ~1100 doublings reach the largest finite value; the quantile of ν ≤ 1e6 at any
    // p representable below 1 lies far below that.
    for _ in 0..1100 {
        if excess(hi) >= 0.0 {
            break;
        }
        lo = hi;
        hi *= 2.0;
    }
    if !(x > lo && x < hi) {
        x = 0.5 * (lo + hi);
    }
    for _ in 0..200 {
        let f = excess(x);
        if f < 0.0 {
            lo = x;
        } else {
            hi = x;
        }
        let density = math::exp(ln_density_norm + (a - 1.0) * math::ln(x) - 0.5 * x);
        let mut next = x - f / density;
        if !(next > lo && next < hi && next.is_finite()) {
            next = 0.5 * (lo + hi);
        }
        if (next - x).abs() <= 1e-15 * x || hi - lo <= 1e-15 * hi {
            return Ok(next);
        }
        x = next;
    }
    Ok(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ln_gamma_matches_factorials_and_the_half_integer_value() {
        // Γ(n) = (n − 1)!, Γ(1/2) = √π (A&S 6.1.8); rounding of a sum of ~10 logarithms.
        let mut factorial = 1.0f64;
        for n in 1..25 {
            assert!((ln_gamma(f64::from(n)) - factorial.ln()).abs() < 1e-13 * (1.0 + factorial.ln()), "{n}");
            factorial *= f64::from(n);
        }
        assert!((ln_gamma(0.5) - core::f64::consts::PI.sqrt().ln()).abs() < 1e-14);
    }

    #[test]
    fn normal_quantile_inverts_the_normal_tail() {
        // Φ(1) = 0.8413447460685429, Φ(−3) = 0.0013498980316300946 (any normal table; common
        // practice); the refined quantile returns them to ~1e-14.
        assert!((normal_quantile(0.841_344_746_068_542_9) - 1.0).abs() < 1e-13);
        assert!((normal_quantile(0.001_349_898_031_630_094_6) + 3.0).abs() < 1e-12);
        assert!(normal_quantile(0.5).abs() < 1e-15);
    }

    #[test]
    fn wilson_hilferty_joins_the_exact_quantile() {
        // At the switch (ν = 1e6, still on the exact path) the transformation agrees with the
        // exact quantile to its accuracy there (relative error of order 1/ν², well below the
        // 1e-9 allowed).
        for p in [0.025, 0.1587, 0.8413, 0.975] {
            let exact = chi_square_quantile(p, 1e6).unwrap();
            let approx = wilson_hilferty(p, 1e6);
            assert!((approx / exact - 1.0).abs() < 1e-9, "{p}: {exact} {approx}");
        }
    }

    #[test]
    fn chi_square_with_two_degrees_is_exponential() {
        // P(χ²₂ ≤ x) = 1 − e^{−x/2}, so the quantile is −2 ln(1 − p) (exact; common practice).
        for p in [1e-6, 0.01, 0.1586553, 0.5, 0.8413447, 0.99, 1.0 - 1e-9] {
            let x = chi_square_quantile(p, 2.0).unwrap();
            let exact = -2.0 * (-p).ln_1p();
            assert!((x - exact).abs() <= 1e-12 * exact, "{p}: {x} vs {exact}");
        }
    }
}
