//! IMU calibration and Allan deviation (`rotaframe.calibrate` in the core): conversion of the
//! arrays, the result class, error mapping. No formula is written here.

use numpy::{PyArrayDyn, PyArrayMethods, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::calibrate::{
    self, AccelerometerPosition, CalibrationSite, GyroRecord, ImuCalibration, ParameterSet, TriadCalibration, TriadParameters,
    allan,
};
use rotaframe::nalgebra::{Matrix3, SMatrix, UnitQuaternion, Vector3};
use rotaframe::rotation::{EulerZyx, quaternion_from_wxyz};

use crate::earth::model::{PyEarthModel, model_or_default};
use crate::nav::sensor::PyImuErrors;
use crate::plumbing::broadcast::real_array;
use crate::plumbing::broadcast::single;
use crate::plumbing::errors::{ShapeError, to_py};
use crate::plumbing::output::{array_from, matrix_out};

/// The rows of a 1-D or 2-D array argument: `(N, width)` as `N` rows (or one row of shape
/// `(width,)` when `allow_single`).
fn rows(obj: &Bound<'_, PyAny>, name: &'static str, width: usize) -> PyResult<Vec<Vec<f64>>> {
    let array = real_array(obj, name)?;
    let shape = array.shape().to_vec();
    if shape.len() != 2 || shape[1] != width {
        return Err(ShapeError::new_err(format!("`{name}` must have shape (N, {width}), got shape {shape:?}")));
    }
    let values: Vec<f64> = array.readonly().as_array().iter().copied().collect();
    Ok(values.chunks_exact(width).map(<[f64]>::to_vec).collect())
}

/// A per-row scalar or vector argument broadcast over `n` rows: `None` gives `default`, a
/// number or a `(width,)` array the same for every row, an `(n, width)` (or `(n,)` for width
/// 1) array one per row.
fn per_row(
    obj: Option<&Bound<'_, PyAny>>,
    name: &'static str,
    width: usize,
    n: usize,
    default: &[f64],
) -> PyResult<Vec<Vec<f64>>> {
    let Some(obj) = obj.filter(|o| !o.is_none()) else { return Ok(vec![default.to_vec(); n]) };
    let array = real_array(obj, name)?;
    let shape = array.shape().to_vec();
    let values: Vec<f64> = array.readonly().as_array().iter().copied().collect();
    let one_per_row = if width == 1 { shape == [n] } else { shape == [n, width] };
    let shared = if width == 1 { shape.is_empty() } else { shape == [width] };
    if one_per_row {
        Ok(values.chunks_exact(width).map(<[f64]>::to_vec).collect())
    } else if shared {
        Ok(vec![values; n])
    } else {
        let expected =
            if width == 1 { format!("a number or shape ({n},)") } else { format!("shape ({width},) or ({n}, {width})") };
        Err(ShapeError::new_err(format!("`{name}` must have {expected}, got shape {shape:?}")))
    }
}

/// Attitudes: `(N, 4)` body-to-NED quaternions (w, x, y, z) or `(N, 3)` Euler angles (yaw,
/// pitch, roll; degrees with `degrees=True`).
fn attitudes(obj: &Bound<'_, PyAny>, degrees: bool) -> PyResult<Vec<UnitQuaternion<f64>>> {
    let array = real_array(obj, "attitude")?;
    let shape = array.shape().to_vec();
    let width = match shape.as_slice() {
        [_, 4] => 4,
        [_, 3] => 3,
        _ => {
            return Err(ShapeError::new_err(format!(
                "`attitude` must have shape (N, 4) (quaternions w, x, y, z) or (N, 3) (yaw, pitch, roll), got shape {shape:?}"
            )));
        }
    };
    rows(obj, "attitude", width)?
        .iter()
        .enumerate()
        .map(|(i, r)| {
            let q = if width == 4 {
                quaternion_from_wxyz([r[0], r[1], r[2], r[3]], "attitude")
            } else {
                let euler = if degrees { EulerZyx::from_degrees(r[0], r[1], r[2]) } else { EulerZyx::new(r[0], r[1], r[2]) };
                if r.iter().all(|x| x.is_finite()) {
                    Ok(euler.to_quaternion())
                } else {
                    Err(rotaframe::Error::NonFinite { quantity: "attitude" })
                }
            };
            q.map_err(|e| to_py(&e, &format!("(first bad element at index ({i},) of `attitude`)")))
        })
        .collect()
}

fn vectors(obj: &Bound<'_, PyAny>, name: &'static str) -> PyResult<Vec<Vector3<f64>>> {
    Ok(rows(obj, name, 3)?.iter().map(|r| Vector3::new(r[0], r[1], r[2])).collect())
}

/// The noise argument: a number (every axis) or three numbers.
fn noise_of(obj: Option<&Bound<'_, PyAny>>) -> PyResult<Option<Vector3<f64>>> {
    match obj.filter(|o| !o.is_none()) {
        None => Ok(None),
        Some(o) if o.is_instance_of::<pyo3::types::PyFloat>() || o.is_instance_of::<pyo3::types::PyInt>() => {
            Ok(Some(Vector3::repeat(crate::plumbing::args::number(o, "noise")?)))
        }
        Some(o) => Ok(Some(Vector3::from_column_slice(&single(o, "noise", &[3])?))),
    }
}

fn site(lat: f64, h: f64, degrees: bool, model: Option<&Bound<'_, PyEarthModel>>, gravity: &str) -> CalibrationSite {
    CalibrationSite {
        model: model_or_default(model),
        gravity: if gravity == "j2" { rotaframe::earth::GravityModel::J2 } else { rotaframe::earth::GravityModel::Normal },
        latitude: if degrees { lat.to_radians() } else { lat },
        height: h,
    }
}

fn parameters_of(name: &str) -> TriadParameters {
    match name {
        "bias" => TriadParameters::Bias,
        "bias_scale" => TriadParameters::BiasAndScale,
        _ => TriadParameters::Full,
    }
}

/// A core error from a calibration, with the latitude named as the Python argument.
fn calibration_error(error: rotaframe::Error) -> PyErr {
    let error = match error.quantity() {
        "latitude" => error.with_quantity("lat"),
        "height" => error.with_quantity("h"),
        "table_axis_ned" => error.with_quantity("table_axis"),
        _ => error,
    };
    to_py(&error, "")
}

/// The calibration of one sensor triad, from `rf.calibrate_accelerometers`,
/// `rf.calibrate_accelerometers_by_magnitude` or `rf.calibrate_gyros`: the estimated
/// parameters of `x̃ = (I + diag(scale_factor) + misalignment) x + bias` (SI units: rad/s or
/// m/s² for the bias), their 12 × 12 covariance (order in `parameter_names`), the residuals
/// and the quality of the fit.
#[pyclass(frozen, name = "Calibration", module = "rotaframe._native")]
#[derive(Debug, Clone)]
pub struct PyCalibration {
    inner: TriadCalibration,
    sensor: &'static str,
    residuals: Vec<f64>,
    residual_width: usize,
}

impl PyCalibration {
    fn new(inner: TriadCalibration, sensor: &'static str, residuals: Vec<f64>, residual_width: usize) -> Self {
        Self { inner, sensor, residuals, residual_width }
    }
}

fn names(set: ParameterSet) -> Vec<&'static str> {
    set.iter().map(|i| calibrate::PARAMETER_NAMES[i]).collect()
}

