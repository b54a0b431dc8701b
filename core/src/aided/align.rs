//! Initial alignment: attitude from a stationary record (levelling and gyrocompassing), and
//! heading from the GNSS course over ground for IMUs that cannot gyrocompass.
//!
//! # Stationary coarse alignment
//!
//! At rest the accelerometers measure `f̄ = C_n^b (0, 0, −g)` and the gyros
//! `ω̄ = C_n^b ω_ie^n`, `ω_ie^n = Ω (cos φ, 0, −sin φ)`. With the means over the record:
//!
//! ```text
//! roll  = atan2(−f̄_y, −f̄_z)
//! pitch = atan2(f̄_x, √(f̄_y² + f̄_z²))
//! ω_l   = R_y(pitch) R_x(roll) ω̄          (the rate in level axes that turn with the heading)
//! heading = atan2(−ω_l,y, ω_l,x)            (the horizontal Earth rate points north)
//! ```
//!
//! **1σ from the sensor model.** Per axis, a sensor's error over the record has
//! `σ = √(b² + σ_GM² + N²/T)`: the fixed bias `b` and the Gauss–Markov σ taken as the
//! 1σ of the bias (an alignment cannot tell a bias from a tilt), and the white noise density
//! `N` averaged over the record's length `T`. Then
//!
//! ```text
//! σ_roll = σ_a,y / g,   σ_pitch = σ_a,x / g
//! σ_heading = √((σ_g,h / (Ω cos φ))² + (tan φ · max(σ_roll, σ_pitch))²)
//! ```
//!
//! with `σ_g,h` the larger of the horizontal gyro σ (the east gyro error turns the heading;
//! the tilt term is the vertical Earth rate leaking through a tilt) (D. H. Titterton and
//! J. L. Weston, *Strapdown Inertial Navigation Technology*, 2nd ed. (2004), §10.2; P. D.
//! Groves, *Principles of GNSS, Inertial, and Multisensor Integrated Navigation Systems*,
//! 2nd ed. (2013), §5.6; section numbers from memory). Without a sensor model the σ come
//! from the record alone: the scatter of the samples about their mean, divided by √n (white
//! noise only: pass the model for an honest σ).
//!
//! **When heading cannot be found.** Gyrocompassing needs the gyros to see the horizontal
//! Earth rate `Ω cos φ` (about 10 deg/h at 45°). With a sensor model, heading is refused when
//! `σ_g,h > ½ Ω cos φ` (a heading σ beyond about 30°); without one, when the scatter of the
//! mean or the difference between the measured horizontal rate and `Ω cos φ` exceeds
//! `½ Ω cos φ`. The refusal is [`Error::Undetermined`] naming `dtheta`; a heading given from
//! outside (a dual-antenna fix, a survey mark) is then used with its σ.
//!
//! # Heading from course over ground
//!
//! A land vehicle that does not slip sideways heads where it moves: `heading = atan2(v_E, v_N)`
//! with `σ = σ_v / |v_h|` (`σ_v` the 1σ of each horizontal velocity component), refused below a
//! minimum speed. Fine alignment follows in the filter, from zero-velocity updates while
//! standing or GNSS updates while turning.

use nalgebra::{UnitQuaternion, Vector3};

use crate::earth::{EarthModel, normal_gravity_at_height};
use crate::error::{Error, Result, ensure_finite1, ensure_finite3};
use crate::math;
use crate::nav::{ImuErrorModel, ImuIncrement, SensorErrorModel};
use crate::rotation::EulerZyx;

/// An alignment: attitude and its 1σ.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Alignment {
    /// Body to NED.
    pub attitude: UnitQuaternion<f64>,
    /// 1σ of roll, pitch and heading (rad).
    pub sigma: Vector3<f64>,
}

/// The means of a stationary record and the standard errors of the means from its scatter.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StationaryRecord {
    /// Mean specific force (m/s², body axes).
    pub specific_force: Vector3<f64>,
    /// Mean angular rate (rad/s, body axes).
    pub angular_rate: Vector3<f64>,
    /// Record length (s).
    pub duration: f64,
    /// Standard error of the mean specific force per axis, from the samples' scatter (m/s²).
    pub specific_force_error: Vector3<f64>,
    /// Standard error of the mean angular rate per axis (rad/s).
    pub angular_rate_error: Vector3<f64>,
}

