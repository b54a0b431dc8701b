//! Navigation: ideal IMU output and increments, the strapdown stepper (NED and ECEF) as a
//! plain struct, the IMU error model and lever arms.
//!
//! The stepper's whole state lives in `rf_strapdown`, a plain struct the caller owns (static
//! storage, stack, anywhere); each call converts it to the core's stepper and back. Nothing is
//! allocated and nothing is kept between calls.

use rotaframe::earth::{Geodetic, GravityModel};
use rotaframe::frames::{AnyFrame, Eci};
use rotaframe::nalgebra::{Matrix3, Vector3};
use rotaframe::nav::{
    self, ImuErrorGenerator, ImuErrorModel, ImuIncrement, ImuSample, MechanizationState, NavFrame, NavState, RecordedSample,
    RecordedTrajectory, SampleSource, SensorErrorModel, StepMemory, Strapdown, StrapdownConfig, VerticalChannel,
};

use crate::status::{
    Fallible, RF_STATUS_INVALID_ARGUMENT, RF_STATUS_NULL_POINTER, boundary, disjoint, distinct_outputs, out, read, region,
    rf_status, slice, slice_mut,
};
use crate::types::{rf_earth_model, rf_frame_motion, rf_geodetic, rf_quat, rf_vec3};

/// Gravity models for `rf_strapdown_config.gravity` and `rf_ideal_imu`.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum rf_gravity_model {
    /// Normal gravity with the second-order height correction, along the ellipsoidal normal.
    RF_GRAVITY_NORMAL = 0,
    /// J2 gravitation plus the centrifugal term.
    RF_GRAVITY_J2 = 1,
}

/// Mechanizations for `rf_strapdown_config.frame`.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum rf_nav_frame {
    /// Local-level north-east-down (singular within 1e-6 rad of a pole).
    RF_NAV_FRAME_NED = 0,
    /// Earth-fixed Cartesian (regular everywhere).
    RF_NAV_FRAME_ECEF = 1,
}

/// Vertical-channel treatments for `rf_strapdown_config.vertical`.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum rf_vertical_channel {
    /// Pure inertial height (unstable over tens of minutes).
    RF_VERTICAL_FREE = 0,
    /// Height set to the external reference after every step.
    RF_VERTICAL_HOLD = 1,
    /// Second-order loop to the reference with time constant `height_time_constant`.
    RF_VERTICAL_AIDED = 2,
}

crate::enums::c_enum!(rf_gravity_model { RF_GRAVITY_NORMAL, RF_GRAVITY_J2 });
crate::enums::c_enum!(rf_nav_frame { RF_NAV_FRAME_NED, RF_NAV_FRAME_ECEF });
crate::enums::c_enum!(rf_vertical_channel { RF_VERTICAL_FREE, RF_VERTICAL_HOLD, RF_VERTICAL_AIDED });

/// Ideal gyro and accelerometer outputs at one instant, resolved in the body.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_imu_sample {
    /// Angular velocity of the body relative to inertial space (rad/s).
    pub angular_rate: rf_vec3,
    /// Specific force: inertial acceleration minus gravitation (m/s²).
    pub specific_force: rf_vec3,
}

/// The output of an integrating IMU over one interval.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_imu_increment {
    /// Integral of the angular rate over the interval, in body axes (rad).
    pub delta_angle: rf_vec3,
    /// Integral of the specific force over the interval, in body axes (m/s).
    pub delta_velocity: rf_vec3,
    /// Interval length (s), positive.
    pub interval: f64,
}

/// One sample of a recorded log, for `rf_imu_increments_from_record`.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_recorded_sample {
    /// Time (s); strictly increasing along the log.
    pub time: f64,
    /// Geodetic position of the body.
    pub position: rf_geodetic,
    /// Body-to-NED attitude quaternion (unit norm).
    pub attitude: rf_quat,
}

/// Position, velocity and attitude as every mechanization reports them.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_nav_state {
    /// Geodetic position.
    pub position: rf_geodetic,
    /// Velocity relative to the Earth, resolved in NED (m/s).
    pub velocity_ned: rf_vec3,
    /// Body-to-NED attitude quaternion.
    pub attitude: rf_quat,
}

