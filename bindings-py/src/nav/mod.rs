//! Navigation on numpy arrays: ideal IMU output and increments (from a Python callable or a
//! recorded log), the strapdown stepper and batch runner, the IMU error model and lever arms.
//! Conversion, validation, batching and error mapping only; the math is the core's `nav`.

use numpy::{PyArrayDyn, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::earth::{self, Geodetic, GravityModel};
use rotaframe::frames::{AnyFrame, Eci};
use rotaframe::nalgebra::{Matrix3, UnitQuaternion, Vector3};
use rotaframe::nav::{
    self, ImuErrorGenerator, ImuErrorModel, ImuIncrement, ImuSample, MechanizationState, NavFrame, NavState, RecordedSample,
    RecordedTrajectory, SampleSource, SensorErrorModel, StepMemory, Strapdown, StrapdownConfig, VerticalChannel,
};
use rotaframe::rotation::quaternion_to_wxyz;

use numpy::PyUntypedArrayMethods;

use crate::broadcast::{Access, BatchArgs, Failure, Operand, Plan, failure_to_py, map_elements_shaped, out_slice, run, tuple_of};
use crate::errors::{ConcurrentUseError, FrameMismatchError, RotaframeError, ShapeError, to_py};
use crate::geodesy::python_error;
use crate::model::{PyEarthModel, model_or_default};
use crate::motion::{Motion, PyFrameMotion};
use crate::rotations::quaternion;

fn angle_scale(degrees: bool) -> f64 {
    if degrees { core::f64::consts::PI / 180.0 } else { 1.0 }
}

/// The core's quantity names spelled as this module's Python arguments.
fn nav_name(error: rotaframe::Error) -> rotaframe::Error {
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
fn nav_error(error: rotaframe::Error, degrees: bool, lat: f64, context: &str) -> PyErr {
    to_py(&python_error(nav_name(error), degrees, lat), context)
}

/// Parses the `gravity` keyword.
fn gravity_model(name: &str) -> PyResult<GravityModel> {
    match name {
        "normal" => Ok(GravityModel::Normal),
        "j2" => Ok(GravityModel::J2),
        other => Err(RotaframeError::new_err(format!("`gravity` must be \"normal\" or \"j2\", got {other:?}"))),
    }
}

fn gravity_name(model: GravityModel) -> &'static str {
    match model {
        GravityModel::J2 => "j2",
        _ => "normal",
    }
}

/// Checks that a motion given to an IMU function is relative to the inertial frame.
fn check_inertial(motion: &PyFrameMotion, argument: &str) -> PyResult<()> {
    match motion.parent.as_deref() {
        Some(p) if p != "eci" => Err(FrameMismatchError::new_err(format!(
            "`{argument}` must be the body's motion relative to the inertial frame \"eci\", but its parent frame is {p:?}"
        ))),
        _ => Ok(()),
    }
}

/// A new C-contiguous float64 array of shape `dims` filled from `values`.
pub(crate) fn array_from<'py>(py: Python<'py>, dims: Vec<usize>, values: &[f64]) -> Bound<'py, PyArrayDyn<f64>> {
    let out = PyArrayDyn::zeros(py, dims, false);
    {
        let mut w = out.readwrite();
        out_slice(&mut w).copy_from_slice(values);
    }
    out
}

/// The ideal gyro output (angular rate of the body relative to inertial space) and accelerometer
/// output (specific force), both resolved in the body, for a (batched) body motion relative to
/// the inertial frame: `(angular_rate, specific_force)`, arrays `(..., 3)`.
#[pyfunction]
#[pyo3(signature = (body_motion, *, model=None, gravity="normal"))]
pub fn ideal_imu<'py>(
    py: Python<'py>,
    body_motion: &Bound<'py, PyFrameMotion>,
    #[pyo3(from_py_with = crate::args::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::args::gravity)] gravity: &str,
) -> PyResult<Bound<'py, PyTuple>> {
    let model = model_or_default(model.as_ref());
    let gravity = gravity_model(gravity)?;
    let motion = body_motion.get();
    check_inertial(motion, "body_motion")?;
    let n = motion.motions.len();
    let mut values = vec![0.0; 6 * n];
    let result = run(py, n, |i| {
        let s = nav::ideal_imu(&model, gravity, &motion.motions.get(i).assume_frames::<Eci, AnyFrame>())?;
        values[6 * i..6 * i + 3].copy_from_slice(s.angular_rate.as_slice());
        values[6 * i + 3..6 * i + 6].copy_from_slice(s.specific_force.as_slice());
        Ok(())
    });
    result.map_err(|f| {
        let context = if motion.shape.is_empty() { String::new() } else { format!("(at batch index {})", f.index) };
        to_py(&f.error.with_quantity("body_motion position"), &context)
    })?;
    let (rate, force): (Vec<f64>, Vec<f64>) = split_pairs(&values);
    let mut dims = motion.shape.clone();
    dims.push(3);
    PyTuple::new(py, [array_from(py, dims.clone(), &rate), array_from(py, dims, &force)])
}

/// Splits interleaved `[a(3), b(3)]` records into two flat vectors.
fn split_pairs(values: &[f64]) -> (Vec<f64>, Vec<f64>) {
    let mut a = Vec::with_capacity(values.len() / 2);
    let mut b = Vec::with_capacity(values.len() / 2);
    for chunk in values.chunks_exact(6) {
        a.extend_from_slice(&chunk[..3]);
        b.extend_from_slice(&chunk[3..]);
    }
    (a, b)
}

/// Strictly increasing, finite sample times as a vector, naming `name` on failure.
fn sample_times(obj: &Bound<'_, PyAny>, name: &'static str, minimum: usize) -> PyResult<Vec<f64>> {
    let mut op = Operand::extract(obj, name, &[])?;
    let plan = Plan::for_operands(&mut [&mut op], &[])?;
    if plan.shape.len() != 1 || plan.n < minimum {
        return Err(ShapeError::new_err(format!(
            "`{name}` must be a 1-D array of at least {minimum} times, got shape {:?}",
            plan.shape
        )));
    }
    let access = op.access(&plan);
    let times: Vec<f64> = (0..plan.n).map(|i| access.scalar(i)).collect();
    for (i, w) in times.windows(2).enumerate() {
        if !(w[0].is_finite() && w[1].is_finite()) {
            let bad = if w[0].is_finite() { i + 1 } else { i };
            return Err(to_py(&rotaframe::Error::NonFinite { quantity: name }, &format!("(at index {bad})")));
        }
        if w[1] <= w[0] {
            return Err(to_py(
                &rotaframe::Error::Invalid { quantity: name, reason: "times must be strictly increasing" },
                &format!("(at index {})", i + 1),
            ));
        }
    }
    Ok(times)
}

/// Intervals handed to the Python callable per call: bounds the memory of one batched motion
/// (6 nodes × 19 numbers × 8 bytes ≈ 60 MB).
const CHUNK_INTERVALS: usize = 65_536;

/// Angle and velocity increments `(dtheta, dv, dt)` over the intervals between consecutive
/// times `t` (1-D, strictly increasing) of a body whose motion relative to the inertial frame
/// is `trajectory(times)`: a callable that takes a 1-D float64 array of times and returns a
/// `FrameMotion` of the same length (or a single motion, for a body at rest in inertial space).
/// The integrals use six Gauss–Legendre nodes per interval.
#[pyfunction]
#[pyo3(signature = (trajectory, t, *, model=None, gravity="normal"))]
pub fn imu_increments<'py>(
    py: Python<'py>,
    trajectory: &Bound<'py, PyAny>,
    t: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::args::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::args::gravity)] gravity: &str,
) -> PyResult<Bound<'py, PyTuple>> {
    let model = model_or_default(model.as_ref());
    let gravity = gravity_model(gravity)?;
    let times = sample_times(t, "t", 2)?;
    let intervals = times.len() - 1;
    let mut increments = Vec::with_capacity(intervals);
    for first in (0..intervals).step_by(CHUNK_INTERVALS) {
        let last = (first + CHUNK_INTERVALS).min(intervals);
        let nodes: Vec<f64> = (first..last).flat_map(|k| nav::quadrature_times(times[k], times[k + 1])).collect();
        let m = nodes.len();
        let result = trajectory.call1((numpy::PyArray1::from_vec(py, nodes),))?;
        let motion = result.cast::<PyFrameMotion>().map_err(|_| {
            pyo3::exceptions::PyTypeError::new_err(format!(
                "`trajectory` must return a FrameMotion, got {}",
                result.get_type().name().map_or_else(|_| "?".to_string(), |n| n.to_string())
            ))
        })?;
        let motion = motion.get();
        check_inertial(motion, "trajectory")?;
        let count = motion.motions.len();
        if !(motion.shape == [m] || motion.shape.is_empty()) {
            return Err(ShapeError::new_err(format!(
                "`trajectory` was called with {m} times and must return a FrameMotion of shape ({m},) or (), got {:?}",
                motion.shape
            )));
        }
        let chunk: Result<Vec<ImuIncrement>, Failure> = py.detach(|| {
            (first..last)
                .map(|k| {
                    let base = (k - first) * nav::QUADRATURE_NODES;
                    let mut samples = [ImuSample::default(); nav::QUADRATURE_NODES];
                    for (j, s) in samples.iter_mut().enumerate() {
                        let motion = motion.motions.get(if count == 1 { 0 } else { base + j }).assume_frames::<Eci, AnyFrame>();
                        *s = nav::ideal_imu(&model, gravity, &motion).map_err(|error| Failure { index: k, error })?;
                    }
                    Ok(nav::increment_from_node_samples(times[k], times[k + 1], &samples))
                })
                .collect()
        });
        let chunk =
            chunk.map_err(|f| to_py(&f.error.with_quantity("trajectory position"), &format!("(interval {})", f.index)))?;
        increments.extend(chunk);
    }
    increments_tuple(py, &increments)
}

