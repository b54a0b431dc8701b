//! The result of an aided run on numpy arrays: the collector that fills its buffers as the
//! run goes, the filtered (and smoothed) solution, the innovations, and the solution at other
//! times. Conversion and batching only; the smoother and the interpolation are the core's
//! `aided::smoother` and `aided::interpolate`.

use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyList, PyTuple};
use rotaframe::aided::{AidedNavigator, GainTrace, RunSink, SmoothedPoint, SmoothedSink, SmootherLog, TIME_SNAP, UpdateReport};
use rotaframe::earth::Geodetic;
use rotaframe::nalgebra::Vector3;
use rotaframe::nav::{ImuIncrement, MechanizationState, NavState};
use rotaframe::rotation::quaternion_to_wxyz;

use super::sets::{self, PyMeasurementSet};
use crate::nav::sensor::PyImuErrors;
use crate::nav::strapdown::PyStrapdown;
use crate::plumbing::errors::{ShapeError, to_py};
use crate::plumbing::memory::try_vec;
use crate::plumbing::output::angle_scale;
use crate::rotation::quaternion;

/// One measurement set's innovations over a run.
#[pyclass(frozen, name = "InnovationLog", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyInnovationLog {
    /// The set's kind.
    #[pyo3(get)]
    kind: String,
    /// Measurement times (s), `(M,)`.
    #[pyo3(get)]
    t: Py<PyAny>,
    /// Innovations `z − ẑ` `(M, k)` (position in NED metres).
    #[pyo3(get)]
    innovation: Py<PyAny>,
    /// Square roots of the diagonal of the innovation covariance `(M, k)`.
    #[pyo3(get)]
    std: Py<PyAny>,
    /// Normalised innovation squared `(M,)`.
    #[pyo3(get)]
    nis: Py<PyAny>,
    /// Whether each measurement passed the gate and was applied `(M,)`.
    #[pyo3(get)]
    accepted: Py<PyAny>,
}

#[pymethods]
impl PyInnovationLog {
    #[new]
    fn py_new(kind: String, t: Py<PyAny>, innovation: Py<PyAny>, std: Py<PyAny>, nis: Py<PyAny>, accepted: Py<PyAny>) -> Self {
        Self { kind, t, innovation, std, nis, accepted }
    }

    fn __repr__(&self, py: Python<'_>) -> String {
        let n = self.t.bind(py).len().unwrap_or(0);
        format!("<InnovationLog {}: {n} measurements>", self.kind)
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let cls = py.get_type::<Self>().into_any();
        let args = (
            self.kind.clone(),
            self.t.clone_ref(py),
            self.innovation.clone_ref(py),
            self.std.clone_ref(py),
            self.nis.clone_ref(py),
            self.accepted.clone_ref(py),
        );
        Ok((cls, args.into_pyobject(py)?))
    }
}

/// The result of an aided run: the filtered trajectory at every IMU time with its 1σ, the
/// estimated sensor errors, the covariance at each accepted measurement epoch, every
/// measurement set's innovations and, with `smooth=True`, the smoothed solution with the same
/// fields.
#[pyclass(frozen, name = "AidedResult", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyAidedResult {
    /// IMU times (s), `(N + 1,)`.
    #[pyo3(get)]
    t: Py<PyAny>,
    /// Latitude (rad, or degrees if the strapdown was made with `degrees=True`), `(N + 1,)`.
    #[pyo3(get)]
    lat: Py<PyAny>,
    /// Longitude, `(N + 1,)`.
    #[pyo3(get)]
    lon: Py<PyAny>,
    /// Ellipsoidal height (m), `(N + 1,)`.
    #[pyo3(get)]
    h: Py<PyAny>,
    /// Velocity NED (m/s), `(N + 1, 3)`.
    #[pyo3(get)]
    v_ned: Py<PyAny>,
    /// Body-to-NED quaternion (w, x, y, z), `(N + 1, 4)`.
    #[pyo3(get)]
    attitude: Py<PyAny>,
    /// 1σ of every error state after the updates at each time, in state units (radians for
    /// latitude and longitude), `(N + 1, states)`.
    #[pyo3(get)]
    sigma: Py<PyAny>,
    /// Estimated sensor errors in `ImuErrors`' convention (measured = true + bias):
    /// accelerometer bias, gyro bias (and the scale factors for 21 states), `(N + 1, states − 9)`.
    #[pyo3(get)]
    imu_errors: Py<PyAny>,
    /// Times at which at least one measurement was accepted, `(K,)`.
    #[pyo3(get)]
    epochs: Py<PyAny>,
    /// The covariance after all the updates at each epoch, `(K, states, states)` (smoothed,
    /// in a smoothed result).
    #[pyo3(get)]
    covariance: Py<PyAny>,
    /// One `InnovationLog` per measurement set, in the order given.
    #[pyo3(get)]
    innovations: Py<PyAny>,
    /// The smoothed solution (an `AidedResult`), or None.
    #[pyo3(get)]
    smoothed: Py<PyAny>,
    /// What `at` steps with: `(strapdown, imu, dtheta, dv, epoch_rows)`, the last the filtered
    /// solution after the updates at each epoch (None in a smoothed result); or None.
    source: Py<PyAny>,
    /// What `budget` redoes: `(navigator at the start, measurement sets, t)`; None in a
    /// smoothed result or one made by hand.
    run: Py<PyAny>,
}

