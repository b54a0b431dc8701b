//! Normal gravity of the reference ellipsoid and the J₂ gravitation field.
//!
//! Words, as used throughout rotaframe:
//!
//! * **gravitation**: the attraction of the Earth's mass alone, `−∇V` (what a body in free fall
//!   accelerates at relative to inertial space);
//! * **centrifugal**: `−ω × (ω × r)`, present only in the rotating (Earth-fixed) frame;
//! * **gravity** = gravitation + centrifugal: what a plumb line and a gravimeter at rest on the
//!   Earth respond to. A stationary accelerometer reads **specific force** `f = −g`.
//!
//! # Normal gravity (on and above the ellipsoid)
//!
//! Somigliana's closed formula on the ellipsoid (NIMA TR8350.2, eq. 4-1), and the second-order
//! expansion in ellipsoidal height above it (TR8350.2, eq. 4-3):
//!
//! ```text
//! γ(φ)    = γe (1 + k sin²φ) / √(1 − e² sin²φ)
//! γ(φ, h) = γ(φ) [1 − (2/a)(1 + f + m − 2f sin²φ) h + (3/a²) h²]
//! ```
//!
//! The height expansion is meant for the lower atmosphere; its truncation error grows like
//! `(h/a)³` (about 1e-6 of γ at 40 km, 2e-4 at 400 km): above a few tens of kilometres use
//! [`gravity_ecef`]. [`gravity_ned`] points normal gravity along the ellipsoidal normal, down:
//! `(0, 0, γ(φ, h))`. Above the ellipsoid the true normal-gravity vector also has a small north
//! component (about −8e-9·h·sin 2φ m/s², 8e-5 m/s² at 10 km) which this plumb-line model
//! leaves out; the J₂ model below contains it.
//!
//! # J₂ gravitation (anywhere outside the Earth)
//!
//! The gravitational potential truncated after the second zonal harmonic,
//! `V = (GM/r) [1 − J₂ (a/r)² P₂(z/r)]`, has the gradient (resolved in ECEF, `r = |r|`)
//!
//! ```text
//! γ_x = −(GM/r³) x [1 + (3/2) J₂ (a/r)² (1 − 5 z²/r²)]
//! γ_y = −(GM/r³) y [1 + (3/2) J₂ (a/r)² (1 − 5 z²/r²)]
//! γ_z = −(GM/r³) z [1 + (3/2) J₂ (a/r)² (3 − 5 z²/r²)]
//! ```
//!
//! (Groves 2013, ch. 2; D. A. Vallado, *Fundamentals of Astrodynamics and Applications*, ch. 8.)
//! [`gravity_ecef`] adds the centrifugal term. On the WGS 84 ellipsoid it agrees with normal
//! gravity to 1.2e-4 m/s² (12 mGal) in magnitude and 6.4 µrad in direction, the effect of the
//! higher zonal harmonics (J₄ and up) of the normal field that the J₂ truncation drops; the
//! tests measure these figures.

use nalgebra::Vector3;

use super::geodetic::check_latitude;
use super::model::EarthModel;
use crate::apparent::{FrameDynamics, apparent_terms};
use crate::error::{Error, Result, ensure_finite1, ensure_finite3};
use crate::math;

/// Normal gravity on the ellipsoid at geodetic latitude `latitude` (rad), by Somigliana's
/// formula (m/s²).
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::OutOfRange`] for `latitude`.
///
/// # Example
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{normal_gravity, WGS84};
/// // NIMA TR8350.2 Table 3.4: 9.7803253359 m/s² at the equator.
/// assert_relative_eq!(normal_gravity(&WGS84, 0.0).unwrap(), 9.7803253359, max_relative = 1e-12);
/// ```
pub fn normal_gravity(model: &EarthModel, latitude: f64) -> Result<f64> {
    check_latitude(latitude, "latitude")?;
    let s = math::sin(latitude);
    Ok(somigliana(model, s * s))
}

#[inline]
fn somigliana(model: &EarthModel, sin2: f64) -> f64 {
    model.gamma_equator() * (1.0 + model.somigliana_k() * sin2) / math::sqrt(1.0 - model.eccentricity_squared() * sin2)
}

/// Normal gravity at geodetic latitude `latitude` (rad) and ellipsoidal height `height` (m),
/// by the second-order height expansion of NIMA TR8350.2 (m/s²).
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::OutOfRange`] naming the argument.
///
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{normal_gravity_at_height, WGS84};
/// let g = normal_gravity_at_height(&WGS84, 45f64.to_radians(), 1000.0).unwrap();
/// assert_relative_eq!(g, 9.8031129436, max_relative = 1e-10);
/// ```
pub fn normal_gravity_at_height(model: &EarthModel, latitude: f64, height: f64) -> Result<f64> {
    check_latitude(latitude, "latitude")?;
    ensure_finite1(height, "height")?;
    let s = math::sin(latitude);
    Ok(normal_gravity_at_height_unchecked(model, s * s, height))
}