/// `(dtheta (N, 3), dv (N, 3), dt (N,))` arrays from increments.
fn increments_tuple<'py>(py: Python<'py>, increments: &[ImuIncrement]) -> PyResult<Bound<'py, PyTuple>> {
    let n = increments.len();
    let dtheta: Vec<f64> = increments.iter().flat_map(|i| i.delta_angle.iter().copied().collect::<Vec<_>>()).collect();
    let dv: Vec<f64> = increments.iter().flat_map(|i| i.delta_velocity.iter().copied().collect::<Vec<_>>()).collect();
    let dt: Vec<f64> = increments.iter().map(|i| i.interval).collect();
    PyTuple::new(py, [array_from(py, vec![n, 3], &dtheta), array_from(py, vec![n, 3], &dv), array_from(py, vec![n], &dt)])
}

/// A recorded log held as Python-side arrays, converted to radians once.
struct Log {
    times: Vec<f64>,
    positions: Vec<Geodetic>,
    attitudes: Vec<[f64; 4]>,
}

impl SampleSource for Log {
    fn len(&self) -> usize {
        self.times.len()
    }
    fn sample(&self, index: usize) -> RecordedSample {
        RecordedSample { time: self.times[index], position: self.positions[index], attitude: self.attitudes[index] }
    }
    fn time(&self, index: usize) -> f64 {
        self.times[index]
    }
}

/// Reads and checks a log `(t, lat, lon, h, attitude)` into a recorded trajectory.
fn recorded<'py>(
    t: &Bound<'py, PyAny>,
    lat: &Bound<'py, PyAny>,
    lon: &Bound<'py, PyAny>,
    h: &Bound<'py, PyAny>,
    attitude: &Bound<'py, PyAny>,
    model: earth::EarthModel,
    degrees: bool,
) -> PyResult<RecordedTrajectory<Log>> {
    let times = sample_times(t, "t", 3)?;
    let n = times.len();
    let mut ops = [Operand::extract(lat, "lat", &[])?, Operand::extract(lon, "lon", &[])?, Operand::extract(h, "h", &[])?];
    let mut q = Operand::extract(attitude, "attitude", &[4])?;
    let plan = {
        let [a, b, c] = &mut ops;
        Plan::for_operands(&mut [a, b, c, &mut q], &[("t", &[n])])?
    };
    if plan.shape != [n] {
        return Err(ShapeError::new_err(format!(
            "the log arrays must broadcast to the length of `t` ({n},), got {:?}",
            plan.shape
        )));
    }
    let s = angle_scale(degrees);
    let acc: Vec<_> = ops.iter().map(|o| o.access(&plan)).collect();
    let qa = q.access(&plan);
    let positions = (0..n).map(|i| Geodetic::new(acc[0].scalar(i) * s, acc[1].scalar(i) * s, acc[2].scalar(i))).collect();
    let attitudes = (0..n).map(|i| <[f64; 4]>::try_from(qa.slice(i)).unwrap_or([f64::NAN; 4])).collect();
    RecordedTrajectory::new(model, Log { times, positions, attitudes }).map_err(|e| {
        let lat_in = acc[0].scalar(e.index);
        let named = python_error(e.error, degrees, lat_in);
        let refs: Vec<&Operand<'_>> = ops.iter().chain(std::iter::once(&q)).collect();
        if named.quantity() == "time" {
            to_py(&named.with_quantity("t"), &format!("(at index {})", e.index))
        } else {
            failure_to_py(&Failure { index: e.index, error: named }, &plan, &refs)
        }
    })
}

/// Angle and velocity increments `(dtheta, dv, dt)` from a recorded log: times `t` (1-D),
/// geodetic positions `lat`, `lon`, `h` and body-to-NED attitude quaternions `(N, 4)`. The log
/// is interpolated by quintic Hermite polynomials (see the core's `nav::recorded`); the
/// increments are taken over the intervals between `times` (default: the log's own times),
/// which must lie within the log.
#[pyfunction]
#[pyo3(signature = (t, lat, lon, h, attitude, *, times=None, model=None, gravity="normal", degrees=false))]
pub fn imu_increments_from_samples<'py>(
    py: Python<'py>,
    t: &Bound<'py, PyAny>,
    lat: &Bound<'py, PyAny>,
    lon: &Bound<'py, PyAny>,
    h: &Bound<'py, PyAny>,
    attitude: &Bound<'py, PyAny>,
    times: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::args::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::args::gravity)] gravity: &str,
    #[pyo3(from_py_with = crate::args::degrees)] degrees: bool,
) -> PyResult<Bound<'py, PyTuple>> {
    let model = model_or_default(model.as_ref());
    let gravity = gravity_model(gravity)?;
    let mut path = recorded(t, lat, lon, h, attitude, model, degrees)?;
    let grid = match times {
        Some(obj) => sample_times(obj, "times", 2)?,
        None => path.source().times.clone(),
    };
    let result: Result<Vec<ImuIncrement>, rotaframe::BatchError> =
        py.detach(|| nav::imu_increments(&model, gravity, |s| path.inertial_motion_at::<AnyFrame>(s), &grid).collect());
    let increments = result.map_err(|e| {
        let named = if e.error.quantity() == "time" { e.error.with_quantity("times") } else { e.error };
        to_py(&named, &format!("(interval {})", e.index))
    })?;
    increments_tuple(py, &increments)
}

/// The body's motion relative to ECEF (labels "ecef" → "body") interpolated from a recorded
/// log at `times` (1-D, within the log): position, velocity, acceleration, attitude, angular
/// velocity and angular acceleration, as `imu_increments_from_samples` uses them.
#[pyfunction]
#[pyo3(signature = (t, lat, lon, h, attitude, times, *, model=None, degrees=false))]
pub fn motion_from_samples<'py>(
    py: Python<'py>,
    t: &Bound<'py, PyAny>,
    lat: &Bound<'py, PyAny>,
    lon: &Bound<'py, PyAny>,
    h: &Bound<'py, PyAny>,
    attitude: &Bound<'py, PyAny>,
    times: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::args::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::args::degrees)] degrees: bool,
) -> PyResult<PyFrameMotion> {
    let model = model_or_default(model.as_ref());
    let mut path = recorded(t, lat, lon, h, attitude, model, degrees)?;
    let mut op = Operand::extract(times, "times", &[])?;
    let plan = Plan::for_operands(&mut [&mut op], &[])?;
    let access = op.access(&plan);
    let mut motions = vec![Motion::identity(); plan.n];
    let result = run(py, plan.n, |i| {
        motions[i] = path.motion_at::<AnyFrame>(access.scalar(i)).map_err(|e| e.with_quantity("times"))?.erase_frames();
        Ok(())
    });
    result.map_err(|f| failure_to_py(&f, &plan, &[&op]))?;
    Ok(PyFrameMotion::new_batch(motions, plan.shape, Some("ecef".into()), Some("body".into())))
}

