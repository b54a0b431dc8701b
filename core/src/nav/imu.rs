//! The ideal IMU: gyro and accelerometer outputs from a kinematic chain, and the increments an
//! integrating IMU reports over each sample interval.
//!
//! # Ideal outputs
//!
//! For a body frame B whose motion relative to the Earth-centred inertial frame I is known
//! (rotation `C_b^i`, origin position `r`, acceleration `r̈`, angular velocity `ω_ib`, all from
//! a [`FrameMotion<Eci, B>`]):
//!
//! ```text
//! ω_ib^b = C_i^b ω_ib^i                    gyro triad
//! f^b    = C_i^b (r̈ − γ(r))                accelerometer triad (specific force)
//! ```
//!
//! with `γ` the gravitation of the chosen [`GravityModel`]. Build the chain with the frame
//! machinery: [`earth_motion`](crate::earth::earth_motion) `→`
//! [`local_level_motion`](crate::earth::local_level_motion) `→` the body's attitude `→` (for a
//! sensor at a lever arm and misalignment) one more fixed frame
//! ([`sensor_mount`](super::sensor_mount)).
//!
//! # Increments
//!
//! An integrating IMU reports, for each interval `[t₀, t₁]`, `Δθ = ∫ ω_ib^b dt` and
//! `Δv = ∫ f^b dt`. [`imu_increments`] evaluates the trajectory at the six Gauss–Legendre
//! nodes of each interval and sums with the Gauss–Legendre weights (nodes and weights from
//! M. Abramowitz and I. A. Stegun, *Handbook of Mathematical Functions*, Table 25.4). The rule
//! integrates polynomials up to degree 11 exactly; for motion that is smooth on the scale of
//! the interval (its rates change little within one interval) the truncation error,
//! `O((Δt/T)¹²)` for a time scale `T`, is far below f64 rounding, which is what "accurate to
//! rounding" means here. The tests compare it with closed-form integrals.

use nalgebra::Vector3;

use crate::earth::{EarthModel, GravityModel};
use crate::error::{BatchError, Error, Result, ensure_finite1};
use crate::frames::{Eci, Frame};
use crate::limits;
use crate::motion::FrameMotion;

/// The gyro and accelerometer outputs of an ideal IMU at one instant, resolved in the body.
///
/// ```
/// use rotaframe::nav::ImuSample;
/// let s = ImuSample::default();
/// assert_eq!(s.angular_rate.norm() + s.specific_force.norm(), 0.0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct ImuSample {
    /// Angular velocity of the body relative to inertial space, resolved in the body, `ω_ib^b`
    /// (rad/s).
    pub angular_rate: Vector3<f64>,
    /// Specific force (inertial acceleration minus gravitation), resolved in the body, `f^b`
    /// (m/s²).
    pub specific_force: Vector3<f64>,
}

/// The output of an integrating IMU over one sample interval (`repr(C)`: seven f64, so C
/// arrays of the same layout can be read in place).
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::nav::ImuIncrement;
/// let inc = ImuIncrement::new(Vector3::new(0.0, 0.0, 1e-4), Vector3::new(0.0, 0.0, -0.098), 0.01);
/// assert!(inc.validate().is_ok());
/// ```
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct ImuIncrement {
    /// `Δθ = ∫ ω_ib^b dt` over the interval, in the instantaneous body axes (rad).
    pub delta_angle: Vector3<f64>,
    /// `Δv = ∫ f^b dt` over the interval, in the instantaneous body axes (m/s).
    pub delta_velocity: Vector3<f64>,
    /// Length of the interval (s).
    pub interval: f64,
}

impl ImuIncrement {
    /// An increment from its parts (not validated; see [`validate`](Self::validate)).
    #[must_use]
    pub const fn new(delta_angle: Vector3<f64>, delta_velocity: Vector3<f64>, interval: f64) -> Self {
        Self { delta_angle, delta_velocity, interval }
    }