impl StationaryRecord {
    /// The record of a sequence of increments: means `ΣΔv/ΣT`, `ΣΔθ/ΣT`, and the standard
    /// errors of the means from the weighted scatter of the per-sample rates.
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `dtheta` for an empty record; as [`ImuIncrement::validate`].
    ///
    /// ```
    /// use nalgebra::Vector3;
    /// use rotaframe::aided::StationaryRecord;
    /// use rotaframe::nav::ImuIncrement;
    /// let samples = [ImuIncrement::new(Vector3::zeros(), Vector3::new(0.0, 0.0, -0.098), 0.01); 10];
    /// let r = StationaryRecord::from_increments(samples.iter().copied()).unwrap();
    /// assert!((r.specific_force.z + 9.8).abs() < 1e-12 && (r.duration - 0.1).abs() < 1e-15);
    /// ```
    pub fn from_increments(increments: impl Iterator<Item = ImuIncrement> + Clone) -> Result<Self> {
        let (mut angle, mut velocity, mut duration, mut count) = (Vector3::zeros(), Vector3::zeros(), 0.0, 0usize);
        for increment in increments.clone() {
            increment.validate()?;
            angle += increment.delta_angle;
            velocity += increment.delta_velocity;
            duration += increment.interval;
            count += 1;
        }
        if count == 0 {
            return Err(Error::Invalid { quantity: "dtheta", reason: "the record is empty" });
        }
        let (rate, force) = (angle / duration, velocity / duration);
        // Weighted scatter of the per-sample rates about the means: var(mean) = Σ T_k (x_k − x̄)² / (T (n − 1)) · (1/n)
        // for equal intervals; with unequal ones the interval weights stand in for counts.
        let (mut rate_scatter, mut force_scatter) = (Vector3::zeros(), Vector3::zeros());
        for increment in increments {
            let t = increment.interval;
            let dr = increment.delta_angle / t - rate;
            let df = increment.delta_velocity / t - force;
            rate_scatter += dr.component_mul(&dr) * t;
            force_scatter += df.component_mul(&df) * t;
        }
        let n = count as f64;
        let scale = if count > 1 { 1.0 / (duration * (n - 1.0)) } else { 0.0 };
        Ok(Self {
            specific_force: force,
            angular_rate: rate,
            duration,
            specific_force_error: (force_scatter * scale).map(math::sqrt),
            angular_rate_error: (rate_scatter * scale).map(math::sqrt),
        })
    }
}

/// 1σ per axis of a sensor's mean over a record of `duration` s: `√(b² + σ_GM² + N²/T)`.
fn record_sigma(sensor: &SensorErrorModel, duration: f64) -> Vector3<f64> {
    Vector3::from_fn(|i, _| {
        let (b, m, n) = (sensor.bias[i], sensor.markov_sigma[i], sensor.noise_density[i]);
        math::sqrt(b * b + m * m + n * n / duration)
    })
}