/// The state after every step of `Strapdown.run`: arrays `lat`, `lon` (radians, or degrees if
/// the stepper was made with `degrees=True`), `h`, `v_ned` `(N, 3)`, `attitude` `(N, 4)` and
/// `t`, the time since the initial state.
#[pyclass(frozen, name = "StrapdownHistory", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyStrapdownHistory {
    #[pyo3(get)]
    lat: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    lon: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    h: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    v_ned: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    attitude: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    t: Py<PyArrayDyn<f64>>,
    len: usize,
    /// What `predict_covariance` needs to retrace the run: the stepper before and after it and
    /// the run's arguments (references to the caller's arrays, not copies).
    pub(crate) replay: Option<Replay>,
}

/// A run's start, end and arguments.
#[derive(Debug)]
pub(crate) struct Replay {
    pub start: Strapdown,
    pub end: Strapdown,
    pub dtheta: Py<PyAny>,
    pub dv: Py<PyAny>,
    pub dt: Py<PyAny>,
    pub height_reference: Option<Py<PyAny>>,
}

impl PyStrapdownHistory {
    pub(crate) fn replay(&self) -> Option<&Replay> {
        self.replay.as_ref()
    }
}

#[pymethods]
impl PyStrapdownHistory {
    fn __len__(&self) -> usize {
        self.len
    }

    fn __repr__(&self) -> String {
        format!("StrapdownHistory({} steps; fields lat, lon, h, v_ned, attitude, t)", self.len)
    }
}

/// Parses `frame`, `vertical` and `height_time_constant`.
fn strapdown_config(
    model: earth::EarthModel,
    frame: &str,
    gravity: &str,
    vertical: &str,
    height_time_constant: Option<f64>,
) -> PyResult<StrapdownConfig> {
    let frame = match frame {
        "ned" => NavFrame::Ned,
        "ecef" => NavFrame::Ecef,
        other => return Err(RotaframeError::new_err(format!("`frame` must be \"ned\" or \"ecef\", got {other:?}"))),
    };
    let vertical = match (vertical, height_time_constant) {
        ("free", None) => VerticalChannel::Free,
        ("hold", None) => VerticalChannel::Hold,
        ("aided", Some(time_constant)) => VerticalChannel::Aided { time_constant },
        ("aided", None) => return Err(RotaframeError::new_err("`vertical=\"aided\"` needs `height_time_constant` (s)")),
        ("free" | "hold", Some(_)) => {
            return Err(RotaframeError::new_err("`height_time_constant` applies only to `vertical=\"aided\"`"));
        }
        (other, _) => {
            return Err(RotaframeError::new_err(format!("`vertical` must be \"free\", \"hold\" or \"aided\", got {other:?}")));
        }
    };
    let config = StrapdownConfig { earth: model, gravity: gravity_model(gravity)?, vertical, frame };
    config.validate().map_err(|e| nav_error(e, false, 0.0, ""))?;
    Ok(config)
}

/// One scalar or 3-vector argument without batch axes.
pub(crate) fn single(obj: &Bound<'_, PyAny>, name: &'static str, core: &[usize]) -> PyResult<Vec<f64>> {
    let mut op = Operand::extract(obj, name, core)?;
    let plan = Plan::for_operands(&mut [&mut op], &[])?;
    if !plan.shape.is_empty() {
        return Err(ShapeError::new_err(format!("`{name}` must have shape {core:?} here, got batch shape {:?}", plan.shape)));
    }
    Ok(op.access(&plan).slice(0).to_vec())
}

/// A strapdown inertial navigator: position, velocity and attitude on the rotating Earth from
/// gyro angle increments and accelerometer velocity increments.
///
/// `frame="ned"` integrates latitude, longitude, height and NED velocity (singular at the
/// poles: raises `NearPoleError` there); `frame="ecef"` integrates Earth-fixed Cartesian
/// position and velocity (no singularity). Both report the same quantities. `attitude` is the
/// body-to-NED quaternion (w, x, y, z). `vertical` is "free" (pure inertial height, unstable
/// over tens of minutes), "hold" (height set to the reference after every step) or "aided"
/// (a second-order loop to the reference with time constant `height_time_constant`, s); set
/// the reference with `set_height_reference` or per step in `run`.
///
/// Not certified for safety-of-life navigation; validate against your own requirements.
#[pyclass(frozen, name = "Strapdown", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyStrapdown {
    /// The stepper, behind a lock: `run` releases the GIL while it steps, so another thread
    /// touching the same object would otherwise see it half-way; it gets a clear
    /// `ConcurrentUseError` instead.
    inner: std::sync::Mutex<Strapdown>,
    degrees: bool,
    model: Py<PyEarthModel>,
}

/// Increments converted and stepped per chunk by `Strapdown.run`: the only memory the runner
/// needs beyond its outputs (65 536 × 56 B ≈ 3.7 MB).
const RUN_CHUNK: usize = 65_536;

/// The core's quantity names that belong to `run`'s or `step`'s own arguments.
const STEP_ARGUMENTS: [&str; 4] = ["dtheta", "dv", "dt", "height_reference"];

impl PyStrapdown {
    fn new_object(inner: Strapdown, degrees: bool, model: Py<PyEarthModel>) -> Self {
        Self { inner: std::sync::Mutex::new(inner), degrees, model }
    }

    /// The stepper, or `ConcurrentUseError` if another thread is using it.
    fn lock(&self) -> PyResult<std::sync::MutexGuard<'_, Strapdown>> {
        match self.inner.try_lock() {
            Ok(guard) => Ok(guard),
            // The stepper is plain data, always left whole: a panic elsewhere cannot corrupt it.
            Err(std::sync::TryLockError::Poisoned(poisoned)) => Ok(poisoned.into_inner()),
            Err(std::sync::TryLockError::WouldBlock) => Err(ConcurrentUseError::new_err(
                "this Strapdown is in use by another thread (a run or step is in progress); give each thread its own copy (Strapdown.copy())",
            )),
        }
    }

    /// A copy of the stepper's current value.
    fn current(&self) -> PyResult<Strapdown> {
        Ok(*self.lock()?)
    }

    fn angle_out(&self, radians: f64) -> f64 {
        if self.degrees { radians.to_degrees() } else { radians }
    }

    fn vertical_name(stepper: &Strapdown) -> (&'static str, Option<f64>) {
        match stepper.config().vertical {
            VerticalChannel::Free => ("free", None),
            VerticalChannel::Hold => ("hold", None),
            VerticalChannel::Aided { time_constant } => ("aided", Some(time_constant)),
        }
    }

    fn increment(dtheta: &Bound<'_, PyAny>, dv: &Bound<'_, PyAny>, dt: &Bound<'_, PyAny>) -> PyResult<ImuIncrement> {
        let (a, v, t) = (single(dtheta, "dtheta", &[3])?, single(dv, "dv", &[3])?, single(dt, "dt", &[])?);
        Ok(ImuIncrement::new(Vector3::from_column_slice(&a), Vector3::from_column_slice(&v), t[0]))
    }

    /// A step's error for Python. An error about the step's own arguments names them (and, in
    /// a run, is located at its step); an error about the navigation solution (its height,
    /// latitude or velocity leaving the supported range) says that the solution, not an
    /// argument, is at fault, and at which step.
    fn step_error(&self, error: rotaframe::Error, step: Option<usize>, lat_before: f64) -> (rotaframe::Error, Option<String>) {
        let error = nav_name(error);
        if STEP_ARGUMENTS.contains(&error.quantity()) {
            return (error, None);
        }
        let error = python_error(error, self.degrees, lat_before);
        let at = step.map_or_else(String::new, |k| format!(" at step {k}"));
        (error, Some(format!("(the navigation solution{at}: the increments drove it out of its supported range)")))
    }
}

