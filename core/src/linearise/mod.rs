//! Linearisation: the Jacobians of rotaframe's transforms, returned beside their values, and
//! the inertial error-state model ([`inertial`]).
//!
//! # Conventions
//!
//! * A Jacobian `J` of `y = f(x)` has `J[(i, j)] = ∂yᵢ/∂xⱼ`, rows in the order of the output's
//!   components, columns in the order of the arguments as the function takes them.
//! * A **rotation** `R` (mapping child coordinates to parent coordinates) is perturbed on the
//!   parent side by a small-angle vector `δθ` resolved in the parent: `R' = exp([δθ×]) R`
//!   (so `R' x ≈ R x + δθ × R x`). A rotation argument contributes the three columns of `δθ`,
//!   a rotation result the three rows of `δθ`. This is the attitude error of inertial
//!   navigation resolved in the navigation frame (`Ĉ_b^n = (I + [ψ×]) C_b^n`).
//! * A [`FrameMotion`] has 18 parts in this order: `δθ` of its rotation, position, velocity,
//!   acceleration, angular velocity, angular acceleration; a point's state has 9: position,
//!   velocity, acceleration.
//!
//! # Formulas
//!
//! With `[x]` the cross-product matrix of `x` and `ρ = R r`, `ν = R v`, `κ = R a`:
//!
//! ```text
//! geodetic → ECEF   ∂x/∂(φ, λ, h) = C_n^e diag(M + h, (N + h) cos φ, −1)
//! ECEF → geodetic   the inverse: diag(1/(M + h), 1/((N + h) cos φ), −1) C_e^n
//! local level       δθ^e = −ê δφ + ẑ δλ          (NED or ENU axes, ê the east unit vector)
//! map_point         P = p + ρ,  V = v₀ + ν + ω × ρ,  A = a₀ + κ + 2 ω × ν + α × ρ + ω × (ω × ρ)
//!                   ∂(R x)/∂δθ = −[R x],   ∂(ω × (ω × ρ))/∂ω = (ω·ρ) I + ω ρᵀ − 2 ρ ωᵀ
//! Euler (ZYX)       δθ = Rz Ry x̂ δroll + Rz ŷ δpitch + ẑ δyaw
//! rotation vector   δθ = J_l(φ) δφ,  J_l = I + (1 − cos θ)/θ² [φ] + (θ − sin θ)/θ³ [φ]²
//! J₂ gravitation    gᵢ = −μ xᵢ (r⁻³ + K cᵢ r⁻⁵ − 5 K z² r⁻⁷),  K = 3/2 J₂ a²,  c = (1, 1, 3)
//! normal gravity    γ = S(sin²φ) H(sin²φ, h) (Somigliana and the TR8350.2 height series)
//! ```
//!
//! (geodetic Jacobian and local-level rates: Groves, *Principles of GNSS, Inertial, and
//! Multisensor Integrated Navigation Systems*, 2nd ed., §2.4 and §5.4; the left Jacobian of
//! the rotation group: T. D. Barfoot, *State Estimation for Robotics*, 2017, §7.1.5; the rest
//! is the chain rule applied to the formulas of the modules named.)
//!
//! # Singular points
//!
//! * ECEF → geodetic: the longitude row is infinite at the poles: within
//!   [`POLE_EXCLUSION`](crate::earth::POLE_EXCLUSION) the call returns [`Error::NearPole`].
//! * Euler angles from a rotation: the angle rates are infinite at ±90° pitch (gimbal lock):
//!   within [`GIMBAL_LOCK_MARGIN`] of it the call returns [`Error::Invalid`] naming the
//!   rotation.
//! * Rotation vector from a rotation: the logarithm is discontinuous at a half turn: within
//!   [`HALF_TURN_MARGIN`] of π the call returns [`Error::Invalid`].
//!
//! Every Jacobian is checked against central finite differences of the function itself by
//! property tests over the whole domain (`tests/tests/jacobians.rs`).

pub mod aiding;
pub mod inertial;

use nalgebra::{Matrix3, Matrix3x2, SMatrix, UnitQuaternion, Vector3};

