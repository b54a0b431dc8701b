//! Aided navigation on numpy arrays: the navigator and its runs, alignment; the measurement
//! sets ([`sets`]) and the run's result ([`result`]). Conversion, validation, batching and error
//! mapping only; the filter is the core's `aided`.

pub mod budget;
pub mod result;
pub mod sets;

use numpy::{PyArray1, PyArrayDyn, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::aided::{self, AidedNavigator, FilterMemory, FilterSettings, MeasurementSet, MeasurementSlices};
use rotaframe::nalgebra::Vector3;
use rotaframe::nav::{ImuIncrement, Strapdown};
use rotaframe::rotation::quaternion_to_wxyz;

use crate::earth::model::PyEarthModel;
use crate::nav::options::nav_error;
use crate::nav::sensor::PyImuErrors;
use crate::nav::strapdown::PyStrapdown;
use crate::plumbing::broadcast::{matrix_arg, real_array, single};
use crate::plumbing::errors::{ConcurrentUseError, ShapeError, to_py};
use crate::plumbing::output::angle_scale;
pub use budget::PyErrorBudget;
use result::{Collector, Source};
pub use result::{PyAidedResult, PyInnovationLog, PySolutionAt};
pub use sets::{
    _measurement_set_from_parts, PyHeadingFixes, PyHeightFixes, PyMeasurementSet, PyOdometerSpeeds, PyPositionFixes,
    PyVehicleConstraint, PyVelocityFixes, PyZeroAngularRate, PyZeroVelocity,
};
use sets::{per_row, table};

/// An aided inertial navigator: a closed-loop error-state Kalman filter around a copy of
/// `strapdown` (whose state is the start), with `imu`'s noise and Gauss–Markov terms as the
/// process noise and its fixed terms (bias, scale factor, misalignment) as the initial
/// sensor-error estimate, compensated from the start; `p0` the initial covariance
/// `(states, states)` in the error-state order and units of the README's "Linearisation".
///
/// `gate` is the probability of the chi-square innovation gate (None: no gating);
/// `propagate_every` the increments per covariance propagation (1: every increment, second
/// order; more for slow vehicles).
///
/// Not certified for safety-of-life navigation; validate against your own requirements.
#[pyclass(frozen, name = "AidedNavigator", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyAidedNavigator {
    inner: std::sync::Mutex<AidedNavigator>,
    degrees: bool,
    model: Py<PyEarthModel>,
    imu: Py<PyImuErrors>,
}

impl PyAidedNavigator {
    fn lock(&self) -> PyResult<std::sync::MutexGuard<'_, AidedNavigator>> {
        match self.inner.try_lock() {
            Ok(guard) => Ok(guard),
            Err(std::sync::TryLockError::Poisoned(poisoned)) => Ok(poisoned.into_inner()),
            Err(std::sync::TryLockError::WouldBlock) => Err(ConcurrentUseError::new_err(
                "this AidedNavigator is in use by another thread (a run is in progress); give each thread its own copy",
            )),
        }
    }

    fn current(&self) -> PyResult<AidedNavigator> {
        Ok(*self.lock()?)
    }

    /// A new navigator object holding `nav`, with this one's settings.
    fn copy_of(&self, py: Python<'_>, nav: AidedNavigator) -> Self {
        Self {
            inner: std::sync::Mutex::new(nav),
            degrees: self.degrees,
            model: self.model.clone_ref(py),
            imu: self.imu.clone_ref(py),
        }
    }
}

/// The arrays and measurement sets of a run, checked: `t` `(N + 1,)`, `dtheta` and `dv`
/// `(N, 3)`, a list of measurement sets.
pub(super) struct AidedInputs<'py> {
    pub(super) times: Vec<f64>,
    angles: Vec<f64>,
    velocities: Vec<f64>,
    pub(super) sets: Vec<Bound<'py, PyMeasurementSet>>,
}

