//! Rotation representations and conversions: quaternions, direction-cosine matrices,
//! aerospace yaw-pitch-roll Euler angles and rotation vectors.
//!
//! # Conventions
//!
//! * **Quaternions are Hamilton, scalar first**: `[w, x, y, z]` with `i² = j² = k² = ijk = −1`.
//!   A unit quaternion `q` rotates a vector by `v' = q v q*`. Composition is by the Hamilton
//!   product: `q_ac = q_ab ⊗ q_bc`. nalgebra's [`UnitQuaternion`] implements this algebra; its
//!   storage order is `[x, y, z, w]`, so convert at the edges with [`quaternion_from_wxyz`] and
//!   [`quaternion_to_wxyz`], never by reinterpreting memory.
//! * A rotation that **maps C-coordinates to P-coordinates** is written `R` (or `C_c^p` in
//!   navigation texts): `v_P = R v_C`. Its quaternion is `q` with the same meaning.
//! * **Euler angles** ([`EulerZyx`]) are the aerospace z-y-x sequence: the body-to-local-level
//!   rotation is `R = Rz(yaw) · Ry(pitch) · Rx(roll)`, where `Rz(ψ) = [[cψ, −sψ, 0], [sψ, cψ, 0],
//!   [0, 0, 1]]` and likewise for the others. Yaw and roll lie in (−π, π], pitch in [−π/2, π/2].
//!   Pitch is recovered as `atan2(−R₂₀, √(R₀₀² + R₁₀²))`, which keeps full precision near ±90°
//!   (an arcsine does not). At ±90° pitch only `yaw − roll` (pitch +90°) or `yaw + roll`
//!   (pitch −90°) is observable; rotaframe then reports `roll = 0` and puts the whole angle in
//!   yaw, so that converting back gives the same rotation.
//! * **Rotation vectors** `θ = angle · axis` (radians) map to quaternions by the exponential
//!   `q = [cos(|θ|/2), sin(|θ|/2) θ/|θ|]`; the logarithm returns the angle in [0, π].
//!
//! References: J. Diebel, "Representing Attitude: Euler Angles, Unit Quaternions, and Rotation
//! Vectors" (Stanford, 2006), for the z-y-x matrix; P. D. Groves, *Principles of GNSS, Inertial,
//! and Multisensor Integrated Navigation Systems*, 2nd ed. (2013), §2.2, for the
//! navigation-frame usage.

use nalgebra::{Matrix3, Quaternion, Rotation3, UnitQuaternion, Vector3};

use crate::error::{Error, Result, ensure_finite};
use crate::math;

/// Largest accepted deviation of a quaternion's norm from one before it is rejected as
/// not a rotation (inputs inside the tolerance are renormalised). Chosen to accept quaternions
/// stored in single precision and logged to seven significant digits.
pub const UNIT_NORM_TOLERANCE: f64 = 1e-6;

/// Quaternions whose squared norm is within this of one are taken as unit without
/// renormalising (8 ulps of 1: renormalising them would move components by at most an ulp).
pub const UNIT_AS_GIVEN: f64 = 8.0 * f64::EPSILON;

/// Largest accepted entry of `MᵀM − I` for a rotation matrix (same reasoning as
/// [`UNIT_NORM_TOLERANCE`]).
pub const ROTATION_MATRIX_TOLERANCE: f64 = 1e-6;

/// Below this value of `cos(pitch)` the Euler decomposition treats the rotation as gimbal-locked
/// and reports `roll = 0`. At `cos(pitch) = 1e-12` yaw and roll are individually determined only
/// to about `1e-16 / 1e-12 = 1e-4` rad anyway.
pub const GIMBAL_LOCK_COS_PITCH: f64 = 1e-12;