#[pymethods]
impl PyCalibration {
    /// "accelerometer" or "gyro".
    #[getter]
    fn sensor(&self) -> &'static str {
        self.sensor
    }
    /// Bias per axis (rad/s or m/s²), `(3,)`.
    #[getter]
    fn bias<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        array_from(py, vec![3], self.inner.bias.as_slice())
    }
    /// Scale-factor error per axis (dimensionless), `(3,)`.
    #[getter]
    fn scale_factor<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        array_from(py, vec![3], self.inner.scale_factor.as_slice())
    }
    /// Misalignment `(3, 3)` (dimensionless, zero diagonal; row i, column j: how much of the
    /// true component j axis i sees).
    #[getter]
    fn misalignment<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        matrix_out(py, &self.inner.misalignment)
    }
    /// Covariance of the 12 parameters `(12, 12)`, in the order of `parameter_names` (zero
    /// rows and columns for parameters not estimated).
    #[getter]
    fn covariance<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        matrix_out(py, &self.inner.covariance)
    }
    /// The 12 parameters in the order of `parameter_names`, `(12,)`.
    #[getter]
    fn parameters<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        array_from(py, vec![12], self.inner.parameters().as_slice())
    }
    /// Standard deviations of the 12 parameters, `(12,)`.
    #[getter]
    fn standard_deviations<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        array_from(py, vec![12], self.inner.standard_deviations().as_slice())
    }
    /// The names of the 12 parameters, in order.
    #[getter]
    fn parameter_names(&self) -> Vec<&'static str> {
        calibrate::PARAMETER_NAMES.to_vec()
    }
    /// The names of the parameters estimated (the others are zero by assumption).
    #[getter]
    fn estimated(&self) -> Vec<&'static str> {
        names(self.inner.estimated)
    }
    /// Residuals, measured minus model: `(N, 3)` (sensor units), or `(N,)` magnitude
    /// residuals (m/s²) for the magnitude fit.
    #[getter]
    fn residuals<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        let n = self.residuals.len() / self.residual_width;
        let dims = if self.residual_width == 1 { vec![n] } else { vec![n, self.residual_width] };
        array_from(py, dims, &self.residuals)
    }
    /// RMS of the residuals per axis, `(3,)`.
    #[getter]
    fn residual_rms<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        array_from(py, vec![3], self.inner.residual_rms.as_slice())
    }
    /// The per-axis noise of one position's mean behind the covariance (given, or estimated
    /// from the residuals), `(3,)`.
    #[getter]
    fn noise<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        array_from(py, vec![3], self.inner.noise.as_slice())
    }
    /// Observations minus parameters (per axis for the fits with known attitudes).
    #[getter]
    fn degrees_of_freedom(&self) -> usize {
        self.inner.degrees_of_freedom
    }
    /// Condition number of the column-scaled design (near 1 for well-spread positions).
    #[getter]
    fn condition_number(&self) -> f64 {
        self.inner.condition_number
    }

    /// The sensor error model with these bias, scale factors and misalignments (no noise),
    /// as an `ImuErrors`; `other` is a `Calibration` of the other triad (else that triad is
    /// perfect).
    #[pyo3(signature = (other=None, *, seed=0))]
    fn to_imu_errors(
        &self,
        other: Option<&Bound<'_, PyCalibration>>,
        #[pyo3(from_py_with = crate::plumbing::args::seed)] seed: u64,
    ) -> PyResult<PyImuErrors> {
        let calibration = self.combined(other)?;
        let model = calibration.to_error_model().map_err(|e| to_py(&e, ""))?;
        PyImuErrors::from_model(model, seed)
    }

    /// Removes the calibration from measured increments: `dtheta`, `dv` `(N, 3)` or `(3,)`, `dt`
    /// a number or `(N,)`; returns `(dtheta, dv)` with this triad corrected (the exact inverse
    /// of the error model without noise) and the other triad unchanged, or both corrected when
    /// `other` is the other triad's `Calibration`.
    #[pyo3(signature = (dtheta, dv, dt, other=None))]
    fn correct<'py>(
        &self,
        py: Python<'py>,
        dtheta: &Bound<'py, PyAny>,
        dv: &Bound<'py, PyAny>,
        dt: &Bound<'py, PyAny>,
        other: Option<&Bound<'py, PyCalibration>>,
    ) -> PyResult<Bound<'py, PyTuple>> {
        let calibration = self.combined(other)?;
        crate::nav::sensor::map_increments(py, dtheta, dv, dt, None, |increment| calibration.correct(increment))
    }

    fn __repr__(&self) -> String {
        let b = self.inner.bias;
        format!(
            "Calibration(sensor={:?}, bias=[{:.6e}, {:.6e}, {:.6e}], estimated={} parameters, condition_number={:.3})",
            self.sensor,
            b.x,
            b.y,
            b.z,
            self.inner.estimated.iter().count(),
            self.inner.condition_number
        )
    }

    /// Pickles the whole result (for worker processes).
    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let c = &self.inner;
        let numbers: Vec<f64> = [
            c.bias.as_slice(),
            c.scale_factor.as_slice(),
            c.misalignment.as_slice(),
            c.covariance.as_slice(),
            c.residual_rms.as_slice(),
            c.noise.as_slice(),
        ]
        .concat()
        .into_iter()
        .chain([c.condition_number])
        .collect();
        let args = (self.sensor, numbers, c.degrees_of_freedom, c.estimated.0, self.residuals.clone(), self.residual_width);
        let module = py.import("rotaframe._native")?;
        Ok((module.getattr("_calibration_from_parts")?, args.into_pyobject(py)?.into_any().cast_into::<PyTuple>()?))
    }
}

