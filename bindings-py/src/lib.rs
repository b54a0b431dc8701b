//! Python bindings for rotaframe (module `rotaframe._native`, wrapped by the pure-Python
//! package `rotaframe`).
//!
//! The bindings are thin: they convert array-likes to float64, broadcast leading axes, loop
//! over the batch with the GIL released calling the core, and map the core's errors to Python
//! exceptions. No formula is written here.

// A Python function with keyword arguments (`model`, `degrees`, `jacobian`, `out`, `threads`)
// takes them as Rust arguments: the argument count mirrors the Python signature.
#![allow(clippy::too_many_arguments)]

// Floors (scripts/check_layers.py holds them): plumbing; rotation, time; earth; motion; apparent;
// nav; graph, linearise, calibrate, aided; propagate. A file imports only from floors below its own
// (or from files of its own folder, without circles).
mod plumbing;

mod aided;
mod apparent;
mod calibrate;
mod earth;
mod graph;
mod linearise;
mod motion;
mod nav;
mod propagate;
mod rotation;
mod time;

use pyo3::prelude::*;

/// True when this process runs rotaframe's AVX2 + FMA code paths (an x86-64 CPU with those
/// instructions). Results are the same bits either way; only speed differs.
#[pyfunction]
fn fast_kernels_active() -> bool {
    rotaframe::dispatch::fast_kernels_active()
}

