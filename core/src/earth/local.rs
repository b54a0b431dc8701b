//! Local-level frames (north-east-down and east-north-up), radii of curvature, Earth rate and
//! transport rate, and the motion of a vehicle-carried NED frame relative to ECEF.
//!
//! # Rotations
//!
//! At geodetic latitude φ and longitude λ the NED axes, resolved in ECEF, are
//!
//! ```text
//! north = (−sin φ cos λ, −sin φ sin λ,  cos φ)
//! east  = (−sin λ,        cos λ,        0    )
//! down  = (−cos φ cos λ, −cos φ sin λ, −sin φ)
//! ```
//!
//! and the rows of `C_e^n` ([`ned_from_ecef`]), so that `v_ned = C_e^n v_ecef`
//! (Groves 2013, ch. 2). ENU is the same triad reordered: east, north, up.
//! These rotations are defined everywhere, the poles included: there "north" is the direction
//! of the meridian given by the longitude you pass.
//!
//! # Radii, Earth rate, transport rate
//!
//! ```text
//! M = a (1 − e²) / (1 − e² sin²φ)^(3/2)       meridian radius of curvature
//! N = a / (1 − e² sin²φ)^(1/2)                prime-vertical radius of curvature
//! ω_ie^n = Ω (cos φ, 0, −sin φ)               Earth rate resolved in NED
//! ω_en^n = ( v_E/(N+h), −v_N/(M+h), −v_E tan φ/(N+h) )     transport rate
//! ```
//!
//! The transport rate is the angular velocity of the NED frame relative to the Earth as it is
//! carried over the curved surface at NED velocity `v` (relative to the Earth) and height `h`.
//!
//! # Vehicle-carried NED frame
//!
//! [`local_level_motion`] gives NED relative to ECEF: origin at the vehicle, rotation `C_n^e`,
//! velocity `C_n^e v`, acceleration `C_n^e a`, angular velocity `C_n^e ω_en^n` and angular
//! acceleration `C_n^e dω_en^n/dt`, where `a` is the vehicle's acceleration **relative to the
//! Earth** (the second derivative of its ECEF position) resolved in NED. It is *not* the rate
//! of change of the NED velocity components; the two are related by `dv/dt = a − ω_en^n × v`.
//! With `φ̇ = v_N/(M+h)`, `ḣ = −v_D`, `dN/dφ = N e² sin φ cos φ/(1 − e² sin²φ)` and
//! `dM/dφ = 3 M e² sin φ cos φ/(1 − e² sin²φ)`:
//!
//! ```text
//! d/dt ω_N =  v̇_E/(N+h) − v_E (Ṅ + ḣ)/(N+h)²
//! d/dt ω_E = −v̇_N/(M+h) + v_N (Ṁ + ḣ)/(M+h)²
//! d/dt ω_D = −(v̇_E tan φ + v_E φ̇ / cos²φ)/(N+h) + v_E tan φ (Ṅ + ḣ)/(N+h)²
//! ```
//!
//! # The poles
//!
//! North and east are undefined on the polar axis and the transport rate's `tan φ` and the
//! longitude rate `v_E/((N+h) cos φ)` grow without bound near it. Functions that need them
//! return [`Error::NearPole`] when `|φ| > π/2 −` [`POLE_EXCLUSION`] (within about 6.4 m of a
//! pole, measured along the meridian). Work near the poles in ECEF instead.

use nalgebra::{Matrix3, UnitQuaternion, Vector3};

use super::geodetic::{Geodetic, check_latitude, geodetic_to_ecef};
use super::model::EarthModel;
use crate::error::{Error, Result, ensure_finite1};
use crate::frames::{Ecef, Enu, Ned};
use crate::limits;
use crate::math;
use crate::motion::{FrameMotion, MotionParts};

/// Colatitude (rad) inside which NED-dependent rates are refused: 1e-6 rad, about 6.4 m from
/// the pole along the meridian.
pub const POLE_EXCLUSION: f64 = 1.0e-6;

/// The meridian (north-south) and prime-vertical (east-west) radii of curvature (m).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RadiiOfCurvature {
    /// Meridian radius of curvature `M` (m).
    pub meridian: f64,
    /// Prime-vertical (transverse) radius of curvature `N` (m).
    pub prime_vertical: f64,
}

