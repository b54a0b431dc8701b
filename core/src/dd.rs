//! Error-free transformations and a minimal double-double type for the few places where f64
//! rounding would otherwise dominate (geodetic conversions at the nanometre level).
//!
//! `two_sum` is Knuth's, `two_prod` uses a fused multiply-add (T. J. Dekker, "A floating-point
//! technique for extending the available precision", *Numer. Math.* 18 (1971) 224–242;
//! J.-M. Muller et al., *Handbook of Floating-Point Arithmetic*, 2nd ed. (2018), ch. 4).
//! A [`Dd`] value is `hi + lo` with `|lo| ≤ ulp(hi)/2`; the operations here are accurate to a
//! few units of 2⁻¹⁰⁴ relative, far beyond what the callers need (about 2⁻⁶⁰).

use crate::dd_tables::{ATAN_TABLE, HALF_PI_DD, HALF_PI_PARTS, PI_DD, SIN_COS_TABLE};
use crate::math;

/// `a + b = s + e` exactly.
#[inline(always)]
pub(crate) fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bb = s - a;
    let e = (a - (s - bb)) + (b - bb);
    (s, e)
}

/// `a + b = s + e` exactly, provided `|a| ≥ |b|` (or `a` is zero).
#[inline(always)]
pub(crate) fn fast_two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    (s, b - (s - a))
}

/// `a · b = p + e` exactly (barring underflow).
#[inline(always)]
pub(crate) fn two_prod(a: f64, b: f64) -> (f64, f64) {
    let p = a * b;
    (p, math::mul_add(a, b, -p))
}

/// A double-double number `hi + lo`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Dd {
    pub hi: f64,
    pub lo: f64,
}

impl Dd {
    #[inline(always)]
    pub fn new(hi: f64, lo: f64) -> Self {
        let (hi, lo) = fast_two_sum(hi, lo);
        Self { hi, lo }
    }

    #[inline(always)]
    pub fn from_f64(x: f64) -> Self {
        Self { hi: x, lo: 0.0 }
    }

    /// The sum of two f64s, exactly.
    #[inline(always)]
    pub fn sum(a: f64, b: f64) -> Self {
        let (hi, lo) = two_sum(a, b);
        Self { hi, lo }
    }

    /// The product of two f64s, exactly.
    #[inline(always)]
    pub fn prod(a: f64, b: f64) -> Self {
        let (hi, lo) = two_prod(a, b);
        Self { hi, lo }
    }

    #[inline(always)]
    pub fn add(self, o: Self) -> Self {
        let (s, e) = two_sum(self.hi, o.hi);
        Self::new(s, e + self.lo + o.lo)
    }

    #[inline(always)]
    pub fn add_f64(self, b: f64) -> Self {
        let (s, e) = two_sum(self.hi, b);
        Self::new(s, e + self.lo)
    }

    #[inline(always)]
    pub fn neg(self) -> Self {
        Self { hi: -self.hi, lo: -self.lo }
    }

    #[inline(always)]
    pub fn mul(self, o: Self) -> Self {
        let (p, e) = two_prod(self.hi, o.hi);
        Self::new(p, e + (self.hi * o.lo + self.lo * o.hi))
    }

    #[inline(always)]
    pub fn mul_f64(self, b: f64) -> Self {
        let (p, e) = two_prod(self.hi, b);
        Self::new(p, math::mul_add(self.lo, b, e))
    }

    #[inline(always)]
    pub fn div(self, o: Self) -> Self {
        let q = self.hi / o.hi;
        // Remainder self − q·o, to first order.
        let r = self.add(o.mul_f64(q).neg());
        Self::new(q, r.hi / o.hi)
    }

    #[inline(always)]
    pub fn sqrt(self) -> Self {
        let r = math::sqrt(self.hi);
        // One Newton step: (x − r²)/(2r), with x − r² formed exactly from the fma.
        let residual = math::mul_add(-r, r, self.hi) + self.lo;
        // sqrt(0) = 0 exactly; the select avoids 0/0.
        let lo = if r > 0.0 { residual / (2.0 * r) } else { 0.0 };
        Self::new(r, lo)
    }

