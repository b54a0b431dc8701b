//! Error-free transformations and a minimal double-double type for the few places where f64
//! rounding would otherwise dominate (geodetic conversions at the nanometre level).
//!
//! `two_sum` is Knuth's, `two_prod` uses a fused multiply-add (T. J. Dekker, "A floating-point
//! technique for extending the available precision", *Numer. Math.* 18 (1971) 224–242;
//! J.-M. Muller et al., *Handbook of Floating-Point Arithmetic*, 2nd ed. (2018), ch. 4).
//! A [`Dd`] value is `hi + lo` with `|lo| ≤ ulp(hi)/2`; the operations here are accurate to a
//! few units of 2⁻¹⁰⁴ relative, far beyond what the callers need (about 2⁻⁶⁰).

use crate::dd_tables::{ATAN_TABLE, HALF_PI_DD, HALF_PI_PARTS, PI_DD};
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

/// 1.5·2⁵²: adding it to a float of magnitude below 2⁵¹ rounds the float to an integer held in
/// the low bits of the sum's mantissa (round half to even).
const ROUNDING_SHIFT: f64 = 6_755_399_441_055_744.0;

/// The integer held by `x + ROUNDING_SHIFT` (two's complement in the low 32 bits).
#[inline(always)]
fn shifted_integer(shifted: f64) -> i32 {
    shifted.to_bits() as u32 as i32
}

/// Largest |x| for which [`sin_cos_dd`] reduces its argument with the three-part π/2
/// (the products `k·P1`, `k·P2` stay exact for |k| < 2²⁰).
pub(crate) const SIN_COS_DD_LIMIT: f64 = 524_288.0;

/// Sine and cosine of an f64 argument as double-doubles, accurate to about 1e-19 absolute for
/// |x| ≤ [`SIN_COS_DD_LIMIT`] (outside that range the result is meaningless; callers reduce
/// first).
///
/// Method: `x = k·π/2 + r` (Cody–Waite reduction in double-double, |r| ≤ π/4), then the Taylor
/// series of sin and cos about 0, with the terms that matter at 2⁻⁶⁰ (`r`, `r³/6`, `1`, `r²/2`,
/// `r⁴/24`) in double-double and the rest in f64 Horner form to `r¹⁷` and `r²⁰` (truncation
/// below 1e-19), and the low part of `r` carried to first order. No table: the code is
/// branch-free and free of gathers, so batch loops vectorise. (J.-M. Muller, *Elementary
/// Functions*, 3rd ed. (2016), ch. 11, for the reduction.)
#[inline(always)]
pub(crate) fn sin_cos_dd(x: f64) -> (Dd, Dd) {
    use core::f64::consts::FRAC_2_PI;
    let [p1, p2, p3] = HALF_PI_PARTS;
    // Round to an integer by adding 1.5·2⁵²: the sum's low mantissa bits are the integer, so
    // the quadrant comes from a bit mask rather than a (slow to vectorise) float-to-int cast.
    let k_shifted = x * FRAC_2_PI + ROUNDING_SHIFT;
    let k = k_shifted - ROUNDING_SHIFT;
    let t1 = x - k * p1; // exact (Sterbenz)
    let (r, e) = two_sum(t1, -(k * p2));
    let r_lo = e - k * p3;
    let u = Dd::prod(r, r);
    let u1 = u.hi;
    // sin r = r − r³/6 + r⁵·Q(r²), plus r_lo·cos r.
    let cube = u.mul_f64(r).mul(Dd { hi: SIXTH.0, lo: SIXTH.1 });
    let q = SIN_TAIL[0]
        + u1 * (SIN_TAIL[1]
            + u1 * (SIN_TAIL[2] + u1 * (SIN_TAIL[3] + u1 * (SIN_TAIL[4] + u1 * (SIN_TAIL[5] + u1 * SIN_TAIL[6])))));
    let tail = r * u1 * u1 * q;
    let (s, se) = two_sum(r, -cube.hi);
    let sin_r = Dd::new(s, se - cube.lo + tail + r_lo * (1.0 - 0.5 * u1));
    // cos r = 1 − r²/2 + r⁴/24 + r⁶·R(r²), minus r_lo·sin r.
    let quartic = u.mul(u).mul(Dd { hi: TWENTY_FOURTH.0, lo: TWENTY_FOURTH.1 });
    let rr = COS_TAIL[0]
        + u1 * (COS_TAIL[1]
            + u1 * (COS_TAIL[2]
                + u1 * (COS_TAIL[3] + u1 * (COS_TAIL[4] + u1 * (COS_TAIL[5] + u1 * (COS_TAIL[6] + u1 * COS_TAIL[7]))))));
    let tail = u1 * u1 * u1 * rr;
    let (c, ce) = two_sum(1.0, -0.5 * u.hi);
    let (c, ce2) = fast_two_sum(c, quartic.hi);
    let cos_r = Dd::new(c, ce + ce2 - 0.5 * u.lo + quartic.lo + tail - r_lo * r * (1.0 - u1 / 6.0));
    // Rotate by the quadrant k mod 4, without branches: odd quadrants swap sine and cosine,
    // quadrants 2 and 3 negate the sine, quadrants 1 and 2 negate the cosine.
    let quadrant = shifted_integer(k_shifted) & 3;
    let swap = quadrant & 1 == 1;
    let sin_sign = if quadrant & 2 == 2 { -1.0 } else { 1.0 };
    let cos_sign = if (quadrant + 1) & 2 == 2 { -1.0 } else { 1.0 };
    let sin_x = Dd { hi: sin_sign * select(swap, cos_r.hi, sin_r.hi), lo: sin_sign * select(swap, cos_r.lo, sin_r.lo) };
    let cos_x = Dd { hi: cos_sign * select(swap, sin_r.hi, cos_r.hi), lo: cos_sign * select(swap, sin_r.lo, cos_r.lo) };
    (sin_x, cos_x)
}