#[pymethods]
impl PyStrapdown {
    #[new]
    #[pyo3(signature = (lat, lon, h, v_ned, attitude, *, frame="ned", model=None, degrees=false, gravity="normal", vertical="free", height_time_constant=None))]
    fn py_new(
        py: Python<'_>,
        #[pyo3(from_py_with = crate::args::lat)] lat: f64,
        #[pyo3(from_py_with = crate::args::lon)] lon: f64,
        #[pyo3(from_py_with = crate::args::h)] h: f64,
        v_ned: &Bound<'_, PyAny>,
        attitude: &Bound<'_, PyAny>,
        #[pyo3(from_py_with = crate::args::frame)] frame: &str,
        #[pyo3(from_py_with = crate::args::earth_model)] model: Option<Bound<'_, PyEarthModel>>,
        #[pyo3(from_py_with = crate::args::degrees)] degrees: bool,
        #[pyo3(from_py_with = crate::args::gravity)] gravity: &str,
        #[pyo3(from_py_with = crate::args::vertical)] vertical: &str,
        #[pyo3(from_py_with = crate::args::height_time_constant)] height_time_constant: Option<f64>,
    ) -> PyResult<Self> {
        let earth_model = model_or_default(model.as_ref());
        let config = strapdown_config(earth_model, frame, gravity, vertical, height_time_constant)?;
        let v = single(v_ned, "v_ned", &[3])?;
        let q = single(attitude, "attitude", &[4])?;
        let s = angle_scale(degrees);
        let q = quaternion(&q, "attitude").map_err(|e| nav_error(e, degrees, lat, ""))?;
        let start = NavState::new(Geodetic::new(lat * s, lon * s, h), Vector3::from_column_slice(&v), q);
        let inner = Strapdown::new(config, &start).map_err(|e| nav_error(e, degrees, lat, ""))?;
        let model = match model {
            Some(m) => m.unbind(),
            None => Py::new(py, PyEarthModel::preset(earth::WGS84, "WGS84"))?,
        };
        Ok(Self::new_object(inner, degrees, model))
    }

    /// Advances the state by one increment: `dtheta` (3,) rad, `dv` (3,) m/s over `dt` s,
    /// setting the height reference first if `height_reference` is given. On error the state
    /// is unchanged.
    #[pyo3(signature = (dtheta, dv, dt, *, height_reference=None))]
    fn step(
        &self,
        dtheta: &Bound<'_, PyAny>,
        dv: &Bound<'_, PyAny>,
        dt: &Bound<'_, PyAny>,
        #[pyo3(from_py_with = crate::args::opt_height_reference)] height_reference: Option<f64>,
    ) -> PyResult<()> {
        let increment = Self::increment(dtheta, dv, dt)?;
        let mut stepper = self.lock()?;
        let mut trial = *stepper;
        let lat = self.angle_out(trial.state().position.latitude);
        if let Some(h) = height_reference {
            trial.set_height_reference(h).map_err(|e| nav_error(e, false, 0.0, ""))?;
        }
        trial.step(&increment).map_err(|e| {
            let (error, context) = self.step_error(e, None, lat);
            to_py(&error, context.as_deref().unwrap_or(""))
        })?;
        *stepper = trial;
        Ok(())
    }

    /// Runs every increment in turn: `dtheta` and `dv` `(N, 3)`, `dt` a number or `(N,)`,
    /// `height_reference` None, a number or `(N,)` (set before each step). Returns the state
    /// after every step as a `StrapdownHistory`. On error nothing is returned and the stepper
    /// is where it started.
    ///
    /// The states are written straight into the returned arrays and the increments are read
    /// in chunks, so the call needs little memory beyond its result (88 bytes per step).
    /// `progress`, if given, is called as `progress(steps_done, steps_total)` every 65536
    /// steps and at the end (nothing is printed otherwise); an exception it raises stops the
    /// run, which then leaves the stepper where it started.
    #[pyo3(signature = (dtheta, dv, dt, *, height_reference=None, progress=None))]
    fn run<'py>(
        &self,
        py: Python<'py>,
        dtheta: &Bound<'py, PyAny>,
        dv: &Bound<'py, PyAny>,
        dt: &Bound<'py, PyAny>,
        height_reference: Option<&Bound<'py, PyAny>>,
        progress: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<PyStrapdownHistory> {
        let inputs = RunInputs::new(dtheta, dv, dt, height_reference)?;
        let mut stepper = self.lock()?;
        let mut job = RunJob::new(py, &inputs, *stepper, self.degrees);
        let progress: Option<Py<PyAny>> = progress.filter(|p| !p.is_none()).map(|p| p.clone().unbind());
        let result = {
            let mut slices = job.slices();
            let access = inputs.access();
            py.detach(|| {
                RunJob::execute(&access, &mut slices, |done, total| match &progress {
                    None => Ok(()),
                    Some(callback) => Python::attach(|py| callback.bind(py).call1((done, total)).map(|_| ())),
                })
                .map(|()| slices.stepper)
            })
        };
        let end = self.finish(&inputs, &mut job, result)?;
        *stepper = end;
        Ok(job.into_history(&inputs, end))
    }

    /// The continuous-time error-state model `(F, G)` at the current state: `F` `(n, n)` and
    /// `G` `(n, 12)` for `states=15` (position, velocity and attitude errors, accelerometer and
    /// gyro biases) or 21 (plus scale factors), with the measured `specific_force` (m/s²) and
    /// `angular_rate` (rad/s) in body axes. The bias correlation times come from `imu_errors`
    /// (random constants without it). See the README's "Linearisation" for the states and
    /// conventions.
    #[pyo3(signature = (specific_force, angular_rate, *, states=15, imu_errors=None))]
    fn error_model<'py>(
        &self,
        py: Python<'py>,
        specific_force: &Bound<'py, PyAny>,
        angular_rate: &Bound<'py, PyAny>,
        #[pyo3(from_py_with = crate::args::states)] states: u64,
        imu_errors: Option<&Bound<'py, PyImuErrors>>,
    ) -> PyResult<Bound<'py, PyTuple>> {
        let f = Vector3::from_column_slice(&single(specific_force, "specific_force", &[3])?);
        let w = Vector3::from_column_slice(&single(angular_rate, "angular_rate", &[3])?);
        let model = match imu_errors {
            Some(e) => *e.get().lock()?.model(),
            None => ImuErrorModel::default(),
        };
        let stepper = self.current()?;
        let (config, state, _) = stepper.parts();
        let times = (&model.accelerometer.markov_time, &model.gyro.markov_time);
        macro_rules! sized {
            ($n:literal) => {{
                let (f, g) = rotaframe::linearise::inertial::error_model::<$n>(&config, &state, &f, &w, times)
                    .map_err(|e| nav_error(e, false, 0.0, ""))?;
                (
                    rotaframe::nalgebra::DMatrix::from_column_slice($n, $n, f.as_slice()),
                    rotaframe::nalgebra::DMatrix::from_column_slice($n, 12, g.as_slice()),
                )
            }};
        }
        let (f, g) = match states {
            15 => sized!(15),
            21 => sized!(21),
            other => {
                return Err(to_py(
                    &rotaframe::Error::Invalid { quantity: "states", reason: "must be 15 or 21" },
                    &format!(" (got {other})"),
                ));
            }
        };
        PyTuple::new(py, [crate::linearise::matrix_out(py, &f), crate::linearise::matrix_out(py, &g)])
    }

    /// Sets the external ellipsoidal height reference (m) for `vertical="hold"` or `"aided"`.
    fn set_height_reference(&self, #[pyo3(from_py_with = crate::args::height_reference)] height_reference: f64) -> PyResult<()> {
        self.lock()?.set_height_reference(height_reference).map_err(|e| nav_error(e, false, 0.0, ""))
    }

    /// Forgets the previous increment (after a data gap), so that the next step applies no
    /// two-sample coning and sculling corrections.
    fn reset_history(&self) -> PyResult<()> {
        self.lock()?.reset_history();
        Ok(())
    }

    /// Latitude (radians, or degrees with `degrees=True`).
    #[getter]
    fn lat(&self) -> PyResult<f64> {
        Ok(self.angle_out(self.current()?.state().position.latitude))
    }

    /// Longitude (radians, or degrees with `degrees=True`), in (−180°, 180°].
    #[getter]
    fn lon(&self) -> PyResult<f64> {
        Ok(self.angle_out(self.current()?.state().position.longitude))
    }

    /// Ellipsoidal height (m).
    #[getter]
    fn h(&self) -> PyResult<f64> {
        Ok(self.current()?.state().position.height)
    }

    /// Velocity relative to the Earth, resolved in NED (m/s), shape (3,).
    #[getter]
    fn v_ned<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArrayDyn<f64>>> {
        Ok(array_from(py, vec![3], self.current()?.state().velocity_ned.as_slice()))
    }

    /// Body-to-NED attitude quaternion (w, x, y, z), shape (4,).
    #[getter]
    fn attitude<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArrayDyn<f64>>> {
        Ok(array_from(py, vec![4], &quaternion_to_wxyz(&self.current()?.state().attitude)))
    }

    /// ECEF position (m), shape (3,).
    #[getter]
    fn position_ecef<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArrayDyn<f64>>> {
        let stepper = self.current()?;
        let r = earth::geodetic_to_ecef(&stepper.config().earth, &stepper.state().position).map_err(|e| to_py(&e, ""))?;
        Ok(array_from(py, vec![3], r.as_slice()))
    }

    /// Time since the initial state (s): the sum of the intervals stepped.
    #[getter]
    fn elapsed(&self) -> PyResult<f64> {
        Ok(self.current()?.elapsed())
    }

    /// The mechanization: "ned" or "ecef".
    #[getter]
    fn frame(&self) -> PyResult<&'static str> {
        Ok(match self.current()?.config().frame {
            NavFrame::Ecef => "ecef",
            _ => "ned",
        })
    }

    /// The gravity model: "normal" or "j2".
    #[getter]
    fn gravity(&self) -> PyResult<&'static str> {
        Ok(gravity_name(self.current()?.config().gravity))
    }

    /// The vertical channel: "free", "hold" or "aided".
    #[getter]
    fn vertical(&self) -> PyResult<&'static str> {
        Ok(Self::vertical_name(&self.current()?).0)
    }

    /// Whether angles are given and reported in degrees.
    #[getter]
    fn degrees(&self) -> bool {
        self.degrees
    }

    /// The Earth model.
    #[getter]
    fn model(&self, py: Python<'_>) -> Py<PyEarthModel> {
        self.model.clone_ref(py)
    }

    /// An independent copy (same state, same memory of the previous increment).
    fn copy(&self, py: Python<'_>) -> PyResult<Self> {
        Ok(Self::new_object(self.current()?, self.degrees, self.model.clone_ref(py)))
    }

    fn __copy__(&self, py: Python<'_>) -> PyResult<Self> {
        self.copy(py)
    }

    fn __deepcopy__(&self, py: Python<'_>, _memo: &Bound<'_, PyAny>) -> PyResult<Self> {
        self.copy(py)
    }

    fn __repr__(&self) -> PyResult<String> {
        let stepper = self.current()?;
        let s = stepper.state();
        let unit = if self.degrees { "deg" } else { "rad" };
        Ok(format!(
            "Strapdown(frame={:?}, lat={} {unit}, lon={} {unit}, h={} m, v_ned={:?} m/s, elapsed={} s)",
            self.frame()?,
            self.angle_out(s.position.latitude),
            self.angle_out(s.position.longitude),
            s.position.height,
            s.velocity_ned.as_slice(),
            stepper.elapsed()
        ))
    }

    /// Pickling: the configuration, the mechanization's own state and its step memory.
    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let rebuild = py.import("rotaframe._native")?.getattr("_strapdown_from_parts")?;
        let stepper = self.current()?;
        let (config, state, memory) = stepper.parts();
        let state: Vec<f64> = match state {
            MechanizationState::Ned { position, velocity_ned, attitude } => {
                [position.latitude, position.longitude, position.height]
                    .into_iter()
                    .chain(velocity_ned.iter().copied())
                    .chain(quaternion_to_wxyz(&attitude))
                    .collect()
            }
            MechanizationState::Ecef { position_ecef, velocity_ecef, attitude_ecef } => position_ecef
                .iter()
                .copied()
                .chain(velocity_ecef.iter().copied())
                .chain(quaternion_to_wxyz(&attitude_ecef))
                .collect(),
        };
        let previous: Option<Vec<f64>> =
            memory.previous.map(|p| p.delta_angle.iter().chain(p.delta_velocity.iter()).copied().chain([p.interval]).collect());
        let (vertical, tau) = Self::vertical_name(&stepper);
        let args = (
            self.model.clone_ref(py),
            self.frame()?,
            gravity_name(config.gravity),
            vertical,
            tau,
            self.degrees,
            state,
            previous,
            memory.height_reference,
            memory.elapsed,
            memory.elapsed_correction,
        );
        Ok((rebuild, args.into_pyobject(py)?))
    }
}

