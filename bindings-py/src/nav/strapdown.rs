//! The strapdown stepper `Strapdown` (the core's `nav::Strapdown`), its runs, and many runs
//! across threads (`run_strapdowns`).

use numpy::PyArrayDyn;
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::earth::{self, Geodetic};
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe::nav::{
    ImuErrorModel, ImuIncrement, MechanizationState, NavFrame, NavState, StepMemory, Strapdown, StrapdownConfig, VerticalChannel,
};
use rotaframe::rotation::quaternion_to_wxyz;

use numpy::PyUntypedArrayMethods;

use super::history::PyStrapdownHistory;
use super::options::{gravity_model, gravity_name, nav_error, nav_name};
use super::runner::{RunFailure, RunInputs, RunJob, RunSlices};
use super::sensor::PyImuErrors;
use crate::earth::model::{PyEarthModel, model_or_default};
use crate::plumbing::broadcast::{Access, Failure, Operand, failure_to_py, single};
use crate::plumbing::errors::python_error;
use crate::plumbing::errors::{ConcurrentUseError, RotaframeError, ShapeError, to_py};
use crate::plumbing::output::{angle_scale, array_from};
use crate::rotation::quaternion;

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

/// The core's quantity names that belong to `run`'s or `step`'s own arguments.
const STEP_ARGUMENTS: [&str; 4] = ["dtheta", "dv", "dt", "height_reference"];

impl PyStrapdown {
    pub(crate) fn new_object(inner: Strapdown, degrees: bool, model: Py<PyEarthModel>) -> Self {
        Self { inner: std::sync::Mutex::new(inner), degrees, model }
    }

    /// Whether angles are in degrees, and the Earth model object (for objects built around a
    /// copy of this stepper).
    pub(crate) fn settings(&self, py: Python<'_>) -> (bool, Py<PyEarthModel>) {
        (self.degrees, self.model.clone_ref(py))
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
    pub(crate) fn current(&self) -> PyResult<Strapdown> {
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
        #[pyo3(from_py_with = crate::plumbing::args::lat)] lat: f64,
        #[pyo3(from_py_with = crate::plumbing::args::lon)] lon: f64,
        #[pyo3(from_py_with = crate::plumbing::args::h)] h: f64,
        v_ned: &Bound<'_, PyAny>,
        attitude: &Bound<'_, PyAny>,
        #[pyo3(from_py_with = crate::plumbing::args::frame)] frame: &str,
        #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'_, PyEarthModel>>,
        #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
        #[pyo3(from_py_with = crate::plumbing::args::gravity)] gravity: &str,
        #[pyo3(from_py_with = crate::plumbing::args::vertical)] vertical: &str,
        #[pyo3(from_py_with = crate::plumbing::args::height_time_constant)] height_time_constant: Option<f64>,
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
        #[pyo3(from_py_with = crate::plumbing::args::opt_height_reference)] height_reference: Option<f64>,
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

    /// Replaces the position, velocity and attitude (an external fix, a filter's correction)
    /// keeping the step memory (the previous increment for coning and sculling, the height
    /// reference, the elapsed time). `lat`, `lon` as the stepper's `degrees`; `v_ned` (3,) m/s;
    /// `attitude` (w, x, y, z) body to NED. On error the stepper is unchanged.
    #[pyo3(signature = (lat, lon, h, v_ned, attitude))]
    fn set_state(
        &self,
        #[pyo3(from_py_with = crate::plumbing::args::lat)] lat: f64,
        #[pyo3(from_py_with = crate::plumbing::args::lon)] lon: f64,
        #[pyo3(from_py_with = crate::plumbing::args::h)] h: f64,
        v_ned: &Bound<'_, PyAny>,
        attitude: &Bound<'_, PyAny>,
    ) -> PyResult<()> {
        let v = single(v_ned, "v_ned", &[3])?;
        let q = quaternion(&single(attitude, "attitude", &[4])?, "attitude").map_err(|e| nav_error(e, self.degrees, lat, ""))?;
        let s = angle_scale(self.degrees);
        let state = NavState::new(Geodetic::new(lat * s, lon * s, h), Vector3::from_column_slice(&v), q);
        let mut stepper = self.lock()?;
        let mut trial = *stepper;
        trial.set_state(&state).map_err(|e| nav_error(e, self.degrees, lat, ""))?;
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
        let mut job = RunJob::new(py, &inputs, *stepper, self.degrees)?;
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
        #[pyo3(from_py_with = crate::plumbing::args::states)] states: u64,
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
        PyTuple::new(py, [crate::plumbing::output::matrix_out(py, &f), crate::plumbing::output::matrix_out(py, &g)])
    }

    /// Sets the external ellipsoidal height reference (m) for `vertical="hold"` or `"aided"`.
    fn set_height_reference(
        &self,
        #[pyo3(from_py_with = crate::plumbing::args::height_reference)] height_reference: f64,
    ) -> PyResult<()> {
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
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Vec<PyStrapdownHistory>> {
    let runs = strapdowns.len();
    // Per-run views of the arguments (numpy indexing: views, not copies).
    let row = |obj: &Bound<'py, PyAny>, name: &str, run_axes: usize| -> PyResult<Vec<Bound<'py, PyAny>>> {
        let array = crate::plumbing::broadcast::real_array(obj, name)?;
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
        let shape = crate::plumbing::broadcast::real_array(obj, name)?.shape().to_vec();
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
        inputs.iter().zip(&guards).zip(&refs).map(|((i, g), s)| RunJob::new(py, i, **g, s.degrees)).collect::<PyResult<_>>()?;
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
                crate::plumbing::batch::parallel(threads, work, |(r, s)| {
                    RunJob::execute(&access[r], s, |_, _| Ok(())).map(|()| s.stepper)
                })
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
    #[pyo3(from_py_with = crate::plumbing::args::frame)] frame: &str,
    #[pyo3(from_py_with = crate::plumbing::args::gravity)] gravity: &str,
    #[pyo3(from_py_with = crate::plumbing::args::vertical)] vertical: &str,
    #[pyo3(from_py_with = crate::plumbing::args::height_time_constant)] height_time_constant: Option<f64>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    state: Vec<f64>,
    previous: Option<Vec<f64>>,
    #[pyo3(from_py_with = crate::plumbing::args::height_reference)] height_reference: f64,
    #[pyo3(from_py_with = crate::plumbing::args::elapsed)] elapsed: f64,
    #[pyo3(from_py_with = crate::plumbing::args::elapsed_correction)] elapsed_correction: f64,
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
