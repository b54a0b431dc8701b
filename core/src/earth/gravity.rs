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
//!
//! # The Schuler period
//!
//! A level platform (or a navigation error) carried over the Earth oscillates about the local
//! vertical like a pendulum whose length is the Earth's radius (M. Schuler, *Physikalische
//! Zeitschrift* 24, 1923; D. H. Titterton and J. L. Weston, *Strapdown Inertial Navigation
//! Technology*, 2nd ed., §12.3, from memory of the section):
//!
//! ```text
//! T_S = 2π √(R / γ(φ, h)),   R = √(M N) + h
//! ```
//!
//! with `M`, `N` the meridian and prime-vertical radii of curvature (the Gaussian mean radius)
//! and `γ` normal gravity: about 84.5 min at 45°. [`schuler_period`].

use nalgebra::Vector3;

use super::geodetic::{Geodetic, check_latitude, ecef_to_geodetic, geodetic_to_ecef};
use super::local::ned_from_ecef;
use super::model::EarthModel;
use crate::apparent::{FrameDynamics, apparent_terms};
use crate::error::Result;
use crate::limits;
use crate::math;

/// Normal gravity on the ellipsoid at geodetic latitude `latitude` (rad), by Somigliana's
/// formula (m/s²).
///
/// # Errors
/// [`Error::NonFinite`](crate::Error::NonFinite) or [`Error::OutOfRange`](crate::Error::OutOfRange) for `latitude`.
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

#[inline(always)]
fn somigliana(model: &EarthModel, sin2: f64) -> f64 {
    model.gamma_equator() * (1.0 + model.somigliana_k() * sin2) / math::sqrt(1.0 - model.eccentricity_squared() * sin2)
}

/// Normal gravity at geodetic latitude `latitude` (rad) and ellipsoidal height `height` (m),
/// by the second-order height expansion of NIMA TR8350.2 (m/s²).
///
/// # Errors
/// [`Error::NonFinite`](crate::Error::NonFinite) or [`Error::OutOfRange`](crate::Error::OutOfRange) naming the argument.
///
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{normal_gravity_at_height, WGS84};
/// let g = normal_gravity_at_height(&WGS84, 45f64.to_radians(), 1000.0).unwrap();
/// assert_relative_eq!(g, 9.8031129436, max_relative = 1e-10);
/// ```
pub fn normal_gravity_at_height(model: &EarthModel, latitude: f64, height: f64) -> Result<f64> {
    check_latitude(latitude, "latitude")?;
    limits::check_height(model, height, "height")?;
    let s = math::sin(latitude);
    Ok(normal_gravity_at_height_unchecked(model, s * s, height))
}

#[inline(always)]
pub(crate) fn normal_gravity_at_height_unchecked(model: &EarthModel, sin2: f64, height: f64) -> f64 {
    let a = model.semi_major_axis();
    let f = model.flattening();
    let linear = 2.0 / a * (1.0 + f + model.gravity_ratio_m() - 2.0 * f * sin2);
    somigliana(model, sin2) * (1.0 - linear * height + 3.0 / (a * a) * height * height)
}

/// The Schuler period (s) at geodetic latitude `latitude` (rad) and ellipsoidal height
/// `height` (m): `2π √((√(M N) + h) / γ(φ, h))` (see the [module documentation](self)).
///
/// # Errors
/// As [`normal_gravity_at_height`].
///
/// ```
/// use rotaframe::earth::{schuler_period, WGS84};
/// let t = schuler_period(&WGS84, 45f64.to_radians(), 0.0).unwrap();
/// assert!((t / 60.0 - 84.46).abs() < 0.01); // minutes
/// ```
pub fn schuler_period(model: &EarthModel, latitude: f64, height: f64) -> Result<f64> {
    let g = normal_gravity_at_height(model, latitude, height)?;
    let radii = super::local::radii_of_curvature(model, latitude)?;
    Ok(2.0 * core::f64::consts::PI * math::sqrt((math::sqrt(radii.meridian * radii.prime_vertical) + height) / g))
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
    super::geodetic::check_geocentric(position_ecef, 0.5 * model.semi_minor_axis(), "position_ecef")
}