    #[inline(always)]
    pub fn to_f64(self) -> f64 {
        self.hi + self.lo
    }
}

/// Largest |x| for which [`sin_cos_dd`] reduces its argument with the three-part π/2
/// (the products `k·P1`, `k·P2` stay exact for |k| < 2²⁰).
pub(crate) const SIN_COS_DD_LIMIT: f64 = 524_288.0;

/// Sine and cosine of an f64 argument as double-doubles, accurate to about 1e-19 absolute for
/// |x| ≤ [`SIN_COS_DD_LIMIT`] (outside that range the result is meaningless; callers reduce
/// first).
///
/// Method: `x = k·π/2 + r` (Cody–Waite reduction in double-double), `r = c + d` with
/// `c = j/64` from a 103-entry table of double-double `sin c`, `cos c` and `|d| ≤ 1/128`, then
/// `sin(c + d) = sin c · cos d + cos c · sin d` with the Taylor series of `sin d − d` and
/// `cos d − 1` to `d⁷` and `d⁶` (truncation below 4e-19). The code is branch-free so that batch
/// loops vectorise. (J.-M. Muller, *Elementary Functions*, 3rd ed. (2016), ch. 6 and 11.)
#[inline(always)]
pub(crate) fn sin_cos_dd(x: f64) -> (Dd, Dd) {
    use core::f64::consts::FRAC_2_PI;
    let [p1, p2, p3] = HALF_PI_PARTS;
    let k = math::round_ties_even(x * FRAC_2_PI);
    let t1 = x - k * p1; // exact (Sterbenz)
    let (r_hi, e) = two_sum(t1, -(k * p2));
    let r_lo = e - k * p3;
    let j = math::round_ties_even(r_hi * 64.0);
    let d = r_hi - j / 64.0; // exact (Sterbenz)
    // The clamp is a no-op for valid input; it lets the compiler drop the bounds check.
    let ((s_hi, s_lo), (c_hi, c_lo)) = SIN_COS_TABLE[(j as i32 + 51).clamp(0, 102) as usize];
    let d2 = d * d;
    let sin_d_minus_d = d * d2 * (-1.0 / 6.0 + d2 * (1.0 / 120.0 - d2 * (1.0 / 5040.0)));
    let cos_d_minus_1 = d2 * (-0.5 + d2 * (1.0 / 24.0 - d2 * (1.0 / 720.0))) - d * r_lo;
    let small_sin = r_lo + sin_d_minus_d; // sin(d + r_lo) − d, to the accuracy needed
    // sin(c + δ) = S + C·d + [S·(cos δ − 1) + C·(sin δ − d)], likewise for cos.
    let (p, pe) = two_prod(c_hi, d);
    let (s, se) = two_sum(s_hi, p);
    let sin_r = Dd::new(s, se + pe + s_lo + c_lo * d + s_hi * cos_d_minus_1 + c_hi * small_sin);
    let (q, qe) = two_prod(-s_hi, d);
    let (c, ce) = two_sum(c_hi, q);
    let cos_r = Dd::new(c, ce + qe + c_lo - s_lo * d + c_hi * cos_d_minus_1 - s_hi * small_sin);
    // Rotate by the quadrant k mod 4, without branches: odd quadrants swap sine and cosine,
    // quadrants 2 and 3 negate the sine, quadrants 1 and 2 negate the cosine.
    let quadrant = (k as i64) & 3;
    let swap = quadrant & 1 == 1;
    let sin_sign = if quadrant & 2 == 2 { -1.0 } else { 1.0 };
    let cos_sign = if (quadrant + 1) & 2 == 2 { -1.0 } else { 1.0 };
    let sin_x = Dd { hi: sin_sign * select(swap, cos_r.hi, sin_r.hi), lo: sin_sign * select(swap, cos_r.lo, sin_r.lo) };
    let cos_x = Dd { hi: cos_sign * select(swap, sin_r.hi, cos_r.hi), lo: cos_sign * select(swap, sin_r.lo, cos_r.lo) };
    (sin_x, cos_x)
}