/// Checks a latitude for NED-dependent rates: in range and not within [`POLE_EXCLUSION`] of a
/// pole.
pub(crate) fn check_away_from_pole(latitude: f64, quantity: &'static str) -> Result<()> {
    use core::f64::consts::FRAC_PI_2;
    check_latitude(latitude, quantity)?;
    if latitude.abs() > FRAC_PI_2 - POLE_EXCLUSION {
        Err(Error::NearPole { quantity, value: latitude, limit: POLE_EXCLUSION })
    } else {
        Ok(())
    }
}

/// `C_e^n`: the rotation matrix that maps ECEF coordinates to NED coordinates at the given
/// latitude and longitude (rad): `v_ned = C v_ecef`.
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::OutOfRange`] for `latitude`, [`Error::NonFinite`] for
/// `longitude`.
///
/// # Example
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::Vector3;
/// use rotaframe::earth::ned_from_ecef;
/// // On the equator at the reference meridian, ECEF +z is north and ECEF +x is up.
/// let c = ned_from_ecef(0.0, 0.0).unwrap();
/// assert_relative_eq!(c * Vector3::z(), Vector3::new(1.0, 0.0, 0.0));
/// assert_relative_eq!(c * Vector3::x(), Vector3::new(0.0, 0.0, -1.0));
/// ```
pub fn ned_from_ecef(latitude: f64, longitude: f64) -> Result<Matrix3<f64>> {
    check_latitude(latitude, "latitude")?;
    ensure_finite1(longitude, "longitude")?;
    let (sl, cl) = math::sin_cos(latitude);
    let (so, co) = math::sin_cos(longitude);
    Ok(Matrix3::new(-sl * co, -sl * so, cl, -so, co, 0.0, -cl * co, -cl * so, -sl))
}

/// `C_e^ENU`: the rotation matrix that maps ECEF coordinates to east-north-up coordinates.
///
/// # Errors
/// As [`ned_from_ecef`].
///
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{enu_from_ecef, ned_from_ecef};
/// let (ned, enu) = (ned_from_ecef(0.7, -1.2).unwrap(), enu_from_ecef(0.7, -1.2).unwrap());
/// assert_relative_eq!(enu.row(0).clone_owned(), ned.row(1).clone_owned());   // east
/// assert_relative_eq!(enu.row(2).clone_owned(), -ned.row(2).clone_owned());  // up = −down
/// ```
pub fn enu_from_ecef(latitude: f64, longitude: f64) -> Result<Matrix3<f64>> {
    Ok(ENU_FROM_NED * ned_from_ecef(latitude, longitude)?)
}

/// The constant rotation mapping NED coordinates to ENU coordinates (its own inverse).
pub const ENU_FROM_NED: Matrix3<f64> = Matrix3::new(0.0, 1.0, 0.0, 1.0, 0.0, 0.0, 0.0, 0.0, -1.0);

/// The unit quaternion of `C_n^e` (NED to ECEF): `q_z(λ) ⊗ q_y(−φ − π/2)`.
///
/// # Errors
/// As [`ned_from_ecef`].
pub fn ecef_from_ned_quaternion(latitude: f64, longitude: f64) -> Result<UnitQuaternion<f64>> {
    check_latitude(latitude, "latitude")?;
    ensure_finite1(longitude, "longitude")?;
    Ok(UnitQuaternion::from_axis_angle(&Vector3::z_axis(), longitude)
        * UnitQuaternion::from_axis_angle(&Vector3::y_axis(), -latitude - core::f64::consts::FRAC_PI_2))
}

/// Meridian and prime-vertical radii of curvature at a geodetic latitude (rad).
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::OutOfRange`] for `latitude`.
///
/// # Example
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{radii_of_curvature, WGS84};
/// let r = radii_of_curvature(&WGS84, std::f64::consts::FRAC_PI_2).unwrap();
/// // At the pole both equal a²/b.
/// assert_relative_eq!(r.meridian, 6378137.0f64.powi(2) / WGS84.semi_minor_axis(), max_relative = 1e-15);
/// assert_relative_eq!(r.prime_vertical, r.meridian, max_relative = 1e-15);
/// ```
pub fn radii_of_curvature(model: &EarthModel, latitude: f64) -> Result<RadiiOfCurvature> {
    check_latitude(latitude, "latitude")?;
    Ok(radii_unchecked(model, math::sin(latitude)))
}

