//! Innovation gating: the chi-square quantile that a measurement's normalised innovation
//! squared (NIS) `yᵀ S⁻¹ y` is tested against.
//!
//! For `k` degrees of freedom the chi-square distribution function has closed forms for the
//! sizes a measurement here has (k = 1, 2, 3; M. Abramowitz and I. A. Stegun, *Handbook of
//! Mathematical Functions* (1964), 26.4.4–26.4.5):
//!
//! ```text
//! F₁(x) = erf(√(x/2))
//! F₂(x) = 1 − e^{−x/2}
//! F₃(x) = erf(√(x/2)) − √(2x/π) e^{−x/2}
//! ```
//!
//! The quantile `F_k⁻¹(p)` is found by bisection on these (monotone) functions to the last
//! bit; the tests compare it with `scipy.stats.chi2.ppf`.

use crate::error::{Error, Result};
use crate::math;

/// The largest measurement size (rows).
pub const MAX_ROWS: usize = 3;

/// The chi-square distribution function with `dof` (1 to 3) degrees of freedom at `x ≥ 0`.
fn chi_square_cdf(x: f64, dof: usize) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
    let half = 0.5 * x;
    let erf = 1.0 - math::erfc(math::sqrt(half));
    match dof {
        1 => erf,
        2 => 1.0 - math::exp(-half),
        _ => erf - math::sqrt(2.0 * x / core::f64::consts::PI) * math::exp(-half),
    }
}

/// The chi-square quantile: the `x` with `P(χ²_dof ≤ x) = probability`.
///
/// # Errors
/// [`Error::OutOfRange`] naming `gate` unless `0 < probability < 1`, or naming `dof` unless
/// it is 1, 2 or 3.
///
/// ```
/// use rotaframe::aided::chi_square_quantile;
/// // The 95 % point of one degree of freedom is 1.96² (common practice).
/// assert!((chi_square_quantile(0.95, 1).unwrap() - 3.841_458_820_694_124).abs() < 1e-12);
/// ```
pub fn chi_square_quantile(probability: f64, dof: usize) -> Result<f64> {
    if !(probability > 0.0 && probability < 1.0) {
        return Err(Error::OutOfRange { quantity: "gate", value: probability, min: 0.0, max: 1.0 });
    }
    if !(1..=MAX_ROWS).contains(&dof) {
        return Err(Error::OutOfRange { quantity: "dof", value: dof as f64, min: 1.0, max: MAX_ROWS as f64 });
    }
    let (mut low, mut high) = (0.0f64, 1.0f64);
    while chi_square_cdf(high, dof) < probability && high < 1e4 {
        high *= 2.0;
    }
    for _ in 0..200 {
        let mid = 0.5 * (low + high);
        if mid <= low || mid >= high {
            break;
        }
        if chi_square_cdf(mid, dof) < probability {
            low = mid;
        } else {
            high = mid;
        }
    }
    Ok(high)
}