/// Settings of a strapdown stepper. Zero-initialised (`= {0}`) it is a NED mechanization
/// with normal gravity, a free vertical channel and (the all-zero `earth`) WGS 84.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_strapdown_config {
    /// The Earth model.
    pub earth: rf_earth_model,
    /// An `rf_gravity_model` value.
    pub gravity: u32,
    /// An `rf_vertical_channel` value.
    pub vertical: u32,
    /// An `rf_nav_frame` value.
    pub frame: u32,
    /// Loop time constant (s) for `RF_VERTICAL_AIDED`; ignored otherwise.
    pub height_time_constant: f64,
}

/// The complete state of a strapdown stepper, as plain data. Create it with
/// `rf_strapdown_init`; advance it with `rf_strapdown_step`; read it with `rf_strapdown_state`.
/// The mechanization's own coordinates are kept: for NED `position` is (latitude, longitude,
/// height), `velocity` the NED velocity and `attitude` body-to-NED; for ECEF `position` and
/// `velocity` are ECEF vectors and `attitude` body-to-ECEF.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_strapdown {
    /// Settings.
    pub config: rf_strapdown_config,
    /// Position in the mechanization's coordinates.
    pub position: rf_vec3,
    /// Velocity relative to the Earth in the mechanization's axes (m/s).
    pub velocity: rf_vec3,
    /// Attitude: body to the mechanization's axes.
    pub attitude: rf_quat,
    /// The previous step's increment, used for coning and sculling when `has_previous` is 1.
    pub previous: rf_imu_increment,
    /// 1 if `previous` holds the previous step's increment, else 0.
    pub has_previous: u32,
    /// External ellipsoidal height reference (m) for the hold and aided vertical channels.
    pub height_reference: f64,
    /// Time since the initial state (s), rounded; `rf_strapdown_state` users add
    /// `elapsed_correction` for the exact sum.
    pub elapsed: f64,
    /// Rounding error of `elapsed` (s), carried by compensated summation.
    pub elapsed_correction: f64,
}

/// Error model of one sensor triad (gyro units rad/s, accelerometer units m/s²).
/// Zero-initialised (`= {0}`) it is a perfect sensor: no bias, scale or misalignment error, no
/// noise and no Gauss–Markov process.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_sensor_errors {
    /// Fixed bias per axis.
    pub bias: rf_vec3,
    /// Scale-factor error per axis (dimensionless).
    pub scale_factor: rf_vec3,
    /// Misalignment matrix, row-major, zero diagonal (dimensionless).
    pub misalignment: [f64; 9],
    /// White-noise density per axis (rad/√s or m/s/√s; see `rf_angle_random_walk_si`).
    pub noise_density: rf_vec3,
    /// Gauss–Markov bias steady-state standard deviation per axis.
    pub markov_sigma: rf_vec3,
    /// Gauss–Markov correlation time per axis (s); positive, INFINITY for a random constant, or
    /// 0 (with `markov_sigma` 0) for no Gauss–Markov process.
    pub markov_time: rf_vec3,
}

/// Error models of both triads. Zero-initialised it is a perfect IMU.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_imu_error_model {
    /// Gyro triad.
    pub gyro: rf_sensor_errors,
    /// Accelerometer triad.
    pub accelerometer: rf_sensor_errors,
}

/// A seeded IMU error generator's state, as plain data: the model, the Gauss–Markov states
/// and the random stream (`stream`, opaque: do not modify). Create with `rf_imu_errors_init`.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_imu_errors {
    /// The error model.
    pub model: rf_imu_error_model,
    /// Gyro Gauss–Markov bias state (rad/s).
    pub gyro_markov: rf_vec3,
    /// Accelerometer Gauss–Markov bias state (m/s²).
    pub accelerometer_markov: rf_vec3,
    /// State of the xoshiro256++ random stream.
    pub stream: [u64; 4],
}

/// Signature of a trajectory callback for `rf_imu_increment_of_trajectory`: writes the body's
/// motion relative to the inertial frame at `time` (s) to `out_motion` and returns
/// `RF_STATUS_OK`, or any other status to abort.
pub type rf_trajectory_fn =
    Option<unsafe extern "C" fn(context: *mut core::ffi::c_void, time: f64, out_motion: *mut rf_frame_motion) -> rf_status>;

const _: () = {
    assert!(core::mem::size_of::<rf_imu_increment>() == core::mem::size_of::<ImuIncrement>());
    assert!(core::mem::align_of::<rf_imu_increment>() == core::mem::align_of::<ImuIncrement>());
    assert!(core::mem::offset_of!(rf_imu_increment, delta_angle) == core::mem::offset_of!(ImuIncrement, delta_angle));
    assert!(core::mem::offset_of!(rf_imu_increment, delta_velocity) == core::mem::offset_of!(ImuIncrement, delta_velocity));
    assert!(core::mem::offset_of!(rf_imu_increment, interval) == core::mem::offset_of!(ImuIncrement, interval));
};