/// 1/6 and 1/24 as double-doubles.
const SIXTH: (f64, f64) = (0.166_666_666_666_666_66, 9.251_858_538_542_97e-18);
const TWENTY_FOURTH: (f64, f64) = (0.041_666_666_666_666_664, 2.312_964_634_635_742_7e-18);
/// Taylor coefficients (−1)ᵏ/(2k + 5)!, k = 0..6, of `(sin r − r + r³/6)/r⁵` in r².
#[allow(clippy::excessive_precision)]
const SIN_TAIL: [f64; 7] = [
    8.333_333_333_333_333e-3,
    -1.984_126_984_126_984e-4,
    2.755_731_922_398_589_3e-6,
    -2.505_210_838_544_172e-8,
    1.605_904_383_682_161_3e-10,
    -7.647_163_731_819_816e-13,
    2.811_457_254_345_520_6e-15,
];
/// Taylor coefficients (−1)ᵏ⁺¹/(2k + 6)!, k = 0..7, of `(cos r − 1 + r²/2 − r⁴/24)/r⁶` in r².
#[allow(clippy::excessive_precision)]
const COS_TAIL: [f64; 8] = [
    -1.388_888_888_888_889e-3,
    2.480_158_730_158_73e-5,
    -2.755_731_922_398_589e-7,
    2.087_675_698_786_81e-9,
    -1.147_074_559_772_972_5e-11,
    4.779_477_332_387_385e-14,
    -1.561_920_696_858_622_5e-16,
    4.110_317_623_312_165e-19,
];

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
    let j_shifted = t * 64.0 + ROUNDING_SHIFT;
    let c = (j_shifted - ROUNDING_SHIFT) / 64.0;
    let u = ((t - c) + t_lo) / math::mul_add(t, c, 1.0);
    let u2 = u * u;
    let poly = u * u2 * (-1.0 / 3.0 + u2 * (0.2 - u2 * (1.0 / 7.0)));
    let (a_hi, a_lo) = ATAN_TABLE[shifted_integer(j_shifted).clamp(0, 64) as usize];
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