impl<'py> AidedInputs<'py> {
    /// The inputs of `AidedNavigator.run`, checked (shapes, the sets' type).
    pub(super) fn parse(
        t: &Bound<'py, PyAny>,
        dtheta: &Bound<'py, PyAny>,
        dv: &Bound<'py, PyAny>,
        measurements: &Bound<'py, PyAny>,
    ) -> PyResult<Self> {
        let (count, times) = table(t, "t", 0)?;
        let (n_theta, angles) = table(dtheta, "dtheta", 3)?;
        let (n_v, velocities) = table(dv, "dv", 3)?;
        for (name, n) in [("dtheta", n_theta), ("dv", n_v)] {
            if n + 1 != count {
                return Err(ShapeError::new_err(format!(
                    "`{name}` has {n} rows; `t` has {count} times, so {} are needed",
                    count.saturating_sub(1)
                )));
            }
        }
        let sets = measurements
            .try_iter()?
            .map(|item| {
                item?.cast_into::<PyMeasurementSet>().map_err(|e| {
                    pyo3::exceptions::PyTypeError::new_err(format!("`measurements` must hold measurement sets: {e}"))
                })
            })
            .collect::<PyResult<_>>()?;
        Ok(Self { times, angles, velocities, sets })
    }

    /// Runs `nav` over the inputs into `sink`, without the GIL (the core's
    /// `AidedNavigator::run`).
    pub(super) fn run(
        &self,
        py: Python<'_>,
        nav: &mut AidedNavigator,
        sink: &mut (impl aided::RunSink + Send),
    ) -> Result<(), rotaframe::BatchError> {
        let slices: Vec<MeasurementSlices<'_>> = self.sets.iter().map(|s| s.get().slices()).collect();
        let (angle_rows, rest_a) = self.angles.as_chunks::<3>();
        let (velocity_rows, rest_v) = self.velocities.as_chunks::<3>();
        debug_assert!(rest_a.is_empty() && rest_v.is_empty());
        let times = &self.times;
        py.detach(|| {
            let dyn_sets: Vec<&dyn MeasurementSet> = slices.iter().map(|s| s as &dyn MeasurementSet).collect();
            nav.run(times, angle_rows, velocity_rows, &dyn_sets, sink)
        })
    }
}

/// The filter settings from the Python keywords.
fn settings(gate: Option<f64>, propagate_every: usize) -> FilterSettings {
    FilterSettings { gate, propagate_every }
}

#[pymethods]
impl PyAidedNavigator {
    #[new]
    #[pyo3(signature = (strapdown, imu, p0, *, states=15, gate=Some(0.999), propagate_every=1))]
    fn py_new(
        py: Python<'_>,
        strapdown: &Bound<'_, PyStrapdown>,
        imu: &Bound<'_, PyImuErrors>,
        p0: &Bound<'_, PyAny>,
        states: usize,
        gate: Option<f64>,
        propagate_every: usize,
    ) -> PyResult<Self> {
        if states != 15 && states != 21 {
            return Err(to_py(&rotaframe::Error::Invalid { quantity: "states", reason: "must be 15 or 21" }, ""));
        }
        let p0 = matrix_arg(p0, "p0", Some(states), Some(states))?;
        let model = imu.get().lock()?.model().to_owned();
        let stepper = strapdown.get().current()?;
        let inner = AidedNavigator::new(stepper, &model, p0.as_slice(), states, settings(gate, propagate_every))
            .map_err(|e| nav_error(e, false, 0.0, ""))?;
        let (degrees, earth) = strapdown.get().settings(py);
        Ok(Self { inner: std::sync::Mutex::new(inner), degrees, model: earth, imu: imu.clone().unbind() })
    }