impl From<rf_imu_increment> for ImuIncrement {
    fn from(i: rf_imu_increment) -> Self {
        ImuIncrement::new(i.delta_angle.into(), i.delta_velocity.into(), i.interval)
    }
}

impl From<&ImuIncrement> for rf_imu_increment {
    fn from(i: &ImuIncrement) -> Self {
        Self { delta_angle: i.delta_angle.into(), delta_velocity: i.delta_velocity.into(), interval: i.interval }
    }
}

impl From<&NavState> for rf_nav_state {
    fn from(s: &NavState) -> Self {
        Self { position: s.position.into(), velocity_ned: s.velocity_ned.into(), attitude: (&s.attitude).into() }
    }
}

impl rf_nav_state {
    fn to_core(self) -> Fallible<NavState> {
        Ok(NavState::new(self.position.into(), self.velocity_ned.into(), self.attitude.to_core("attitude")?))
    }
}

pub(crate) fn gravity_model(value: u32) -> Fallible<GravityModel> {
    match rf_gravity_model::from_u32(value).ok_or(RF_STATUS_INVALID_ARGUMENT)? {
        rf_gravity_model::RF_GRAVITY_NORMAL => Ok(GravityModel::Normal),
        rf_gravity_model::RF_GRAVITY_J2 => Ok(GravityModel::J2),
    }
}

impl rf_strapdown_config {
    fn to_core(self) -> Fallible<StrapdownConfig> {
        let vertical = match rf_vertical_channel::from_u32(self.vertical).ok_or(RF_STATUS_INVALID_ARGUMENT)? {
            rf_vertical_channel::RF_VERTICAL_FREE => VerticalChannel::Free,
            rf_vertical_channel::RF_VERTICAL_HOLD => VerticalChannel::Hold,
            rf_vertical_channel::RF_VERTICAL_AIDED => VerticalChannel::Aided { time_constant: self.height_time_constant },
        };
        let frame = match rf_nav_frame::from_u32(self.frame).ok_or(RF_STATUS_INVALID_ARGUMENT)? {
            rf_nav_frame::RF_NAV_FRAME_NED => NavFrame::Ned,
            rf_nav_frame::RF_NAV_FRAME_ECEF => NavFrame::Ecef,
        };
        let config = StrapdownConfig { earth: self.earth.to_core()?, gravity: gravity_model(self.gravity)?, vertical, frame };
        config.validate()?;
        Ok(config)
    }
}

impl rf_strapdown {
    /// The core configuration (validated).
    pub(crate) fn config_core(&self) -> Fallible<StrapdownConfig> {
        self.config.to_core()
    }

    /// The core stepper (validated).
    pub(crate) fn to_core(self) -> Fallible<Strapdown> {
        let config = self.config.to_core()?;
        let state = match config.frame {
            NavFrame::Ecef => MechanizationState::Ecef {
                position_ecef: self.position.into(),
                velocity_ecef: self.velocity.into(),
                attitude_ecef: self.attitude.to_core("attitude_ecef")?,
            },
            _ => MechanizationState::Ned {
                position: Geodetic::new(self.position.x, self.position.y, self.position.z),
                velocity_ned: self.velocity.into(),
                attitude: self.attitude.to_core("attitude")?,
            },
        };
        let previous = match self.has_previous {
            0 => None,
            1 => Some(self.previous.into()),
            _ => return Err(RF_STATUS_INVALID_ARGUMENT),
        };
        let memory = StepMemory {
            previous,
            height_reference: self.height_reference,
            elapsed: self.elapsed,
            elapsed_correction: self.elapsed_correction,
        };
        Ok(Strapdown::from_parts(config, state, memory)?)
    }

    /// Writes a core stepper's parts back (the configuration is unchanged by stepping).
    pub(crate) fn store(&mut self, stepper: &Strapdown) {
        let (_, state, memory) = stepper.parts();
        match state {
            MechanizationState::Ned { position, velocity_ned, attitude } => {
                self.position = rf_vec3 { x: position.latitude, y: position.longitude, z: position.height };
                self.velocity = velocity_ned.into();
                self.attitude = (&attitude).into();
            }
            MechanizationState::Ecef { position_ecef, velocity_ecef, attitude_ecef } => {
                self.position = position_ecef.into();
                self.velocity = velocity_ecef.into();
                self.attitude = (&attitude_ecef).into();
            }
        }
        self.has_previous = u32::from(memory.previous.is_some());
        self.previous = memory.previous.as_ref().map(Into::into).unwrap_or_default();
        self.height_reference = memory.height_reference;
        self.elapsed = memory.elapsed;
        self.elapsed_correction = memory.elapsed_correction;
    }
}