#[pymethods]
impl PyAidedResult {
    #[new]
    #[pyo3(signature = (t, lat, lon, h, v_ned, attitude, sigma, imu_errors, epochs, covariance, innovations, smoothed=None, source=None, run=None))]
    fn py_new(
        py: Python<'_>,
        t: Py<PyAny>,
        lat: Py<PyAny>,
        lon: Py<PyAny>,
        h: Py<PyAny>,
        v_ned: Py<PyAny>,
        attitude: Py<PyAny>,
        sigma: Py<PyAny>,
        imu_errors: Py<PyAny>,
        epochs: Py<PyAny>,
        covariance: Py<PyAny>,
        innovations: Py<PyAny>,
        smoothed: Option<Py<PyAny>>,
        source: Option<Py<PyAny>>,
        run: Option<Py<PyAny>>,
    ) -> Self {
        let smoothed = smoothed.unwrap_or_else(|| py.None());
        let source = source.unwrap_or_else(|| py.None());
        let run = run.unwrap_or_else(|| py.None());
        Self { t, lat, lon, h, v_ned, attitude, sigma, imu_errors, epochs, covariance, innovations, smoothed, source, run }
    }

    /// The error budget of the run by source (an `ErrorBudget`): the variance of each state in
    /// `states` (indices in the error-state order; None for all) at every IMU time, filtered
    /// and, for a smoothed run, smoothed, split into the initial uncertainty of each state
    /// group, each IMU noise term and each measurement set, with the gains of the run (the
    /// core's `aided::budget`). The run is redone from its start to record its gains (about
    /// the time of the run, and memory `(N + 1) × sources × len(states)` numbers twice).
    #[pyo3(signature = (states=None))]
    fn budget(&self, py: Python<'_>, states: Option<&Bound<'_, PyAny>>) -> PyResult<super::budget::PyErrorBudget> {
        let smoothed = !self.smoothed.is_none(py);
        super::budget::split(py, self.run.bind(py), self.source.bind(py), self.sigma.bind(py), smoothed, states)
    }

    /// The smoothed, or else the filtered, solution at `times` (s, on the run's time scale,
    /// inside the run), as a `SolutionAt`. Between two IMU times the state before is stepped
    /// with the same fraction of the increment, compensated with the solution's sensor errors
    /// (the core's `aided::interpolate`); at an IMU time it is that row, and the filtered
    /// solution at an update time is the one after the update. The smoothed σ and sensor
    /// errors are interpolated linearly; the filtered ones are those of the state stepped from.
    fn at(&self, py: Python<'_>, times: &Bound<'_, PyAny>) -> PyResult<PySolutionAt> {
        let target = match self.smoothed.bind(py).cast::<PyAidedResult>() {
            Ok(smoothed) => smoothed.get().solution(py, true)?,
            Err(_) => self.solution(py, false)?,
        };
        let (_, queries) = sets::table(times, "times", 0)?;
        target.at(py, &queries)
    }