use crate::apparent::{ApparentAcceleration, FrameDynamics, apparent_terms};
use crate::earth::{self, EarthModel, Geodetic};
use crate::error::{Error, Result};
use crate::frames::{Frame, PointKinematics};
use crate::math;
use crate::motion::FrameMotion;
use crate::rotation::EulerZyx;

/// A 9×9 Jacobian (a point's state with respect to a point's state).
pub type Matrix9 = SMatrix<f64, 9, 9>;
/// A 9×18 Jacobian (a point's state with respect to a motion's parts).
pub type Matrix9x18 = SMatrix<f64, 9, 18>;
/// An 18×18 Jacobian (a motion's parts with respect to a motion's parts).
pub type Matrix18 = SMatrix<f64, 18, 18>;

/// How close to ±90° pitch (rad) Euler angles' Jacobian is refused: within it the entries
/// exceed 1e9 and the derivative of yaw and roll is meaningless.
pub const GIMBAL_LOCK_MARGIN: f64 = 1e-9;

/// How close to a half turn (rad) the rotation vector's Jacobian is refused.
pub const HALF_TURN_MARGIN: f64 = 1e-6;

/// The cross-product matrix `[x]`: `[x] y = x × y`.
#[must_use]
#[inline]
pub fn skew(x: &Vector3<f64>) -> Matrix3<f64> {
    Matrix3::new(0.0, -x.z, x.y, x.z, 0.0, -x.x, -x.y, x.x, 0.0)
}

/// `∂(ω × (ω × ρ))/∂ω = (ω·ρ) I + ω ρᵀ − 2 ρ ωᵀ`.
#[inline]
fn double_cross_by_rate(w: &Vector3<f64>, rho: &Vector3<f64>) -> Matrix3<f64> {
    Matrix3::identity() * w.dot(rho) + w * rho.transpose() - 2.0 * rho * w.transpose()
}

/// ECEF position of a geodetic point and its Jacobian with respect to (latitude, longitude,
/// height) (m per rad, m per rad, m/m).
///
/// # Errors
/// As [`earth::geodetic_to_ecef`].
///
/// ```
/// use rotaframe::earth::{Geodetic, WGS84};
/// use rotaframe::linearise::geodetic_to_ecef_jacobian;
/// let (x, j) = geodetic_to_ecef_jacobian(&WGS84, &Geodetic::new(0.0, 0.0, 0.0)).unwrap();
/// assert_eq!(x.x, 6378137.0);
/// assert!((j[(2, 0)] - 6335439.327).abs() < 1e-3); // ∂z/∂φ = M at the equator
/// assert_eq!(j[(0, 2)], 1.0); // up is +x there
/// ```
pub fn geodetic_to_ecef_jacobian(model: &EarthModel, position: &Geodetic) -> Result<(Vector3<f64>, Matrix3<f64>)> {
    let x = earth::geodetic_to_ecef(model, position)?;
    let (s, c) = math::sin_cos(position.latitude);
    let radii = earth::local::radii_unchecked(model, s);
    let c_ne = earth::ned_from_ecef(position.latitude, position.longitude)?.transpose();
    let scale = Matrix3::from_diagonal(&Vector3::new(
        radii.meridian + position.height,
        (radii.prime_vertical + position.height) * c,
        -1.0,
    ));
    Ok((x, c_ne * scale))
}