/// The ideal gyro and accelerometer outputs of a body whose motion relative to the
/// Earth-centred inertial frame is `body_in_inertial` (the caller vouches for the parent),
/// with gravity model `gravity` (an `rf_gravity_model` value).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_ideal_imu(
    model: *const rf_earth_model,
    gravity: u32,
    body_in_inertial: *const rf_frame_motion,
    out_sample: *mut rf_imu_sample,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(model) }?.to_core()?;
        let body = unsafe { read(body_in_inertial) }?.to_core()?.assume_frames::<Eci, AnyFrame>();
        let out_sample = unsafe { out(out_sample) }?;
        let s = nav::ideal_imu(&m, gravity_model(gravity)?, &body)?;
        *out_sample = rf_imu_sample { angular_rate: s.angular_rate.into(), specific_force: s.specific_force.into() };
        Ok(())
    })
}

/// Writes the six times in `[start, end]` at which to sample a trajectory for
/// `rf_imu_increment_from_samples` (the Gauss–Legendre nodes, ascending).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_quadrature_times(start: f64, end: f64, out_times: *mut f64) -> rf_status {
    boundary(|| {
        nav::check_interval(start, end)?;
        let out_times = unsafe { slice_mut(out_times, nav::QUADRATURE_NODES) }?;
        out_times.copy_from_slice(&nav::quadrature_times(start, end));
        Ok(())
    })
}

/// The increment over `[start, end]` from six ideal samples taken at `rf_quadrature_times`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_imu_increment_from_samples(
    start: f64,
    end: f64,
    samples: *const rf_imu_sample,
    out_increment: *mut rf_imu_increment,
) -> rf_status {
    boundary(|| {
        let samples = unsafe { slice(samples, nav::QUADRATURE_NODES) }?;
        let out_increment = unsafe { out(out_increment) }?;
        nav::check_interval(start, end)?;
        let mut core_samples = [ImuSample::default(); nav::QUADRATURE_NODES];
        for (c, s) in core_samples.iter_mut().zip(samples) {
            *c = ImuSample { angular_rate: s.angular_rate.into(), specific_force: s.specific_force.into() };
            c.validate()?;
        }
        let increment = nav::increment_from_node_samples(start, end, &core_samples);
        increment.validate()?;
        *out_increment = (&increment).into();
        Ok(())
    })
}

/// The ideal increment over `[start, end]` of a body whose motion relative to the inertial
/// frame the callback `trajectory` writes for any time asked (six calls per interval). A
/// status other than `RF_STATUS_OK` from the callback is returned as is.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_imu_increment_of_trajectory(
    model: *const rf_earth_model,
    gravity: u32,
    trajectory: rf_trajectory_fn,
    context: *mut core::ffi::c_void,
    start: f64,
    end: f64,
    out_increment: *mut rf_imu_increment,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(model) }?.to_core()?;
        let gravity = gravity_model(gravity)?;
        let trajectory = trajectory.ok_or(RF_STATUS_NULL_POINTER)?;
        let out_increment = unsafe { out(out_increment) }?;
        let mut callback_status = crate::status::RF_STATUS_OK;
        let mut motion_at = |t: f64| -> rotaframe::Result<rotaframe::motion::FrameMotion<Eci, AnyFrame>> {
            let mut motion = rf_frame_motion::default();
            // SAFETY: the caller guarantees that `trajectory` may be called with `context`.
            let status = unsafe { trajectory(context, t, &mut motion) };
            if status != crate::status::RF_STATUS_OK {
                callback_status = status;
                return Err(rotaframe::Error::Invalid { quantity: "trajectory", reason: "the callback failed" });
            }
            let motion = motion.to_core().map_err(|s| {
                callback_status = s;
                rotaframe::Error::Invalid { quantity: "trajectory", reason: "the callback wrote a bad motion" }
            })?;
            Ok(motion.assume_frames())
        };
        let increment = nav::imu_increment(&m, gravity, &mut motion_at, start, end);
        let increment = match increment {
            Ok(i) => i,
            Err(_) if callback_status != crate::status::RF_STATUS_OK => return Err(callback_status),
            Err(e) => return Err(e.into()),
        };
        *out_increment = (&increment).into();
        Ok(())
    })
}