    fn __repr__(&self, py: Python<'_>) -> String {
        let n = self.t.bind(py).len().unwrap_or(0);
        let smoothed = if self.smoothed.is_none(py) { "" } else { ", smoothed" };
        format!("<AidedResult: {n} IMU times{smoothed}>")
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let cls = py.get_type::<Self>().into_any();
        let fields = [
            &self.t,
            &self.lat,
            &self.lon,
            &self.h,
            &self.v_ned,
            &self.attitude,
            &self.sigma,
            &self.imu_errors,
            &self.epochs,
            &self.covariance,
            &self.innovations,
            &self.smoothed,
            &self.source,
            &self.run,
        ];
        Ok((cls, PyTuple::new(py, fields.iter().map(|f| f.clone_ref(py)))?))
    }
}

/// The solution at requested times (`AidedResult.at`).
#[pyclass(frozen, name = "SolutionAt", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PySolutionAt {
    /// The requested times (s), `(M,)`.
    #[pyo3(get)]
    t: Py<PyAny>,
    /// Latitude (as the run's), `(M,)`.
    #[pyo3(get)]
    lat: Py<PyAny>,
    /// Longitude, `(M,)`.
    #[pyo3(get)]
    lon: Py<PyAny>,
    /// Ellipsoidal height (m), `(M,)`.
    #[pyo3(get)]
    h: Py<PyAny>,
    /// Velocity NED (m/s), `(M, 3)`.
    #[pyo3(get)]
    v_ned: Py<PyAny>,
    /// Body-to-NED quaternion (w, x, y, z), `(M, 4)`.
    #[pyo3(get)]
    attitude: Py<PyAny>,
    /// 1σ of every error state, `(M, states)`.
    #[pyo3(get)]
    sigma: Py<PyAny>,
    /// Sensor errors, `(M, states − 9)`.
    #[pyo3(get)]
    imu_errors: Py<PyAny>,
}

#[pymethods]
impl PySolutionAt {
    #[new]
    fn py_new(
        t: Py<PyAny>,
        lat: Py<PyAny>,
        lon: Py<PyAny>,
        h: Py<PyAny>,
        v_ned: Py<PyAny>,
        attitude: Py<PyAny>,
        sigma: Py<PyAny>,
        imu_errors: Py<PyAny>,
    ) -> Self {
        Self { t, lat, lon, h, v_ned, attitude, sigma, imu_errors }
    }

    fn __repr__(&self, py: Python<'_>) -> String {
        let n = self.t.bind(py).len().unwrap_or(0);
        format!("<SolutionAt: {n} times>")
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let cls = py.get_type::<Self>().into_any();
        let fields = [&self.t, &self.lat, &self.lon, &self.h, &self.v_ned, &self.attitude, &self.sigma, &self.imu_errors];
        Ok((cls, PyTuple::new(py, fields.iter().map(|f| f.clone_ref(py)))?))
    }
}

/// The values of one solution row: position (lat, lon as stored, h), velocity, quaternion,
/// σ (`states`) and sensor errors (`states − 9`), in that order.
const ROW_HEAD: usize = 10;