    /// Checks that every part is finite and within its limit (`delta_angle` within
    /// [`MAX_ROTATION_ANGLE`](limits::MAX_ROTATION_ANGLE), `delta_velocity` within
    /// [`MAX_VELOCITY`](limits::MAX_VELOCITY)) and the interval in
    /// [[`MIN_INTERVAL`](limits::MIN_INTERVAL), [`MAX_INTERVAL`](limits::MAX_INTERVAL)].
    ///
    /// # Errors
    /// [`Error::NonFinite`] or [`Error::BeyondLimit`] naming `delta_angle` or
    /// `delta_velocity`; [`Error::NonFinite`], [`Error::NotPositive`] or
    /// [`Error::OutOfRange`] naming `interval`.
    pub fn validate(&self) -> Result<()> {
        if limits::within(&self.delta_angle, limits::MAX_ROTATION_ANGLE)
            & limits::within(&self.delta_velocity, limits::MAX_VELOCITY)
            & (self.interval >= limits::MIN_INTERVAL)
            & (self.interval <= limits::MAX_INTERVAL)
        {
            return Ok(());
        }
        limits::check_vector(&self.delta_angle, limits::MAX_ROTATION_ANGLE, "rad", "delta_angle")?;
        limits::check_vector(&self.delta_velocity, limits::MAX_VELOCITY, "m/s", "delta_velocity")?;
        ensure_finite1(self.interval, "interval")?;
        if self.interval <= 0.0 {
            return Err(Error::NotPositive { quantity: "interval", value: self.interval });
        }
        Err(Error::OutOfRange {
            quantity: "interval",
            value: self.interval,
            min: limits::MIN_INTERVAL,
            max: limits::MAX_INTERVAL,
        })
    }
}

/// The ideal gyro and accelerometer outputs of a body whose motion relative to the inertial
/// frame is `body`; see the [module documentation](self).
///
/// # Errors
/// As [`GravityModel::gravitation`] for the body's position (near the Earth's centre).
///
/// # Example
/// A survey van parked at 45° N reads the Earth rate and minus gravity (any strapdown text;
/// common practice):
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::earth::{earth_motion, earth_rate_ned, gravity_ned, local_level_motion, Geodetic, GravityModel, WGS84};
/// use rotaframe::frames::{Body, Ned};
/// use rotaframe::motion::FrameMotion;
/// use rotaframe::nav::ideal_imu;
/// let here = Geodetic::from_degrees(45.0, 6.0, 250.0);
/// let body = earth_motion(&WGS84, 0.0, 0.0).unwrap()
///     .then(&local_level_motion(&WGS84, &here, &Vector3::zeros(), &Vector3::zeros()).unwrap())
///     .then(&FrameMotion::<Ned, Body>::from_rotation(UnitQuaternion::identity()).unwrap());
/// let imu = ideal_imu(&WGS84, GravityModel::Normal, &body).unwrap();
/// assert_relative_eq!(imu.angular_rate, earth_rate_ned(&WGS84, here.latitude).unwrap(), epsilon = 1e-18);
/// assert_relative_eq!(imu.specific_force, -gravity_ned(&WGS84, here.latitude, here.height).unwrap(), epsilon = 1e-12);
/// ```
pub fn ideal_imu<B: Frame>(model: &EarthModel, gravity: GravityModel, body: &FrameMotion<Eci, B>) -> Result<ImuSample> {
    let gravitation = gravity.gravitation(model, &body.position())?;
    let to_body = body.rotation().inverse();
    Ok(ImuSample {
        angular_rate: body.angular_velocity_in_child(),
        specific_force: to_body * (body.acceleration() - gravitation),
    })
}

/// Number of quadrature nodes per interval in [`imu_increments`].
pub const QUADRATURE_NODES: usize = 6;

/// Gauss–Legendre abscissas on [−1, 1], ascending (Abramowitz and Stegun, Table 25.4, n = 6).
/// The table's digits are kept as published; the compiler rounds them to the nearest f64.
#[allow(clippy::excessive_precision)]
const GL_ABSCISSAS: [f64; QUADRATURE_NODES] = [
    -0.932_469_514_203_152_027_812_301_6,
    -0.661_209_386_466_264_513_661_399_6,
    -0.238_619_186_083_196_908_630_501_7,
    0.238_619_186_083_196_908_630_501_7,
    0.661_209_386_466_264_513_661_399_6,
    0.932_469_514_203_152_027_812_301_6,
];