/// Stationary coarse alignment at geodetic latitude `latitude` and height `height` (rad, m);
/// see the [module documentation](self). `imu` gives the 1σ (and decides whether the gyros
/// see the Earth rate); `heading` is an external `(heading, σ)` (rad) used instead of
/// gyrocompassing.
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::OutOfRange`] naming `lat`, `h` or `heading`;
/// [`Error::OutOfRange`] naming `heading` for a negative σ (zero: a heading taken as exact); [`Error::Invalid`]
/// naming `dv` when the mean specific force is not about `g` (within 10 %: not at rest, or not
/// m/s); [`Error::Undetermined`] naming `dtheta` when the gyros cannot see the Earth rate and
/// no heading is given.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::aided::{StationaryRecord, align_stationary};
/// use rotaframe::earth::{earth_rate_ned, gravity_ned, WGS84};
/// let lat = 0.8;
/// let record = StationaryRecord {
///     specific_force: -gravity_ned(&WGS84, lat, 0.0).unwrap(),
///     angular_rate: earth_rate_ned(&WGS84, lat).unwrap(),
///     duration: 300.0,
///     specific_force_error: Vector3::repeat(1e-5),
///     angular_rate_error: Vector3::repeat(1e-8),
/// };
/// let a = align_stationary(&WGS84, &record, lat, 0.0, None, None).unwrap();
/// assert!(a.attitude.angle() < 1e-6); // level and facing north
/// ```
pub fn align_stationary(
    model: &EarthModel,
    record: &StationaryRecord,
    latitude: f64,
    height: f64,
    imu: Option<&ImuErrorModel>,
    heading: Option<(f64, f64)>,
) -> Result<Alignment> {
    crate::earth::geodetic::check_latitude(latitude, "lat")?;
    crate::limits::check_height(model, height, "h")?;
    ensure_finite3(&record.specific_force, "dv")?;
    ensure_finite3(&record.angular_rate, "dtheta")?;
    let g = normal_gravity_at_height(model, latitude, height)?;
    let f = record.specific_force;
    if (f.norm() - g).abs() > 0.1 * g {
        return Err(Error::Invalid {
            quantity: "dv",
            reason: "the mean specific force is not within 10 % of gravity: not at rest, or not m/s",
        });
    }
    let roll = math::atan2(-f.y, -f.z);
    let pitch = math::atan2(f.x, math::hypot(f.y, f.z));
    let (accelerometer, gyro) = match imu {
        Some(m) => (record_sigma(&m.accelerometer, record.duration), record_sigma(&m.gyro, record.duration)),
        None => (record.specific_force_error, record.angular_rate_error),
    };
    let (sigma_roll, sigma_pitch) = (accelerometer.y / g, accelerometer.x / g);
    let (s, c) = math::sin_cos(latitude);
    let horizontal = model.rotation_rate() * c;
    let (yaw, sigma_yaw) = match heading {
        Some((value, sigma)) => {
            ensure_finite1(value, "heading")?;
            ensure_finite1(sigma, "heading")?;
            if sigma < 0.0 {
                return Err(Error::OutOfRange { quantity: "heading", value: sigma, min: 0.0, max: f64::INFINITY });
            }
            (value, sigma)
        }
        None => {
            let level = UnitQuaternion::from_euler_angles(roll, pitch, 0.0) * record.angular_rate;
            let sigma_h = gyro.x.max(gyro.y);
            let mismatch = if imu.is_some() { 0.0 } else { (math::hypot(level.x, level.y) - horizontal).abs() };
            if sigma_h > 0.5 * horizontal || mismatch > 0.5 * horizontal {
                return Err(Error::Undetermined {
                    quantity: "dtheta",
                    unknown: "heading",
                    reason: "the gyros cannot see the Earth's rotation here (their error is more than half of Ω cos φ); give `heading`",
                });
            }
            let tilt = sigma_roll.max(sigma_pitch) * s / c;
            (math::atan2(-level.y, level.x), math::hypot(sigma_h / horizontal, tilt))
        }
    };
    Ok(Alignment {
        attitude: EulerZyx::new(yaw, pitch, roll).to_quaternion(),
        sigma: Vector3::new(sigma_roll, sigma_pitch, sigma_yaw),
    })
}

/// Heading from the course over ground of a horizontal velocity (NED, m/s) with 1σ
/// `sigma_velocity` (m/s per horizontal component): `(heading, σ)` in radians. For vehicles
/// that head where they move (no side slip, not reversing).
///
/// # Errors
/// [`Error::NonFinite`] naming `v_ned` or `sigma`; [`Error::NotPositive`] naming `sigma` or
/// `min_speed`; [`Error::Undetermined`] naming `v_ned` below `min_speed` (m/s).
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::aided::heading_from_course;
/// let (heading, sigma) = heading_from_course(&Vector3::new(0.0, 10.0, 0.0), 0.1, 2.0).unwrap();
/// assert!((heading - std::f64::consts::FRAC_PI_2).abs() < 1e-12 && (sigma - 0.01).abs() < 1e-15);
/// ```
pub fn heading_from_course(velocity_ned: &Vector3<f64>, sigma_velocity: f64, min_speed: f64) -> Result<(f64, f64)> {
    ensure_finite3(velocity_ned, "v_ned")?;
    ensure_finite1(sigma_velocity, "sigma")?;
    ensure_finite1(min_speed, "min_speed")?;
    if sigma_velocity <= 0.0 {
        return Err(Error::NotPositive { quantity: "sigma", value: sigma_velocity });
    }
    if min_speed <= 0.0 {
        return Err(Error::NotPositive { quantity: "min_speed", value: min_speed });
    }
    let speed = math::hypot(velocity_ned.x, velocity_ned.y);
    if speed < min_speed {
        return Err(Error::Undetermined {
            quantity: "v_ned",
            unknown: "heading",
            reason: "the horizontal speed is below `min_speed`: the course over ground is noise",
        });
    }
    Ok((math::atan2(velocity_ned.y, velocity_ned.x), sigma_velocity / speed))
}
