//! Scalar transcendental functions, routed through one place.
//!
//! With the `std` feature the standard library's intrinsics are used (they call the platform's
//! libm, which is faster and correctly rounded in most cases); without it the pure-Rust `libm`
//! crate is used, so that the crate links into firmware with no C runtime. Every transcendental
//! call in the crate goes through this module, so the choice lives here only.

#![allow(dead_code)]

#[cfg(feature = "std")]
mod imp {
    #[inline(always)]
    pub fn sqrt(x: f64) -> f64 {
        x.sqrt()
    }
    #[inline(always)]
    pub fn cbrt(x: f64) -> f64 {
        x.cbrt()
    }
    #[inline(always)]
    pub fn sin(x: f64) -> f64 {
        x.sin()
    }
    #[inline(always)]
    pub fn cos(x: f64) -> f64 {
        x.cos()
    }
    #[inline(always)]
    pub fn sin_cos(x: f64) -> (f64, f64) {
        x.sin_cos()
    }
    #[inline(always)]
    pub fn tan(x: f64) -> f64 {
        x.tan()
    }
    #[inline(always)]
    pub fn atan(x: f64) -> f64 {
        x.atan()
    }
    #[inline(always)]
    pub fn atan2(y: f64, x: f64) -> f64 {
        y.atan2(x)
    }
    #[inline(always)]
    pub fn asin(x: f64) -> f64 {
        x.asin()
    }
    #[inline(always)]
    pub fn acos(x: f64) -> f64 {
        x.acos()
    }
    #[inline(always)]
    pub fn exp(x: f64) -> f64 {
        x.exp()
    }
    #[inline(always)]
    pub fn ln(x: f64) -> f64 {
        x.ln()
    }
    #[inline(always)]
    pub fn hypot(x: f64, y: f64) -> f64 {
        x.hypot(y)
    }
    #[inline(always)]
    pub fn floor(x: f64) -> f64 {
        x.floor()
    }
    #[inline(always)]
    pub fn round(x: f64) -> f64 {
        x.round()
    }
    #[inline(always)]
    pub fn round_ties_even(x: f64) -> f64 {
        x.round_ties_even()
    }
    #[inline(always)]
    pub fn mul_add(a: f64, b: f64, c: f64) -> f64 {
        a.mul_add(b, c)
    }
}

#[cfg(not(feature = "std"))]
mod imp {
    #[inline(always)]
    pub fn sqrt(x: f64) -> f64 {
        libm::sqrt(x)
    }
    #[inline(always)]
    pub fn cbrt(x: f64) -> f64 {
        libm::cbrt(x)
    }
    #[inline(always)]
    pub fn sin(x: f64) -> f64 {
        libm::sin(x)
    }
    #[inline(always)]
    pub fn cos(x: f64) -> f64 {
        libm::cos(x)
    }
    #[inline(always)]
    pub fn sin_cos(x: f64) -> (f64, f64) {
        libm::sincos(x)
    }
    #[inline(always)]
    pub fn tan(x: f64) -> f64 {
        libm::tan(x)
    }
    #[inline(always)]
    pub fn atan(x: f64) -> f64 {
        libm::atan(x)
    }
    #[inline(always)]
    pub fn atan2(y: f64, x: f64) -> f64 {
        libm::atan2(y, x)
    }
    #[inline(always)]
    pub fn asin(x: f64) -> f64 {
        libm::asin(x)
    }
    #[inline(always)]
    pub fn acos(x: f64) -> f64 {
        libm::acos(x)
    }
    #[inline(always)]
    pub fn exp(x: f64) -> f64 {
        libm::exp(x)
    }
    #[inline(always)]
    pub fn ln(x: f64) -> f64 {
        libm::log(x)
    }
    #[inline(always)]
    pub fn hypot(x: f64, y: f64) -> f64 {
        libm::hypot(x, y)
    }
    #[inline(always)]
    pub fn floor(x: f64) -> f64 {
        libm::floor(x)
    }
    #[inline(always)]
    pub fn round(x: f64) -> f64 {
        libm::round(x)
    }
    #[inline(always)]
    pub fn round_ties_even(x: f64) -> f64 {
        libm::rint(x)
    }
    #[inline(always)]
    pub fn mul_add(a: f64, b: f64, c: f64) -> f64 {
        libm::fma(a, b, c)
    }
}

pub(crate) use imp::*;

/// The complementary error function (the `libm` crate's, on every build: the standard library
/// has none).
#[inline(always)]
pub(crate) fn erfc(x: f64) -> f64 {
    libm::erfc(x)
}

/// Norms below this are treated as zero when a direction is needed (about the square root of
/// the smallest normal f64, so that squaring the components cannot underflow to zero first).
pub(crate) const TINY_NORM: f64 = 1.0e-150;