/// Geodetic position of an ECEF point and its Jacobian: rows latitude, longitude (rad per m)
/// and height (m/m), columns x, y, z.
///
/// # Errors
/// As [`earth::ecef_to_geodetic`]; [`Error::NearPole`] within
/// [`POLE_EXCLUSION`](crate::earth::POLE_EXCLUSION) of a pole, where the longitude row is
/// infinite.
///
/// ```
/// use rotaframe::earth::{Geodetic, WGS84};
/// use rotaframe::linearise::{ecef_to_geodetic_jacobian, geodetic_to_ecef_jacobian};
/// let (x, forward) = geodetic_to_ecef_jacobian(&WGS84, &Geodetic::new(0.7, 0.2, 100.0)).unwrap();
/// let (_, inverse) = ecef_to_geodetic_jacobian(&WGS84, &x).unwrap();
/// assert!(((inverse * forward) - nalgebra::Matrix3::identity()).amax() < 1e-9);
/// ```
pub fn ecef_to_geodetic_jacobian(model: &EarthModel, position_ecef: &Vector3<f64>) -> Result<(Geodetic, Matrix3<f64>)> {
    let g = earth::ecef_to_geodetic(model, position_ecef)?;
    earth::local::check_away_from_pole(g.latitude, "position_ecef")?;
    let (s, c) = math::sin_cos(g.latitude);
    let radii = earth::local::radii_unchecked(model, s);
    let c_en = earth::ned_from_ecef(g.latitude, g.longitude)?;
    let scale = Matrix3::from_diagonal(&Vector3::new(
        1.0 / (radii.meridian + g.height),
        1.0 / ((radii.prime_vertical + g.height) * c),
        -1.0,
    ));
    Ok((g, scale * c_en))
}

/// The rotation perturbation of a local-level frame (NED or ENU) at (latitude, longitude)
/// relative to ECEF per unit change of latitude and longitude: columns `∂δθ/∂φ`, `∂δθ/∂λ`
/// resolved in ECEF (`−ê` and `ẑ`; the same for both axes conventions, which turn together).
/// For the rotation `C_e^l` (ECEF to local level) the perturbation resolved in the local axes
/// is `−C_e^l` times this.
///
/// # Errors
/// As [`earth::ned_from_ecef`].
pub fn local_level_rotation_jacobian(latitude: f64, longitude: f64) -> Result<Matrix3x2<f64>> {
    let c_en = earth::ned_from_ecef(latitude, longitude)?;
    let east = c_en.row(1).transpose();
    Ok(Matrix3x2::from_columns(&[-east, Vector3::z()]))
}

/// The point's state in the parent frame and the Jacobians of [`FrameMotion::map_point`]:
/// with respect to the point's state (9×9) and to the motion's 18 parts (9×18); see the
/// [module conventions](self).
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::frames::{AnyFrame, PointKinematics};
/// use rotaframe::linearise::map_point_jacobian;
/// use rotaframe::motion::FrameMotion;
/// let spin = FrameMotion::<AnyFrame, AnyFrame>::about_axis(Vector3::z(), 0.0, 2.0, 0.0).unwrap();
/// let point = PointKinematics::new(Vector3::new(1.0, 0.0, 0.0), Vector3::zeros(), Vector3::zeros());
/// let (mapped, j_point, _) = map_point_jacobian(&spin, &point);
/// assert_eq!(mapped.velocity, Vector3::new(0.0, 2.0, 0.0)); // ω × r
/// assert_eq!(j_point[(4, 0)], 2.0);                        // ∂v_y/∂r_x = ω
/// ```
#[must_use]
pub fn map_point_jacobian<P: Frame, C: Frame>(
    motion: &FrameMotion<P, C>,
    point: &PointKinematics<C>,
) -> (PointKinematics<P>, Matrix9, Matrix9x18) {
    let mapped = motion.map_point(point);
    let r = motion.rotation().to_rotation_matrix().into_inner();
    let (w, al) = (motion.angular_velocity(), motion.angular_acceleration());
    let (rho, nu, kappa) = (r * point.position, r * point.velocity, r * point.acceleration);
    let (sw, sa) = (skew(&w), skew(&al));
    let mut jp = Matrix9::zeros();
    jp.fixed_view_mut::<3, 3>(0, 0).copy_from(&r);
    jp.fixed_view_mut::<3, 3>(3, 0).copy_from(&(sw * r));
    jp.fixed_view_mut::<3, 3>(3, 3).copy_from(&r);
    jp.fixed_view_mut::<3, 3>(6, 0).copy_from(&((sa + sw * sw) * r));
    jp.fixed_view_mut::<3, 3>(6, 3).copy_from(&(2.0 * sw * r));
    jp.fixed_view_mut::<3, 3>(6, 6).copy_from(&r);
    let mut jm = Matrix9x18::zeros();
    let (s_rho, s_nu, s_kappa) = (skew(&rho), skew(&nu), skew(&kappa));
    let eye = Matrix3::identity();
    jm.fixed_view_mut::<3, 3>(0, 0).copy_from(&(-s_rho));
    jm.fixed_view_mut::<3, 3>(0, 3).copy_from(&eye);
    jm.fixed_view_mut::<3, 3>(3, 0).copy_from(&(-s_nu - sw * s_rho));
    jm.fixed_view_mut::<3, 3>(3, 6).copy_from(&eye);
    jm.fixed_view_mut::<3, 3>(3, 12).copy_from(&(-s_rho));
    jm.fixed_view_mut::<3, 3>(6, 0).copy_from(&(-s_kappa - 2.0 * sw * s_nu - sa * s_rho - sw * sw * s_rho));
    jm.fixed_view_mut::<3, 3>(6, 9).copy_from(&eye);
    jm.fixed_view_mut::<3, 3>(6, 12).copy_from(&(-2.0 * s_nu + double_cross_by_rate(&w, &rho)));
    jm.fixed_view_mut::<3, 3>(6, 15).copy_from(&(-s_rho));
    (mapped, jp, jm)
}