/// A caller's array of recorded samples, read in place.
struct RecordedArray<'a>(&'a [rf_recorded_sample]);

impl SampleSource for RecordedArray<'_> {
    fn len(&self) -> usize {
        self.0.len()
    }
    fn sample(&self, index: usize) -> RecordedSample {
        let s = &self.0[index];
        RecordedSample {
            time: s.time,
            position: s.position.into(),
            attitude: [s.attitude.w, s.attitude.x, s.attitude.y, s.attitude.z],
        }
    }
    fn time(&self, index: usize) -> f64 {
        self.0[index].time
    }
}

/// Ideal IMU increments from a recorded log of time, geodetic position and body-to-NED
/// attitude (at least 3 samples), interpolated as the core's recorded-trajectory method
/// describes (7-point derivative stencils and quintic Hermite segments; accurate to about
/// 1e-13 rad and 1e-6 m/s per 10 ms increment at 100 Hz for smooth motion).
///
/// The intervals are those between consecutive `times` (`time_count` ≥ 2, strictly
/// increasing, within the log), and `time_count − 1` increments are written; pass `times` NULL
/// and `time_count` 0 to use the samples' own times (`sample_count − 1` increments). On error
/// nothing is written: the increments are computed once to check and once to write, so the
/// call costs twice the work (about 10 µs per interval).
#[unsafe(no_mangle)]
#[allow(clippy::too_many_arguments)]
pub unsafe extern "C" fn rf_imu_increments_from_record(
    model: *const rf_earth_model,
    gravity: u32,
    samples: *const rf_recorded_sample,
    sample_count: usize,
    times: *const f64,
    time_count: usize,
    out_increments: *mut rf_imu_increment,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(model) }?.to_core()?;
        let gravity = gravity_model(gravity)?;
        let samples = unsafe { slice(samples, sample_count) }?;
        let grid = if times.is_null() && time_count == 0 { None } else { Some(unsafe { slice(times, time_count) }?) };
        let intervals = match grid {
            None => sample_count.saturating_sub(1),
            Some(g) if g.len() < 2 => {
                return Err(rotaframe::Error::LengthMismatch { quantity: "times", found: g.len(), expected: 2 }.into());
            }
            Some(g) => g.len() - 1,
        };
        let mut inputs = [region(samples.as_ptr(), sample_count), region(model, 1), (0, 0)];
        if let Some(g) = grid {
            inputs[2] = region(g.as_ptr(), g.len());
        }
        disjoint(region(out_increments, intervals), &inputs)?;
        let out_increments = unsafe { slice_mut(out_increments, intervals) }?;
        let mut path = RecordedTrajectory::new(m, RecordedArray(samples))?;
        let time = |k: usize| grid.map_or_else(|| samples[k].time, |g| g[k]);
        let mut increment =
            |k: usize| nav::imu_increment(&m, gravity, &mut |t| path.inertial_motion_at::<AnyFrame>(t), time(k), time(k + 1));
        // Check every interval first, so that a bad one leaves the output untouched.
        for k in 0..intervals {
            increment(k)?;
        }
        for (k, o) in out_increments.iter_mut().enumerate() {
            *o = (&increment(k)?).into();
        }
        Ok(())
    })
}

/// A gap in a log, as `rf_increments_from_rates` reports it.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_data_gap {
    /// Index of the tag before the gap.
    pub index: usize,
    /// The tag before the gap (s).
    pub start: f64,
    /// The tag after the gap (s).
    pub end: f64,
}