/// The pickled form of what `at` steps with: strapdown, IMU model, `dtheta`, `dv`, epoch rows.
type SourceTuple<'py> =
    (Bound<'py, PyStrapdown>, Bound<'py, PyImuErrors>, Bound<'py, PyAny>, Bound<'py, PyAny>, Bound<'py, PyAny>);

/// A result's arrays read back for `at`.
struct Solution {
    smoothed: bool,
    states: usize,
    angle: f64,
    times: Vec<f64>,
    /// Rows of [`ROW_HEAD`] + `2 states − 9` values per IMU time.
    rows: Vec<f64>,
    /// Filtered only: epoch times and their rows after the updates.
    epochs: Vec<f64>,
    epoch_rows: Vec<f64>,
    config: rotaframe::nav::StrapdownConfig,
    model: rotaframe::nav::ImuErrorModel,
    dtheta: Vec<f64>,
    dv: Vec<f64>,
}

/// A float array attribute's values.
fn values(obj: &Py<PyAny>, py: Python<'_>) -> PyResult<Vec<f64>> {
    let array = obj.bind(py).cast::<numpy::PyArrayDyn<f64>>()?;
    Ok(array.readonly().as_array().iter().copied().collect())
}

impl PyAidedResult {
    /// The arrays `at` needs, read back.
    fn solution(&self, py: Python<'_>, smoothed: bool) -> PyResult<Solution> {
        let source = self.source.bind(py);
        if source.is_none() {
            return Err(pyo3::exceptions::PyValueError::new_err(
                "this result keeps no IMU log (it was built by hand), so `at` cannot step between IMU times",
            ));
        }
        let (strapdown, imu, dtheta, dv, epoch_rows): SourceTuple<'_> = source.extract()?;
        let times = values(&self.t, py)?;
        let n = times.len();
        let sigma = values(&self.sigma, py)?;
        let states = if n > 0 && sigma.len() == 21 * n { 21 } else { 15 };
        let errors = values(&self.imu_errors, py)?;
        let (lat, lon, h) = (values(&self.lat, py)?, values(&self.lon, py)?, values(&self.h, py)?);
        let (v, q) = (values(&self.v_ned, py)?, values(&self.attitude, py)?);
        // A result made by hand (the constructor is public, for pickling) may not hang together.
        let sizes = [
            ("t", n, n.max(2)),
            ("lat", lat.len(), n),
            ("lon", lon.len(), n),
            ("h", h.len(), n),
            ("v_ned", v.len(), 3 * n),
            ("attitude", q.len(), 4 * n),
            ("sigma", sigma.len(), states * n),
            ("imu_errors", errors.len(), (states - 9) * n),
        ];
        for (name, found, expected) in sizes {
            if found != expected {
                return Err(ShapeError::new_err(format!(
                    "this result's `{name}` holds {found} values where its {n} times need {expected}"
                )));
            }
        }
        let width = ROW_HEAD + 2 * states - 9;
        let mut rows = Vec::with_capacity(n * width);
        for k in 0..n {
            rows.extend_from_slice(&[lat[k], lon[k], h[k]]);
            rows.extend_from_slice(&v[3 * k..3 * k + 3]);
            rows.extend_from_slice(&q[4 * k..4 * k + 4]);
            rows.extend_from_slice(&sigma[states * k..states * (k + 1)]);
            rows.extend_from_slice(&errors[(states - 9) * k..(states - 9) * (k + 1)]);
        }
        let (degrees, _) = strapdown.get().settings(py);
        let (epochs, epoch_rows) = if smoothed || epoch_rows.is_none() {
            (Vec::new(), Vec::new())
        } else {
            (values(&self.epochs, py)?, values(&epoch_rows.unbind(), py)?)
        };
        let (_, dtheta) = sets::table(&dtheta, "dtheta", 3)?;
        let (_, dv) = sets::table(&dv, "dv", 3)?;
        let epoch_count = epochs.len();
        for (name, found, expected) in [
            ("dtheta", dtheta.len(), 3 * (n - 1)),
            ("dv", dv.len(), 3 * (n - 1)),
            ("epoch rows", epoch_rows.len(), width * epoch_count),
        ] {
            if found != expected {
                return Err(ShapeError::new_err(format!(
                    "this result's `{name}` holds {found} values where its {n} times need {expected}"
                )));
            }
        }
        let model = *imu.get().lock()?.model();
        Ok(Solution {
            smoothed,
            states,
            angle: angle_scale(degrees).recip(),
            times,
            rows,
            epochs,
            epoch_rows,
            config: *strapdown.get().current()?.config(),
            model,
            dtheta,
            dv,
        })
    }
}

impl Solution {
    /// The solution at each of `queries`.
    fn at(&self, py: Python<'_>, queries: &[f64]) -> PyResult<PySolutionAt> {
        let (n, states) = (self.times.len(), self.states);
        let width = ROW_HEAD + 2 * states - 9;
        let mut out = try_vec(queries.len() * width)?;
        let (first, last) = (self.times[0], self.times[n - 1]);
        let row = |k: usize| &self.rows[k * width..(k + 1) * width];
        for &tau in queries {
            if !tau.is_finite() {
                return Err(to_py(&rotaframe::Error::NonFinite { quantity: "times" }, ""));
            }
            if tau < first - TIME_SNAP || tau > last + TIME_SNAP {
                return Err(to_py(&rotaframe::Error::OutOfRange { quantity: "times", value: tau, min: first, max: last }, ""));
            }
            let k = self.times.partition_point(|&t| t <= tau).saturating_sub(1).min(n - 2);
            let (a, b) = (self.times[k], self.times[k + 1]);
            if (tau - a).abs() <= TIME_SNAP {
                out.extend_from_slice(row(k));
                continue;
            }
            if (tau - b).abs() <= TIME_SNAP {
                out.extend_from_slice(row(k + 1));
                continue;
            }
            // The state stepped from: the row before, or a later epoch's row (filtered).
            let (mut base, mut base_time) = (row(k), a);
            let e = self.epochs.partition_point(|&t| t <= tau + TIME_SNAP);
            if e > 0 && self.epochs[e - 1] > a + TIME_SNAP {
                base = &self.epoch_rows[(e - 1) * width..e * width];
                base_time = self.epochs[e - 1];
                if (tau - base_time).abs() <= TIME_SNAP {
                    out.extend_from_slice(base);
                    continue;
                }
            }
            let start = NavState::new(
                Geodetic { latitude: base[0] / self.angle, longitude: base[1] / self.angle, height: base[2] },
                Vector3::from_column_slice(&base[3..6]),
                quaternion(&base[6..10], "attitude").map_err(|e| to_py(&e, ""))?,
            );
            let increment = ImuIncrement::new(
                Vector3::from_column_slice(&self.dtheta[3 * k..3 * k + 3]),
                Vector3::from_column_slice(&self.dv[3 * k..3 * k + 3]),
                b - a,
            );
            let sensor = &base[ROW_HEAD + states..];
            let fraction = (tau - base_time) / (b - a);
            let s = rotaframe::aided::state_between(&self.config, &self.model, &start, sensor, &increment, fraction)
                .map_err(|e| to_py(&e, &format!("(stepping to time {tau})")))?;
            let p = &s.position;
            out.extend_from_slice(&[p.latitude * self.angle, p.longitude * self.angle, p.height]);
            out.extend_from_slice(s.velocity_ned.as_slice());
            out.extend_from_slice(&quaternion_to_wxyz(&s.attitude));
            if self.smoothed {
                let alpha = (tau - a) / (b - a);
                let (before, after) = (row(k), row(k + 1));
                out.extend(before[ROW_HEAD..].iter().zip(&after[ROW_HEAD..]).map(|(x, y)| x + alpha * (y - x)));
            } else {
                out.extend_from_slice(&base[ROW_HEAD..]);
            }
        }
        let m = queries.len();
        let column = |i: usize| -> Vec<f64> { out.chunks_exact(width).map(|r| r[i]).collect() };
        let block =
            |from: usize, to: usize| -> Vec<f64> { out.chunks_exact(width).flat_map(|r| r[from..to].iter().copied()).collect() };
        let shaped = |values: Vec<f64>, dims: Vec<usize>| -> PyResult<Py<PyAny>> {
            Ok(PyArray1::from_vec(py, values).reshape(dims)?.into_any().unbind())
        };
        Ok(PySolutionAt {
            t: PyArray1::from_slice(py, queries).into_any().unbind(),
            lat: PyArray1::from_vec(py, column(0)).into_any().unbind(),
            lon: PyArray1::from_vec(py, column(1)).into_any().unbind(),
            h: PyArray1::from_vec(py, column(2)).into_any().unbind(),
            v_ned: shaped(block(3, 6), vec![m, 3])?,
            attitude: shaped(block(6, 10), vec![m, 4])?,
            sigma: shaped(block(ROW_HEAD, ROW_HEAD + states), vec![m, states])?,
            imu_errors: shaped(block(ROW_HEAD + states, width), vec![m, states - 9])?,
        })
    }
}

/// One set's innovations, standard deviations, NIS and acceptance, by row.
type SetLog = (Vec<f64>, Vec<f64>, Vec<f64>, Vec<bool>);

/// The buffers of one solution (filtered or smoothed), which become the result's arrays.
struct Buffers {
    position: Vec<f64>,
    velocity: Vec<f64>,
    attitude: Vec<f64>,
    sigma: Vec<f64>,
    imu_errors: Vec<f64>,
    covariance: Vec<f64>,
}

impl Buffers {
    fn new(states: usize, rows: usize, epochs: usize) -> PyResult<Self> {
        Ok(Self {
            position: vec_of(3 * rows)?,
            velocity: vec_of(3 * rows)?,
            attitude: vec_of(4 * rows)?,
            sigma: vec_of(states * rows)?,
            imu_errors: vec_of((states - 9) * rows)?,
            covariance: vec_of(states * states * epochs)?,
        })
    }

    /// Writes row `index`'s state (angles scaled by `angle`).
    fn write_state(&mut self, index: usize, s: &NavState, angle: f64) {
        let p = &s.position;
        self.position[3 * index..3 * index + 3].copy_from_slice(&[p.latitude * angle, p.longitude * angle, p.height]);
        self.velocity[3 * index..3 * index + 3].copy_from_slice(s.velocity_ned.as_slice());
        self.attitude[4 * index..4 * index + 4].copy_from_slice(&quaternion_to_wxyz(&s.attitude));
    }
}

/// The smoothed solution as the backward pass hands it out.
struct SmoothedBuffers {
    states: usize,
    angle: f64,
    buffers: Buffers,
}

impl SmoothedSink for SmoothedBuffers {
    fn point(&mut self, index: usize, point: &SmoothedPoint<'_>) {
        let n = self.states;
        self.buffers.write_state(index, &point.state, self.angle);
        self.buffers.sigma[n * index..n * (index + 1)].copy_from_slice(point.sigma);
        self.buffers.imu_errors[(n - 9) * index..(n - 9) * (index + 1)].copy_from_slice(point.sensor_errors);
    }

    fn epoch(&mut self, index: usize, covariance: &[f64]) {
        let size = self.states * self.states;
        self.buffers.covariance[size * index..size * (index + 1)].copy_from_slice(covariance);
    }
}

/// What a run writes as it goes, into buffers that become the result's arrays.
pub(super) struct Collector<'a> {
    states: usize,
    /// Radians to the result's angle unit.
    pub(super) angle: f64,
    filtered: Buffers,
    epochs: Vec<f64>,
    /// The filtered solution after the updates at each epoch: rows as [`Solution::rows`].
    epoch_rows: Vec<f64>,
    logs: Vec<SetLog>,
    rows: Vec<usize>,
    progress: Option<&'a Py<PyAny>>,
    total: usize,
    /// An exception raised by `progress`, which stops the run.
    pub(super) failure: Option<PyErr>,
    log: Option<SmootherLog>,
}

