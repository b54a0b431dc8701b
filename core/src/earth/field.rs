//! Field quantities practitioners reach for: the Coriolis parameter, the Eötvös correction and
//! the centripetal acceleration of an Earth-fixed point.
//!
//! ```text
//! f = 2 Ω sin φ                                  Coriolis parameter (1/s)
//! E = 2 Ω v_E cos φ + v_E²/(N + h) + v_N²/(M + h) Eötvös correction (m/s²)
//! a_c = ω × (ω × r)                              centripetal acceleration of a fixed point
//! ```
//!
//! **Eötvös sign convention.** `E` is the correction *added to a moving gravimeter's reading*
//! to obtain what a gravimeter at rest at the same place would read. Moving east adds to the
//! Earth's rotation, so the centrifugal relief grows and the reading drops: `E > 0`. It is the
//! down component of `(2 ω_ie + ω_en) × v`, the Coriolis and transport-rate term of the NED
//! velocity equation, and is computed from it ([`coriolis_ned`]). The common marine formula
//! `E[mGal] = 7.503 V cos φ sin α + 0.004154 V²` (V in knots, α the heading from north) is its
//! spherical approximation.

use nalgebra::Vector3;

use super::geodetic::check_latitude;
use super::gravity::centrifugal_unchecked;
use super::local::coriolis_ned;
use super::model::EarthModel;
use crate::error::Result;
use crate::math;

/// The Coriolis parameter `f = 2 Ω sin φ` (1/s) at geodetic latitude `latitude` (rad).
///
/// # Errors
/// [`Error::NonFinite`](crate::Error::NonFinite) or [`Error::OutOfRange`](crate::Error::OutOfRange).
///
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{coriolis_parameter, WGS84};
/// // About 1.03e-4 1/s at 45° (common practice).
/// assert_relative_eq!(coriolis_parameter(&WGS84, 45f64.to_radians()).unwrap(), 1.0312608e-4, max_relative = 1e-7);
/// ```
pub fn coriolis_parameter(model: &EarthModel, latitude: f64) -> Result<f64> {
    check_latitude(latitude, "latitude")?;
    Ok(2.0 * model.rotation_rate() * math::sin(latitude))
}

/// The Eötvös correction (m/s², added to the reading; see the [module documentation](self))
/// for a gravimeter at `latitude` (rad) and `height` (m) moving at `velocity_ned` relative to
/// the Earth (m/s). Multiply by 1e5 for mGal.
///
/// # Errors
/// As [`coriolis_ned`].
///
/// ```
/// use rotaframe::earth::{eotvos_correction, WGS84};
/// let knot = 1852.0 / 3600.0;
/// let e = eotvos_correction(&WGS84, 0.0, 0.0, &nalgebra::Vector3::new(0.0, 10.0 * knot, 0.0)).unwrap();
/// assert!((e * 1e5 - 75.45).abs() < 0.05); // ≈ 7.503·10 + 0.004154·100 mGal
/// ```
pub fn eotvos_correction(model: &EarthModel, latitude: f64, height: f64, velocity_ned: &Vector3<f64>) -> Result<f64> {
    Ok(-coriolis_ned(model, latitude, height, velocity_ned)?.z)
}

/// The centripetal acceleration `ω × (ω × r)` (m/s², resolved in ECEF) of a point fixed on the
/// rotating Earth at ECEF position `position_ecef` (m): its acceleration relative to inertial
/// space, pointing at the rotation axis, of size `Ω² ρ` at distance ρ from it.
///
/// # Errors
/// [`Error::NonFinite`](crate::Error::NonFinite) or
/// [`Error::BeyondLimit`](crate::Error::BeyondLimit) beyond
/// [`MAX_GEOCENTRIC_DISTANCE`](crate::limits::MAX_GEOCENTRIC_DISTANCE).
///
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{centripetal_acceleration_ecef, WGS84};
/// let a = centripetal_acceleration_ecef(&WGS84, &nalgebra::Vector3::new(6378137.0, 0.0, 0.0)).unwrap();
/// assert_relative_eq!(a.x, -0.0339157, max_relative = 1e-5);
/// ```
pub fn centripetal_acceleration_ecef(model: &EarthModel, position_ecef: &Vector3<f64>) -> Result<Vector3<f64>> {
    crate::limits::check_vector(position_ecef, crate::limits::MAX_GEOCENTRIC_DISTANCE, "m", "position_ecef")?;
    Ok(-centrifugal_unchecked(model, position_ecef))
}