#[inline]
pub(crate) fn normal_gravity_at_height_unchecked(model: &EarthModel, sin2: f64, height: f64) -> f64 {
    let a = model.semi_major_axis();
    let f = model.flattening();
    let linear = 2.0 / a * (1.0 + f + model.gravity_ratio_m() - 2.0 * f * sin2);
    somigliana(model, sin2) * (1.0 - linear * height + 3.0 / (a * a) * height * height)
}

/// The plumb-line (normal) gravity vector resolved in NED, `(0, 0, γ(φ, h))` (m/s²); see the
/// [module documentation](self) for what it leaves out.
///
/// # Errors
/// As [`normal_gravity_at_height`].
pub fn gravity_ned(model: &EarthModel, latitude: f64, height: f64) -> Result<Vector3<f64>> {
    Ok(Vector3::new(0.0, 0.0, normal_gravity_at_height(model, latitude, height)?))
}

/// Radius inside which the J₂ field is refused: it describes the field outside the Earth's
/// mass only, and the formula is singular at the centre. Half the semi-minor axis keeps the
/// whole of the physically meaningful region (and far below it) open.
fn check_outside_core(model: &EarthModel, position_ecef: &Vector3<f64>) -> Result<()> {
    ensure_finite3(position_ecef, "position_ecef")?;
    let distance = position_ecef.norm();
    let limit = 0.5 * model.semi_minor_axis();
    if distance < limit { Err(Error::NearEarthCentre { quantity: "position_ecef", distance, limit }) } else { Ok(()) }
}

/// The J₂ gravitation vector (no centrifugal part) at an ECEF position (m), resolved in ECEF
/// (m/s²). Because the field is symmetric about the z axis, the same formula gives the field
/// resolved in [`Eci`](crate::frames::Eci) at an ECI position.
///
/// # Errors
/// [`Error::NonFinite`], or [`Error::NearEarthCentre`] within half the semi-minor axis of the
/// centre.
///
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{gravitation_ecef, WGS84};
/// let g = gravitation_ecef(&WGS84, &nalgebra::Vector3::new(0.0, 0.0, 5.0e7)).unwrap();
/// // Far above the pole: GM/r² (1 − 3 J₂ (a/r)²), pointing down the axis.
/// let r: f64 = 5.0e7;
/// assert_relative_eq!(g.z, -3.986004418e14 / (r * r) * (1.0 - 3.0 * WGS84.j2() * (6378137.0 / r).powi(2)), max_relative = 1e-14);
/// ```
pub fn gravitation_ecef(model: &EarthModel, position_ecef: &Vector3<f64>) -> Result<Vector3<f64>> {
    check_outside_core(model, position_ecef)?;
    Ok(gravitation_unchecked(model, position_ecef))
}

#[inline]
pub(crate) fn gravitation_unchecked(model: &EarthModel, r: &Vector3<f64>) -> Vector3<f64> {
    let r2 = r.norm_squared();
    let rn = math::sqrt(r2);
    let a = model.semi_major_axis();
    let k = 1.5 * model.j2() * a * a / r2;
    let z2 = 5.0 * r.z * r.z / r2;
    let scale = -model.gm() / (r2 * rn);
    Vector3::new(scale * r.x * (1.0 + k * (1.0 - z2)), scale * r.y * (1.0 + k * (1.0 - z2)), scale * r.z * (1.0 + k * (3.0 - z2)))
}

/// The centrifugal acceleration `−ω × (ω × r)` of a point fixed in ECEF, resolved in ECEF
/// (m/s²), computed by [`apparent_terms`] with the Earth's rotation.
#[inline]
pub(crate) fn centrifugal_unchecked(model: &EarthModel, r: &Vector3<f64>) -> Vector3<f64> {
    let earth = FrameDynamics {
        angular_velocity: Vector3::new(0.0, 0.0, model.rotation_rate()),
        angular_acceleration: Vector3::zeros(),
        origin_acceleration: Vector3::zeros(),
    };
    apparent_terms(&earth, r, &Vector3::zeros()).centrifugal
}

/// Gravity (J₂ gravitation plus the centrifugal acceleration of the rotating Earth) at an ECEF
/// position (m), resolved in ECEF (m/s²): what a plumb line at that point responds to.
///
/// # Errors
/// As [`gravitation_ecef`].
///
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{gravity_ecef, WGS84};
/// let g = gravity_ecef(&WGS84, &nalgebra::Vector3::new(6378137.0, 0.0, 0.0)).unwrap();
/// // Within 5e-5 m/s² of normal gravity at the equator (TR8350.2: 9.7803253359 m/s²).
/// assert!((g.norm() - 9.7803253359).abs() < 5e-5);
/// ```
pub fn gravity_ecef(model: &EarthModel, position_ecef: &Vector3<f64>) -> Result<Vector3<f64>> {
    check_outside_core(model, position_ecef)?;
    Ok(gravitation_unchecked(model, position_ecef) + centrifugal_unchecked(model, position_ecef))
}