/// Gauss–Legendre weights matching [`GL_ABSCISSAS`] (Abramowitz and Stegun, Table 25.4).
#[allow(clippy::excessive_precision)]
const GL_WEIGHTS: [f64; QUADRATURE_NODES] = [
    0.171_324_492_379_170_345_040_296_1,
    0.360_761_573_048_138_607_569_833_5,
    0.467_913_934_572_691_047_389_870_3,
    0.467_913_934_572_691_047_389_870_3,
    0.360_761_573_048_138_607_569_833_5,
    0.171_324_492_379_170_345_040_296_1,
];

/// Checks an integration interval `[start, end]` (s): both ends within
/// [`MAX_TIME`](limits::MAX_TIME) and the length in
/// [[`MIN_INTERVAL`](limits::MIN_INTERVAL), [`MAX_INTERVAL`](limits::MAX_INTERVAL)].
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::BeyondLimit`] naming `start` or `end`;
/// [`Error::NotPositive`] or [`Error::OutOfRange`] naming `interval`.
///
/// ```
/// use rotaframe::nav::check_interval;
/// assert!(check_interval(10.0, 10.01).is_ok());
/// assert_eq!(check_interval(10.0, 9.0).unwrap_err().quantity(), "interval");
/// ```
pub fn check_interval(start: f64, end: f64) -> Result<()> {
    limits::check_scalar(start, limits::MAX_TIME, "s", "start")?;
    limits::check_scalar(end, limits::MAX_TIME, "s", "end")?;
    let interval = end - start;
    if interval <= 0.0 {
        return Err(Error::NotPositive { quantity: "interval", value: interval });
    }
    if !(limits::MIN_INTERVAL..=limits::MAX_INTERVAL).contains(&interval) {
        return Err(Error::OutOfRange {
            quantity: "interval",
            value: interval,
            min: limits::MIN_INTERVAL,
            max: limits::MAX_INTERVAL,
        });
    }
    Ok(())
}

impl ImuSample {
    /// Checks that the angular rate is within
    /// [`MAX_ANGULAR_VELOCITY`](limits::MAX_ANGULAR_VELOCITY) and the specific force within
    /// [`MAX_ACCELERATION`](limits::MAX_ACCELERATION).
    ///
    /// # Errors
    /// [`Error::NonFinite`] or [`Error::BeyondLimit`] naming `angular_rate` or
    /// `specific_force`.
    pub fn validate(&self) -> Result<()> {
        limits::check_vector(&self.angular_rate, limits::MAX_ANGULAR_VELOCITY, "rad/s", "angular_rate")?;
        limits::check_vector(&self.specific_force, limits::MAX_ACCELERATION, "m/s²", "specific_force")
    }
}

/// The times at which [`increment_from_node_samples`] expects the trajectory sampled for the
/// interval `[start, end]` (s): the Gauss–Legendre nodes, ascending.
///
/// ```
/// use rotaframe::nav::quadrature_times;
/// let t = quadrature_times(0.0, 0.01);
/// assert!(t.windows(2).all(|w| w[0] < w[1]) && t[0] > 0.0 && t[5] < 0.01);
/// ```
#[must_use]
pub fn quadrature_times(start: f64, end: f64) -> [f64; QUADRATURE_NODES] {
    let mid = 0.5 * (start + end);
    let half = 0.5 * (end - start);
    GL_ABSCISSAS.map(|x| mid + half * x)
}

/// The increment over `[start, end]` from ideal IMU samples taken at
/// [`quadrature_times(start, end)`](quadrature_times), in that order.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::nav::{increment_from_node_samples, ImuSample};
/// // A constant rate integrates exactly.
/// let s = ImuSample { angular_rate: Vector3::new(0.0, 0.0, 2.0), specific_force: Vector3::new(0.0, 0.0, -9.8) };
/// let inc = increment_from_node_samples(1.0, 1.5, &[s; 6]);
/// assert!((inc.delta_angle.z - 1.0).abs() < 1e-15 && (inc.delta_velocity.z + 4.9).abs() < 1e-14);
/// ```
#[must_use]
pub fn increment_from_node_samples(start: f64, end: f64, samples: &[ImuSample; QUADRATURE_NODES]) -> ImuIncrement {
    let half = 0.5 * (end - start);
    let mut delta_angle = Vector3::zeros();
    let mut delta_velocity = Vector3::zeros();
    for (s, w) in samples.iter().zip(GL_WEIGHTS) {
        delta_angle += w * s.angular_rate;
        delta_velocity += w * s.specific_force;
    }
    ImuIncrement { delta_angle: half * delta_angle, delta_velocity: half * delta_velocity, interval: end - start }
}