/// The Earth's point-mass gravitation `−GM x/|x|³` at a position `x` relative to its centre
/// (m; in ECEF or ECI axes, resolved in the same axes; m/s²). Newton's law of gravitation;
/// [`gravitation_ecef`] adds the J₂ term.
///
/// # Errors
/// As [`gravitation_ecef`] (within half the semi-minor axis of the centre, beyond
/// [`MAX_GEOCENTRIC_DISTANCE`](crate::limits::MAX_GEOCENTRIC_DISTANCE)), naming `position`.
///
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{point_mass_gravitation, WGS84};
/// let g = point_mass_gravitation(&WGS84, &nalgebra::Vector3::new(7.0e6, 0.0, 0.0)).unwrap();
/// assert_relative_eq!(g.x, -3.986004418e14 / 4.9e13, max_relative = 1e-15);
/// ```
pub fn point_mass_gravitation(model: &EarthModel, position: &Vector3<f64>) -> Result<Vector3<f64>> {
    check_outside_core(model, position).map_err(|e| e.with_quantity("position"))?;
    let r2 = position.norm_squared();
    Ok(position * (-model.gm() / (r2 * math::sqrt(r2))))
}

/// The J₂ gravitation vector (no centrifugal part) at an ECEF position (m), resolved in ECEF
/// (m/s²). Because the field is symmetric about the z axis, the same formula gives the field
/// resolved in [`Eci`](crate::frames::Eci) at an ECI position.
///
/// # Errors
/// [`Error::NonFinite`](crate::Error::NonFinite), or [`Error::NearEarthCentre`](crate::Error::NearEarthCentre) within half the semi-minor axis of the
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

#[inline(always)]
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
#[inline(always)]
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

/// Which gravity field a navigation computation uses.
///
/// * [`Normal`](GravityModel::Normal): normal gravity with the second-order height correction
///   ([`normal_gravity_at_height`]) along the ellipsoidal normal, i.e. the plumb-line model of
///   [`gravity_ned`]. The default, and what both strapdown mechanizations use unless told
///   otherwise, so that they agree with each other. Meant for heights below a few tens of
///   kilometres.
/// * [`J2`](GravityModel::J2): J₂ gravitation plus the centrifugal term ([`gravity_ecef`]),
///   valid from the ground to orbit; it carries the small north component of the field that the
///   normal model leaves out.
///
/// Both fields are symmetric about the Earth's polar axis, so [`gravitation`](Self::gravitation)
/// evaluated at an ECI position gives the field resolved in ECI, whatever the Earth's rotation
/// angle at that instant.
///
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{gravity::GravityModel, Geodetic, WGS84};
/// let here = Geodetic::from_degrees(45.0, 10.0, 500.0);
/// let normal = GravityModel::Normal.gravity_ned(&WGS84, &here).unwrap();
/// let j2 = GravityModel::J2.gravity_ned(&WGS84, &here).unwrap();
/// // The two models differ by about 1e-4 m/s² near the ellipsoid (see the module docs).
/// assert!((normal - j2).norm() < 2e-4);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[repr(u32)]
pub enum GravityModel {
    /// Normal gravity with the second-order height correction, along the ellipsoidal normal.
    #[default]
    Normal = 0,
    /// J₂ gravitation plus the centrifugal acceleration of the rotating Earth.
    J2 = 1,
}

impl GravityModel {
    /// Gravity (gravitation plus centrifugal) resolved in NED at a geodetic position (m/s²).
    ///
    /// # Errors
    /// As [`Geodetic::validate_for`]; for [`J2`](Self::J2) also as [`gravity_ecef`].
    pub fn gravity_ned(self, model: &EarthModel, position: &Geodetic) -> Result<Vector3<f64>> {
        position.validate_for(model)?;
        match self {
            GravityModel::Normal => {
                let s = math::sin(position.latitude);
                Ok(Vector3::new(0.0, 0.0, normal_gravity_at_height_unchecked(model, s * s, position.height)))
            }
            GravityModel::J2 => {
                let r = geodetic_to_ecef(model, position)?;
                let g = gravity_ecef(model, &r)?;
                Ok(ned_from_ecef(position.latitude, position.longitude)? * g)
            }
        }
    }