/// `first.then(second)` and its Jacobians with respect to the 18 parts of `first` and of
/// `second`; see the [module conventions](self).
#[must_use]
pub fn then_jacobian<P: Frame, C: Frame, D: Frame>(
    first: &FrameMotion<P, C>,
    second: &FrameMotion<C, D>,
) -> (FrameMotion<P, D>, Matrix18, Matrix18) {
    let composed = first.then(second);
    let ra = first.rotation().to_rotation_matrix().into_inner();
    let (wa, aa) = (first.angular_velocity(), first.angular_acceleration());
    let (rho, nu, kappa) = (ra * second.position(), ra * second.velocity(), ra * second.acceleration());
    let (w2, a2) = (ra * second.angular_velocity(), ra * second.angular_acceleration());
    let (sw, sa) = (skew(&wa), skew(&aa));
    let (s_rho, s_nu, s_kappa) = (skew(&rho), skew(&nu), skew(&kappa));
    let eye = Matrix3::identity();
    let mut j1 = Matrix18::zeros();
    let mut put1 = |row: usize, col: usize, m: Matrix3<f64>| j1.fixed_view_mut::<3, 3>(3 * row, 3 * col).copy_from(&m);
    put1(0, 0, eye);
    put1(1, 0, -s_rho);
    put1(1, 1, eye);
    put1(2, 0, -s_nu - sw * s_rho);
    put1(2, 2, eye);
    put1(2, 4, -s_rho);
    put1(3, 0, -s_kappa - 2.0 * sw * s_nu - sa * s_rho - sw * sw * s_rho);
    put1(3, 3, eye);
    put1(3, 4, -2.0 * s_nu + double_cross_by_rate(&wa, &rho));
    put1(3, 5, -s_rho);
    put1(4, 0, -skew(&w2));
    put1(4, 4, eye);
    put1(5, 0, -skew(&a2) - sw * skew(&w2));
    put1(5, 4, -skew(&w2));
    put1(5, 5, eye);
    let mut j2 = Matrix18::zeros();
    let mut put2 = |row: usize, col: usize, m: Matrix3<f64>| j2.fixed_view_mut::<3, 3>(3 * row, 3 * col).copy_from(&m);
    put2(0, 0, ra);
    put2(1, 1, ra);
    put2(2, 1, sw * ra);
    put2(2, 2, ra);
    put2(3, 1, (sa + sw * sw) * ra);
    put2(3, 2, 2.0 * sw * ra);
    put2(3, 3, ra);
    put2(4, 4, ra);
    put2(5, 4, sw * ra);
    put2(5, 5, ra);
    (composed, j1, j2)
}

