//! The solution between two IMU times, consistent with the mechanization: from the state at
//! the IMU time before, the fraction `α = (τ − t_k)/(t_{k+1} − t_k)` of increment `k` (the rates
//! taken as constant across it, as [`AidedNavigator::run`](super::AidedNavigator::run) splits
//! an increment at a measurement) is compensated with the solution's sensor-error estimate and
//! stepped:
//!
//! ```text
//! x(τ) = step(x_k, compensate(α Δθ_k, α Δv_k, α T_k))
//! ```
//!
//! For a smoothed solution the result's error is the neighbours' errors interpolated: the
//! smoothed errors vary smoothly across one IMU interval (the process noise of one interval is
//! far below the smoothed σ), and the partial step adds the error of a truncated strapdown step
//! (second order in the interval; common practice).

use nalgebra::Vector3;

use super::filter::{SensorEstimate, compensate, gains};
use crate::error::{Error, Result};
use crate::nav::{ImuErrorModel, ImuIncrement, NavState, Strapdown, StrapdownConfig};

/// The state at a fraction `fraction` (0 to 1) of `increment` after `start`, with the sensor
/// errors `sensor_errors` (state order: accelerometer bias, gyro bias and, for 21 states, the
/// accelerometer and gyro scale factors; 6 or 12 values) removed as the filter removes them,
/// `model` giving the fixed misalignments.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::aided::state_between;
/// use rotaframe::earth::{earth_rate_ned, gravity_ned, Geodetic, WGS84};
/// use rotaframe::nav::{ImuErrorModel, ImuIncrement, NavState, StrapdownConfig};
/// let here = Geodetic::from_degrees(45.0, 7.0, 200.0);
/// let start = NavState::new(here, Vector3::new(10.0, 0.0, 0.0), Default::default());
/// let dt = 0.01;
/// let still = ImuIncrement::new(earth_rate_ned(&WGS84, here.latitude).unwrap() * dt, -gravity_ned(&WGS84, here.latitude, here.height).unwrap() * dt, dt);
/// let half = state_between(&StrapdownConfig::default(), &ImuErrorModel::default(), &start, &[0.0; 6], &still, 0.5).unwrap();
/// let moved = (half.position.latitude - here.latitude) * 6.37e6;
/// assert!((moved - 0.05).abs() < 1e-3); // half of 10 m/s × 10 ms north
/// ```
///
/// # Errors
/// [`Error::OutOfRange`] naming `fraction`; [`Error::LengthMismatch`] naming
/// `sensor_errors`; [`Error::Invalid`] naming `imu` (a singular gain); as
/// [`Strapdown::new`], [`ImuIncrement::validate`] and [`Strapdown::step`].
pub fn state_between(
    config: &StrapdownConfig,
    model: &ImuErrorModel,
    start: &NavState,
    sensor_errors: &[f64],
    increment: &ImuIncrement,
    fraction: f64,
) -> Result<NavState> {
    if !(0.0..=1.0).contains(&fraction) {
        return Err(Error::OutOfRange { quantity: "fraction", value: fraction, min: 0.0, max: 1.0 });
    }
    if sensor_errors.len() != 6 && sensor_errors.len() != 12 {
        return Err(Error::LengthMismatch { quantity: "sensor_errors", found: sensor_errors.len(), expected: 6 });
    }
    crate::error::ensure_finite(sensor_errors, "sensor_errors")?;
    increment.validate()?;
    let v = |i: usize| sensor_errors.get(i..i + 3).map_or_else(Vector3::zeros, Vector3::from_column_slice);
    let estimate =
        SensorEstimate { accelerometer_bias: v(0), gyro_bias: v(3), accelerometer_scale_factor: v(6), gyro_scale_factor: v(9) };
    let inverse_gain = gains(&[estimate.accelerometer_scale_factor, estimate.gyro_scale_factor], model)?;
    let mut stepper = Strapdown::new(*config, start)?;
    if fraction > 0.0 {
        let piece = ImuIncrement::new(
            increment.delta_angle * fraction,
            increment.delta_velocity * fraction,
            increment.interval * fraction,
        );
        stepper.step(&compensate(&inverse_gain, &estimate, &piece))?;
    }
    Ok(stepper.state())
}