/// The checked arguments of one strapdown run.
struct RunInputs<'py> {
    operands: Vec<Operand<'py>>,
    plan: Plan,
    objects: [Bound<'py, PyAny>; 3],
    height_object: Option<Bound<'py, PyAny>>,
}

impl<'py> RunInputs<'py> {
    fn new(
        dtheta: &Bound<'py, PyAny>,
        dv: &Bound<'py, PyAny>,
        dt: &Bound<'py, PyAny>,
        height_reference: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<Self> {
        let mut operands =
            vec![Operand::extract(dtheta, "dtheta", &[3])?, Operand::extract(dv, "dv", &[3])?, Operand::extract(dt, "dt", &[])?];
        let height_object = height_reference.filter(|h| !h.is_none()).cloned();
        if let Some(h) = &height_object {
            operands.push(Operand::extract(h, "height_reference", &[])?);
        }
        let plan = {
            let mut refs: Vec<&mut Operand<'py>> = operands.iter_mut().collect();
            Plan::for_operands(&mut refs, &[])?
        };
        if plan.shape.len() != 1 {
            return Err(ShapeError::new_err(format!(
                "`run` takes one increment per row, `dtheta` and `dv` of shape (N, 3); got batch shape {:?}",
                plan.shape
            )));
        }
        Ok(Self { operands, plan, objects: [dtheta.clone(), dv.clone(), dt.clone()], height_object })
    }

    /// Element readers of the operands (dtheta, dv, dt, then the height reference if given).
    fn access(&self) -> Vec<Access<'_>> {
        self.operands.iter().map(|o| o.access(&self.plan)).collect()
    }
}

/// One run's start and its output arrays (allocated with the GIL, written without it).
struct RunJob<'py> {
    start: Strapdown,
    scale: f64,
    outputs: [Bound<'py, PyArrayDyn<f64>>; 6],
    guards: Vec<numpy::PyReadwriteArrayDyn<'py, f64>>,
}

/// A run's output slices and its stepper while it runs.
struct RunSlices<'a> {
    stepper: Strapdown,
    scale: f64,
    columns: [&'a mut [f64]; 6],
}

impl<'py> RunJob<'py> {
    fn new(py: Python<'py>, inputs: &RunInputs<'py>, start: Strapdown, degrees: bool) -> Self {
        let n = inputs.plan.n;
        let outputs =
            [vec![n], vec![n], vec![n], vec![n, 3], vec![n, 4], vec![n]].map(|dims| PyArrayDyn::<f64>::zeros(py, dims, false));
        let guards = outputs.iter().map(|o| o.readwrite()).collect();
        Self { start, scale: if degrees { 180.0 / core::f64::consts::PI } else { 1.0 }, outputs, guards }
    }

    fn slices(&mut self) -> RunSlices<'_> {
        let mut slices = self.guards.iter_mut().map(out_slice);
        RunSlices {
            stepper: self.start,
            scale: self.scale,
            columns: core::array::from_fn(|_| slices.next().expect("six outputs")),
        }
    }

    /// Steps through every increment (read through `access`: dtheta, dv, dt and optionally
    /// the height reference), writing the states; `progress(done, total)`
    /// runs after each chunk and stops the run by failing. Call without the GIL.
    fn execute(
        access: &[Access<'_>],
        out: &mut RunSlices<'_>,
        progress: impl Fn(usize, usize) -> PyResult<()>,
    ) -> Result<(), RunFailure> {
        let n = out.columns[0].len();
        let (aa, va, ta, ha) = (access[0], access[1], access[2], access.get(3).copied());
        let scale = out.scale;
        let [lat, lon, hh, vel, att, time] = &mut out.columns;
        let inner = &mut out.stepper;
        let mut increments = Vec::with_capacity(RUN_CHUNK.min(n));
        let mut heights = Vec::with_capacity(if ha.is_some() { RUN_CHUNK.min(n) } else { 0 });
        for first in (0..n).step_by(RUN_CHUNK) {
            let last = (first + RUN_CHUNK).min(n);
            increments.clear();
            increments.extend((first..last).map(|i| ImuIncrement::new(aa.vec3(i), va.vec3(i), ta.scalar(i))));
            if let Some(h) = &ha {
                heights.clear();
                heights.extend((first..last).map(|i| h.scalar(i)));
            }
            let chunk_heights = ha.as_ref().map(|_| heights.as_slice());
            inner
                .run_each(&increments, chunk_heights, |j, s| {
                    let k = first + j;
                    let state = s.state();
                    lat[k] = state.position.latitude * scale;
                    lon[k] = state.position.longitude * scale;
                    hh[k] = state.position.height;
                    vel[3 * k..3 * k + 3].copy_from_slice(state.velocity_ned.as_slice());
                    att[4 * k..4 * k + 4].copy_from_slice(&quaternion_to_wxyz(&state.attitude));
                    time[k] = s.elapsed();
                })
                .map_err(|e| RunFailure::Step(rotaframe::BatchError { index: first + e.index, error: e.error }))?;
            progress(last, n).map_err(RunFailure::Stopped)?;
        }
        Ok(())
    }

    /// The history of a finished run ending at `end`.
    fn into_history(self, inputs: &RunInputs<'py>, end: Strapdown) -> PyStrapdownHistory {
        let Self { start, outputs, guards, .. } = self;
        drop(guards);
        let [lat, lon, h, v_ned, attitude, t] = outputs.map(Bound::unbind);
        let [dtheta, dv, dt] = inputs.objects.clone().map(Bound::unbind);
        let height_reference = inputs.height_object.clone().map(Bound::unbind);
        let replay = Replay { start, end, dtheta, dv, dt, height_reference };
        PyStrapdownHistory { lat, lon, h, v_ned, attitude, t, len: inputs.plan.n, replay: Some(replay) }
    }

    /// The latitude output after step `index` (as returned: radians or degrees).
    fn latitude_after(&mut self, index: usize) -> f64 {
        out_slice(&mut self.guards[0])[index]
    }
}

