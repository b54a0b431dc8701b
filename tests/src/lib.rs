//! Shared helpers for rotaframe's integration tests: proptest strategies (one per type),
//! finite-difference stencils and named tolerances.

pub mod aided;
pub mod shared;
pub mod trajectories;

use nalgebra::{Matrix3, Quaternion, UnitQuaternion, Vector3};
use proptest::prelude::*;
use rotaframe::frames::{Frame, PointKinematics};
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra;

/// Deterministic pseudo-random numbers (SplitMix64) for benchmarks and generated vectors, so
/// that every run and every contender sees the same inputs.
#[derive(Debug, Clone)]
pub struct Seeded(pub u64);

impl Seeded {
    /// The next number, uniform in [−1, 1).
    pub fn next_signed(&mut self) -> f64 {
        self.next_unit() * 2.0 - 1.0
    }

    /// The next number, uniform in [0, 1).
    pub fn next_unit(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
        (z >> 11) as f64 / (1u64 << 53) as f64
    }

    /// A vector with components uniform in [−scale, scale).
    pub fn vector(&mut self, scale: f64) -> Vector3<f64> {
        Vector3::new(self.next_signed(), self.next_signed(), self.next_signed()) * scale
    }
}

/// Number of cases for each property test. The default of 256 is raised so that every CI run
/// exercises a few thousand random frames and points per property.
pub const PROPTEST_CASES: u32 = 2048;

/// proptest configuration used by every property in this crate: [`PROPTEST_CASES`] cases, or
/// the number in the `PROPTEST_CASES` environment variable when it is set (for longer runs).
#[must_use]
pub fn config() -> ProptestConfig {
    let default = ProptestConfig::default();
    if std::env::var_os("PROPTEST_CASES").is_some() { default } else { ProptestConfig { cases: PROPTEST_CASES, ..default } }
}

/// Relative rounding tolerance for the closed-form kinematic formulas: each result is a sum of
/// at most a few dozen rounded products, so its error is bounded by about 50 ε ≈ 1.1e-14 of the
/// largest term's magnitude; a chain of three compositions and an inverse compounds that to a
/// few times 1e-14. 1e-12 leaves two orders of margin while still catching any wrong sign or
/// missing term (those are errors of order one).
pub const KINEMATIC_REL_TOL: f64 = 1e-12;

/// A vector with components in `[-scale, scale]`.
pub fn vector(scale: f64) -> impl Strategy<Value = Vector3<f64>> {
    prop::array::uniform3(-scale..=scale).prop_map(Vector3::from)
}

/// A uniformly oriented unit vector.
pub fn unit_vector() -> impl Strategy<Value = Vector3<f64>> {
    vector(1.0).prop_filter("direction needs a non-zero vector", |v| v.norm() > 0.1).prop_map(|v| v.normalize())
}

/// A unit quaternion drawn from a 4-ball (rejecting short vectors keeps the normalisation
/// well conditioned); covers both hemispheres `w > 0` and `w < 0`.
pub fn unit_quaternion() -> impl Strategy<Value = UnitQuaternion<f64>> {
    prop::array::uniform4(-1.0..=1.0f64)
        .prop_filter("quaternion needs a non-zero norm", |c| c.iter().map(|x| x * x).sum::<f64>() > 0.01)
        .prop_map(|c| UnitQuaternion::from_quaternion(Quaternion::new(c[0], c[1], c[2], c[3])))
}

/// Magnitudes of the parts of a random motion or point: laboratory to vehicle scale.
pub const POSITION_SCALE: f64 = 1.0e4;
/// Velocity scale (m/s).
pub const VELOCITY_SCALE: f64 = 1.0e3;
/// Acceleration scale (m/s²).
pub const ACCELERATION_SCALE: f64 = 1.0e2;
/// Angular-velocity scale (rad/s).
pub const ANGULAR_VELOCITY_SCALE: f64 = 10.0;
/// Angular-acceleration scale (rad/s²).
pub const ANGULAR_ACCELERATION_SCALE: f64 = 10.0;