/// Increments from an IMU rate log: `count` (≥ 2) time tags `times` (s, strictly increasing),
/// angular rates `angular_rates` (rad/s) and specific forces `specific_forces` (m/s²), body
/// axes, each sample at its own tag; the `count − 1` increments over the intervals between the
/// tags are written to `out_increments`. Each interval is integrated by two-point
/// Gauss–Legendre quadrature of the cubic through the four nearest samples (a fourth-order
/// rule; the core's `nav::rates`). `max_gap` (s) is the longest interval allowed (`INFINITY`
/// for any): a longer one returns `RF_STATUS_DATA_GAP` and, when `out_gap` is not NULL, writes
/// where it is. Duplicated or backward tags return `RF_STATUS_INVALID_ARGUMENT` (or
/// `RF_STATUS_NOT_POSITIVE` for a zero interval). On error nothing else is written.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_increments_from_rates(
    times: *const f64,
    angular_rates: *const rf_vec3,
    specific_forces: *const rf_vec3,
    count: usize,
    max_gap: f64,
    out_increments: *mut rf_imu_increment,
    out_gap: *mut rf_data_gap,
) -> rf_status {
    boundary(|| {
        let t = unsafe { slice(times, count) }?;
        let rates = unsafe { slice(angular_rates, count) }?;
        let forces = unsafe { slice(specific_forces, count) }?;
        let intervals = count.saturating_sub(1);
        let inputs = [region(times, count), region(angular_rates, count), region(specific_forces, count)];
        disjoint(region(out_increments, intervals), &inputs)?;
        if !out_gap.is_null() {
            disjoint(region(out_gap, 1), &inputs)?;
            disjoint(region(out_gap, 1), &[region(out_increments, intervals)])?;
        }
        let out = unsafe { slice_mut(out_increments, intervals) }?;
        let limit = if max_gap == f64::INFINITY { None } else { Some(max_gap) };
        match nav::check_rate_log(t, rates, forces, limit) {
            Err(nav::RateLogError::Gap(gap)) => {
                if !out_gap.is_null() {
                    // Checked non-null and disjoint from the inputs above.
                    unsafe { *out_gap = rf_data_gap { index: gap.index, start: gap.start, end: gap.end } };
                }
                return Err(crate::status::RF_STATUS_DATA_GAP);
            }
            Err(nav::RateLogError::Input { error, .. }) => return Err(error.into()),
            Ok(()) => {}
        }
        // In blocks through a stack buffer: the C library needs no heap.
        let mut block = [nav::ImuIncrement::default(); 64];
        for (b, out_block) in out.chunks_mut(block.len()).enumerate() {
            let part = &mut block[..out_block.len()];
            nav::write_increments(t, rates, forces, b * 64, part)?;
            for (o, i) in out_block.iter_mut().zip(part.iter()) {
                *o = i.into();
            }
        }
        Ok(())
    })
}

/// A stepper at `initial` with settings `config`, written to `out_strapdown`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_strapdown_init(
    config: *const rf_strapdown_config,
    initial: *const rf_nav_state,
    out_strapdown: *mut rf_strapdown,
) -> rf_status {
    boundary(|| {
        let config_c = unsafe { read(config) }?;
        let initial = unsafe { read(initial) }?.to_core()?;
        let out_strapdown = unsafe { out(out_strapdown) }?;
        let stepper = Strapdown::new(config_c.to_core()?, &initial)?;
        let mut result = rf_strapdown { config: config_c, ..rf_strapdown::default() };
        result.store(&stepper);
        *out_strapdown = result;
        Ok(())
    })
}

/// Replaces the position, velocity and attitude of `strapdown` with `state` (an external fix,
/// a filter's correction), keeping its step memory (the previous increment for coning and
/// sculling, the height reference, the elapsed time). On error it is unchanged.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_strapdown_set_state(strapdown: *mut rf_strapdown, state: *const rf_nav_state) -> rf_status {
    boundary(|| {
        let state = unsafe { read(state) }?.to_core()?;
        let strapdown = unsafe { out(strapdown) }?;
        let mut stepper = strapdown.to_core()?;
        stepper.set_state(&state)?;
        strapdown.store(&stepper);
        Ok(())
    })
}

/// Advances `strapdown` by one increment. On error it is unchanged.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_strapdown_step(strapdown: *mut rf_strapdown, increment: *const rf_imu_increment) -> rf_status {
    boundary(|| {
        let increment = unsafe { read(increment) }?;
        let strapdown = unsafe { out(strapdown) }?;
        let mut stepper = strapdown.to_core()?;
        stepper.step(&increment.into())?;
        strapdown.store(&stepper);
        Ok(())
    })
}