/// Why a run stopped early.
enum RunFailure {
    /// A step failed (an increment out of range, say).
    Step(rotaframe::BatchError),
    /// The progress callback raised.
    Stopped(PyErr),
}

impl PyStrapdown {
    /// The end state of a run, or its error as Python sees it (named after the argument, with
    /// the step located).
    fn finish(&self, inputs: &RunInputs<'_>, job: &mut RunJob<'_>, result: Result<Strapdown, RunFailure>) -> PyResult<Strapdown> {
        let e = match result {
            Ok(end) => return Ok(end),
            Err(RunFailure::Stopped(error)) => return Err(error),
            Err(RunFailure::Step(e)) => e,
        };
        let lat_before =
            if e.index == 0 { self.angle_out(job.start.state().position.latitude) } else { job.latitude_after(e.index - 1) };
        let (error, context) = self.step_error(e.error, Some(e.index), lat_before);
        if let Some(context) = context {
            return Err(to_py(&error, &context));
        }
        let refs: Vec<&Operand<'_>> = inputs.operands.iter().collect();
        Err(failure_to_py(&Failure { index: e.index, error }, &inputs.plan, &refs))
    }
}

/// Runs many independent strapdown runs, one per stepper, split across `threads` threads:
/// run `r` steps `strapdowns[r]` through `dtheta[r]`, `dv[r]` (each `(R, N, 3)`), `dt`
/// (a number, `(N,)` or `(R, N)`) and `height_reference` (None, a number, `(N,)` or `(R, N)`),
/// exactly as `strapdowns[r].run(...)` would (the same bits whatever `threads`). Returns the
/// list of histories. On error no stepper moves, and the error names the run.
///
/// `progress`, if given, is called as `progress(runs_done, runs_total)` as runs finish.
#[pyfunction]
#[pyo3(signature = (strapdowns, dtheta, dv, dt, *, height_reference=None, threads=1, progress=None))]
pub fn run_strapdowns<'py>(
    py: Python<'py>,
    strapdowns: Vec<Bound<'py, PyStrapdown>>,
    dtheta: &Bound<'py, PyAny>,
    dv: &Bound<'py, PyAny>,
    dt: &Bound<'py, PyAny>,
    height_reference: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::batch::threads)] threads: usize,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Vec<PyStrapdownHistory>> {
    let runs = strapdowns.len();
    // Per-run views of the arguments (numpy indexing: views, not copies).
    let row = |obj: &Bound<'py, PyAny>, name: &str, run_axes: usize| -> PyResult<Vec<Bound<'py, PyAny>>> {
        let array = crate::broadcast::real_array(obj, name)?;
        let shape = array.shape().to_vec();
        if shape.len() < run_axes || (shape.len() == run_axes && run_axes == 0) {
            return Ok(vec![obj.clone(); runs]);
        }
        if shape.len() == run_axes + 1 && shape[0] == runs {
            return (0..runs).map(|r| array.get_item(r)).collect();
        }
        Ok(vec![obj.clone(); runs])
    };
    let check = |obj: &Bound<'py, PyAny>, name: &str| -> PyResult<()> {
        let shape = crate::broadcast::real_array(obj, name)?.shape().to_vec();
        if shape.len() != 3 || shape[0] != runs || shape[2] != 3 {
            return Err(ShapeError::new_err(format!("`{name}` must have shape (R, N, 3) with R = {runs} runs, got {shape:?}")));
        }
        Ok(())
    };
    check(dtheta, "dtheta")?;
    check(dv, "dv")?;
    let (a, v) = (row(dtheta, "dtheta", 2)?, row(dv, "dv", 2)?);
    let t = row(dt, "dt", 1)?;
    let h = match height_reference.filter(|h| !h.is_none()) {
        Some(obj) => row(obj, "height_reference", 1)?.into_iter().map(Some).collect(),
        None => vec![None; runs],
    };
    let run_error = |r: usize, e: PyErr| -> PyErr {
        let message = format!("run {r}: {}", e.value(py));
        PyErr::from_type(e.get_type(py), message)
    };
    let mut inputs = Vec::with_capacity(runs);
    for r in 0..runs {
        inputs.push(RunInputs::new(&a[r], &v[r], &t[r], h[r].as_ref()).map_err(|e| run_error(r, e))?);
    }
    let refs: Vec<PyRef<'py, PyStrapdown>> = strapdowns.iter().map(Bound::borrow).collect();
    let mut guards = Vec::with_capacity(runs);
    for s in &refs {
        guards.push(s.lock()?);
    }
    let mut jobs: Vec<RunJob<'py>> =
        inputs.iter().zip(&guards).zip(&refs).map(|((i, g), s)| RunJob::new(py, i, **g, s.degrees)).collect();
    let progress = progress.filter(|p| !p.is_none());
    let access: Vec<Vec<Access<'_>>> = inputs.iter().map(RunInputs::access).collect();
    // Runs go in groups of `threads` (the progress callback needs the GIL between groups).
    let mut results: Vec<Result<Strapdown, RunFailure>> = Vec::with_capacity(runs);
    {
        let mut slices: Vec<RunSlices<'_>> = jobs.iter_mut().map(RunJob::slices).collect();
        let mut done = 0;
        let group = if progress.is_some() { threads.max(1) } else { runs.max(1) };
        for chunk in slices.chunks_mut(group) {
            let work: Vec<(usize, &mut RunSlices<'_>)> = chunk.iter_mut().enumerate().map(|(k, s)| (done + k, s)).collect();
            let access = &access;
            let finished = py.detach(|| {
                crate::batch::parallel(threads, work, |(r, s)| RunJob::execute(&access[r], s, |_, _| Ok(())).map(|()| s.stepper))
            })?;
            done += finished.len();
            let failed = finished.iter().any(Result::is_err);
            results.extend(finished);
            if failed {
                break;
            }
            if let Some(callback) = progress {
                callback.call1((done, runs))?;
            }
        }
    }
    if let Some(r) = results.iter().position(Result::is_err) {
        let failure = results.swap_remove(r);
        return Err(run_error(r, refs[r].finish(&inputs[r], &mut jobs[r], failure).expect_err("a failed run")));
    }
    let ends: Vec<Strapdown> = results.into_iter().map(|r| r.unwrap_or_else(|_| unreachable!("checked"))).collect();
    for (g, end) in guards.iter_mut().zip(&ends) {
        **g = *end;
    }
    drop(guards);
    Ok(jobs.into_iter().zip(&inputs).zip(ends).map(|((j, i), end)| j.into_history(i, end)).collect())
}