impl PyCalibration {
    /// This calibration with `other` (the other triad's) in an [`ImuCalibration`].
    fn combined(&self, other: Option<&Bound<'_, PyCalibration>>) -> PyResult<ImuCalibration> {
        let mut both = ImuCalibration { gyro: TriadCalibration::perfect(), accelerometer: TriadCalibration::perfect() };
        let mut put = |c: &PyCalibration| match c.sensor {
            "gyro" => both.gyro = c.inner,
            _ => both.accelerometer = c.inner,
        };
        put(self);
        if let Some(o) = other {
            let o = o.get();
            if o.sensor == self.sensor {
                return Err(crate::plumbing::errors::RotaframeError::new_err(format!(
                    "`other` must calibrate the other triad; both are {} calibrations",
                    self.sensor
                )));
            }
            put(o);
        }
        Ok(both)
    }
}

/// Rebuilds a pickled `Calibration`.
#[pyfunction]
pub fn _calibration_from_parts(
    sensor: &str,
    numbers: Vec<f64>,
    degrees_of_freedom: usize,
    estimated: u16,
    residuals: Vec<f64>,
    residual_width: usize,
) -> PyResult<PyCalibration> {
    if numbers.len() != 3 + 3 + 9 + 144 + 3 + 3 + 1 || !(residual_width == 1 || residual_width == 3) {
        return Err(ShapeError::new_err("not a pickled Calibration"));
    }
    let inner = TriadCalibration {
        bias: Vector3::from_column_slice(&numbers[0..3]),
        scale_factor: Vector3::from_column_slice(&numbers[3..6]),
        misalignment: Matrix3::from_column_slice(&numbers[6..15]),
        covariance: SMatrix::<f64, 12, 12>::from_column_slice(&numbers[15..159]),
        residual_rms: Vector3::from_column_slice(&numbers[159..162]),
        noise: Vector3::from_column_slice(&numbers[162..165]),
        condition_number: numbers[165],
        degrees_of_freedom,
        estimated: ParameterSet(estimated),
    };
    inner.validate().map_err(|e| to_py(&e, "(not a valid pickled Calibration)"))?;
    crate::plumbing::errors::check_finite(&residuals, "calibration")?;
    let sensor = if sensor == "gyro" { "gyro" } else { "accelerometer" };
    Ok(PyCalibration::new(inner, sensor, residuals, residual_width))
}