/// A random frame motion with parts up to the scales above.
pub fn frame_motion<P: Frame, C: Frame>() -> impl Strategy<Value = FrameMotion<P, C>> {
    (
        unit_quaternion(),
        vector(POSITION_SCALE),
        vector(VELOCITY_SCALE),
        vector(ACCELERATION_SCALE),
        vector(ANGULAR_VELOCITY_SCALE),
        vector(ANGULAR_ACCELERATION_SCALE),
    )
        .prop_map(|(rotation, position, velocity, acceleration, angular_velocity, angular_acceleration)| {
            FrameMotion::from_parts(MotionParts {
                rotation,
                position,
                velocity,
                acceleration,
                angular_velocity,
                angular_acceleration,
            })
            .expect("finite parts")
        })
}

/// A random point with parts up to the scales above.
pub fn point<F: Frame>() -> impl Strategy<Value = PointKinematics<F>> {
    (vector(POSITION_SCALE), vector(VELOCITY_SCALE), vector(ACCELERATION_SCALE))
        .prop_map(|(p, v, a)| PointKinematics::new(p, v, a))
}

/// The size against which rounding errors of a mapped point are judged: the sum of the
/// magnitudes of every term that enters the transport theorem for this motion and point.
#[must_use]
pub fn kinematic_scale<P: Frame, C: Frame>(m: &FrameMotion<P, C>, p: &PointKinematics<C>) -> f64 {
    let w = m.angular_velocity().norm();
    let al = m.angular_acceleration().norm();
    let r = m.position().norm() + p.position.norm();
    let v = m.velocity().norm() + p.velocity.norm();
    let a = m.acceleration().norm() + p.acceleration.norm();
    1.0 + r + v + a + w * (r + 2.0 * v) + al * r + w * w * r
}

/// Asserts `|got − want| ≤ tol · scale` componentwise, with a message naming the quantity.
pub fn assert_close(what: &str, got: &Vector3<f64>, want: &Vector3<f64>, tol: f64, scale: f64) {
    let err = (got - want).amax();
    assert!(err <= tol * scale, "{what}: got {got:?}, want {want:?}, error {err:e} > {tol:e} × {scale:e}");
}

/// Fifth-order central first derivative: `(f(−2h) − 8f(−h) + 8f(h) − f(2h)) / 12h`, truncation
/// error `h⁴ f⁽⁵⁾ / 30`.
#[must_use]
pub fn central_first<T>(f: impl Fn(f64) -> T, t: f64, h: f64) -> T
where
    T: core::ops::Sub<Output = T> + core::ops::Add<Output = T> + core::ops::Mul<f64, Output = T>,
{
    (f(t - 2.0 * h) - f(t + 2.0 * h) + (f(t + h) - f(t - h)) * 8.0) * (1.0 / (12.0 * h))
}

/// Fourth-order central second derivative: `(−f(−2h) + 16f(−h) − 30f(0) + 16f(h) − f(2h)) / 12h²`,
/// truncation error `h⁴ f⁽⁶⁾ / 90`.
#[must_use]
pub fn central_second<T>(f: impl Fn(f64) -> T, t: f64, h: f64) -> T
where
    T: core::ops::Sub<Output = T> + core::ops::Add<Output = T> + core::ops::Mul<f64, Output = T>,
{
    ((f(t - h) + f(t + h)) * 16.0 - (f(t - 2.0 * h) + f(t + 2.0 * h)) - f(t) * 30.0) * (1.0 / (12.0 * h * h))
}

/// The vector `w` of a skew-symmetric matrix `[w×]` (averaging the two copies of each entry).
#[must_use]
pub fn vee(m: &Matrix3<f64>) -> Vector3<f64> {
    Vector3::new(m[(2, 1)] - m[(1, 2)], m[(0, 2)] - m[(2, 0)], m[(1, 0)] - m[(0, 1)]) * 0.5
}