/// Rebuilds a pickled `Strapdown`.
#[pyfunction]
pub fn _strapdown_from_parts(
    model: Bound<'_, PyEarthModel>,
    #[pyo3(from_py_with = crate::args::frame)] frame: &str,
    #[pyo3(from_py_with = crate::args::gravity)] gravity: &str,
    #[pyo3(from_py_with = crate::args::vertical)] vertical: &str,
    #[pyo3(from_py_with = crate::args::height_time_constant)] height_time_constant: Option<f64>,
    #[pyo3(from_py_with = crate::args::degrees)] degrees: bool,
    state: Vec<f64>,
    previous: Option<Vec<f64>>,
    #[pyo3(from_py_with = crate::args::height_reference)] height_reference: f64,
    #[pyo3(from_py_with = crate::args::elapsed)] elapsed: f64,
    #[pyo3(from_py_with = crate::args::elapsed_correction)] elapsed_correction: f64,
) -> PyResult<PyStrapdown> {
    let config = strapdown_config(model.get().inner, frame, gravity, vertical, height_time_constant)?;
    if state.len() != 10 || previous.as_ref().is_some_and(|p| p.len() != 7) {
        return Err(RotaframeError::new_err("corrupt Strapdown pickle"));
    }
    let v3 = |s: &[f64]| Vector3::new(s[0], s[1], s[2]);
    let q = UnitQuaternion::new_unchecked(rotaframe::nalgebra::Quaternion::new(state[6], state[7], state[8], state[9]));
    let state = match config.frame {
        NavFrame::Ecef => {
            MechanizationState::Ecef { position_ecef: v3(&state[0..3]), velocity_ecef: v3(&state[3..6]), attitude_ecef: q }
        }
        _ => MechanizationState::Ned {
            position: Geodetic::new(state[0], state[1], state[2]),
            velocity_ned: v3(&state[3..6]),
            attitude: q,
        },
    };
    let previous = previous.map(|p| ImuIncrement::new(v3(&p[0..3]), v3(&p[3..6]), p[6]));
    let inner = Strapdown::from_parts(config, state, StepMemory { previous, height_reference, elapsed, elapsed_correction })
        .map_err(|e| to_py(&e, ""))?;
    Ok(PyStrapdown::new_object(inner, degrees, model.unbind()))
}

/// A per-axis error parameter: three values, or one number meaning the same value on every
/// axis (an isotropic sensor; the documented shorthand of `ImuErrors`).
fn axes(obj: Option<&Bound<'_, PyAny>>, name: &'static str, scale: f64) -> PyResult<Vector3<f64>> {
    match obj {
        None => Ok(Vector3::zeros()),
        Some(o) if o.is_instance_of::<pyo3::types::PyFloat>() || o.is_instance_of::<pyo3::types::PyInt>() => {
            Ok(Vector3::repeat(crate::args::number(o, name)? * scale))
        }
        Some(o) => Ok(Vector3::from_column_slice(&single(o, name, &[3])?) * scale),
    }
}

/// Maps increments `dtheta`, `dv` `(..., 3)` and `dt` (a number or `(...)`) through `f`, one
/// element at a time with the GIL released, into `(dtheta, dv)`; errors name the Python
/// arguments and the element. With `rows_only` (the calling method's name) only `(N, 3)` rows
/// or one `(3,)` increment are accepted. Nothing is returned on error.
pub(crate) fn map_increments<'py>(
    py: Python<'py>,
    dtheta: &Bound<'py, PyAny>,
    dv: &Bound<'py, PyAny>,
    dt: &Bound<'py, PyAny>,
    rows_only: Option<&str>,
    mut f: impl FnMut(&ImuIncrement) -> rotaframe::Result<ImuIncrement> + Send,
) -> PyResult<Bound<'py, PyTuple>> {
    let mut a = Operand::extract(dtheta, "dtheta", &[3])?;
    let mut v = Operand::extract(dv, "dv", &[3])?;
    let mut t = Operand::extract(dt, "dt", &[])?;
    let plan = Plan::for_operands(&mut [&mut a, &mut v, &mut t], &[])?;
    if let Some(method) = rows_only
        && plan.shape.len() > 1
    {
        return Err(ShapeError::new_err(format!(
            "`{method}` takes rows of increments, (N, 3); got batch shape {:?}",
            plan.shape
        )));
    }
    let n = plan.n;
    let (aa, va, ta) = (a.access(&plan), v.access(&plan), t.access(&plan));
    let mut out_a = vec![0.0; 3 * n];
    let mut out_v = vec![0.0; 3 * n];
    let result = run(py, n, |i| {
        let m = f(&ImuIncrement::new(aa.vec3(i), va.vec3(i), ta.scalar(i)))?;
        out_a[3 * i..3 * i + 3].copy_from_slice(m.delta_angle.as_slice());
        out_v[3 * i..3 * i + 3].copy_from_slice(m.delta_velocity.as_slice());
        Ok(())
    });
    result.map_err(|f| failure_to_py(&Failure { index: f.index, error: nav_name(f.error) }, &plan, &[&a, &v, &t]))?;
    let mut dims = plan.shape.clone();
    dims.push(3);
    PyTuple::new(py, [array_from(py, dims.clone(), &out_a), array_from(py, dims, &out_v)])
}

/// Seeded IMU sensor errors for simulation: per-axis bias, scale factor, misalignment (3×3,
/// zero diagonal), white noise (gyro angle random walk in deg/√h, accelerometer velocity random
/// walk in m/s/√h) and a first-order Gauss–Markov bias (steady-state sigma, correlation time).
/// Gyro quantities in rad/s, accelerometer quantities in m/s², times in s. The same seed gives
/// the same numbers.
#[pyclass(frozen, name = "ImuErrors", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyImuErrors {
    /// The generator, behind a lock (`apply` releases the GIL while it runs).
    inner: std::sync::Mutex<ImuErrorGenerator>,
    seed: u64,
}

impl PyImuErrors {
    /// A generator for a core model (errors named as the keyword arguments would be).
    pub(crate) fn from_model(model: ImuErrorModel, seed: u64) -> PyResult<Self> {
        let inner = ImuErrorGenerator::new(model, seed).map_err(|e| to_py(&nav_name(e), ""))?;
        Ok(Self { inner: std::sync::Mutex::new(inner), seed })
    }

    /// The generator, or `ConcurrentUseError` if another thread is using it.
    pub(crate) fn lock(&self) -> PyResult<std::sync::MutexGuard<'_, ImuErrorGenerator>> {
        match self.inner.try_lock() {
            Ok(guard) => Ok(guard),
            Err(std::sync::TryLockError::Poisoned(poisoned)) => Ok(poisoned.into_inner()),
            Err(std::sync::TryLockError::WouldBlock) => Err(ConcurrentUseError::new_err(
                "this ImuErrors is in use by another thread (an apply is in progress); give each thread its own generator",
            )),
        }
    }
}