/// Calibrates an accelerometer triad from static positions with known attitudes at a site
/// (multi-position least squares against the site's plumb-line gravity).
///
/// `attitude` `(N, 4)` body-to-NED quaternions (w, x, y, z) or `(N, 3)` Euler angles (yaw,
/// pitch, roll); `specific_force` `(N, 3)` mean accelerometer output per position (m/s²);
/// `lat`, `h` the site (`degrees` applies to `lat` and Euler angles; results are SI);
/// `noise` the standard deviation of a position's mean (a number or per axis; default:
/// estimated from the residuals); `parameters` "full" (bias, scale factors, misalignments),
/// "bias_scale" or "bias". Raises `UnobservableError` naming the parameters the positions
/// cannot determine.
#[pyfunction]
#[pyo3(signature = (attitude, specific_force, *, lat, h, degrees=false, model=None, noise=None, parameters="full", gravity="normal"))]
pub fn calibrate_accelerometers(
    attitude: &Bound<'_, PyAny>,
    specific_force: &Bound<'_, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::lat)] lat: f64,
    #[pyo3(from_py_with = crate::plumbing::args::h)] h: f64,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'_, PyEarthModel>>,
    noise: Option<&Bound<'_, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::args::parameters)] parameters: &str,
    #[pyo3(from_py_with = crate::plumbing::args::gravity)] gravity: &str,
) -> PyResult<PyCalibration> {
    let q = attitudes(attitude, degrees)?;
    let f = vectors(specific_force, "specific_force")?;
    if q.len() != f.len() {
        return Err(ShapeError::new_err(format!("`specific_force` has {} rows, `attitude` {}", f.len(), q.len())));
    }
    let positions: Vec<_> = q.iter().zip(&f).map(|(q, f)| AccelerometerPosition { attitude: *q, specific_force: *f }).collect();
    let mut residuals = vec![0.0; 3 * positions.len()];
    let site = site(lat, h, degrees, model.as_ref(), gravity);
    let sigma = noise_of(noise)?;
    let inner = calibrate::calibrate_accelerometers(
        &site,
        positions.iter().copied(),
        parameters_of(parameters),
        sigma.as_ref(),
        Some(&mut residuals),
    )
    .map_err(calibration_error)?;
    Ok(PyCalibration::new(inner, "accelerometer", residuals, 3))
}