/// Steps between calls of a run's `progress`.
const PROGRESS_EVERY: usize = 65_536;

impl<'a> Collector<'a> {
    /// Buffers for a run of `rows` IMU times over `sets`; a smoother's log with `smooth`.
    pub(super) fn new(
        nav: &AidedNavigator,
        degrees: bool,
        rows: usize,
        sets: &[Bound<'_, PyMeasurementSet>],
        progress: Option<&'a Py<PyAny>>,
        smooth: bool,
    ) -> PyResult<Self> {
        let states = nav.states();
        let log = if smooth {
            let mut log = SmootherLog::new(nav).map_err(|e| to_py(&e, ""))?;
            let measurements = sets.iter().map(|s| s.get().times.len()).sum();
            log.try_reserve(rows - 1, measurements)
                .map_err(|_| pyo3::exceptions::PyMemoryError::new_err("not enough memory to record the run for smoothing"))?;
            Some(log)
        } else {
            None
        };
        Ok(Self {
            states,
            angle: angle_scale(degrees).recip(),
            filtered: Buffers::new(states, rows, 0)?,
            epochs: Vec::new(),
            epoch_rows: Vec::new(),
            logs: sets
                .iter()
                .map(|s| {
                    let (m, k) = (s.get().times.len(), s.get().kind.rows());
                    Ok((vec_of(m * k)?, vec_of(m * k)?, vec_of(m)?, vec![false; m]))
                })
                .collect::<PyResult<_>>()?,
            rows: sets.iter().map(|s| s.get().kind.rows()).collect(),
            progress,
            total: rows - 1,
            failure: None,
            log,
        })
    }
}

impl RunSink for Collector<'_> {
    const TRACES: bool = true;