/// The native part of the `rotaframe` package.
#[pymodule(gil_used = false)]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    plumbing::errors::register(m)?;
    m.add_function(wrap_pyfunction!(fast_kernels_active, m)?)?;
    m.add_class::<time::leap_seconds::PyLeapSeconds>()?;
    m.add_class::<time::orientation::PyEarthOrientation>()?;
    m.add_class::<time::orientation::PyEarthOrientationAt>()?;
    m.add_function(wrap_pyfunction!(time::julian_date, m)?)?;
    m.add_function(wrap_pyfunction!(time::calendar_date, m)?)?;
    m.add_function(wrap_pyfunction!(time::convert_time, m)?)?;
    m.add_function(wrap_pyfunction!(time::gps_week_seconds, m)?)?;
    m.add_function(wrap_pyfunction!(time::from_gps_week_seconds, m)?)?;
    m.add_class::<earth::model::PyEarthModel>()?;
    m.add("WGS84", earth::model::PyEarthModel::preset(rotaframe::earth::WGS84, "WGS84"))?;
    m.add("GRS80", earth::model::PyEarthModel::preset(rotaframe::earth::GRS80, "GRS80"))?;
    m.add_function(wrap_pyfunction!(earth::model::_earth_model_from_constants, m)?)?;
    m.add_class::<motion::PyFrameMotion>()?;
    m.add_class::<apparent::PyApparentAcceleration>()?;
    m.add_class::<graph::PyFrameGraph>()?;
    m.add_function(wrap_pyfunction!(graph::_frame_graph_from_parts, m)?)?;
    m.add_function(wrap_pyfunction!(motion::_frame_motion_from_parts, m)?)?;
    m.add_function(wrap_pyfunction!(motion::earth_motion, m)?)?;
    m.add_function(wrap_pyfunction!(motion::earth_motion_iers, m)?)?;
    m.add_function(wrap_pyfunction!(earth::celestial::celestial_to_terrestrial, m)?)?;
    m.add_function(wrap_pyfunction!(earth::celestial::cip_coordinates, m)?)?;
    m.add_function(wrap_pyfunction!(earth::celestial::tio_locator, m)?)?;
    m.add_function(wrap_pyfunction!(motion::local_level_motion, m)?)?;
    m.add_function(wrap_pyfunction!(apparent::apparent_acceleration, m)?)?;
    m.add_class::<nav::strapdown::PyStrapdown>()?;
    m.add_class::<nav::history::PyStrapdownHistory>()?;
    m.add_class::<nav::sensor::PyImuErrors>()?;
    m.add_function(wrap_pyfunction!(nav::strapdown::_strapdown_from_parts, m)?)?;
    m.add_function(wrap_pyfunction!(nav::imu::ideal_imu, m)?)?;
    m.add_function(wrap_pyfunction!(nav::imu::imu_increments, m)?)?;
    m.add_function(wrap_pyfunction!(nav::imu::imu_increments_from_samples, m)?)?;
    m.add_function(wrap_pyfunction!(nav::imu::increments_from_rates, m)?)?;
    m.add_function(wrap_pyfunction!(nav::imu::motion_from_samples, m)?)?;
    m.add_function(wrap_pyfunction!(nav::lever::lever_arm_state, m)?)?;
    m.add_function(wrap_pyfunction!(nav::strapdown::run_strapdowns, m)?)?;
    m.add_function(wrap_pyfunction!(nav::sensor::_imu_errors_from_parts, m)?)?;
    m.add_class::<aided::PyMeasurementSet>()?;
    m.add_class::<aided::PyPositionFixes>()?;
    m.add_class::<aided::PyVelocityFixes>()?;
    m.add_class::<aided::PyZeroVelocity>()?;
    m.add_class::<aided::PyZeroAngularRate>()?;
    m.add_class::<aided::PyHeightFixes>()?;
    m.add_class::<aided::PyHeadingFixes>()?;
    m.add_class::<aided::PyVehicleConstraint>()?;
    m.add_class::<aided::PyOdometerSpeeds>()?;
    m.add_class::<aided::PyInnovationLog>()?;
    m.add_class::<aided::PyAidedResult>()?;
    m.add_class::<aided::PySolutionAt>()?;
    m.add_class::<aided::PyErrorBudget>()?;
    m.add_class::<aided::PyAidedNavigator>()?;
    m.add_class::<aided::PyAlignment>()?;
    m.add_function(wrap_pyfunction!(aided::_measurement_set_from_parts, m)?)?;
    m.add_function(wrap_pyfunction!(aided::_aided_navigator_from_parts, m)?)?;
    m.add_function(wrap_pyfunction!(aided::align_stationary, m)?)?;
    m.add_function(wrap_pyfunction!(aided::heading_from_course, m)?)?;
    m.add_class::<propagate::PyPropagation>()?;
    m.add_class::<propagate::PyDeflectionBudget>()?;
    m.add_class::<propagate::PyDrag>()?;
    m.add_function(wrap_pyfunction!(propagate::propagate, m)?)?;
    m.add_function(wrap_pyfunction!(linearise::discrete_error_model, m)?)?;
    m.add_function(wrap_pyfunction!(linearise::predict_covariance, m)?)?;
    m.add_class::<calibrate::PyCalibration>()?;
    m.add_class::<calibrate::PyNoiseTerms>()?;
    m.add_function(wrap_pyfunction!(calibrate::_calibration_from_parts, m)?)?;
    m.add_function(wrap_pyfunction!(calibrate::calibrate_accelerometers, m)?)?;
    m.add_function(wrap_pyfunction!(calibrate::calibrate_accelerometers_by_magnitude, m)?)?;
    m.add_function(wrap_pyfunction!(calibrate::calibrate_gyros, m)?)?;
    m.add_function(wrap_pyfunction!(calibrate::allan_deviation, m)?)?;
    m.add_function(wrap_pyfunction!(calibrate::fit_noise_terms, m)?)?;
    for f in [
        wrap_pyfunction!(earth::geodesy::geodetic_to_ecef, m)?,
        wrap_pyfunction!(earth::geodesy::ecef_to_geodetic, m)?,
        wrap_pyfunction!(earth::geodesy::ned_from_ecef, m)?,
        wrap_pyfunction!(earth::geodesy::enu_from_ecef, m)?,
        wrap_pyfunction!(earth::geodesy::radii_of_curvature, m)?,
        wrap_pyfunction!(earth::geodesy::normal_gravity, m)?,
        wrap_pyfunction!(earth::geodesy::schuler_period, m)?,
        wrap_pyfunction!(earth::geodesy::gravity_ned, m)?,
        wrap_pyfunction!(earth::geodesy::gravitation_ecef, m)?,
        wrap_pyfunction!(earth::geodesy::gravity_ecef, m)?,
        wrap_pyfunction!(earth::geodesy::centripetal_acceleration_ecef, m)?,
        wrap_pyfunction!(earth::geodesy::earth_rate_ned, m)?,
        wrap_pyfunction!(earth::geodesy::transport_rate_ned, m)?,
        wrap_pyfunction!(earth::geodesy::coriolis_ned, m)?,
        wrap_pyfunction!(earth::geodesy::eotvos_correction, m)?,
        wrap_pyfunction!(earth::geodesy::coriolis_parameter, m)?,
        wrap_pyfunction!(earth::geodesy::earth_rotation_angle, m)?,
        wrap_pyfunction!(rotation::quat_from_euler, m)?,
        wrap_pyfunction!(rotation::euler_from_quat, m)?,
        wrap_pyfunction!(rotation::quat_to_matrix, m)?,
        wrap_pyfunction!(rotation::matrix_to_quat, m)?,
        wrap_pyfunction!(rotation::quat_multiply, m)?,
        wrap_pyfunction!(rotation::quat_inverse, m)?,
        wrap_pyfunction!(rotation::quat_rotate, m)?,
        wrap_pyfunction!(rotation::quat_from_rotvec, m)?,
        wrap_pyfunction!(rotation::quat_to_rotvec, m)?,
    ] {
        m.add_function(f)?;
    }
    Ok(())
}