/// Calibrates an accelerometer triad from static positions whose attitudes were not recorded,
/// by fitting the corrected specific force's magnitude to the site's gravity (at least 10
/// well-spread positions; 9 with `noise`). Nine parameters are identifiable: the bias, the
/// scale factors and the misalignments below the diagonal (`M_yx`, `M_zx`, `M_zy`); the
/// calibrated frame has x along the x accelerometer and y in the plane of x and y.
#[pyfunction]
#[pyo3(signature = (specific_force, *, lat, h, degrees=false, model=None, noise=None, gravity="normal"))]
pub fn calibrate_accelerometers_by_magnitude(
    specific_force: &Bound<'_, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::lat)] lat: f64,
    #[pyo3(from_py_with = crate::plumbing::args::h)] h: f64,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'_, PyEarthModel>>,
    noise: Option<&Bound<'_, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::args::gravity)] gravity: &str,
) -> PyResult<PyCalibration> {
    let f = vectors(specific_force, "specific_force")?;
    let mut residuals = vec![0.0; f.len()];
    let site = site(lat, h, degrees, model.as_ref(), gravity);
    let sigma = noise_of(noise)?;
    let inner = calibrate::calibrate_accelerometers_by_magnitude(&site, f.iter().copied(), sigma.as_ref(), Some(&mut residuals))
        .map_err(calibration_error)?;
    Ok(PyCalibration::new(inner, "accelerometer", residuals, 1))
}