/// Builds a unit quaternion from Hamilton scalar-first components `[w, x, y, z]`.
///
/// The input is renormalised if its norm is within [`UNIT_NORM_TOLERANCE`] of one (and used as
/// given when it is already unit to within [`UNIT_AS_GIVEN`], where renormalising could change
/// it by at most an ulp).
///
/// # Errors
/// [`Error::NonFinite`], [`Error::ZeroNorm`] or [`Error::NotUnitQuaternion`], naming `quantity`.
///
/// # Example
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::rotation::{quaternion_from_wxyz, quaternion_to_wxyz};
/// let h = std::f64::consts::FRAC_1_SQRT_2;
/// let q = quaternion_from_wxyz([h, 0.0, 0.0, h], "attitude").unwrap(); // 90° about z
/// let v = q * nalgebra::Vector3::x();
/// assert_relative_eq!(v, nalgebra::Vector3::y(), epsilon = 1e-15);
/// assert_eq!(quaternion_to_wxyz(&q), [h, 0.0, 0.0, h]);
/// ```
pub fn quaternion_from_wxyz(wxyz: [f64; 4], quantity: &'static str) -> Result<UnitQuaternion<f64>> {
    let q = Quaternion::new(wxyz[0], wxyz[1], wxyz[2], wxyz[3]);
    if (q.norm_squared() - 1.0).abs() <= UNIT_AS_GIVEN {
        // Finite (else the squared norm would not be near one) and unit to the last ulps.
        return Ok(UnitQuaternion::new_unchecked(q));
    }
    ensure_finite(&wxyz, quantity)?;
    let q = Quaternion::new(wxyz[0], wxyz[1], wxyz[2], wxyz[3]);
    // Scaled by the largest component, so that the norm of huge components stays finite.
    let largest = q.coords.amax();
    let norm = if largest > 1.0 { (q.coords / largest).norm() * largest } else { q.norm() };
    if norm < math::TINY_NORM {
        return Err(Error::ZeroNorm { quantity });
    }
    if (norm - 1.0).abs() > UNIT_NORM_TOLERANCE {
        return Err(Error::NotUnitQuaternion { quantity, norm, tolerance: UNIT_NORM_TOLERANCE });
    }
    Ok(UnitQuaternion::new_unchecked(q / norm))
}

/// Hamilton scalar-first components `[w, x, y, z]` of a unit quaternion.
///
/// ```
/// # use rotaframe::rotation::quaternion_to_wxyz;
/// assert_eq!(quaternion_to_wxyz(&nalgebra::UnitQuaternion::identity()), [1.0, 0.0, 0.0, 0.0]);
/// ```
#[must_use]
pub fn quaternion_to_wxyz(q: &UnitQuaternion<f64>) -> [f64; 4] {
    [q.w, q.i, q.j, q.k]
}

/// Checks that `m` is a proper rotation matrix within [`ROTATION_MATRIX_TOLERANCE`].
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::NotRotationMatrix`], naming `quantity`.
pub fn validate_rotation_matrix(m: &Matrix3<f64>, quantity: &'static str) -> Result<()> {
    ensure_finite(m.as_slice(), quantity)?;
    let gram = m.transpose() * m - Matrix3::identity();
    let orthogonality_error = gram.amax();
    let determinant = m.determinant();
    if orthogonality_error > ROTATION_MATRIX_TOLERANCE || determinant <= 0.0 {
        return Err(Error::NotRotationMatrix { quantity, orthogonality_error, determinant });
    }
    Ok(())
}

/// The unit quaternion of a rotation matrix (same mapping: if `v_P = M v_C` then
/// `v_P = q v_C q*`).
///
/// # Errors
/// As [`validate_rotation_matrix`].
///
/// # Example
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::{Matrix3, Vector3};
/// use rotaframe::rotation::quaternion_from_matrix;
/// // 90° about z: x → y.
/// let m = Matrix3::new(0.0, -1.0, 0.0, 1.0, 0.0, 0.0, 0.0, 0.0, 1.0);
/// let q = quaternion_from_matrix(&m, "rotation").unwrap();
/// assert_relative_eq!(q * Vector3::x(), Vector3::y(), epsilon = 1e-15);
/// ```
pub fn quaternion_from_matrix(m: &Matrix3<f64>, quantity: &'static str) -> Result<UnitQuaternion<f64>> {
    validate_rotation_matrix(m, quantity)?;
    Ok(UnitQuaternion::from_rotation_matrix(&Rotation3::from_matrix_unchecked(*m)))
}

/// The rotation matrix of a unit quaternion.
///
/// ```
/// # use rotaframe::rotation::matrix_from_quaternion;
/// assert_eq!(matrix_from_quaternion(&nalgebra::UnitQuaternion::identity()), nalgebra::Matrix3::identity());
/// ```
#[must_use]
#[inline]
pub fn matrix_from_quaternion(q: &UnitQuaternion<f64>) -> Matrix3<f64> {
    q.to_rotation_matrix().into_inner()
}