/// Runs `count` increments; with `height_reference` (NULL allowed) element `k` is set as the
/// height reference before step `k`. Writes the state after every step to `out_states`. On
/// error neither `strapdown` nor `out_states` changes (the steps are run twice: once to check,
/// once to write; call `rf_strapdown_step` in a loop where every cycle counts).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_strapdown_run(
    strapdown: *mut rf_strapdown,
    increments: *const rf_imu_increment,
    height_reference: *const f64,
    count: usize,
    out_states: *mut rf_nav_state,
) -> rf_status {
    boundary(|| {
        // Read in place: `rf_imu_increment` has the layout of the core's `ImuIncrement`
        // (asserted at the top of this module).
        let increments = unsafe { slice(increments.cast::<ImuIncrement>(), count) }?;
        let heights = if height_reference.is_null() { None } else { Some(unsafe { slice(height_reference, count) }?) };
        let input_regions = [region(increments.as_ptr(), count), heights.map_or((0, 0), |h| region(h.as_ptr(), count))];
        if strapdown.is_null() {
            return Err(RF_STATUS_NULL_POINTER);
        }
        disjoint(region(strapdown, 1), &input_regions)?;
        disjoint(region(out_states, count), &[input_regions[0], input_regions[1], region(strapdown, 1)])?;
        let strapdown = unsafe { out(strapdown) }?;
        let out_states = unsafe { slice_mut(out_states, count) }?;
        let mut stepper = strapdown.to_core()?;
        // The core's runner, once on a copy to find any failing step, then for real.
        let mut trial = stepper;
        trial.run_each(increments, heights, |_, _| {}).map_err(|e| e.error)?;
        let mut iter = out_states.iter_mut();
        stepper
            .run_each(increments, heights, |_, s| {
                if let Some(o) = iter.next() {
                    *o = (&s.state()).into();
                }
            })
            .map_err(|e| e.error)?;
        strapdown.store(&stepper);
        Ok(())
    })
}

/// Sets the external ellipsoidal height reference (m) used from the next step on.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_strapdown_set_height_reference(strapdown: *mut rf_strapdown, height_reference: f64) -> rf_status {
    boundary(|| {
        let strapdown = unsafe { out(strapdown) }?;
        let mut stepper = strapdown.to_core()?;
        stepper.set_height_reference(height_reference)?;
        strapdown.store(&stepper);
        Ok(())
    })
}

/// Forgets the previous increment, so that the next step applies no coning and sculling
/// corrections (after a data gap).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_strapdown_reset_history(strapdown: *mut rf_strapdown) -> rf_status {
    boundary(|| {
        let strapdown = unsafe { out(strapdown) }?;
        let mut stepper = strapdown.to_core()?;
        stepper.reset_history();
        strapdown.store(&stepper);
        Ok(())
    })
}

/// The current geodetic position, NED velocity and body-to-NED attitude.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_strapdown_state(strapdown: *const rf_strapdown, out_state: *mut rf_nav_state) -> rf_status {
    boundary(|| {
        let stepper = unsafe { read(strapdown) }?.to_core()?;
        *unsafe { out(out_state) }? = (&stepper.state()).into();
        Ok(())
    })
}

/// A noise density in trade units converted by `convert`, refused when negative or not finite
/// (a density is a non-negative spectral amplitude).
fn density(value: f64, convert: fn(f64) -> f64, quantity: &'static str) -> Fallible<f64> {
    if !value.is_finite() {
        return Err(rotaframe::Error::NonFinite { quantity }.into());
    }
    if value < 0.0 {
        return Err(rotaframe::Error::Invalid { quantity, reason: "a noise density must be non-negative" }.into());
    }
    Ok(convert(value))
}

/// Angle random walk in deg/√h (non-negative) converted to the white-noise density in rad/√s,
/// written to `out_density`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_angle_random_walk_si(deg_per_sqrt_hour: f64, out_density: *mut f64) -> rf_status {
    boundary(|| {
        let out_density = unsafe { out(out_density) }?;
        *out_density = density(deg_per_sqrt_hour, nav::angle_random_walk_from_deg_per_sqrt_hour, "deg_per_sqrt_hour")?;
        Ok(())
    })
}

/// Velocity random walk in m/s/√h (non-negative) converted to the white-noise density in
/// m/s/√s, written to `out_density`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_velocity_random_walk_si(mps_per_sqrt_hour: f64, out_density: *mut f64) -> rf_status {
    boundary(|| {
        let out_density = unsafe { out(out_density) }?;
        *out_density = density(mps_per_sqrt_hour, nav::velocity_random_walk_from_mps_per_sqrt_hour, "mps_per_sqrt_hour")?;
        Ok(())
    })
}