/// Calibrates a gyro triad from static positions and rate-table runs at a site.
///
/// `attitude` `(N, 4)` or `(N, 3)` as for `calibrate_accelerometers`: the body-to-NED attitude
/// at the start of each record; `angular_rate` `(N, 3)` the mean gyro output over each record
/// (rad/s: the sum of its angle increments over `duration`); `table_rate` the table's rate
/// about `table_axis` (NED direction, default down) for each record (a number or `(N,)`;
/// rad/s, deg/s with `degrees=True`; default 0: static positions), `duration` the length of
/// each record (s; needed where the table turns). Static positions alone determine only the
/// biases (`parameters="bias"`); runs about three axes, both ways, determine everything.
#[pyfunction]
#[pyo3(signature = (attitude, angular_rate, *, lat, h=0.0, table_rate=None, table_axis=None, duration=None, degrees=false, model=None, noise=None, parameters="full"))]
pub fn calibrate_gyros(
    attitude: &Bound<'_, PyAny>,
    angular_rate: &Bound<'_, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::lat)] lat: f64,
    #[pyo3(from_py_with = crate::plumbing::args::h)] h: f64,
    table_rate: Option<&Bound<'_, PyAny>>,
    table_axis: Option<&Bound<'_, PyAny>>,
    duration: Option<&Bound<'_, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'_, PyEarthModel>>,
    noise: Option<&Bound<'_, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::args::parameters)] parameters: &str,
) -> PyResult<PyCalibration> {
    let q = attitudes(attitude, degrees)?;
    let w = vectors(angular_rate, "angular_rate")?;
    let n = q.len();
    if w.len() != n {
        return Err(ShapeError::new_err(format!("`angular_rate` has {} rows, `attitude` {n}", w.len())));
    }
    let rates = per_row(table_rate, "table_rate", 1, n, &[0.0])?;
    let axes = per_row(table_axis, "table_axis", 3, n, &[0.0, 0.0, 1.0])?;
    let durations = per_row(duration, "duration", 1, n, &[0.0])?;
    let scale = crate::plumbing::output::angle_scale(degrees);
    let records: Vec<_> = (0..n)
        .map(|i| GyroRecord {
            attitude: q[i],
            table_axis_ned: Vector3::new(axes[i][0], axes[i][1], axes[i][2]),
            table_rate: rates[i][0] * scale,
            duration: durations[i][0],
            angular_rate: w[i],
        })
        .collect();
    let mut residuals = vec![0.0; 3 * n];
    let site = site(lat, h, degrees, model.as_ref(), "normal");
    let sigma = noise_of(noise)?;
    let inner = calibrate::calibrate_gyros(
        &site,
        records.iter().copied(),
        parameters_of(parameters),
        sigma.as_ref(),
        Some(&mut residuals),
    )
    .map_err(calibration_error)?;
    Ok(PyCalibration::new(inner, "gyro", residuals, 3))
}

/// Overlapping Allan deviation of rate samples (or increments divided by `dt`) at interval
/// `dt` (s): `samples` `(N,)` or `(N, k)` (each column separately). `taus` are the cluster
/// times (s; rounded to whole samples, default octaves from `dt` up to half the record);
/// `confidence` the level of the bounds (default 0.683: one sigma). Returns `(taus, adev,
/// lower, upper)`: `taus` `(T,)`, the others `(T,)` or `(T, k)`.
#[pyfunction]
#[pyo3(signature = (samples, dt, *, taus=None, confidence=0.683))]
pub fn allan_deviation<'py>(
    py: Python<'py>,
    samples: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::dt)] dt: f64,
    taus: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::args::confidence)] confidence: f64,
) -> PyResult<Bound<'py, PyTuple>> {
    let array = real_array(samples, "samples")?;
    let shape = array.shape().to_vec();
    let (n, columns) = match shape.as_slice() {
        [n] => (*n, 1),
        [n, k] => (*n, *k),
        _ => return Err(ShapeError::new_err(format!("`samples` must have shape (N,) or (N, k), got shape {shape:?}"))),
    };
    let values: Vec<f64> = array.readonly().as_array().iter().copied().collect();
    let sizes: Vec<usize> = match taus.filter(|t| !t.is_none()) {
        None => {
            let mut buffer = [0usize; 64];
            let count = allan::default_cluster_sizes(n, &mut buffer);
            buffer[..count].to_vec()
        }
        Some(t) => {
            let t = real_array(t, "taus")?;
            let given: Vec<f64> = t.readonly().as_array().iter().copied().collect();
            given
                .iter()
                .map(|&tau| {
                    let m = (tau / dt).round();
                    if tau.is_finite() && m >= 1.0 && m <= allan::max_cluster_size(n) as f64 {
                        Ok(m as usize)
                    } else {
                        Err(crate::plumbing::errors::OutOfRangeError::new_err(format!(
                            "`taus` holds {tau}, outside [dt, (N - 1)/2 dt] = [{dt}, {}] for this record",
                            allan::max_cluster_size(n) as f64 * dt
                        )))
                    }
                })
                .collect::<PyResult<_>>()?
        }
    };
    let count = sizes.len();
    let mut deviation = vec![0.0; count * columns];
    let mut lower = vec![0.0; count * columns];
    let mut upper = vec![0.0; count * columns];
    let mut tau_out = vec![0.0; count];
    let result: Result<(), rotaframe::Error> = py.detach(|| {
        let mut column = vec![0.0; n];
        let mut scratch = vec![0.0; n + 1];
        let mut points = vec![allan::AllanPoint::default(); count];
        for c in 0..columns {
            for (k, x) in column.iter_mut().enumerate() {
                *x = values[k * columns + c];
            }
            allan::allan_deviation(&column, dt, &sizes, confidence, &mut scratch, &mut points)?;
            for (i, p) in points.iter().enumerate() {
                tau_out[i] = p.tau;
                deviation[i * columns + c] = p.deviation;
                lower[i * columns + c] = p.lower;
                upper[i * columns + c] = p.upper;
            }
        }
        Ok(())
    });
    result.map_err(|e| {
        let e = if e.quantity() == "interval" { e.with_quantity("dt") } else { e };
        to_py(&e, "")
    })?;
    let dims = if shape.len() == 1 { vec![count] } else { vec![count, columns] };
    PyTuple::new(
        py,
        [
            array_from(py, vec![count], &tau_out),
            array_from(py, dims.clone(), &deviation),
            array_from(py, dims.clone(), &lower),
            array_from(py, dims, &upper),
        ],
    )
}

