//! Ideal IMU output and increments, from a Python callable of time or a recorded log, and
//! the motion a log describes (the core's `nav::imu` and `nav::recorded`).

use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::earth::{self, Geodetic};
use rotaframe::frames::{AnyFrame, Eci};
use rotaframe::nav::{self, ImuIncrement, ImuSample, RecordedSample, RecordedTrajectory, SampleSource};

use super::options::{check_inertial, gravity_model};
use crate::earth::model::{PyEarthModel, model_or_default};
use crate::motion::{Motion, PyFrameMotion};
use crate::plumbing::broadcast::{Failure, Operand, Plan, failure_to_py, run};
use crate::plumbing::errors::python_error;
use crate::plumbing::errors::{ShapeError, to_py};
use crate::plumbing::output::{angle_scale, array_from};

/// The ideal gyro output (angular rate of the body relative to inertial space) and accelerometer
/// output (specific force), both resolved in the body, for a (batched) body motion relative to
/// the inertial frame: `(angular_rate, specific_force)`, arrays `(..., 3)`.
#[pyfunction]
#[pyo3(signature = (body_motion, *, model=None, gravity="normal"))]
pub fn ideal_imu<'py>(
    py: Python<'py>,
    body_motion: &Bound<'py, PyFrameMotion>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::gravity)] gravity: &str,
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
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::gravity)] gravity: &str,
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
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::gravity)] gravity: &str,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
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

/// Angle and velocity increments `(dtheta, dv)`, each `(N − 1, 3)`, over the intervals between
/// the tags (their lengths are `numpy.diff(t)`), from an IMU rate log: time tags `t` (N,) s,
/// angular rate `angular_rate` (N, 3) rad/s and specific force `specific_force` (N, 3) m/s²,
/// body axes, each
/// sample at its own tag. Each of the N − 1 intervals is integrated by two-point Gauss–Legendre
/// quadrature of the cubic through the four nearest samples (see the core's `nav::rates`;
/// fourth order, jitter handled through the tags). Tags must be strictly increasing; with
/// `max_gap` (s) a longer gap raises `RotaframeError` giving its start and end times.
#[pyfunction]
#[pyo3(signature = (t, angular_rate, specific_force, *, max_gap=None))]
pub fn increments_from_rates<'py>(
    py: Python<'py>,
    t: &Bound<'py, PyAny>,
    angular_rate: &Bound<'py, PyAny>,
    specific_force: &Bound<'py, PyAny>,
    max_gap: Option<f64>,
) -> PyResult<Bound<'py, PyTuple>> {
    // C-contiguous views of the caller's arrays when they are such (no copy), else copies.
    let view = |obj: &Bound<'py, PyAny>, name: &'static str| -> PyResult<numpy::PyReadonlyArrayDyn<'py, f64>> {
        let array = crate::plumbing::broadcast::real_array(obj, name)?;
        let contiguous = numpy::PyUntypedArrayMethods::is_c_contiguous(&array);
        let array = if contiguous { array } else { array.call_method0("copy")?.cast_into()? };
        Ok(numpy::PyArrayMethods::readonly(&array))
    };
    let tags = view(t, "t")?;
    let n = match numpy::PyUntypedArrayMethods::shape(&*tags) {
        &[n] if n >= 2 => n,
        shape => {
            return Err(ShapeError::new_err(format!("`t` must be a 1-D array of at least 2 times, got shape {shape:?}")));
        }
    };
    let rows = |obj: &Bound<'py, PyAny>, name: &'static str| -> PyResult<numpy::PyReadonlyArrayDyn<'py, f64>> {
        let array = view(obj, name)?;
        let shape = numpy::PyUntypedArrayMethods::shape(&*array).to_vec();
        if shape != [n, 3] {
            return Err(ShapeError::new_err(format!("`{name}` must have shape ({n}, 3), one row per tag in `t`, got {shape:?}")));
        }
        Ok(array)
    };
    let (w, a) = (rows(angular_rate, "angular_rate")?, rows(specific_force, "specific_force")?);
    let (w_rows, _) = w.as_slice()?.as_chunks::<3>();
    let (a_rows, _) = a.as_slice()?.as_chunks::<3>();
    let tags = tags.as_slice()?;
    let dtheta = numpy::PyArray2::<f64>::zeros(py, [n - 1, 3], false);
    let dv = numpy::PyArray2::<f64>::zeros(py, [n - 1, 3], false);
    {
        let (mut out_angle, mut out_velocity) =
            (numpy::PyArrayMethods::readwrite(&dtheta), numpy::PyArrayMethods::readwrite(&dv));
        let (angles, velocities) = (out_angle.as_slice_mut()?, out_velocity.as_slice_mut()?);
        // One pass, block by block, straight into the two fresh arrays (dropped on error).
        py.detach(|| {
            nav::increments_in_blocks(tags, w_rows, a_rows, max_gap, |first, block| {
                let (angle, velocity) = (&mut angles[3 * first..], &mut velocities[3 * first..]);
                for ((i, x), y) in block.iter().zip(angle.chunks_exact_mut(3)).zip(velocity.chunks_exact_mut(3)) {
                    x.copy_from_slice(i.delta_angle.as_slice());
                    y.copy_from_slice(i.delta_velocity.as_slice());
                }
            })
        })
        .map_err(|e| match e {
            nav::RateLogError::Input { index, error } => {
                // The tags' checks name the interval's ends; the user's argument is `t`.
                let named =
                    if matches!(error.quantity(), "interval" | "start" | "end") { error.with_quantity("t") } else { error };
                to_py(&named, &format!("(sample {index})"))
            }
            gap @ nav::RateLogError::Gap(_) => crate::plumbing::errors::RotaframeError::new_err(gap.to_string()),
        })?;
    }
    PyTuple::new(py, [dtheta.into_any(), dv.into_any()])
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
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
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