/// `motion.inverse()` and its Jacobian with respect to the motion's 18 parts; see the
/// [module conventions](self).
#[must_use]
pub fn inverse_jacobian<P: Frame, C: Frame>(motion: &FrameMotion<P, C>) -> (FrameMotion<C, P>, Matrix18) {
    let inverse = motion.inverse();
    let rt = motion.rotation().to_rotation_matrix().into_inner().transpose();
    let (p, v, a) = (motion.position(), motion.velocity(), motion.acceleration());
    let (w, al) = (motion.angular_velocity(), motion.angular_acceleration());
    let sw = skew(&w);
    let u = w.cross(&p) - v;
    let s = 2.0 * w.cross(&v) + al.cross(&p) - w.cross(&w.cross(&p)) - a;
    let mut j = Matrix18::zeros();
    let mut put = |row: usize, col: usize, m: Matrix3<f64>| j.fixed_view_mut::<3, 3>(3 * row, 3 * col).copy_from(&m);
    put(0, 0, -rt);
    put(1, 0, -rt * skew(&p));
    put(1, 1, -rt);
    put(2, 0, rt * skew(&u));
    put(2, 1, rt * sw);
    put(2, 2, -rt);
    put(2, 4, -rt * skew(&p));
    put(3, 0, rt * skew(&s));
    put(3, 1, rt * (skew(&al) - sw * sw));
    put(3, 2, 2.0 * rt * sw);
    put(3, 3, -rt);
    put(3, 4, rt * (-2.0 * skew(&v) - double_cross_by_rate(&w, &p)));
    put(3, 5, -rt * skew(&p));
    put(4, 0, -rt * sw);
    put(4, 4, -rt);
    put(5, 0, -rt * skew(&al));
    put(5, 5, -rt);
    (inverse, j)
}

/// The body-to-local-level rotation of ZYX Euler angles and its Jacobian: rows `δθ` (resolved
/// in the local-level frame), columns yaw, pitch, roll.
///
/// ```
/// use rotaframe::linearise::quaternion_from_euler_jacobian;
/// use rotaframe::rotation::EulerZyx;
/// let (_, j) = quaternion_from_euler_jacobian(&EulerZyx::new(0.3, 0.0, 0.0));
/// assert_eq!(j.column(0).into_owned(), nalgebra::Vector3::z()); // yaw turns about the local vertical
/// ```
#[must_use]
pub fn quaternion_from_euler_jacobian(euler: &EulerZyx) -> (UnitQuaternion<f64>, Matrix3<f64>) {
    let q = euler.to_quaternion();
    (q, euler_rate_matrix(euler.yaw, euler.pitch))
}

/// The columns yaw, pitch, roll: `ẑ`, `Rz ŷ`, `Rz Ry x̂`.
fn euler_rate_matrix(yaw: f64, pitch: f64) -> Matrix3<f64> {
    let (sy, cy) = math::sin_cos(yaw);
    let (sp, cp) = math::sin_cos(pitch);
    Matrix3::new(0.0, -sy, cy * cp, 0.0, cy, sy * cp, 1.0, 0.0, -sp)
}

/// ZYX Euler angles of a rotation and their Jacobian: rows yaw, pitch, roll, columns `δθ`
/// (resolved in the local-level frame).
///
/// # Errors
/// [`Error::Invalid`] naming `q` within [`GIMBAL_LOCK_MARGIN`] of ±90° pitch.
pub fn euler_from_quaternion_jacobian(q: &UnitQuaternion<f64>) -> Result<(EulerZyx, Matrix3<f64>)> {
    let e = EulerZyx::from_quaternion(q);
    let (sy, cy) = math::sin_cos(e.yaw);
    let (sp, cp) = math::sin_cos(e.pitch);
    if cp.abs().is_nan() || cp.abs() <= GIMBAL_LOCK_MARGIN {
        return Err(Error::Invalid {
            quantity: "q",
            reason: "pitch is at ±90° (gimbal lock): yaw and roll have no derivative there",
        });
    }
    // The inverse of the rate matrix [ẑ, Rz ŷ, Rz Ry x̂].
    let inverse = Matrix3::new(cy * sp / cp, sy * sp / cp, 1.0, -sy, cy, 0.0, cy / cp, sy / cp, 0.0);
    Ok((e, inverse))
}