/// The ideal increment over `[start, end]` of a body whose motion relative to the inertial
/// frame at time `t` is `trajectory(t)`.
///
/// # Errors
/// As [`check_interval`]; any error of `trajectory` or [`ideal_imu`].
pub fn imu_increment<B, F>(
    model: &EarthModel,
    gravity: GravityModel,
    trajectory: &mut F,
    start: f64,
    end: f64,
) -> Result<ImuIncrement>
where
    B: Frame,
    F: FnMut(f64) -> Result<FrameMotion<Eci, B>>,
{
    check_interval(start, end)?;
    let mut samples = [ImuSample::default(); QUADRATURE_NODES];
    for (sample, t) in samples.iter_mut().zip(quadrature_times(start, end)) {
        *sample = ideal_imu(model, gravity, &trajectory(t)?)?;
    }
    Ok(increment_from_node_samples(start, end, &samples))
}

/// The ideal increments over the intervals between consecutive `times` (s, strictly
/// increasing), one item per interval, of a body whose motion relative to the inertial frame
/// at time `t` is `trajectory(t)`; see the [module documentation](self) for the quadrature.
///
/// The iterator allocates nothing; collect it (`.collect::<Result<Vec<_>, _>>()`) to get all
/// increments or the first error, which carries the interval's index.
///
/// # Errors
/// Each item is an error if its interval is not increasing or finite, or as
/// [`imu_increment`].
///
/// # Example
/// A rate table spinning at 1 rad/s about the vertical at the equator, sampled at 200 Hz:
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::Vector3;
/// use rotaframe::earth::{earth_motion, local_level_motion, Geodetic, GravityModel, WGS84};
/// use rotaframe::frames::{Body, Ned};
/// use rotaframe::motion::FrameMotion;
/// use rotaframe::nav::imu_increments;
/// let site = Geodetic::from_degrees(0.0, 30.0, 10.0);
/// let ned = local_level_motion(&WGS84, &site, &Vector3::zeros(), &Vector3::zeros()).unwrap();
/// let trajectory = |t: f64| Ok(earth_motion(&WGS84, t, 0.0)?.then(&ned).then(&FrameMotion::<Ned, Body>::spin(Vector3::z(), 1.0, t)?));
/// let times: Vec<f64> = (0..=200).map(|k| k as f64 / 200.0).collect();
/// let incs: Vec<_> = imu_increments(&WGS84, GravityModel::Normal, trajectory, &times).collect::<Result<_, _>>().unwrap();
/// let total: f64 = incs.iter().map(|i| i.delta_angle.z).sum();
/// assert_relative_eq!(total, 1.0, max_relative = 1e-4); // plus the Earth rate's tiny share
/// ```
pub fn imu_increments<'t, B, F>(
    model: &'t EarthModel,
    gravity: GravityModel,
    mut trajectory: F,
    times: &'t [f64],
) -> impl Iterator<Item = core::result::Result<ImuIncrement, BatchError>> + 't
where
    B: Frame,
    F: FnMut(f64) -> Result<FrameMotion<Eci, B>> + 't,
{
    times.windows(2).enumerate().map(move |(index, w)| {
        imu_increment(model, gravity, &mut trajectory, w[0], w[1]).map_err(|error| BatchError { index, error })
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gauss_legendre_rule_integrates_degree_eleven_exactly() {
        // Property of the n = 6 Gauss–Legendre rule (Abramowitz and Stegun §25.4.29): exact for
        // polynomials of degree ≤ 2n − 1 = 11. ∫₋₁¹ x^k dx = 2/(k+1) for even k, 0 for odd.
        // Tolerance: 4 ulps of the integral, the rounding of six products and a sum.
        for k in 0..=11 {
            let sum: f64 = GL_ABSCISSAS.iter().zip(GL_WEIGHTS).map(|(x, w)| w * x.powi(k)).sum();
            let exact = if k % 2 == 0 { 2.0 / f64::from(k + 1) } else { 0.0 };
            assert!((sum - exact).abs() <= 4.0 * f64::EPSILON, "degree {k}: {sum} vs {exact}");
        }
    }
}
