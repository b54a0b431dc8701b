//! The supported input ranges: finite input inside them gives finite, accurate output;
//! finite input outside them is refused with [`Error::BeyondLimit`] or [`Error::OutOfRange`]
//! naming the argument. No function returns NaN or infinity for finite input.
//!
//! The limits sit far beyond any physical use (Newtonian kinematics at a billion metres per
//! second is already meaningless), so they only catch unit mix-ups and corrupted data; what
//! they guarantee is that no product formed by the library (`ω × (ω × r)`, the squares in the
//! geodetic inversion, a scale factor times an increment) can overflow.
//!
//! | quantity | limit | where |
//! |---|---|---|
//! | position, offset, lever arm | [`MAX_POSITION`] = 1e15 m (about 6700 au) | frame motions, points, lever arms |
//! | velocity | [`MAX_VELOCITY`] = 1e9 m/s | frame motions, points, navigation states |
//! | acceleration | [`MAX_ACCELERATION`] = 1e12 m/s² | frame motions, points |
//! | angular velocity | [`MAX_ANGULAR_VELOCITY`] = 1e6 rad/s | frame motions, rates, gyro readings |
//! | angular acceleration | [`MAX_ANGULAR_ACCELERATION`] = 1e12 rad/s² | frame motions |
//! | free vector (force, rate, displacement) | [`MAX_FREE_VECTOR`] = 1e100 | rotations of free vectors |
//! | distance from the Earth's centre | [`MAX_GEOCENTRIC_DISTANCE`] = 1e10 m | ECEF positions given to geodetic conversions, gravity, navigation |
//! | ellipsoidal height | [`min_height`] = −b/2 (−3178 km for WGS 84) to [`max_height`] = 1e10 m − a | geodetic positions everywhere |
//! | time | [`MAX_TIME`] = 1e12 s (about 31,700 years) | times given to spins and frame graphs |
//! | rotation vector, angle increment | [`MAX_ROTATION_ANGLE`] = 1e6 rad | rotation-vector conversions, IMU increments |
//! | IMU sample interval | [`MIN_INTERVAL`] = 1e-9 s to [`MAX_INTERVAL`] = 1e5 s | IMU increments |
//!
//! The inner height limit keeps every geodetic position at least half the semi-minor axis
//! from the Earth's centre, where the J₂ field (see [`earth::gravity`](crate::earth::gravity))
//! is also refused; the outer one keeps its ECEF image within [`MAX_GEOCENTRIC_DISTANCE`].
//! Both directions of the geodetic conversion therefore accept what the other returns, except
//! in a shell of width a − b (21 km) at the outer edge.
//!
//! ```
//! use rotaframe::earth::{geodetic_to_ecef, Geodetic, WGS84};
//! let err = geodetic_to_ecef(&WGS84, &Geodetic::new(0.5, 0.1, 1e160)).unwrap_err();
//! assert_eq!(err.quantity(), "height");
//! ```

use nalgebra::Vector3;

use crate::earth::EarthModel;
use crate::error::{Error, Result};

/// Largest supported magnitude of a position relative to any frame (m).
pub const MAX_POSITION: f64 = 1.0e15;
/// Largest supported speed relative to any frame (m/s).
pub const MAX_VELOCITY: f64 = 1.0e9;
/// Largest supported magnitude of an acceleration (m/s²).
pub const MAX_ACCELERATION: f64 = 1.0e12;
/// Largest supported magnitude of an angular velocity (rad/s).
pub const MAX_ANGULAR_VELOCITY: f64 = 1.0e6;
/// Largest supported magnitude of an angular acceleration (rad/s²).
pub const MAX_ANGULAR_ACCELERATION: f64 = 1.0e12;
/// Largest supported magnitude of a free vector (a force, a rate, a displacement) rotated
/// between frames: any physical quantity in SI units is far smaller, and rotating a vector
/// this size cannot overflow.
pub const MAX_FREE_VECTOR: f64 = 1.0e100;
/// Largest supported distance from the Earth's centre of an Earth-referenced position (m).
pub const MAX_GEOCENTRIC_DISTANCE: f64 = 1.0e10;
/// Largest supported magnitude of a time argument (s).
pub const MAX_TIME: f64 = 1.0e12;
/// Longest supported IMU sample interval (s): about a day.
pub const MAX_INTERVAL: f64 = 1.0e5;
/// Shortest supported IMU sample interval (s): a 1 GHz sample rate. Shorter intervals
/// underflow the two-sample correction coefficients.
pub const MIN_INTERVAL: f64 = 1.0e-9;
/// Largest supported rotation angle given as a rotation vector (rad): beyond it the angle
/// modulo 2π has lost more than 1e-10 rad to rounding.
pub const MAX_ROTATION_ANGLE: f64 = 1.0e6;

