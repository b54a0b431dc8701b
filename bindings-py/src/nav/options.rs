//! Error naming and option parsing shared by the navigation files: the core's quantity names
//! spelled as the Python arguments, and the `gravity` option.

use pyo3::prelude::*;
use rotaframe::earth::GravityModel;

use crate::motion::PyFrameMotion;
use crate::plumbing::errors::python_error;
use crate::plumbing::errors::{FrameMismatchError, RotaframeError, to_py};

/// The core's quantity names spelled as this module's Python arguments.
pub(crate) fn nav_name(error: rotaframe::Error) -> rotaframe::Error {
    let to = match error.quantity() {
        "delta_angle" => "dtheta",
        "delta_velocity" => "dv",
        "interval" => "dt",
        "time_constant" => "height_time_constant",
        "gyro_noise_density" => "gyro_arw_deg_per_sqrt_h",
        "accelerometer_noise_density" => "accel_vrw_mps_per_sqrt_h",
        "accelerometer_bias" => "accel_bias",
        "accelerometer_scale_factor" => "accel_scale_factor",
        "accelerometer_misalignment" => "accel_misalignment",
        "accelerometer_markov_sigma" => "accel_markov_sigma",
        "accelerometer_markov_time" => "accel_markov_time",
        _ => return error,
    };
    error.with_quantity(to)
}

/// A Python exception for a core error from this module, with argument names, the latitude in
/// degrees where the call used degrees, and `context` appended.
pub(crate) fn nav_error(error: rotaframe::Error, degrees: bool, lat: f64, context: &str) -> PyErr {
    to_py(&python_error(nav_name(error), degrees, lat), context)
}

/// Parses the `gravity` keyword.
pub(super) fn gravity_model(name: &str) -> PyResult<GravityModel> {
    match name {
        "normal" => Ok(GravityModel::Normal),
        "j2" => Ok(GravityModel::J2),
        other => Err(RotaframeError::new_err(format!("`gravity` must be \"normal\" or \"j2\", got {other:?}"))),
    }
}

pub(super) fn gravity_name(model: GravityModel) -> &'static str {
    match model {
        GravityModel::J2 => "j2",
        _ => "normal",
    }
}

/// Checks that a motion given to an IMU function is relative to the inertial frame.
pub(super) fn check_inertial(motion: &PyFrameMotion, argument: &str) -> PyResult<()> {
    match motion.parent.as_deref() {
        Some(p) if p != "eci" => Err(FrameMismatchError::new_err(format!(
            "`{argument}` must be the body's motion relative to the inertial frame \"eci\", but its parent frame is {p:?}"
        ))),
        _ => Ok(()),
    }
}