#[pymethods]
impl PyImuErrors {
    #[new]
    #[pyo3(signature = (*, gyro_bias=None, gyro_scale_factor=None, gyro_misalignment=None, gyro_arw_deg_per_sqrt_h=None, gyro_markov_sigma=None, gyro_markov_time=None, accel_bias=None, accel_scale_factor=None, accel_misalignment=None, accel_vrw_mps_per_sqrt_h=None, accel_markov_sigma=None, accel_markov_time=None, seed=0))]
    fn py_new(
        gyro_bias: Option<&Bound<'_, PyAny>>,
        gyro_scale_factor: Option<&Bound<'_, PyAny>>,
        gyro_misalignment: Option<&Bound<'_, PyAny>>,
        gyro_arw_deg_per_sqrt_h: Option<&Bound<'_, PyAny>>,
        gyro_markov_sigma: Option<&Bound<'_, PyAny>>,
        gyro_markov_time: Option<&Bound<'_, PyAny>>,
        accel_bias: Option<&Bound<'_, PyAny>>,
        accel_scale_factor: Option<&Bound<'_, PyAny>>,
        accel_misalignment: Option<&Bound<'_, PyAny>>,
        accel_vrw_mps_per_sqrt_h: Option<&Bound<'_, PyAny>>,
        accel_markov_sigma: Option<&Bound<'_, PyAny>>,
        accel_markov_time: Option<&Bound<'_, PyAny>>,
        #[pyo3(from_py_with = crate::args::seed)] seed: u64,
    ) -> PyResult<Self> {
        let matrix = |obj: Option<&Bound<'_, PyAny>>, name| -> PyResult<Matrix3<f64>> {
            match obj {
                None => Ok(Matrix3::zeros()),
                Some(o) => Ok(Matrix3::from_row_slice(&single(o, name, &[3, 3])?)),
            }
        };
        let time = |obj: Option<&Bound<'_, PyAny>>, name| -> PyResult<Vector3<f64>> {
            match obj {
                None => Ok(Vector3::repeat(f64::INFINITY)),
                Some(o) => axes(Some(o), name, 1.0),
            }
        };
        let arw = nav::angle_random_walk_from_deg_per_sqrt_hour(1.0);
        let vrw = nav::velocity_random_walk_from_mps_per_sqrt_hour(1.0);
        let gyro = SensorErrorModel {
            bias: axes(gyro_bias, "gyro_bias", 1.0)?,
            scale_factor: axes(gyro_scale_factor, "gyro_scale_factor", 1.0)?,
            misalignment: matrix(gyro_misalignment, "gyro_misalignment")?,
            noise_density: axes(gyro_arw_deg_per_sqrt_h, "gyro_arw_deg_per_sqrt_h", arw)?,
            markov_sigma: axes(gyro_markov_sigma, "gyro_markov_sigma", 1.0)?,
            markov_time: time(gyro_markov_time, "gyro_markov_time")?,
        };
        let accelerometer = SensorErrorModel {
            bias: axes(accel_bias, "accel_bias", 1.0)?,
            scale_factor: axes(accel_scale_factor, "accel_scale_factor", 1.0)?,
            misalignment: matrix(accel_misalignment, "accel_misalignment")?,
            noise_density: axes(accel_vrw_mps_per_sqrt_h, "accel_vrw_mps_per_sqrt_h", vrw)?,
            markov_sigma: axes(accel_markov_sigma, "accel_markov_sigma", 1.0)?,
            markov_time: time(accel_markov_time, "accel_markov_time")?,
        };
        let inner = ImuErrorGenerator::new(ImuErrorModel { gyro, accelerometer }, seed).map_err(|e| to_py(&nav_name(e), ""))?;
        Ok(Self { inner: std::sync::Mutex::new(inner), seed })
    }

    /// The measured increments for ideal ones: `dtheta`, `dv` `(N, 3)` (or `(3,)`), `dt` a
    /// number or `(N,)`; returns `(dtheta, dv)` of the same shape. Advances the random stream
    /// and the Gauss–Markov states one interval per row. On error nothing advances.
    fn apply<'py>(
        &self,
        py: Python<'py>,
        dtheta: &Bound<'py, PyAny>,
        dv: &Bound<'py, PyAny>,
        dt: &Bound<'py, PyAny>,
    ) -> PyResult<Bound<'py, PyTuple>> {
        let mut generator = self.lock()?;
        let mut trial = generator.clone();
        let out = map_increments(py, dtheta, dv, dt, Some("apply"), |increment| trial.corrupt(increment))?;
        *generator = trial;
        Ok(out)
    }

    /// The seed the random stream started from.
    #[getter]
    fn seed(&self) -> u64 {
        self.seed
    }

    /// Current Gauss–Markov bias states `(gyro (3,) rad/s, accel (3,) m/s²)`.
    #[getter]
    fn markov_states<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyTuple>> {
        let (g, a) = self.lock()?.markov_states();
        PyTuple::new(py, [array_from(py, vec![3], g.as_slice()), array_from(py, vec![3], a.as_slice())])
    }

    fn __repr__(&self) -> String {
        format!("ImuErrors(seed={})", self.seed)
    }

    /// Pickles the whole generator: the model, the random stream's position and the
    /// Gauss–Markov states, so that a copy continues exactly where this one is (on another
    /// process, say).
    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let (model, rng, gyro_markov, accelerometer_markov) = self.lock()?.parts();
        let sensor = |m: &SensorErrorModel| -> Vec<f64> {
            [m.bias.as_slice(), m.scale_factor.as_slice(), m.misalignment.as_slice(), m.noise_density.as_slice()]
                .concat()
                .into_iter()
                .chain(m.markov_sigma.iter().copied())
                .chain(m.markov_time.iter().copied())
                .collect()
        };
        let stream =
            serde_json::to_string(&rng).map_err(|e| RotaframeError::new_err(format!("cannot save the random stream: {e}")))?;
        let args = (
            sensor(&model.gyro),
            sensor(&model.accelerometer),
            stream,
            gyro_markov.as_slice().to_vec(),
            accelerometer_markov.as_slice().to_vec(),
            self.seed,
        );
        let rebuild = py.import("rotaframe._native")?.getattr("_imu_errors_from_parts")?;
        Ok((rebuild, args.into_pyobject(py)?))
    }
}

/// Rebuilds a pickled `ImuErrors`: per sensor 24 numbers (bias, scale factor, misalignment
/// column-major, noise density, Markov σ and τ, SI units), the random stream's saved state,
/// the Markov states and the seed it was made with.
#[pyfunction]
pub fn _imu_errors_from_parts(
    gyro: Vec<f64>,
    accelerometer: Vec<f64>,
    stream: &str,
    gyro_markov: Vec<f64>,
    accelerometer_markov: Vec<f64>,
    seed: u64,
) -> PyResult<PyImuErrors> {
    let sensor = |v: &[f64], name: &str| -> PyResult<SensorErrorModel> {
        if v.len() != 24 {
            return Err(ShapeError::new_err(format!("`{name}` must hold 24 numbers, got {}", v.len())));
        }
        Ok(SensorErrorModel {
            bias: Vector3::from_column_slice(&v[0..3]),
            scale_factor: Vector3::from_column_slice(&v[3..6]),
            misalignment: Matrix3::from_column_slice(&v[6..15]),
            noise_density: Vector3::from_column_slice(&v[15..18]),
            markov_sigma: Vector3::from_column_slice(&v[18..21]),
            markov_time: Vector3::from_column_slice(&v[21..24]),
        })
    };
    let three = |v: &[f64], name: &str| -> PyResult<Vector3<f64>> {
        if v.len() != 3 {
            return Err(ShapeError::new_err(format!("`{name}` must hold 3 numbers, got {}", v.len())));
        }
        Ok(Vector3::from_column_slice(v))
    };
    let model = ImuErrorModel { gyro: sensor(&gyro, "gyro")?, accelerometer: sensor(&accelerometer, "accelerometer")? };
    let rng: nav::Xoshiro256PlusPlus = serde_json::from_str(stream)
        .map_err(|e| RotaframeError::new_err(format!("`stream` is not a saved random stream: {e}")))?;
    let inner = ImuErrorGenerator::from_parts(
        model,
        rng,
        three(&gyro_markov, "gyro_markov")?,
        three(&accelerometer_markov, "accelerometer_markov")?,
    )
    .map_err(|e| to_py(&nav_name(e), ""))?;
    Ok(PyImuErrors { inner: std::sync::Mutex::new(inner), seed })
}

/// Geodetic position and NED velocity `(lat, lon, h, v_ned)` of the point at `lever_arm` (m,
/// resolved in the body) on vehicles with navigation states `(lat, lon, h, v_ned, attitude)`
/// and gyro readings `angular_rate` (rad/s, body relative to inertial space, in body axes).
/// Broadcasts over leading axes.
#[pyfunction]
#[pyo3(signature = (lat, lon, h, v_ned, attitude, angular_rate, lever_arm, *, model=None, degrees=false, out=None, threads=1))]
pub fn lever_arm_state<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    lon: &Bound<'py, PyAny>,
    h: &Bound<'py, PyAny>,
    v_ned: &Bound<'py, PyAny>,
    attitude: &Bound<'py, PyAny>,
    angular_rate: &Bound<'py, PyAny>,
    lever_arm: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::args::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::args::degrees)] degrees: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let model = model_or_default(model.as_ref());
    let ops = [
        Operand::extract(lat, "lat", &[])?,
        Operand::extract(lon, "lon", &[])?,
        Operand::extract(h, "h", &[])?,
        Operand::extract(v_ned, "v_ned", &[3])?,
        Operand::extract(attitude, "attitude", &[4])?,
        Operand::extract(angular_rate, "angular_rate", &[3])?,
        Operand::extract(lever_arm, "lever_arm", &[3])?,
    ];
    let s = angle_scale(degrees);
    let v3 = |x: &[f64]| Vector3::new(x[0], x[1], x[2]);
    let rename = |e, x: &[&[f64]; 7]| python_error(e, degrees, x[0][0]);
    let (plan, [la, lo, hh, vel]) =
        map_elements_shaped(py, ops, [&[], &[], &[], &[3]], BatchArgs { out, threads }, rename, |x, [la, lo, hh, vel]| {
            let q = quaternion(x[4], "attitude")?;
            let state = NavState::new(Geodetic::new(x[0][0] * s, x[1][0] * s, x[2][0]), v3(x[3]), q);
            let (p, v) = nav::lever_arm_state(&model, &state, &v3(x[5]), &v3(x[6]))?;
            (la[0], lo[0], hh[0]) = (p.latitude / s, p.longitude / s, p.height);
            vel.copy_from_slice(v.as_slice());
            Ok(())
        })?;
    tuple_of(py, &plan, vec![la, lo, hh, vel])
}