    /// Runs the filter over an IMU log and measurement sets: `t` the `(N + 1,)` boundary times
    /// of the `N` increments `dtheta`, `dv` `(N, 3)` (rad, m/s, body axes); `measurements` a
    /// list of measurement sets on the same time scale, within the IMU span. A measurement
    /// between two IMU times splits the increment at its own time. The run continues from
    /// where the previous one ended (`t[0]` must be that time); on error nothing is returned
    /// and the navigator is unchanged. `progress(done, total)` is called every 65536 steps and
    /// at the end; an exception it raises stops the run.
    #[pyo3(signature = (t, dtheta, dv, measurements, *, smooth=false, progress=None))]
    fn run(
        &self,
        py: Python<'_>,
        t: &Bound<'_, PyAny>,
        dtheta: &Bound<'_, PyAny>,
        dv: &Bound<'_, PyAny>,
        measurements: &Bound<'_, PyAny>,
        smooth: bool,
        progress: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<PyAidedResult> {
        let inputs = AidedInputs::parse(t, dtheta, dv, measurements)?;
        let mut nav = self.lock()?;
        let progress: Option<Py<PyAny>> = progress.filter(|p| !p.is_none()).map(|p| p.clone().unbind());
        let mut collector = Collector::new(&nav, self.degrees, inputs.times.len(), &inputs.sets, progress.as_ref(), smooth)?;
        let start = Bound::new(py, PyStrapdown::new_object(*nav.strapdown(), self.degrees, self.model.clone_ref(py)))?;
        let snapshot = Py::new(py, self.copy_of(py, *nav))?;
        let mut trial = *nav;
        let outcome = inputs.run(py, &mut trial, &mut collector);
        if let Some(e) = collector.failure.take() {
            return Err(e);
        }
        outcome.map_err(|e| {
            let context = if matches!(e.error.quantity(), "delta_angle" | "delta_velocity" | "interval") || e.index > 0 {
                format!("(increment {})", e.index)
            } else {
                String::new()
            };
            let lat = nav.state().position.latitude * collector.angle;
            nav_error(e.error, self.degrees, lat, &context)
        })?;
        *nav = trial;
        drop(nav);
        let sets = pyo3::types::PyList::new(py, &inputs.sets)?;
        let redo = (snapshot, sets, t.clone()).into_pyobject(py)?.into_any().unbind();
        let source = Source { strapdown: start, imu: self.imu.clone_ref(py), dtheta: dtheta.clone(), dv: dv.clone() };
        collector.into_result(py, inputs.times, &inputs.sets, source, redo)
    }

    /// The state: `(lat, lon, h, v_ned, attitude)` (angles as the strapdown's `degrees`).
    #[getter]
    fn state<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyTuple>> {
        let s = self.current()?.state();
        let a = if self.degrees { 180.0 / core::f64::consts::PI } else { 1.0 };
        (
            s.position.latitude * a,
            s.position.longitude * a,
            s.position.height,
            PyArray1::from_slice(py, s.velocity_ned.as_slice()),
            PyArray1::from_slice(py, &quaternion_to_wxyz(&s.attitude)),
        )
            .into_pyobject(py)
    }

    /// The stepper with every correction fed back, as a new `Strapdown`.
    #[getter]
    fn strapdown(&self, py: Python<'_>) -> PyResult<PyStrapdown> {
        Ok(PyStrapdown::new_object(*self.current()?.strapdown(), self.degrees, self.model.clone_ref(py)))
    }

    /// The error covariance `(states, states)` (as of the last propagation).
    #[getter]
    fn covariance<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArrayDyn<f64>>> {
        let nav = self.current()?;
        let n = nav.states();
        let mut p = vec![0.0; n * n];
        nav.write_covariance(&mut p).map_err(|e| to_py(&e, ""))?;
        Ok(crate::plumbing::output::array_from(py, vec![n, n], &p))
    }

    /// The estimated sensor errors `(states − 9,)` in `ImuErrors`' convention.
    #[getter]
    fn imu_errors<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<f64>>> {
        let nav = self.current()?;
        let mut e = vec![0.0; nav.states() - 9];
        nav.write_sensor_errors(&mut e).map_err(|e| to_py(&e, ""))?;
        Ok(PyArray1::from_vec(py, e))
    }

    /// The time of the state (s), None before the first run.
    #[getter]
    fn time(&self) -> PyResult<Option<f64>> {
        Ok(self.current()?.time())
    }

    /// The number of error states (15 or 21).
    #[getter]
    fn states(&self) -> PyResult<usize> {
        Ok(self.current()?.states())
    }

    fn __repr__(&self) -> PyResult<String> {
        let nav = self.current()?;
        Ok(format!("AidedNavigator(states={}, time={:?})", nav.states(), nav.time()))
    }

    /// Pickling: the stepper, the IMU model, the covariance, the settings, the filter's memory
    /// and its clock (increments summed for a later propagation are propagated first).
    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let rebuild = py.import("rotaframe._native")?.getattr("_aided_navigator_from_parts")?;
        let nav = self.current()?;
        let n = nav.states();
        let mut p = vec![0.0; n * n];
        let (stepper, memory, time) = nav.parts(&mut p).map_err(|e| to_py(&e, ""))?;
        let m: Vec<f64> = [memory.fixed_bias, memory.markov_bias, memory.scale_factor]
            .iter()
            .flatten()
            .chain([&memory.rate, &memory.force])
            .flat_map(|v| v.iter().copied())
            .collect();
        let strapdown = Py::new(py, PyStrapdown::new_object(stepper, self.degrees, self.model.clone_ref(py)))?;
        let s = nav.settings();
        let args = (strapdown, self.imu.clone_ref(py), p, n, s.gate, s.propagate_every, m, time);
        Ok((rebuild, args.into_pyobject(py)?))
    }
}