/// `atan2(y, x)` as a double-double, accurate to about 1e-19 absolute, with the usual quadrant
/// conventions (result in (−π, π], the sign of a zero `y` kept).
///
/// Method: reduce to `t = min(|x|, |y|) / max(|x|, |y|)` in [0, 1] (kept to double-double),
/// `atan t = atan c + atan u` with `c = j/64` from a 65-entry double-double table and
/// `u = (t − c)/(1 + t c)`, `|u| ≤ 1/128`, whose arctangent is `u − u³/3 + u⁵/5 − u⁷/7`
/// (truncation below 1e-20); then undo the octant. (Muller 2016, ch. 6.)
#[inline(always)]
pub(crate) fn atan2_dd(y: f64, x: f64) -> Dd {
    let ax = x.abs();
    let ay = y.abs();
    let swap = ay > ax;
    let (num, den) = if swap { (ax, ay) } else { (ay, ax) };
    let den_safe = if den == 0.0 { 1.0 } else { den };
    let t = num / den_safe;
    let t_lo = math::mul_add(-t, den_safe, num) / den_safe;
    let j = math::round_ties_even(t * 64.0);
    let c = j / 64.0;
    let u = ((t - c) + t_lo) / math::mul_add(t, c, 1.0);
    let u2 = u * u;
    let poly = u * u2 * (-1.0 / 3.0 + u2 * (0.2 - u2 * (1.0 / 7.0)));
    let (a_hi, a_lo) = ATAN_TABLE[(j as i32).clamp(0, 64) as usize];
    let (s, e) = two_sum(a_hi, u);
    let r = Dd::new(s, e + a_lo + poly);
    // Undo the octant reduction without branches: with r in [0, π/4], the angle is
    // ±(offset + sign·r), offset ∈ {0, π/2, π} from (swap, x < 0).
    let x_negative = x.is_sign_negative();
    let (off_hi, off_lo) = match (swap, x_negative) {
        (false, false) => (0.0, 0.0),
        (true, _) => HALF_PI_DD,
        (false, true) => PI_DD,
    };
    let sign = if swap != x_negative { -1.0 } else { 1.0 };
    let (t_hi, t_err) = two_sum(off_hi, sign * r.hi);
    let angle = Dd::new(t_hi, t_err + off_lo + sign * r.lo);
    let y_sign = if y.is_sign_negative() { -1.0 } else { 1.0 };
    Dd { hi: y_sign * angle.hi, lo: y_sign * angle.lo }
}

/// `if condition { a } else { b }` for plain values, written so that it compiles to a select.
#[inline(always)]
fn select(condition: bool, a: f64, b: f64) -> f64 {
    if condition { a } else { b }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn two_prod_and_two_sum_are_exact() {
        // Exactness checked on a case whose rounding error is known in closed form:
        // (1 + 2⁻³⁰)² = 1 + 2⁻²⁹ + 2⁻⁶⁰, and 2⁻⁶⁰ is lost by f64 multiplication.
        let a = 1.0 + 2f64.powi(-30);
        let (p, e) = two_prod(a, a);
        assert_eq!(p, 1.0 + 2f64.powi(-29));
        assert_eq!(e, 2f64.powi(-60));
        let (s, e) = two_sum(1.0, 2f64.powi(-60));
        assert_eq!((s, e), (1.0, 2f64.powi(-60)));
    }

    #[test]
    fn dd_sqrt_of_two_matches_the_known_double_double_value() {
        // √2 = 1.4142135623730950488016887242097…; its double-double is
        // (1.4142135623730951, −9.667293313452913e-17) (from memory: the standard
        // double-double constant; hi is f64's SQRT_2).
        let r = Dd::from_f64(2.0).sqrt();
        assert_eq!(r.hi, core::f64::consts::SQRT_2);
        assert!((r.lo + 9.667_293_313_452_913e-17).abs() < 1e-31);
    }
}