/// Aerospace z-y-x Euler angles in radians: `R = Rz(yaw) · Ry(pitch) · Rx(roll)` maps body
/// coordinates to local-level coordinates.
///
/// # Example
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::rotation::EulerZyx;
/// let e = EulerZyx::from_degrees(30.0, 10.0, -5.0);
/// let back = EulerZyx::from_quaternion(&e.to_quaternion());
/// assert_relative_eq!(back.yaw, e.yaw, epsilon = 1e-14);
/// assert_relative_eq!(back.pitch, e.pitch, epsilon = 1e-14);
/// assert_relative_eq!(back.roll, e.roll, epsilon = 1e-14);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EulerZyx {
    /// Rotation about the local-level z axis, applied last (rad).
    pub yaw: f64,
    /// Rotation about the once-rotated y axis (rad), in [−π/2, π/2] when produced by rotaframe.
    pub pitch: f64,
    /// Rotation about the body x axis, applied first (rad).
    pub roll: f64,
}

impl EulerZyx {
    /// Angles in radians.
    #[must_use]
    pub const fn new(yaw: f64, pitch: f64, roll: f64) -> Self {
        Self { yaw, pitch, roll }
    }

    /// Angles given in degrees.
    #[must_use]
    pub fn from_degrees(yaw_deg: f64, pitch_deg: f64, roll_deg: f64) -> Self {
        Self::new(yaw_deg.to_radians(), pitch_deg.to_radians(), roll_deg.to_radians())
    }

    /// Rejects non-finite angles, naming `quantity`.
    ///
    /// # Errors
    /// [`Error::NonFinite`].
    pub fn validate(&self, quantity: &'static str) -> Result<()> {
        ensure_finite(&[self.yaw, self.pitch, self.roll], quantity)
    }

    /// The body-to-local-level unit quaternion `q = qz(yaw) ⊗ qy(pitch) ⊗ qx(roll)`.
    #[must_use]
    pub fn to_quaternion(&self) -> UnitQuaternion<f64> {
        // nalgebra applies roll, then pitch, then yaw: R = Rz Ry Rx.
        UnitQuaternion::from_euler_angles(self.roll, self.pitch, self.yaw)
    }

    /// Decomposes a body-to-local-level rotation; see the module doc for the gimbal-lock rule.
    #[must_use]
    pub fn from_quaternion(q: &UnitQuaternion<f64>) -> Self {
        Self::from_matrix(&matrix_from_quaternion(q))
    }

    /// Decomposes a body-to-local-level rotation matrix (assumed orthonormal).
    #[must_use]
    pub fn from_matrix(r: &Matrix3<f64>) -> Self {
        let cos_pitch = math::hypot(r[(0, 0)], r[(1, 0)]);
        let pitch = math::atan2(-r[(2, 0)], cos_pitch);
        if cos_pitch > GIMBAL_LOCK_COS_PITCH {
            Self { yaw: math::atan2(r[(1, 0)], r[(0, 0)]), pitch, roll: math::atan2(r[(2, 1)], r[(2, 2)]) }
        } else {
            // R01 = −sin(yaw ∓ roll), R11 = cos(yaw ∓ roll) at pitch = ±90°; take roll = 0.
            Self { yaw: math::atan2(-r[(0, 1)], r[(1, 1)]), pitch, roll: 0.0 }
        }
    }
}

/// Exponential map: the unit quaternion of the rotation vector `angle · axis` (radians).
///
/// # Errors
/// [`Error::NonFinite`] naming `quantity`.
///
/// # Example
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::rotation::{quaternion_from_rotation_vector, rotation_vector_from_quaternion};
/// let theta = nalgebra::Vector3::new(0.0, 0.0, 1.0e-9);
/// let q = quaternion_from_rotation_vector(&theta, "dtheta").unwrap();
/// assert_relative_eq!(rotation_vector_from_quaternion(&q), theta, max_relative = 1e-15);
/// ```
pub fn quaternion_from_rotation_vector(rotation_vector: &Vector3<f64>, quantity: &'static str) -> Result<UnitQuaternion<f64>> {
    crate::limits::check_vector(rotation_vector, crate::limits::MAX_ROTATION_ANGLE, "rad", quantity)?;
    Ok(UnitQuaternion::from_scaled_axis(*rotation_vector))
}