/// Noise terms fitted to an Allan-deviation curve, in SI units of the sensor's output and in
/// trade units (gyro: deg/√h, deg/h, deg/h/√h; accelerometer: m/s/√h, µg, m/s/h/√h).
#[pyclass(frozen, name = "NoiseTerms", module = "rotaframe._native")]
#[derive(Debug, Clone)]
pub struct PyNoiseTerms {
    terms: Vec<allan::NoiseTerms>,
    shape: Vec<usize>,
}

impl PyNoiseTerms {
    fn values<'py>(&self, py: Python<'py>, f: impl Fn(&allan::NoiseTerms) -> f64) -> PyResult<Bound<'py, PyAny>> {
        let v: Vec<f64> = self.terms.iter().map(f).collect();
        if self.shape.is_empty() {
            Ok(v[0].into_pyobject(py)?.into_any())
        } else {
            Ok(array_from(py, self.shape.clone(), &v).into_any())
        }
    }
}

#[pymethods]
impl PyNoiseTerms {
    /// White rate noise density N (rad/√s or m/s/√s): the −½ slope read at τ = 1 s.
    #[getter]
    fn white_noise<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        self.values(py, |t| t.white_noise)
    }
    /// Bias instability B (rad/s or m/s²): the flat part over 0.664.
    #[getter]
    fn bias_instability<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        self.values(py, |t| t.bias_instability)
    }
    /// Rate random walk K (rad/s/√s or m/s²/√s): the +½ slope read at τ = 3 s.
    #[getter]
    fn rate_random_walk<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        self.values(py, |t| t.rate_random_walk)
    }
    /// Gyro angle random walk (deg/√h).
    #[getter]
    fn arw_deg_per_sqrt_h<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        self.values(py, |t| t.gyro_trade_units().0)
    }
    /// Gyro bias instability (deg/h).
    #[getter]
    fn bias_instability_deg_per_h<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        self.values(py, |t| t.gyro_trade_units().1)
    }
    /// Gyro rate random walk (deg/h/√h).
    #[getter]
    fn rrw_deg_per_h_per_sqrt_h<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        self.values(py, |t| t.gyro_trade_units().2)
    }
    /// Accelerometer velocity random walk (m/s/√h).
    #[getter]
    fn vrw_mps_per_sqrt_h<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        self.values(py, |t| t.accelerometer_trade_units().0)
    }
    /// Accelerometer bias instability (µg, standard gravity 9.80665 m/s²).
    #[getter]
    fn bias_instability_ug<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        self.values(py, |t| t.accelerometer_trade_units().1)
    }
    /// Accelerometer acceleration random walk (m/s/h/√h).
    #[getter]
    fn acceleration_random_walk_mps_per_h_per_sqrt_h<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        self.values(py, |t| t.accelerometer_trade_units().2)
    }
    /// The model's Allan deviation at `tau` (s): `√(N²/τ + 0.664² B² + K² τ/3)`.
    fn deviation<'py>(&self, py: Python<'py>, tau: &Bound<'py, PyAny>) -> PyResult<Bound<'py, PyAny>> {
        let taus = real_array(tau, "tau")?;
        let tau_shape = taus.shape().to_vec();
        let tau_values: Vec<f64> = taus.readonly().as_array().iter().copied().collect();
        let mut out = Vec::with_capacity(tau_values.len() * self.terms.len());
        for t in &tau_values {
            for terms in &self.terms {
                out.push(terms.checked_deviation(*t).map_err(|e| to_py(&e, ""))?);
            }
        }
        let mut dims = tau_shape;
        dims.extend_from_slice(&self.shape);
        if dims.is_empty() { Ok(out[0].into_pyobject(py)?.into_any()) } else { Ok(array_from(py, dims, &out).into_any()) }
    }
    fn __repr__(&self) -> String {
        let t = &self.terms[0];
        if self.shape.is_empty() {
            format!(
                "NoiseTerms(white_noise={:.6e}, bias_instability={:.6e}, rate_random_walk={:.6e})",
                t.white_noise, t.bias_instability, t.rate_random_walk
            )
        } else {
            format!("NoiseTerms({} columns)", self.terms.len())
        }
    }
}