#[inline(always)]
pub(crate) fn radii_unchecked(model: &EarthModel, sin_lat: f64) -> RadiiOfCurvature {
    let w2 = 1.0 - model.eccentricity_squared() * sin_lat * sin_lat;
    let w = math::sqrt(w2);
    let prime_vertical = model.semi_major_axis() / w;
    RadiiOfCurvature { meridian: prime_vertical * (1.0 - model.eccentricity_squared()) / w2, prime_vertical }
}

/// The Earth's angular velocity relative to inertial space, resolved in NED at a latitude (rad):
/// `Ω (cos φ, 0, −sin φ)` (rad/s).
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::OutOfRange`] for `latitude`.
///
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{earth_rate_ned, WGS84};
/// let w = earth_rate_ned(&WGS84, 0.0).unwrap();
/// assert_relative_eq!(w.x, 7.292115e-5);
/// ```
pub fn earth_rate_ned(model: &EarthModel, latitude: f64) -> Result<Vector3<f64>> {
    check_latitude(latitude, "latitude")?;
    let (s, c) = math::sin_cos(latitude);
    Ok(earth_rate_ned_unchecked(model, s, c))
}

#[inline(always)]
pub(crate) fn earth_rate_ned_unchecked(model: &EarthModel, sin_lat: f64, cos_lat: f64) -> Vector3<f64> {
    let w = model.rotation_rate();
    Vector3::new(w * cos_lat, 0.0, -w * sin_lat)
}

/// The transport rate `ω_en^n`: angular velocity of the NED frame relative to the Earth, resolved
/// in NED, for a vehicle at `latitude` (rad) and `height` (m) moving at `velocity_ned`
/// (relative to the Earth, m/s).
///
/// # Errors
/// [`Error::NearPole`] within [`POLE_EXCLUSION`] of a pole; [`Error::NonFinite`] or
/// [`Error::OutOfRange`] for bad arguments.
///
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::Vector3;
/// use rotaframe::earth::{transport_rate_ned, radii_of_curvature, WGS84};
/// // Flying north at 250 m/s turns the NED frame about its east axis, nose down.
/// let rho = transport_rate_ned(&WGS84, 0.6, 10_000.0, &Vector3::new(250.0, 0.0, 0.0)).unwrap();
/// let m = radii_of_curvature(&WGS84, 0.6).unwrap().meridian;
/// assert_relative_eq!(rho, Vector3::new(0.0, -250.0 / (m + 10_000.0), 0.0), max_relative = 1e-15);
/// ```
pub fn transport_rate_ned(model: &EarthModel, latitude: f64, height: f64, velocity_ned: &Vector3<f64>) -> Result<Vector3<f64>> {
    check_away_from_pole(latitude, "latitude")?;
    limits::check_height(model, height, "height")?;
    limits::check_vector(velocity_ned, limits::MAX_VELOCITY, "m/s", "velocity_ned")?;
    let (s, c) = math::sin_cos(latitude);
    Ok(transport_rate_unchecked(&radii_unchecked(model, s), s, c, height, velocity_ned))
}

#[inline(always)]
pub(crate) fn transport_rate_unchecked(
    radii: &RadiiOfCurvature,
    sin_lat: f64,
    cos_lat: f64,
    height: f64,
    v: &Vector3<f64>,
) -> Vector3<f64> {
    let east_radius = radii.prime_vertical + height;
    let north_radius = radii.meridian + height;
    Vector3::new(v.y / east_radius, -v.x / north_radius, -v.y * sin_lat / (cos_lat * east_radius))
}

/// The Coriolis and transport-rate acceleration in the NED velocity equation,
/// `−(2 ω_ie^n + ω_en^n) × v` (m/s²), for a vehicle at `latitude`, `height` moving at
/// `velocity_ned` relative to the Earth. Its down component, negated, is the Eötvös effect.
///
/// # Errors
/// As [`transport_rate_ned`].
pub fn coriolis_ned(model: &EarthModel, latitude: f64, height: f64, velocity_ned: &Vector3<f64>) -> Result<Vector3<f64>> {
    let rho = transport_rate_ned(model, latitude, height, velocity_ned)?;
    let (s, c) = math::sin_cos(latitude);
    Ok(-(2.0 * earth_rate_ned_unchecked(model, s, c) + rho).cross(velocity_ned))
}