/// The left Jacobian of the rotation group at rotation vector `phi` and its two coefficients.
fn left_jacobian(phi: &Vector3<f64>) -> Matrix3<f64> {
    let t2 = phi.norm_squared();
    let (a, b) = if t2 < 1e-6 {
        // Taylor series: (1 − cos θ)/θ² and (θ − sin θ)/θ³ to θ⁴ (exact to rounding here).
        (0.5 - t2 / 24.0 + t2 * t2 / 720.0, 1.0 / 6.0 - t2 / 120.0 + t2 * t2 / 5040.0)
    } else {
        let t = math::sqrt(t2);
        let (s, c) = math::sin_cos(t);
        ((1.0 - c) / t2, (t - s) / (t2 * t))
    };
    let k = skew(phi);
    Matrix3::identity() + a * k + b * k * k
}

/// The unit quaternion of a rotation vector (rad) and its Jacobian: rows `δθ`, columns the
/// rotation vector's components (the left Jacobian `J_l`).
///
/// # Errors
/// As [`quaternion_from_rotation_vector`](crate::rotation::quaternion_from_rotation_vector).
pub fn quaternion_from_rotation_vector_jacobian(rotation_vector: &Vector3<f64>) -> Result<(UnitQuaternion<f64>, Matrix3<f64>)> {
    let q = crate::rotation::quaternion_from_rotation_vector(rotation_vector, "rotation_vector")?;
    Ok((q, left_jacobian(rotation_vector)))
}

/// The rotation vector (rad, angle in [0, π]) of a rotation and its Jacobian: rows the
/// rotation vector's components, columns `δθ` (`J_l⁻¹`).
///
/// # Errors
/// [`Error::Invalid`] naming `q` within [`HALF_TURN_MARGIN`] of a half turn.
pub fn rotation_vector_from_quaternion_jacobian(q: &UnitQuaternion<f64>) -> Result<(Vector3<f64>, Matrix3<f64>)> {
    let phi = crate::rotation::rotation_vector_from_quaternion(q);
    let t2 = phi.norm_squared();
    let t = math::sqrt(t2);
    if t > core::f64::consts::PI - HALF_TURN_MARGIN {
        return Err(Error::Invalid {
            quantity: "q",
            reason: "the rotation is a half turn: its rotation vector has no derivative there",
        });
    }
    // J_l⁻¹ = I − ½[φ] + (1/θ² − (1 + cos θ)/(2θ sin θ))[φ]²; the coefficient → 1/12 at θ → 0.
    let c2 = if t2 < 1e-6 {
        1.0 / 12.0 + t2 / 720.0 + t2 * t2 / 30240.0
    } else {
        let (s, c) = math::sin_cos(t);
        1.0 / t2 - (1.0 + c) / (2.0 * t * s)
    };
    let k = skew(&phi);
    Ok((phi, Matrix3::identity() - 0.5 * k + c2 * k * k))
}

/// Jacobians of the total apparent acceleration ([`apparent_terms`]) on a point in a moving
/// frame B, all resolved in B.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ApparentJacobians {
    /// With respect to the point's position (s⁻²).
    pub position: Matrix3<f64>,
    /// With respect to the point's velocity (s⁻¹).
    pub velocity: Matrix3<f64>,
    /// With respect to B's origin acceleration (dimensionless).
    pub origin_acceleration: Matrix3<f64>,
    /// With respect to B's angular velocity (m/s per rad/s).
    pub angular_velocity: Matrix3<f64>,
    /// With respect to B's angular acceleration (m per rad).
    pub angular_acceleration: Matrix3<f64>,
}

/// The apparent-acceleration terms and the Jacobians of their total:
/// `total = −a₀ − 2 ω × v − ω × (ω × r) − α × r`.
#[must_use]
pub fn apparent_terms_jacobian(
    dynamics: &FrameDynamics,
    position: &Vector3<f64>,
    velocity: &Vector3<f64>,
) -> (ApparentAcceleration<crate::frames::AnyFrame>, ApparentJacobians) {
    let terms = apparent_terms(dynamics, position, velocity);
    let (w, al) = (&dynamics.angular_velocity, &dynamics.angular_acceleration);
    let sw = skew(w);
    let jacobians = ApparentJacobians {
        position: -(sw * sw) - skew(al),
        velocity: -2.0 * sw,
        origin_acceleration: -Matrix3::identity(),
        angular_velocity: 2.0 * skew(velocity) - double_cross_by_rate(w, position),
        angular_acceleration: skew(position),
    };
    (terms, jacobians)
}