    fn propagated(&mut self, start: &MechanizationState, interval: f64, navigator: &AidedNavigator) {
        if let Some(log) = &mut self.log {
            log.propagated(start, interval, navigator);
        }
    }

    fn updated(&mut self, gain: &GainTrace<'_>, covariance: &[f64]) {
        if let Some(log) = &mut self.log {
            log.updated(gain, covariance);
        }
    }

    fn step(&mut self, index: usize, nav: &AidedNavigator) {
        if let Some(log) = &mut self.log {
            log.step(index, nav);
        }
        self.filtered.write_state(index, &nav.state(), self.angle);
        let n = self.states;
        // The lengths are the navigator's own sizes, so these writes cannot fail.
        let _ = nav.write_sigma(&mut self.filtered.sigma[n * index..n * (index + 1)]);
        let _ = nav.write_sensor_errors(&mut self.filtered.imu_errors[(n - 9) * index..(n - 9) * (index + 1)]);
        if let Some(callback) = self.progress
            && self.failure.is_none()
            && (index.is_multiple_of(PROGRESS_EVERY) && index > 0 || index == self.total)
        {
            let (done, total) = (index, self.total);
            if let Err(e) = Python::attach(|py| callback.bind(py).call1((done, total)).map(|_| ())) {
                self.failure = Some(e);
            }
        }
    }