/// Fits the white-noise, bias-instability and rate-random-walk terms to an Allan-deviation
/// curve: `taus` `(T,)` (s), `adev` `(T,)` or `(T, k)` (one fit per column). `dof`, the
/// equivalent degrees of freedom of each point (same shape as `adev`), weights the points;
/// by default they are weighted by `1/τ`. Returns a `NoiseTerms`.
#[pyfunction]
#[pyo3(signature = (taus, adev, *, dof=None))]
pub fn fit_noise_terms(
    taus: &Bound<'_, PyAny>,
    adev: &Bound<'_, PyAny>,
    dof: Option<&Bound<'_, PyAny>>,
) -> PyResult<PyNoiseTerms> {
    let t: Vec<f64> = real_array(taus, "taus")?.readonly().as_array().iter().copied().collect();
    let a = real_array(adev, "adev")?;
    let shape = a.shape().to_vec();
    let values: Vec<f64> = a.readonly().as_array().iter().copied().collect();
    let columns = match shape.as_slice() {
        [n] if *n == t.len() => 1,
        [n, k] if *n == t.len() => *k,
        _ => return Err(ShapeError::new_err(format!("`adev` must have shape ({0},) or ({0}, k), got shape {shape:?}", t.len()))),
    };
    let weights: Option<Vec<f64>> = match dof.filter(|d| !d.is_none()) {
        None => None,
        Some(d) => {
            let d = real_array(d, "dof")?;
            if d.shape() != shape.as_slice() {
                return Err(ShapeError::new_err(format!("`dof` must have the shape of `adev`, {shape:?}, got {:?}", d.shape())));
            }
            Some(d.readonly().as_array().iter().copied().collect())
        }
    };
    let mut terms = Vec::with_capacity(columns);
    for c in 0..columns {
        let column: Vec<f64> = (0..t.len()).map(|i| values[i * columns + c]).collect();
        let w: Option<Vec<f64>> = weights.as_ref().map(|w| (0..t.len()).map(|i| w[i * columns + c]).collect());
        let fit = allan::fit_noise_terms(&t, &column, w.as_deref()).map_err(|e| {
            let e = if e.quantity() == "deviations" {
                e.with_quantity("adev")
            } else if e.quantity() == "degrees_of_freedom" {
                e.with_quantity("dof")
            } else {
                e
            };
            to_py(&e, "")
        })?;
        terms.push(fit);
    }
    Ok(PyNoiseTerms { terms, shape: if shape.len() == 1 { Vec::new() } else { vec![columns] } })
}