/// Rebuilds a pickled `AidedNavigator`.
#[pyfunction]
pub fn _aided_navigator_from_parts(
    py: Python<'_>,
    strapdown: &Bound<'_, PyStrapdown>,
    imu: &Bound<'_, PyImuErrors>,
    covariance: Vec<f64>,
    states: usize,
    gate: Option<f64>,
    propagate_every: usize,
    memory: Vec<f64>,
    time: Option<f64>,
) -> PyResult<PyAidedNavigator> {
    if memory.len() != 24 {
        return Err(ShapeError::new_err("the pickled navigator is damaged (its memory is not 24 numbers)"));
    }
    let v = |i: usize| Vector3::new(memory[i], memory[i + 1], memory[i + 2]);
    let memory = FilterMemory {
        fixed_bias: [v(0), v(3)],
        markov_bias: [v(6), v(9)],
        scale_factor: [v(12), v(15)],
        rate: v(18),
        force: v(21),
    };
    let model = imu.get().lock()?.model().to_owned();
    let stepper: Strapdown = strapdown.get().current()?;
    let inner = AidedNavigator::from_parts(stepper, &model, &covariance, states, settings(gate, propagate_every), &memory, time)
        .map_err(|e| to_py(&e, ""))?;
    let (degrees, earth) = strapdown.get().settings(py);
    Ok(PyAidedNavigator { inner: std::sync::Mutex::new(inner), degrees, model: earth, imu: imu.clone().unbind() })
}

/// A stationary alignment: `attitude` (w, x, y, z, body to NED) and `sigma` (roll, pitch,
/// heading 1σ, rad).
#[pyclass(frozen, name = "Alignment", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyAlignment {
    /// Body-to-NED quaternion (w, x, y, z).
    #[pyo3(get)]
    attitude: Py<PyAny>,
    /// 1σ of roll, pitch and heading (rad).
    #[pyo3(get)]
    sigma: Py<PyAny>,
}

#[pymethods]
impl PyAlignment {
    #[new]
    fn py_new(attitude: Py<PyAny>, sigma: Py<PyAny>) -> Self {
        Self { attitude, sigma }
    }

    fn __repr__(&self, py: Python<'_>) -> String {
        format!("Alignment(attitude={}, sigma={})", self.attitude.bind(py), self.sigma.bind(py))
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let cls = py.get_type::<Self>().into_any();
        Ok((cls, (self.attitude.clone_ref(py), self.sigma.clone_ref(py)).into_pyobject(py)?))
    }
}