    fn measurement(&mut self, set: usize, index: usize, report: &UpdateReport) {
        if let Some(log) = &mut self.log {
            log.measurement(set, index, report);
        }
        let k = self.rows[set];
        let log = &mut self.logs[set];
        log.0[k * index..k * (index + 1)].copy_from_slice(&report.innovation.as_slice()[..k]);
        log.1[k * index..k * (index + 1)].copy_from_slice(&report.std.as_slice()[..k]);
        log.2[index] = report.nis;
        log.3[index] = report.accepted;
    }

    fn epoch(&mut self, time: f64, nav: &AidedNavigator, accepted: bool) {
        if let Some(log) = &mut self.log {
            log.epoch(time, nav, accepted);
        }
        if accepted {
            let n = self.states;
            let start = self.filtered.covariance.len();
            self.epochs.push(time);
            self.filtered.covariance.resize(start + n * n, 0.0);
            let _ = nav.write_covariance(&mut self.filtered.covariance[start..]);
            let s = nav.state();
            let p = &s.position;
            self.epoch_rows.extend_from_slice(&[p.latitude * self.angle, p.longitude * self.angle, p.height]);
            self.epoch_rows.extend_from_slice(s.velocity_ned.as_slice());
            self.epoch_rows.extend_from_slice(&quaternion_to_wxyz(&s.attitude));
            let at = self.epoch_rows.len();
            self.epoch_rows.resize(at + 2 * n - 9, 0.0);
            let _ = nav.write_sigma(&mut self.epoch_rows[at..at + n]);
            let _ = nav.write_sensor_errors(&mut self.epoch_rows[at + n..]);
        }
    }

    fn stop(&mut self) -> bool {
        self.failure.is_some()
    }
}

/// A zero-filled buffer, or `MemoryError`.
pub(super) fn vec_of(n: usize) -> PyResult<Vec<f64>> {
    let mut v = try_vec(n)?;
    v.resize(n, 0.0);
    Ok(v)
}

/// What `AidedResult.at` needs besides the result's arrays.
pub(super) struct Source<'py> {
    pub(super) strapdown: Bound<'py, PyStrapdown>,
    pub(super) imu: Py<PyImuErrors>,
    pub(super) dtheta: Bound<'py, PyAny>,
    pub(super) dv: Bound<'py, PyAny>,
}