/// The motion of a vehicle-carried NED frame relative to ECEF; see the
/// [module documentation](self) for the formulas and the meaning of `acceleration_ned`.
///
/// * `position`: the vehicle's geodetic position (the NED origin);
/// * `velocity_ned`: its velocity relative to the Earth, resolved in NED (m/s);
/// * `acceleration_ned`: its acceleration relative to the Earth, resolved in NED (m/s²).
///
/// # Errors
/// [`Error::NearPole`] within [`POLE_EXCLUSION`] of a pole; [`Error::NonFinite`] or
/// [`Error::OutOfRange`] naming the bad argument.
///
/// # Example
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::Vector3;
/// use rotaframe::earth::{local_level_motion, transport_rate_ned, Geodetic, WGS84};
/// let here = Geodetic::from_degrees(52.0, 4.4, 30.0);
/// let v = Vector3::new(0.0, 20.0, 0.0); // a ship heading east at 20 m/s
/// let ned = local_level_motion(&WGS84, &here, &v, &Vector3::zeros()).unwrap();
/// let rho = transport_rate_ned(&WGS84, here.latitude, here.height, &v).unwrap();
/// assert_relative_eq!(ned.angular_velocity_in_child(), rho, max_relative = 1e-12);
/// ```
pub fn local_level_motion(
    model: &EarthModel,
    position: &Geodetic,
    velocity_ned: &Vector3<f64>,
    acceleration_ned: &Vector3<f64>,
) -> Result<FrameMotion<Ecef, Ned>> {
    position.validate_for(model)?;
    check_away_from_pole(position.latitude, "latitude")?;
    limits::check_vector(velocity_ned, limits::MAX_VELOCITY, "m/s", "velocity_ned")?;
    limits::check_vector(acceleration_ned, limits::MAX_ACCELERATION, "m/s²", "acceleration_ned")?;
    let origin = geodetic_to_ecef(model, position)?;
    let rotation = ecef_from_ned_quaternion(position.latitude, position.longitude)?;
    let (s, c) = math::sin_cos(position.latitude);
    let radii = radii_unchecked(model, s);
    let h = position.height;
    let v = velocity_ned;
    let rho = transport_rate_unchecked(&radii, s, c, h, v);
    // Rate of change of the NED velocity components, and of latitude, height and radii.
    let v_dot = acceleration_ned - rho.cross(v);
    let east_radius = radii.prime_vertical + h;
    let north_radius = radii.meridian + h;
    let lat_rate = v.x / north_radius;
    let h_rate = -v.z;
    let e2 = model.eccentricity_squared();
    let w2 = 1.0 - e2 * s * s;
    let east_radius_rate = radii.prime_vertical * e2 * s * c / w2 * lat_rate + h_rate;
    let north_radius_rate = 3.0 * radii.meridian * e2 * s * c / w2 * lat_rate + h_rate;
    let tan = s / c;
    let rho_dot = Vector3::new(
        v_dot.y / east_radius - v.y * east_radius_rate / (east_radius * east_radius),
        -v_dot.x / north_radius + v.x * north_radius_rate / (north_radius * north_radius),
        -(v_dot.y * tan + v.y * lat_rate / (c * c)) / east_radius + v.y * tan * east_radius_rate / (east_radius * east_radius),
    );
    FrameMotion::from_parts(MotionParts {
        rotation,
        position: origin,
        velocity: rotation * v,
        acceleration: rotation * acceleration_ned,
        angular_velocity: rotation * rho,
        angular_acceleration: rotation * rho_dot,
    })
}

/// The fixed motion of ENU axes relative to NED axes at the same origin, for chaining
/// `ecef → ned → enu`.
///
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::Vector3;
/// use rotaframe::{earth::enu_in_ned, frames::FreeVector};
/// let up_in_enu = FreeVector::new(0.0, 0.0, 1.0);
/// assert_relative_eq!(enu_in_ned().map_vector(&up_in_enu).vector, Vector3::new(0.0, 0.0, -1.0), epsilon = 1e-15);
/// ```
#[must_use]
pub fn enu_in_ned() -> FrameMotion<Ned, Enu> {
    // ENU_FROM_NED is symmetric and orthogonal with determinant +1: it is also NED_FROM_ENU.
    let q = UnitQuaternion::from_rotation_matrix(&nalgebra::Rotation3::from_matrix_unchecked(ENU_FROM_NED));
    FrameMotion::from_parts_unchecked(MotionParts { rotation: q, ..MotionParts::default() })
}