/// Stationary coarse alignment from a record at rest: levelling from the mean specific force
/// and gyrocompassing from the mean angular rate. `dtheta`, `dv` `(N, 3)` increments, `dt` a
/// number or `(N,)` s; `lat` (and `heading`) in radians, or degrees with `degrees=True`; `h`
/// ellipsoidal (m). `imu` (an `ImuErrors`) gives the 1σ: its bias and Gauss–Markov σ as the
/// bias's 1σ plus its white noise averaged over the record (without it the σ come from the
/// record's scatter alone). Where the gyros cannot see the Earth's rotation, heading raises
/// `UnobservableError`; `heading`, a value or `(value, σ)`, is then used instead (`sigma[2]`
/// is that σ, 0 when none is given).
#[pyfunction]
#[pyo3(signature = (dtheta, dv, dt, lat, h, *, degrees=false, imu=None, heading=None, model=None))]
pub fn align_stationary(
    dtheta: &Bound<'_, PyAny>,
    dv: &Bound<'_, PyAny>,
    dt: &Bound<'_, PyAny>,
    lat: f64,
    h: f64,
    degrees: bool,
    imu: Option<&Bound<'_, PyImuErrors>>,
    heading: Option<&Bound<'_, PyAny>>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'_, PyEarthModel>>,
) -> PyResult<PyAlignment> {
    let py = dtheta.py();
    let (n, angles) = table(dtheta, "dtheta", 3)?;
    let (n_v, velocities) = table(dv, "dv", 3)?;
    if n != n_v {
        return Err(ShapeError::new_err(format!("`dv` has {n_v} rows, `dtheta` {n}")));
    }
    let dt = per_row(dt, "dt", n, 1)?;
    let s = angle_scale(degrees);
    let heading = match heading {
        None => None,
        Some(obj) if obj.is_none() => None,
        Some(obj) => {
            let values: Vec<f64> = real_array(obj, "heading")?.readonly().as_array().iter().copied().collect();
            match values.as_slice() {
                [value] => Some((value * s, 0.0)),
                [value, sigma] => Some((value * s, sigma * s)),
                _ => return Err(ShapeError::new_err("`heading` must be a number or a (value, sigma) pair")),
            }
        }
    };
    let model_core = crate::earth::model::model_or_default(model.as_ref());
    let imu_model = match imu {
        Some(i) => Some(i.get().lock()?.model().to_owned()),
        None => None,
    };
    let increments = (0..n).map(|k| {
        ImuIncrement::new(
            Vector3::from_column_slice(&angles[3 * k..3 * k + 3]),
            Vector3::from_column_slice(&velocities[3 * k..3 * k + 3]),
            dt[k],
        )
    });
    let record = aided::StationaryRecord::from_increments(increments).map_err(|e| nav_error(e, degrees, lat, ""))?;
    let a = aided::align_stationary(&model_core, &record, lat * s, h, imu_model.as_ref(), heading)
        .map_err(|e| nav_error(e, degrees, lat, ""))?;
    Ok(PyAlignment {
        attitude: PyArray1::from_slice(py, &quaternion_to_wxyz(&a.attitude)).into_any().unbind(),
        sigma: PyArray1::from_slice(py, a.sigma.as_slice()).into_any().unbind(),
    })
}

/// Heading from the GNSS course over ground, for vehicles that head where they move (no side
/// slip, not reversing): `v_ned` (3,) m/s with 1σ `sigma` m/s per horizontal component;
/// returns `(heading, sigma)` in radians (degrees with `degrees=True`). Below `min_speed`
/// (m/s) raises `UnobservableError`.
#[pyfunction]
#[pyo3(signature = (v_ned, sigma, *, min_speed=2.0, degrees=false))]
pub fn heading_from_course(v_ned: &Bound<'_, PyAny>, sigma: f64, min_speed: f64, degrees: bool) -> PyResult<(f64, f64)> {
    let v = single(v_ned, "v_ned", &[3])?;
    let (heading, s) =
        aided::heading_from_course(&Vector3::from_column_slice(&v), sigma, min_speed).map_err(|e| to_py(&e, ""))?;
    let out = if degrees { 180.0 / core::f64::consts::PI } else { 1.0 };
    Ok((heading * out, s * out))
}
