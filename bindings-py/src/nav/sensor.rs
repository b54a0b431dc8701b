//! The seeded IMU error model `ImuErrors` (the core's `nav::sensor`), its pickling, and the
//! loop that maps increments through a sensor model (shared with `Calibration.correct`).

use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::nalgebra::{Matrix3, Vector3};
use rotaframe::nav::{self, ImuErrorGenerator, ImuErrorModel, ImuIncrement, SensorErrorModel};

use super::options::nav_name;
use crate::plumbing::broadcast::{Failure, Operand, Plan, failure_to_py, run, single};
use crate::plumbing::errors::{ConcurrentUseError, RotaframeError, ShapeError, to_py};
use crate::plumbing::output::array_from;

/// A per-axis error parameter: three values, or one number meaning the same value on every
/// axis (an isotropic sensor; the documented shorthand of `ImuErrors`).
fn axes(obj: Option<&Bound<'_, PyAny>>, name: &'static str, scale: f64) -> PyResult<Vector3<f64>> {
    match obj {
        None => Ok(Vector3::zeros()),
        Some(o) if o.is_instance_of::<pyo3::types::PyFloat>() || o.is_instance_of::<pyo3::types::PyInt>() => {
            Ok(Vector3::repeat(crate::plumbing::args::number(o, name)? * scale))
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
        #[pyo3(from_py_with = crate::plumbing::args::seed)] seed: u64,
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
        let stream = nav::stream_words(&rng).to_vec();
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

/// The four state words of a saved random stream: a sequence of four integers, or the JSON
/// text `{"s": [..]}` of pickles written before the words were saved as integers.
fn stream_state(stream: &Bound<'_, PyAny>) -> PyResult<[u64; 4]> {
    let bad = |detail: String| RotaframeError::new_err(format!("`stream` is not a saved random stream: {detail}"));
    let words: Vec<u64> = if let Ok(text) = stream.extract::<String>() {
        let saved = stream.py().import("json")?.call_method1("loads", (text,)).map_err(|e| bad(e.to_string()))?;
        saved.get_item("s").and_then(|s| s.extract::<Vec<u64>>()).map_err(|e| bad(e.to_string()))?
    } else {
        stream.extract::<Vec<u64>>().map_err(|e| bad(e.to_string()))?
    };
    words.try_into().map_err(|w: Vec<u64>| bad(format!("it holds {} words, not 4", w.len())))
}

/// Rebuilds a pickled `ImuErrors`: per sensor 24 numbers (bias, scale factor, misalignment
/// column-major, noise density, Markov σ and τ, SI units), the random stream's saved state,
/// the Markov states and the seed it was made with.
#[pyfunction]
pub fn _imu_errors_from_parts(
    gyro: Vec<f64>,
    accelerometer: Vec<f64>,
    stream: &Bound<'_, PyAny>,
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
    let rng = nav::stream_from_words(&stream_state(stream)?).map_err(|e| to_py(&e, ""))?;
    let inner = ImuErrorGenerator::from_parts(
        model,
        rng,
        three(&gyro_markov, "gyro_markov")?,
        three(&accelerometer_markov, "accelerometer_markov")?,
    )
    .map_err(|e| to_py(&nav_name(e), ""))?;
    Ok(PyImuErrors { inner: std::sync::Mutex::new(inner), seed })
}