/// Logarithm map: the rotation vector (radians, angle in [0, π]) of a unit quaternion.
#[must_use]
pub fn rotation_vector_from_quaternion(q: &UnitQuaternion<f64>) -> Vector3<f64> {
    q.scaled_axis()
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use core::f64::consts::{FRAC_PI_2, PI};

    #[test]
    fn euler_matrix_matches_written_out_zyx_product() {
        // Reference: the product Rz(ψ)Ry(θ)Rx(φ) multiplied out element by element, the standard
        // aerospace body-to-local-level matrix (Groves 2013, ch. 2; common practice).
        // Tolerance: 4 ulps of 1, the rounding of a quaternion-to-matrix conversion.
        let (yaw, pitch, roll) = (0.7_f64, -0.3_f64, 1.9_f64);
        let (sy, cy) = yaw.sin_cos();
        let (sp, cp) = pitch.sin_cos();
        let (sr, cr) = roll.sin_cos();
        let expected = Matrix3::new(
            cy * cp,
            cy * sp * sr - sy * cr,
            cy * sp * cr + sy * sr,
            sy * cp,
            sy * sp * sr + cy * cr,
            sy * sp * cr - cy * sr,
            -sp,
            cp * sr,
            cp * cr,
        );
        let got = matrix_from_quaternion(&EulerZyx::new(yaw, pitch, roll).to_quaternion());
        assert_relative_eq!(got, expected, epsilon = 4.0 * f64::EPSILON);
    }

    #[test]
    fn euler_at_plus_and_minus_ninety_pitch_reproduces_the_rotation() {
        // At gimbal lock the angles are not unique but the rotation must round-trip.
        // Tolerance: a few ulps on quaternion components.
        for pitch in [FRAC_PI_2, -FRAC_PI_2] {
            for (yaw, roll) in [(0.4, 0.0), (0.4, 1.1), (-2.9, 3.0), (PI, -PI)] {
                let q = EulerZyx::new(yaw, pitch, roll).to_quaternion();
                let e = EulerZyx::from_quaternion(&q);
                assert_eq!(e.roll, 0.0);
                assert_relative_eq!(e.pitch, pitch, epsilon = 1e-15);
                let back = e.to_quaternion();
                assert!(back.angle_to(&q) < 1e-14, "pitch {pitch} yaw {yaw} roll {roll}: {e:?}");
            }
        }
    }

    #[test]
    fn euler_pitch_near_ninety_keeps_full_precision() {
        // A pitch 1e-9 rad short of 90° is recovered to rounding; an arcsine of R20 would lose
        // about half the digits (error ~1e-8). Tolerance: 1e-15 rad.
        let pitch = FRAC_PI_2 - 1e-9;
        let e = EulerZyx::from_quaternion(&EulerZyx::new(0.3, pitch, -0.2).to_quaternion());
        assert_relative_eq!(e.pitch, pitch, epsilon = 1e-15);
    }

    #[test]
    fn quaternion_validation_names_the_quantity() {
        assert_eq!(
            quaternion_from_wxyz([f64::NAN, 0.0, 0.0, 1.0], "q_body").unwrap_err(),
            Error::NonFinite { quantity: "q_body" }
        );
        assert!(matches!(
            quaternion_from_wxyz([2.0, 0.0, 0.0, 0.0], "q_body"),
            Err(Error::NotUnitQuaternion { quantity: "q_body", .. })
        ));
        // Just inside the tolerance: accepted and renormalised.
        let q = quaternion_from_wxyz([1.0 + 0.5e-6, 0.0, 0.0, 0.0], "q").unwrap();
        assert_relative_eq!(q.w, 1.0, epsilon = f64::EPSILON);
    }

    #[test]
    fn reflection_is_not_a_rotation_matrix() {
        let m = Matrix3::from_diagonal(&Vector3::new(1.0, 1.0, -1.0));
        assert!(matches!(quaternion_from_matrix(&m, "c_ned_body"), Err(Error::NotRotationMatrix { quantity: "c_ned_body", .. })));
    }

    #[test]
    fn rotation_vector_log_is_inverse_of_exp_up_to_pi() {
        // Tolerance: a few ulps relative to the angle.
        for angle in [1e-12, 1e-6, 0.5, 3.0, PI - 1e-9] {
            let theta = Vector3::new(1.0, -2.0, 0.5).normalize() * angle;
            let q = quaternion_from_rotation_vector(&theta, "theta").unwrap();
            assert_relative_eq!(rotation_vector_from_quaternion(&q), theta, max_relative = 1e-13);
            // -q is the same rotation and gives the same vector.
            let neg = UnitQuaternion::new_unchecked(-q.into_inner());
            assert_relative_eq!(rotation_vector_from_quaternion(&neg), theta, max_relative = 1e-13);
        }
    }
}