    /// Gravity (gravitation plus centrifugal) resolved in ECEF at an ECEF position (m, m/s²).
    ///
    /// For [`Normal`](Self::Normal) the position is first converted to geodetic coordinates.
    ///
    /// # Errors
    /// [`Error::NonFinite`](crate::Error::NonFinite) or [`Error::NearEarthCentre`](crate::Error::NearEarthCentre) naming `position_ecef`.
    ///
    /// ```
    /// use approx::assert_relative_eq;
    /// use rotaframe::earth::{gravity::GravityModel, WGS84};
    /// let g = GravityModel::Normal.gravity_ecef(&WGS84, &nalgebra::Vector3::new(6378137.0, 0.0, 0.0)).unwrap();
    /// // On the equator: straight down (−x), TR8350.2 equatorial normal gravity.
    /// assert_relative_eq!(g, nalgebra::Vector3::new(-9.7803253359, 0.0, 0.0), max_relative = 1e-10);
    /// ```
    pub fn gravity_ecef(self, model: &EarthModel, position_ecef: &Vector3<f64>) -> Result<Vector3<f64>> {
        match self {
            GravityModel::Normal => {
                check_outside_core(model, position_ecef)?;
                let p = ecef_to_geodetic(model, position_ecef).map_err(|e| e.with_quantity("position_ecef"))?;
                Ok(normal_gravity_ecef_at(model, position_ecef, &p))
            }
            GravityModel::J2 => gravity_ecef(model, position_ecef),
        }
    }

    /// Gravitation (gravity minus the centrifugal term) at a position given in ECEF or in ECI
    /// coordinates, resolved in the same axes (m, m/s²). Both fields are symmetric about the
    /// polar axis, which ECI and ECEF share, so one formula serves both.
    ///
    /// # Errors
    /// As [`gravity_ecef`](Self::gravity_ecef).
    ///
    /// ```
    /// use approx::assert_relative_eq;
    /// use rotaframe::earth::{gravity::GravityModel, gravitation_ecef, WGS84};
    /// let r = nalgebra::Vector3::new(4.0e6, 3.0e6, 3.5e6);
    /// assert_relative_eq!(GravityModel::J2.gravitation(&WGS84, &r).unwrap(), gravitation_ecef(&WGS84, &r).unwrap());
    /// ```
    pub fn gravitation(self, model: &EarthModel, position: &Vector3<f64>) -> Result<Vector3<f64>> {
        match self {
            GravityModel::Normal => Ok(self.gravity_ecef(model, position).map_err(|e| e.with_quantity("position"))?
                - centrifugal_unchecked(model, position)),
            GravityModel::J2 => gravitation_ecef(model, position).map_err(|e| e.with_quantity("position")),
        }
    }
}

/// Normal gravity resolved in ECEF at an ECEF point whose geodetic coordinates are known:
/// `−γ(φ, h)` times the upward ellipsoidal normal `(cos φ x/p, cos φ y/p, sin φ)`, with
/// `p = √(x² + y²)` (the normal's horizontal direction comes from the point itself, so no
/// longitude is needed and the poles are regular).
#[inline(always)]
pub(crate) fn normal_gravity_ecef_at(model: &EarthModel, position_ecef: &Vector3<f64>, geodetic: &Geodetic) -> Vector3<f64> {
    let (s, c) = math::sin_cos(geodetic.latitude);
    let gamma = normal_gravity_at_height_unchecked(model, s * s, geodetic.height);
    let p = math::hypot(position_ecef.x, position_ecef.y);
    let (ux, uy) = if p > 0.0 { (c * position_ecef.x / p, c * position_ecef.y / p) } else { (0.0, 0.0) };
    -gamma * Vector3::new(ux, uy, s)
}