impl Collector<'_> {
    /// The result: the filtered solution and, if the run kept a smoother's log, the smoothed
    /// one (the backward pass runs here, without the GIL).
    pub(super) fn into_result(
        self,
        py: Python<'_>,
        times: Vec<f64>,
        sets: &[Bound<'_, PyMeasurementSet>],
        source: Source<'_>,
        redo: Py<PyAny>,
    ) -> PyResult<PyAidedResult> {
        let n = self.states;
        let k = self.epochs.len();
        let smoothed_buffers = match &self.log {
            None => None,
            Some(log) => {
                let mut sink = SmoothedBuffers { states: n, angle: self.angle, buffers: Buffers::new(n, times.len(), k)? };
                py.detach(|| log.smooth(&mut sink)).map_err(|e| to_py(&e, "(smoothing)"))?;
                Some(sink.buffers)
            }
        };
        drop(self.log);
        let shaped = |values: Vec<f64>, dims: Vec<usize>| -> PyResult<Py<PyAny>> {
            Ok(PyArray1::from_vec(py, values).reshape(dims)?.into_any().unbind())
        };
        let logs = PyList::empty(py);
        for ((set, log), &r) in sets.iter().zip(self.logs).zip(&self.rows) {
            let m = set.get().times.len();
            let entry = PyInnovationLog {
                kind: set.get().kind.name().to_string(),
                t: PyArray1::from_slice(py, &set.get().times).into_any().unbind(),
                innovation: shaped(log.0, vec![m, r])?,
                std: shaped(log.1, vec![m, r])?,
                nis: PyArray1::from_vec(py, log.2).into_any().unbind(),
                accepted: PyArray1::from_vec(py, log.3).into_any().unbind(),
            };
            logs.append(Py::new(py, entry)?)?;
        }
        let t = PyArray1::from_vec(py, times).into_any().unbind();
        let epochs = PyArray1::from_vec(py, self.epochs).into_any().unbind();
        let innovations = logs.into_any().unbind();
        let (strapdown, imu) = (source.strapdown.unbind(), source.imu);
        let (dtheta, dv) = (source.dtheta.unbind(), source.dv.unbind());
        let width = ROW_HEAD + 2 * n - 9;
        let epoch_rows = shaped(self.epoch_rows, vec![k, width])?;
        let source_of = |epoch_rows: Py<PyAny>| -> PyResult<Py<PyAny>> {
            let tuple = (strapdown.clone_ref(py), imu.clone_ref(py), dtheta.clone_ref(py), dv.clone_ref(py), epoch_rows);
            Ok(tuple.into_pyobject(py)?.into_any().unbind())
        };
        let build = |b: Buffers, smoothed: Py<PyAny>, epoch_rows: Py<PyAny>, run: Py<PyAny>| -> PyResult<PyAidedResult> {
            let rows = b.sigma.len() / n;
            let column = |values: &[f64], i: usize| -> Vec<f64> { values.chunks_exact(3).map(|r| r[i]).collect() };
            Ok(PyAidedResult {
                lat: PyArray1::from_vec(py, column(&b.position, 0)).into_any().unbind(),
                lon: PyArray1::from_vec(py, column(&b.position, 1)).into_any().unbind(),
                h: PyArray1::from_vec(py, column(&b.position, 2)).into_any().unbind(),
                t: t.clone_ref(py),
                v_ned: shaped(b.velocity, vec![rows, 3])?,
                attitude: shaped(b.attitude, vec![rows, 4])?,
                sigma: shaped(b.sigma, vec![rows, n])?,
                imu_errors: shaped(b.imu_errors, vec![rows, n - 9])?,
                epochs: epochs.clone_ref(py),
                covariance: shaped(b.covariance, vec![k, n, n])?,
                innovations: innovations.clone_ref(py),
                smoothed,
                source: source_of(epoch_rows)?,
                run,
            })
        };
        let smoothed = match smoothed_buffers {
            None => py.None(),
            Some(b) => Py::new(py, build(b, py.None(), py.None(), py.None())?)?.into_any(),
        };
        build(self.filtered, smoothed, epoch_rows, redo)
    }
}