/// Normal gravity (m/s²) at latitude (rad) and height (m) and its gradient
/// `(∂γ/∂φ (m/s² per rad), ∂γ/∂h (s⁻²))`.
///
/// # Errors
/// As [`earth::normal_gravity_at_height`].
///
/// ```
/// use rotaframe::earth::WGS84;
/// use rotaframe::linearise::normal_gravity_jacobian;
/// let (g, (_, per_metre)) = normal_gravity_jacobian(&WGS84, 0.8, 0.0).unwrap();
/// assert!((per_metre + 2.0 * g / 6.371e6).abs() < 2e-8); // free-air gradient ≈ −2g/R
/// ```
pub fn normal_gravity_jacobian(model: &EarthModel, latitude: f64, height: f64) -> Result<(f64, (f64, f64))> {
    let g = earth::normal_gravity_at_height(model, latitude, height)?;
    let (s, c) = math::sin_cos(latitude);
    let s2 = s * s;
    let (a, f, e2) = (model.semi_major_axis(), model.flattening(), model.eccentricity_squared());
    let w2 = 1.0 - e2 * s2;
    let w = math::sqrt(w2);
    let somigliana = model.gamma_equator() * (1.0 + model.somigliana_k() * s2) / w;
    let d_somigliana =
        model.gamma_equator() * (model.somigliana_k() / w + (1.0 + model.somigliana_k() * s2) * 0.5 * e2 / (w2 * w));
    let linear = 2.0 / a * (1.0 + f + model.gravity_ratio_m() - 2.0 * f * s2);
    let series = 1.0 - linear * height + 3.0 / (a * a) * height * height;
    let d_series = 4.0 * f / a * height;
    let per_latitude = 2.0 * s * c * (d_somigliana * series + somigliana * d_series);
    let per_height = somigliana * (-linear + 6.0 * height / (a * a));
    Ok((g, (per_latitude, per_height)))
}

/// J₂ gravitation at an ECEF (or ECI) position (m/s²) and its gradient tensor `∂g/∂x` (s⁻²).
///
/// # Errors
/// As [`earth::gravitation_ecef`].
pub fn gravitation_jacobian(model: &EarthModel, position_ecef: &Vector3<f64>) -> Result<(Vector3<f64>, Matrix3<f64>)> {
    let g = earth::gravitation_ecef(model, position_ecef)?;
    let x = position_ecef;
    let r2 = x.norm_squared();
    let r = math::sqrt(r2);
    let (r3, r5) = (r2 * r, r2 * r2 * r);
    let (r7, r9) = (r5 * r2, r5 * r2 * r2);
    let big_k = 1.5 * model.j2() * model.semi_major_axis() * model.semi_major_axis();
    let mu = model.gm();
    let z2 = x.z * x.z;
    let c = [1.0, 1.0, 3.0];
    let mut j = Matrix3::zeros();
    for i in 0..3 {
        let h = 1.0 / r3 + big_k * c[i] / r5 - 5.0 * big_k * z2 / r7;
        for k in 0..3 {
            let mut dh = -3.0 * x[k] / r5 - 5.0 * big_k * c[i] * x[k] / r7 + 35.0 * big_k * z2 * x[k] / r9;
            if k == 2 {
                dh -= 10.0 * big_k * x.z / r7;
            }
            j[(i, k)] = -mu * (if i == k { h } else { 0.0 } + x[i] * dh);
        }
    }
    Ok((g, j))
}

