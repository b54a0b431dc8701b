//! Strapdown inertial navigation and IMU synthesis on the frame machinery.
//!
//! * [`imu`]: the ideal gyro and accelerometer outputs of a body whose motion relative to the
//!   inertial frame is known ([`ideal_imu`]), and the angle and velocity increments an
//!   integrating IMU reports over each sample interval ([`imu_increments`]), by Gauss–Legendre
//!   quadrature of a trajectory given as a closure;
//! * [`recorded`]: the same increments from recorded arrays of time, geodetic position and
//!   attitude, through a twice-differentiable quintic Hermite interpolant;
//! * [`strapdown`]: the strapdown mechanization in local-level NED and in Earth-fixed ECEF
//!   form, a heap-free stepper ([`Strapdown`]) and a batch runner;
//! * [`sensor`]: a seeded sensor error model (bias, scale factor, misalignment, white noise,
//!   first-order Gauss–Markov bias) to corrupt ideal increments for simulation;
//! * [`lever`]: the position, velocity and acceleration of a point at a body-fixed lever arm;
//! * [`rates`]: IMU rate logs (angular rate and specific force at their own time tags) to the
//!   increments the stepper takes.
//!
//! # Words
//!
//! * **Angular rate** `ω_ib^b`: the body's angular velocity relative to inertial space,
//!   resolved in the body (what a gyro triad measures).
//! * **Specific force** `f^b = C_i^b (r̈_i − γ_i(r))`: inertial acceleration minus
//!   gravitation, resolved in the body (what an accelerometer triad measures). At rest on the
//!   Earth it is minus gravity, `−g`, pointing up.
//! * **Increments**: `Δθ = ∫ ω_ib^b dt` and `Δv = ∫ f^b dt` over one sample interval, each
//!   integrated in the instantaneous body axes, as an integrating IMU reports them. They are
//!   not the rotation vector and velocity change in fixed axes; the coning and sculling
//!   corrections of [`strapdown`] recover those.
//!
//! # Caution
//!
//! This is engineering software, not certified for safety-of-life navigation or guidance.
//! Validate it against your own requirements, applicable standards and licensed practice.

pub mod imu;
pub mod lever;
pub mod rates;
pub mod recorded;
pub mod sensor;
pub mod strapdown;

pub use imu::{
    ImuIncrement, ImuSample, QUADRATURE_NODES, check_interval, ideal_imu, imu_increment, imu_increments,
    increment_from_node_samples, quadrature_times,
};
pub use lever::{lever_arm_kinematics, lever_arm_state, sensor_mount};
pub use rates::{
    DataGap, RATE_LOG_BLOCK, RateLogError, check_rate_log, increments_from_rates, increments_in_blocks, write_increments,
};
pub use recorded::{
    CartesianSamples, GeodeticPoses, PoseSource, RecordedSample, RecordedSlices, RecordedTrajectory, SampleSource, SampledMotion,
    SegmentCache,
};
pub use sensor::{
    ImuErrorGenerator, ImuErrorModel, MAX_SENSOR_ERROR, SensorErrorModel, Xoshiro256PlusPlus,
    angle_random_walk_from_deg_per_sqrt_hour, stream_from_words, stream_words, velocity_random_walk_from_mps_per_sqrt_hour,
};
pub use strapdown::{
    MechanizationState, NavFrame, NavState, StepMemory, Strapdown, StrapdownConfig, VerticalChannel, max_aided_time_constant,
};