impl rf_sensor_errors {
    /// The core model. A zero `markov_time` on an axis whose `markov_sigma` is zero means "no
    /// Gauss–Markov process" (so that a zero-initialised struct is a perfect sensor); a zero
    /// time with a non-zero σ is refused.
    pub(crate) fn to_core(self) -> Fallible<SensorErrorModel> {
        let mut markov_time: Vector3<f64> = self.markov_time.into();
        let sigma: Vector3<f64> = self.markov_sigma.into();
        for i in 0..3 {
            if markov_time[i] == 0.0 {
                if sigma[i] != 0.0 {
                    return Err(rotaframe::Error::NotPositive { quantity: "markov_time", value: 0.0 }.into());
                }
                markov_time[i] = f64::INFINITY;
            }
        }
        Ok(SensorErrorModel {
            bias: self.bias.into(),
            scale_factor: self.scale_factor.into(),
            misalignment: Matrix3::from_row_slice(&self.misalignment),
            noise_density: self.noise_density.into(),
            markov_sigma: sigma,
            markov_time,
        })
    }
}

impl rf_imu_errors {
    fn to_core(self) -> Fallible<ImuErrorGenerator> {
        let model = ImuErrorModel { gyro: self.model.gyro.to_core()?, accelerometer: self.model.accelerometer.to_core()? };
        Ok(ImuErrorGenerator::from_parts(
            model,
            nav::stream_from_words(&self.stream)?,
            self.gyro_markov.into(),
            self.accelerometer_markov.into(),
        )?)
    }

    fn store(&mut self, generator: &ImuErrorGenerator) {
        let (_, rng, gyro, accelerometer) = generator.parts();
        self.stream = nav::stream_words(&rng);
        self.gyro_markov = gyro.into();
        self.accelerometer_markov = accelerometer.into();
    }
}

/// A seeded error generator for `model`, written to `out_errors`. The same seed gives the
/// same numbers.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_imu_errors_init(
    model: *const rf_imu_error_model,
    seed: u64,
    out_errors: *mut rf_imu_errors,
) -> rf_status {
    boundary(|| {
        let model_c = unsafe { read(model) }?;
        let out_errors = unsafe { out(out_errors) }?;
        let core_model = ImuErrorModel { gyro: model_c.gyro.to_core()?, accelerometer: model_c.accelerometer.to_core()? };
        let generator = ImuErrorGenerator::new(core_model, seed)?;
        let mut result = rf_imu_errors { model: model_c, ..rf_imu_errors::default() };
        result.store(&generator);
        *out_errors = result;
        Ok(())
    })
}

/// The measured increment for an ideal one, advancing the random stream and the
/// Gauss–Markov states by one interval. On error nothing changes.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_imu_errors_apply(
    errors: *mut rf_imu_errors,
    ideal: *const rf_imu_increment,
    out_measured: *mut rf_imu_increment,
) -> rf_status {
    boundary(|| {
        let ideal = unsafe { read(ideal) }?;
        let errors = unsafe { out(errors) }?;
        let out_measured = unsafe { out(out_measured) }?;
        let mut generator = errors.to_core()?;
        let measured = generator.corrupt(&ideal.into())?;
        errors.store(&generator);
        *out_measured = (&measured).into();
        Ok(())
    })
}

/// Geodetic position and NED velocity of the point at `lever_arm` (m, body axes) on a vehicle
/// in navigation state `state` whose gyros read `angular_rate` (rad/s).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_lever_arm_state(
    model: *const rf_earth_model,
    state: *const rf_nav_state,
    angular_rate: *const rf_vec3,
    lever_arm: *const rf_vec3,
    out_position: *mut rf_geodetic,
    out_velocity_ned: *mut rf_vec3,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(model) }?.to_core()?;
        let state = unsafe { read(state) }?.to_core()?;
        let rate: Vector3<f64> = unsafe { read(angular_rate) }?.into();
        let lever: Vector3<f64> = unsafe { read(lever_arm) }?.into();
        distinct_outputs(&[region(out_position, 1), region(out_velocity_ned, 1)])?;
        let out_position = unsafe { out(out_position) }?;
        let out_velocity_ned = unsafe { out(out_velocity_ned) }?;
        let (p, v) = nav::lever_arm_state(&m, &state, &rate, &lever)?;
        *out_position = p.into();
        *out_velocity_ned = v.into();
        Ok(())
    })
}

/// The core error model of a C one (NULL: a perfect IMU, random-constant biases).
pub(crate) unsafe fn error_model_of(model: *const rf_imu_error_model) -> Fallible<ImuErrorModel> {
    if model.is_null() {
        return Ok(ImuErrorModel::default());
    }
    let m = unsafe { read(model) }?;
    let core = ImuErrorModel { gyro: m.gyro.to_core()?, accelerometer: m.accelerometer.to_core()? };
    core.validate()?;
    Ok(core)
}