/// Gravity (J₂ gravitation plus the centrifugal acceleration, [`earth::gravity_ecef`]) at an
/// ECEF position and its gradient: the gravitation gradient minus `[Ω ẑ]²`.
///
/// # Errors
/// As [`earth::gravity_ecef`].
pub fn gravity_ecef_jacobian(model: &EarthModel, position_ecef: &Vector3<f64>) -> Result<(Vector3<f64>, Matrix3<f64>)> {
    let g = earth::gravity_ecef(model, position_ecef)?;
    let (_, jg) = gravitation_jacobian(model, position_ecef)?;
    let so = skew(&Vector3::new(0.0, 0.0, model.rotation_rate()));
    Ok((g, jg - so * so))
}

/// Gravity of a [`GravityModel`](earth::GravityModel) resolved in NED at a geodetic position
/// and its Jacobian with respect to (latitude, longitude, height) (m/s² per rad, per rad, per
/// m). For the J₂ model: `∂(C_e^n g^e)/∂p = C_e^n [g^e] ∂δθ/∂p + C_e^n (∂g^e/∂x) ∂x/∂p`.
///
/// # Errors
/// As [`GravityModel::gravity_ned`](earth::GravityModel::gravity_ned).
pub fn gravity_ned_jacobian(
    model: &EarthModel,
    gravity: earth::GravityModel,
    position: &Geodetic,
) -> Result<(Vector3<f64>, Matrix3<f64>)> {
    let g = gravity.gravity_ned(model, position)?;
    let j = match gravity {
        earth::GravityModel::Normal => {
            let (_, (per_latitude, per_height)) = normal_gravity_jacobian(model, position.latitude, position.height)?;
            let mut j = Matrix3::zeros();
            j[(2, 0)] = per_latitude;
            j[(2, 2)] = per_height;
            j
        }
        earth::GravityModel::J2 => {
            let (x, jx) = geodetic_to_ecef_jacobian(model, position)?;
            let (ge, jg) = gravity_ecef_jacobian(model, &x)?;
            let c_en = earth::ned_from_ecef(position.latitude, position.longitude)?;
            let turn = local_level_rotation_jacobian(position.latitude, position.longitude)?;
            let mut frame = Matrix3::zeros();
            frame.fixed_view_mut::<3, 2>(0, 0).copy_from(&(c_en * skew(&ge) * turn));
            frame + c_en * jg * jx
        }
    };
    Ok((g, j))
}

/// Gravity of a [`GravityModel`](earth::GravityModel) resolved in ECEF at an ECEF position and
/// its gradient `∂g/∂x` (s⁻²). For the normal model, `g = C_n^e (0, 0, γ(φ, h))` through the
/// geodetic Jacobian.
///
/// # Errors
/// As [`GravityModel::gravity_ecef`](earth::GravityModel::gravity_ecef); [`Error::NearPole`]
/// for the normal model within [`POLE_EXCLUSION`](crate::earth::POLE_EXCLUSION) of a pole.
pub fn gravity_model_ecef_jacobian(
    model: &EarthModel,
    gravity: earth::GravityModel,
    position_ecef: &Vector3<f64>,
) -> Result<(Vector3<f64>, Matrix3<f64>)> {
    match gravity {
        earth::GravityModel::J2 => gravity_ecef_jacobian(model, position_ecef),
        earth::GravityModel::Normal => {
            let g = gravity.gravity_ecef(model, position_ecef)?;
            let (p, j_inverse) = ecef_to_geodetic_jacobian(model, position_ecef)?;
            let (_, (per_latitude, per_height)) = normal_gravity_jacobian(model, p.latitude, p.height)?;
            let c_ne = earth::ned_from_ecef(p.latitude, p.longitude)?.transpose();
            let turn = local_level_rotation_jacobian(p.latitude, p.longitude)?;
            // ∂(R u)/∂δθ = −[R u]; then the change of γ along the local down axis.
            let mut by_geodetic = Matrix3::zeros();
            by_geodetic.fixed_view_mut::<3, 2>(0, 0).copy_from(&(-skew(&g) * turn));
            let down = c_ne.column(2).into_owned();
            by_geodetic.set_column(0, &(by_geodetic.column(0) + down * per_latitude));
            by_geodetic.set_column(2, &(down * per_height));
            Ok((g, by_geodetic * j_inverse))
        }
    }
}