/// Largest supported magnitude of an entry of an initial error covariance (in the squared
/// units of its states): a variance of 1e100 m² is already meaningless, and `Φ P Φᵀ` of
/// entries this size stays far from overflow over any supported interval.
pub const MAX_COVARIANCE_ENTRY: f64 = 1.0e100;

/// Lowest supported ellipsoidal height for `model`: minus half the semi-minor axis (m).
///
/// ```
/// use rotaframe::{earth::WGS84, limits::min_height};
/// assert!((min_height(&WGS84) + 3_178_376.157).abs() < 1e-3);
/// ```
#[must_use]
#[inline]
pub fn min_height(model: &EarthModel) -> f64 {
    -0.5 * model.semi_minor_axis()
}

/// Highest supported ellipsoidal height for `model`: [`MAX_GEOCENTRIC_DISTANCE`] minus the
/// semi-major axis (m).
#[must_use]
#[inline]
pub fn max_height(model: &EarthModel) -> f64 {
    MAX_GEOCENTRIC_DISTANCE - model.semi_major_axis()
}

/// Checks an ellipsoidal height against [`min_height`] and [`max_height`], naming `quantity`.
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::OutOfRange`].
#[inline]
pub fn check_height(model: &EarthModel, height: f64, quantity: &'static str) -> Result<()> {
    let (min, max) = (min_height(model), max_height(model));
    if (min..=max).contains(&height) {
        return Ok(());
    }
    if !height.is_finite() {
        return Err(Error::NonFinite { quantity });
    }
    Err(Error::OutOfRange { quantity, value: height, min, max })
}

/// Checks that a 3-vector is finite and no longer than `limit` (in `unit`), naming `quantity`.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::limits::{check_vector, MAX_POSITION};
/// let e = check_vector(&Vector3::new(1e200, 0.0, 0.0), MAX_POSITION, "m", "position").unwrap_err();
/// assert_eq!(e.to_string(), "`position` magnitude 1e200 m is beyond the supported range (at most 1e15 m)");
/// ```
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::BeyondLimit`].
#[inline]
pub fn check_vector(v: &Vector3<f64>, limit: f64, unit: &'static str, quantity: &'static str) -> Result<()> {
    // Each component within the limit (NaN fails the comparison): cheap, and it bounds the
    // norm by √3 · limit, so that the norm below cannot overflow.
    if v.x.abs() <= limit && v.y.abs() <= limit && v.z.abs() <= limit {
        let magnitude = v.norm();
        return if magnitude <= limit { Ok(()) } else { Err(Error::BeyondLimit { quantity, magnitude, limit, unit }) };
    }
    if !(v.x.is_finite() && v.y.is_finite() && v.z.is_finite()) {
        return Err(Error::NonFinite { quantity });
    }
    let largest = v.x.abs().max(v.y.abs()).max(v.z.abs());
    Err(Error::BeyondLimit { quantity, magnitude: largest_norm(v, largest), limit, unit })
}

/// Checks that a scalar is finite and no larger than `limit` in magnitude, naming `quantity`.
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::BeyondLimit`].
#[inline]
pub fn check_scalar(value: f64, limit: f64, unit: &'static str, quantity: &'static str) -> Result<()> {
    if value.abs() <= limit {
        return Ok(());
    }
    if !value.is_finite() {
        return Err(Error::NonFinite { quantity });
    }
    Err(Error::BeyondLimit { quantity, magnitude: value.abs(), limit, unit })
}

/// The norm of a finite vector whose largest component is `largest`, without overflow.
fn largest_norm(v: &Vector3<f64>, largest: f64) -> f64 {
    if largest == 0.0 {
        return 0.0;
    }
    ((v / largest).norm() * largest).min(f64::MAX)
}

/// Whether every component of `v` lies within `limit` in magnitude (false for NaN): the
/// branch-free acceptance test of the batch loops, which call [`check_vector`] only to name a
/// rejected element.
#[must_use]
#[inline(always)]
pub fn within(v: &Vector3<f64>, limit: f64) -> bool {
    (v.x.abs() <= limit) & (v.y.abs() <= limit) & (v.z.abs() <= limit)
}
