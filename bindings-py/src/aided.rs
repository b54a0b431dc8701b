//! Aided navigation on numpy arrays: measurement sets (one class per kind, each checking its
//! arrays when made), the navigator and its runs, alignment. Conversion, validation, batching
//! and error mapping only; the filter is the core's `aided`.

use numpy::{PyArray1, PyArrayDyn, PyArrayMethods, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyList, PyTuple};
use rotaframe::aided::{
    self, AidedNavigator, FilterMemory, FilterSettings, Measurement, MeasurementSet, MeasurementSlices, RunSink, UpdateReport,
};
use rotaframe::earth::{Geodetic, WGS84};
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe::nav::{ImuIncrement, Strapdown};
use rotaframe::rotation::quaternion_to_wxyz;

use crate::earth::model::PyEarthModel;
use crate::nav::options::nav_error;
use crate::nav::sensor::PyImuErrors;
use crate::nav::strapdown::PyStrapdown;
use crate::plumbing::broadcast::{matrix_arg, real_array, single};
use crate::plumbing::errors::{ConcurrentUseError, ShapeError, python_error, to_py};
use crate::plumbing::memory::try_vec;
use crate::plumbing::output::angle_scale;
use crate::rotation::quaternion;

/// The kinds of measurement set, with the numbers each row keeps (`width`) and its rows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Kind {
    Position,
    Velocity,
    ZeroVelocity,
    ZeroAngularRate,
    Height,
    Heading,
    VehicleConstraint,
    Odometer,
}

const KINDS: [(Kind, &str, usize, usize); 8] = [
    (Kind::Position, "position", 9, 3),
    (Kind::Velocity, "velocity", 9, 3),
    (Kind::ZeroVelocity, "zero_velocity", 3, 3),
    (Kind::ZeroAngularRate, "zero_angular_rate", 3, 3),
    (Kind::Height, "height", 2, 1),
    (Kind::Heading, "heading", 2, 1),
    (Kind::VehicleConstraint, "vehicle_constraint", 9, 2),
    (Kind::Odometer, "odometer", 9, 1),
];

impl Kind {
    fn entry(self) -> (Kind, &'static str, usize, usize) {
        KINDS.into_iter().find(|k| k.0 == self).unwrap_or(KINDS[0])
    }
    fn name(self) -> &'static str {
        self.entry().1
    }
    fn width(self) -> usize {
        self.entry().2
    }
    fn rows(self) -> usize {
        self.entry().3
    }

    /// The core measurement of one row's numbers (radians, SI): position `lat, lon, h, σ×3,
    /// l×3`; velocity `v×3, σ×3, l×3`; zero velocity and rate `σ×3`; height and heading
    /// `value, σ`; vehicle constraint `q×4 (w, x, y, z), l×3, σ×2`; odometer `speed, q×4, l×3, σ`.
    fn measurement(self, r: &[f64]) -> Measurement {
        let v = |i: usize| Vector3::new(r[i], r[i + 1], r[i + 2]);
        let q =
            |i: usize| UnitQuaternion::new_unchecked(rotaframe::nalgebra::Quaternion::new(r[i], r[i + 1], r[i + 2], r[i + 3]));
        match self {
            Kind::Position => {
                Measurement::Position { position: Geodetic::new(r[0], r[1], r[2]), sigma_ned: v(3), lever_arm: v(6) }
            }
            Kind::Velocity => Measurement::Velocity { velocity_ned: v(0), sigma_ned: v(3), lever_arm: v(6) },
            Kind::ZeroVelocity => Measurement::ZeroVelocity { sigma_ned: v(0) },
            Kind::ZeroAngularRate => Measurement::ZeroAngularRate { sigma: v(0) },
            Kind::Height => Measurement::Height { height: r[0], sigma: r[1] },
            Kind::Heading => Measurement::Heading { heading: r[0], sigma: r[1] },
            Kind::VehicleConstraint => Measurement::VehicleConstraint { mounting: q(0), lever_arm: v(4), sigma: [r[7], r[8]] },
            Kind::Odometer => Measurement::Odometer { speed: r[0], mounting: q(1), lever_arm: v(5), sigma: r[8] },
        }
    }
}

/// A float64 array of `obj` as `(rows, values)`: shape `(m,)` when `columns` is 0, `(m, columns)`
/// otherwise.
fn table(obj: &Bound<'_, PyAny>, name: &'static str, columns: usize) -> PyResult<(usize, Vec<f64>)> {
    let array = real_array(obj, name)?;
    let shape = array.shape().to_vec();
    let ok = match columns {
        0 => shape.len() == 1,
        k => shape.len() == 2 && shape[1] == k,
    };
    if !ok {
        let want = if columns == 0 { "(M,)".to_string() } else { format!("(M, {columns})") };
        return Err(ShapeError::new_err(format!("`{name}` must have shape {want}, got {shape:?}")));
    }
    let values: Vec<f64> = array.readonly().as_array().iter().copied().collect();
    Ok((shape[0], values))
}

/// A per-row quantity of `k` values given as `(m, k)`, `(k,)` or (for k = 1) a number, spread
/// to `m` rows.
fn per_row(obj: &Bound<'_, PyAny>, name: &'static str, m: usize, k: usize) -> PyResult<Vec<f64>> {
    let array = real_array(obj, name)?;
    let shape = array.shape().to_vec();
    let values: Vec<f64> = array.readonly().as_array().iter().copied().collect();
    match shape.as_slice() {
        [] if k == 1 => Ok(vec![values[0]; m]),
        [n] if *n == k => Ok(values.iter().copied().cycle().take(m * k).collect()),
        [rows, n] if *rows == m && *n == k => Ok(values),
        [rows] if k == 1 && *rows == m => Ok(values),
        _ => Err(ShapeError::new_err(format!(
            "`{name}` must have shape ({m}, {k}) or ({k},){}, got {shape:?}",
            if k == 1 { " or be a number" } else { "" }
        ))),
    }
}

/// An optional 3-vector (zeros when None).
fn optional_vector(obj: Option<&Bound<'_, PyAny>>, name: &'static str) -> PyResult<[f64; 3]> {
    match obj {
        None => Ok([0.0; 3]),
        Some(o) if o.is_none() => Ok([0.0; 3]),
        Some(o) => {
            let v = single(o, name, &[3])?;
            Ok([v[0], v[1], v[2]])
        }
    }
}

/// An optional body-to-vehicle mounting (w, x, y, z), the identity when None.
fn mounting(obj: Option<&Bound<'_, PyAny>>) -> PyResult<[f64; 4]> {
    match obj {
        Some(o) if !o.is_none() => {
            let q = quaternion(&single(o, "mounting", &[4])?, "mounting").map_err(|e| to_py(&e, ""))?;
            Ok(quaternion_to_wxyz(&q))
        }
        _ => Ok([1.0, 0.0, 0.0, 0.0]),
    }
}

/// A set of measurements of one kind at strictly increasing times: the base of
/// `PositionFixes`, `VelocityFixes`, `ZeroVelocity`, `ZeroAngularRate`, `HeightFixes`,
/// `HeadingFixes`, `VehicleConstraint` and `OdometerSpeeds`.
#[pyclass(subclass, frozen, name = "MeasurementSet", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyMeasurementSet {
    kind: Kind,
    times: Vec<f64>,
    records: Vec<f64>,
    items: Vec<Measurement>,
}

impl PyMeasurementSet {
    /// A checked set: the times (finite, strictly increasing) and every measurement
    /// ([`Measurement::validate`], on WGS 84's height range; a run checks again on its own
    /// model). Errors name the Python argument and the row.
    fn checked(kind: Kind, times: Vec<f64>, records: Vec<f64>, degrees: bool) -> PyResult<Self> {
        aided::check_measurement_times(times.iter().copied(), "t").map_err(|e| to_py(&e, ""))?;
        let items: Vec<Measurement> = records.chunks_exact(kind.width()).map(|r| kind.measurement(r)).collect();
        for (row, m) in items.iter().enumerate() {
            m.validate(&WGS84).map_err(|e| {
                let lat = if let Measurement::Position { position, .. } = m { position.latitude } else { 0.0 };
                to_py(&python_error(e, degrees, lat), &format!("(row {row})"))
            })?;
        }
        Ok(Self { kind, times, records, items })
    }

    fn slices(&self) -> MeasurementSlices<'_> {
        MeasurementSlices { times: &self.times, measurements: &self.items }
    }
}

#[pymethods]
impl PyMeasurementSet {
    /// The measurement times (s), `(M,)`.
    #[getter]
    fn t<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        PyArray1::from_slice(py, &self.times)
    }

    /// The kind: "position", "velocity", "zero_velocity", "zero_angular_rate", "height",
    /// "heading", "vehicle_constraint" or "odometer".
    #[getter]
    fn kind(&self) -> &'static str {
        self.kind.name()
    }

    /// Rows of each innovation (1 to 3).
    #[getter]
    fn rows(&self) -> usize {
        self.kind.rows()
    }

    fn __len__(&self) -> usize {
        self.times.len()
    }

    fn __repr__(&self) -> String {
        format!("<{} measurements: {}>", self.kind.name(), self.times.len())
    }

    /// Pickling: the kind, the times and each row's numbers (radians, SI).
    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let rebuild = py.import("rotaframe._native")?.getattr("_measurement_set_from_parts")?;
        Ok((rebuild, (self.kind.name(), self.times.clone(), self.records.clone()).into_pyobject(py)?))
    }
}

/// Rebuilds a pickled measurement set as its own class.
#[pyfunction]
pub fn _measurement_set_from_parts(py: Python<'_>, kind: &str, times: Vec<f64>, records: Vec<f64>) -> PyResult<Py<PyAny>> {
    let Some(&(kind, ..)) = KINDS.iter().find(|k| k.1 == kind) else {
        return Err(pyo3::exceptions::PyValueError::new_err(format!("unknown measurement kind {kind:?}")));
    };
    if records.len() != times.len() * kind.width() {
        return Err(ShapeError::new_err("the pickled measurement set is damaged (its rows do not match its times)"));
    }
    let base = PyMeasurementSet::checked(kind, times, records, false)?;
    let init = pyo3::PyClassInitializer::from(base);
    Ok(match kind {
        Kind::Position => Py::new(py, init.add_subclass(PyPositionFixes))?.into_any(),
        Kind::Velocity => Py::new(py, init.add_subclass(PyVelocityFixes))?.into_any(),
        Kind::ZeroVelocity => Py::new(py, init.add_subclass(PyZeroVelocity))?.into_any(),
        Kind::ZeroAngularRate => Py::new(py, init.add_subclass(PyZeroAngularRate))?.into_any(),
        Kind::Height => Py::new(py, init.add_subclass(PyHeightFixes))?.into_any(),
        Kind::Heading => Py::new(py, init.add_subclass(PyHeadingFixes))?.into_any(),
        Kind::VehicleConstraint => Py::new(py, init.add_subclass(PyVehicleConstraint))?.into_any(),
        Kind::Odometer => Py::new(py, init.add_subclass(PyOdometerSpeeds))?.into_any(),
    })
}

/// Interleaves columns into rows: each `(values, k)` contributes `k` numbers per row.
fn rows_of(m: usize, parts: &[(&[f64], usize)]) -> Vec<f64> {
    let width: usize = parts.iter().map(|p| p.1).sum();
    let mut out = Vec::with_capacity(m * width);
    for row in 0..m {
        for (values, k) in parts {
            out.extend_from_slice(&values[row * k..(row + 1) * k]);
        }
    }
    out
}

/// GNSS position fixes: times `t` (M,) s, geodetic `lat`, `lon` (M,) (rad, or degrees with
/// `degrees=True`), ellipsoidal `h` (M,) m, `sigma` the 1σ north, east, down in metres,
/// `(M, 3)` or `(3,)`; `lever_arm` the antenna in body axes (m, (3,)).
#[pyclass(extends = PyMeasurementSet, frozen, name = "PositionFixes", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyPositionFixes;

#[pymethods]
impl PyPositionFixes {
    #[new]
    #[pyo3(signature = (t, lat, lon, h, sigma, *, lever_arm=None, degrees=false))]
    fn py_new(
        t: &Bound<'_, PyAny>,
        lat: &Bound<'_, PyAny>,
        lon: &Bound<'_, PyAny>,
        h: &Bound<'_, PyAny>,
        sigma: &Bound<'_, PyAny>,
        lever_arm: Option<&Bound<'_, PyAny>>,
        degrees: bool,
    ) -> PyResult<pyo3::PyClassInitializer<Self>> {
        let (m, times) = table(t, "t", 0)?;
        let s = angle_scale(degrees);
        let lat: Vec<f64> = per_row(lat, "lat", m, 1)?.iter().map(|x| x * s).collect();
        let lon: Vec<f64> = per_row(lon, "lon", m, 1)?.iter().map(|x| x * s).collect();
        let h = per_row(h, "h", m, 1)?;
        let sigma = per_row(sigma, "sigma", m, 3)?;
        let arm = optional_vector(lever_arm, "lever_arm")?.repeat(m);
        let records = rows_of(m, &[(&lat, 1), (&lon, 1), (&h, 1), (&sigma, 3), (&arm, 3)]);
        Ok(pyo3::PyClassInitializer::from(PyMeasurementSet::checked(Kind::Position, times, records, degrees)?).add_subclass(Self))
    }
}

/// GNSS velocity fixes: `v_ned` (M, 3) m/s, `sigma` (M, 3) or (3,) m/s, `lever_arm` (3,) m.
#[pyclass(extends = PyMeasurementSet, frozen, name = "VelocityFixes", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyVelocityFixes;

#[pymethods]
impl PyVelocityFixes {
    #[new]
    #[pyo3(signature = (t, v_ned, sigma, *, lever_arm=None))]
    fn py_new(
        t: &Bound<'_, PyAny>,
        v_ned: &Bound<'_, PyAny>,
        sigma: &Bound<'_, PyAny>,
        lever_arm: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<pyo3::PyClassInitializer<Self>> {
        let (m, times) = table(t, "t", 0)?;
        let v = per_row(v_ned, "v_ned", m, 3)?;
        let sigma = per_row(sigma, "sigma", m, 3)?;
        let arm = optional_vector(lever_arm, "lever_arm")?.repeat(m);
        let records = rows_of(m, &[(&v, 3), (&sigma, 3), (&arm, 3)]);
        Ok(pyo3::PyClassInitializer::from(PyMeasurementSet::checked(Kind::Velocity, times, records, false)?).add_subclass(Self))
    }
}

/// Zero-velocity updates while the vehicle stands still: `sigma` (M, 3), (3,) or a number,
/// m/s per NED axis.
#[pyclass(extends = PyMeasurementSet, frozen, name = "ZeroVelocity", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyZeroVelocity;

#[pymethods]
impl PyZeroVelocity {
    #[new]
    fn py_new(t: &Bound<'_, PyAny>, sigma: &Bound<'_, PyAny>) -> PyResult<pyo3::PyClassInitializer<Self>> {
        let (m, times) = table(t, "t", 0)?;
        let sigma = three_sigma(sigma, m)?;
        Ok(pyo3::PyClassInitializer::from(PyMeasurementSet::checked(Kind::ZeroVelocity, times, sigma, false)?).add_subclass(Self))
    }
}

/// A σ of three values per row, or one number for all three.
fn three_sigma(sigma: &Bound<'_, PyAny>, m: usize) -> PyResult<Vec<f64>> {
    match per_row(sigma, "sigma", m, 1) {
        Ok(one) if real_array(sigma, "sigma")?.ndim() == 0 => Ok(one.iter().flat_map(|&s| [s, s, s]).collect()),
        _ => per_row(sigma, "sigma", m, 3),
    }
}

/// Zero-angular-rate updates (the body does not turn relative to the Earth): `sigma` (M, 3),
/// (3,) or a number, rad/s per body axis.
#[pyclass(extends = PyMeasurementSet, frozen, name = "ZeroAngularRate", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyZeroAngularRate;

#[pymethods]
impl PyZeroAngularRate {
    #[new]
    fn py_new(t: &Bound<'_, PyAny>, sigma: &Bound<'_, PyAny>) -> PyResult<pyo3::PyClassInitializer<Self>> {
        let (m, times) = table(t, "t", 0)?;
        let sigma = three_sigma(sigma, m)?;
        Ok(pyo3::PyClassInitializer::from(PyMeasurementSet::checked(Kind::ZeroAngularRate, times, sigma, false)?)
            .add_subclass(Self))
    }
}

/// Ellipsoidal heights (barometric or other, reduced to the ellipsoid): `h` (M,) m, `sigma`
/// (M,) or a number, m.
#[pyclass(extends = PyMeasurementSet, frozen, name = "HeightFixes", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyHeightFixes;

#[pymethods]
impl PyHeightFixes {
    #[new]
    fn py_new(t: &Bound<'_, PyAny>, h: &Bound<'_, PyAny>, sigma: &Bound<'_, PyAny>) -> PyResult<pyo3::PyClassInitializer<Self>> {
        let (m, times) = table(t, "t", 0)?;
        let h = per_row(h, "h", m, 1)?;
        let sigma = per_row(sigma, "sigma", m, 1)?;
        Ok(pyo3::PyClassInitializer::from(PyMeasurementSet::checked(
            Kind::Height,
            times,
            rows_of(m, &[(&h, 1), (&sigma, 1)]),
            false,
        )?)
        .add_subclass(Self))
    }
}

/// True headings (dual antenna), or magnetic headings with `declination` (east positive)
/// added: `heading` (M,), `sigma` (M,) or a number, radians or degrees with `degrees=True`.
#[pyclass(extends = PyMeasurementSet, frozen, name = "HeadingFixes", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyHeadingFixes;

#[pymethods]
impl PyHeadingFixes {
    #[new]
    #[pyo3(signature = (t, heading, sigma, *, degrees=false, declination=None))]
    fn py_new(
        t: &Bound<'_, PyAny>,
        heading: &Bound<'_, PyAny>,
        sigma: &Bound<'_, PyAny>,
        degrees: bool,
        declination: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<pyo3::PyClassInitializer<Self>> {
        let (m, times) = table(t, "t", 0)?;
        let s = angle_scale(degrees);
        let declination = match declination {
            Some(d) if !d.is_none() => per_row(d, "declination", m, 1)?,
            _ => vec![0.0; m],
        };
        let heading: Vec<f64> = per_row(heading, "heading", m, 1)?.iter().zip(&declination).map(|(h, d)| (h + d) * s).collect();
        let sigma: Vec<f64> = per_row(sigma, "sigma", m, 1)?.iter().map(|x| x * s).collect();
        Ok(pyo3::PyClassInitializer::from(PyMeasurementSet::checked(
            Kind::Heading,
            times,
            rows_of(m, &[(&heading, 1), (&sigma, 1)]),
            degrees,
        )?)
        .add_subclass(Self))
    }
}

/// The land-vehicle constraint: no lateral and no vertical velocity in vehicle axes
/// (forward, right, down) at `lever_arm` (m, body axes; the rear axle's centre, say).
/// `mounting` is the body-to-vehicle quaternion (w, x, y, z; identity by default); `sigma`
/// (M, 2) or (2,) m/s, lateral and vertical.
#[pyclass(extends = PyMeasurementSet, frozen, name = "VehicleConstraint", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyVehicleConstraint;

#[pymethods]
impl PyVehicleConstraint {
    #[new]
    #[pyo3(signature = (t, sigma, *, mounting=None, lever_arm=None))]
    fn py_new(
        t: &Bound<'_, PyAny>,
        sigma: &Bound<'_, PyAny>,
        mounting: Option<&Bound<'_, PyAny>>,
        lever_arm: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<pyo3::PyClassInitializer<Self>> {
        let (m, times) = table(t, "t", 0)?;
        let sigma = per_row(sigma, "sigma", m, 2)?;
        let q = self::mounting(mounting)?.repeat(m);
        let arm = optional_vector(lever_arm, "lever_arm")?.repeat(m);
        let records = rows_of(m, &[(&q, 4), (&arm, 3), (&sigma, 2)]);
        Ok(pyo3::PyClassInitializer::from(PyMeasurementSet::checked(Kind::VehicleConstraint, times, records, false)?)
            .add_subclass(Self))
    }
}

/// Odometer speeds: forward speed `speed` (M,) m/s (negative reversing) at `lever_arm` (m,
/// body axes; the wheel), in vehicle axes given by `mounting`; `sigma` (M,) or a number, m/s.
#[pyclass(extends = PyMeasurementSet, frozen, name = "OdometerSpeeds", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyOdometerSpeeds;

#[pymethods]
impl PyOdometerSpeeds {
    #[new]
    #[pyo3(signature = (t, speed, sigma, *, mounting=None, lever_arm=None))]
    fn py_new(
        t: &Bound<'_, PyAny>,
        speed: &Bound<'_, PyAny>,
        sigma: &Bound<'_, PyAny>,
        mounting: Option<&Bound<'_, PyAny>>,
        lever_arm: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<pyo3::PyClassInitializer<Self>> {
        let (m, times) = table(t, "t", 0)?;
        let speed = per_row(speed, "speed", m, 1)?;
        let sigma = per_row(sigma, "sigma", m, 1)?;
        let q = self::mounting(mounting)?.repeat(m);
        let arm = optional_vector(lever_arm, "lever_arm")?.repeat(m);
        let records = rows_of(m, &[(&speed, 1), (&q, 4), (&arm, 3), (&sigma, 1)]);
        Ok(pyo3::PyClassInitializer::from(PyMeasurementSet::checked(Kind::Odometer, times, records, false)?).add_subclass(Self))
    }
}

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
/// estimated sensor errors, the covariance at each accepted measurement epoch, and every
/// measurement set's innovations.
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
    /// The covariance after all the updates at each epoch, `(K, states, states)`.
    #[pyo3(get)]
    covariance: Py<PyAny>,
    /// One `InnovationLog` per measurement set, in the order given.
    #[pyo3(get)]
    innovations: Py<PyAny>,
}

#[pymethods]
impl PyAidedResult {
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
        epochs: Py<PyAny>,
        covariance: Py<PyAny>,
        innovations: Py<PyAny>,
    ) -> Self {
        Self { t, lat, lon, h, v_ned, attitude, sigma, imu_errors, epochs, covariance, innovations }
    }

    /// The fixed-interval smoothed solution: not computed by the filter (None).
    #[getter]
    fn smoothed(&self, py: Python<'_>) -> Py<PyAny> {
        py.None()
    }

    fn __repr__(&self, py: Python<'_>) -> String {
        let n = self.t.bind(py).len().unwrap_or(0);
        format!("<AidedResult: {n} IMU times>")
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
        ];
        Ok((cls, PyTuple::new(py, fields.iter().map(|f| f.clone_ref(py)))?))
    }
}

/// One set's innovations, standard deviations, NIS and acceptance, by row.
type SetLog = (Vec<f64>, Vec<f64>, Vec<f64>, Vec<bool>);

/// What a run writes as it goes, into buffers that become the result's arrays.
struct Collector<'a> {
    states: usize,
    angle: f64,
    position: Vec<f64>,
    velocity: Vec<f64>,
    attitude: Vec<f64>,
    sigma: Vec<f64>,
    imu_errors: Vec<f64>,
    epochs: Vec<f64>,
    covariance: Vec<f64>,
    logs: Vec<SetLog>,
    rows: Vec<usize>,
    progress: Option<&'a Py<PyAny>>,
    total: usize,
    failure: Option<PyErr>,
}

/// Steps between calls of a run's `progress`.
const PROGRESS_EVERY: usize = 65_536;

impl RunSink for Collector<'_> {
    fn step(&mut self, index: usize, nav: &AidedNavigator) {
        let s = nav.state();
        let p = &s.position;
        self.position[3 * index..3 * index + 3].copy_from_slice(&[p.latitude * self.angle, p.longitude * self.angle, p.height]);
        self.velocity[3 * index..3 * index + 3].copy_from_slice(s.velocity_ned.as_slice());
        self.attitude[4 * index..4 * index + 4].copy_from_slice(&quaternion_to_wxyz(&s.attitude));
        let n = self.states;
        // The lengths are the navigator's own sizes, so these writes cannot fail.
        let _ = nav.write_sigma(&mut self.sigma[n * index..n * (index + 1)]);
        let _ = nav.write_sensor_errors(&mut self.imu_errors[(n - 9) * index..(n - 9) * (index + 1)]);
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
        let k = self.rows[set];
        let log = &mut self.logs[set];
        log.0[k * index..k * (index + 1)].copy_from_slice(&report.innovation.as_slice()[..k]);
        log.1[k * index..k * (index + 1)].copy_from_slice(&report.std.as_slice()[..k]);
        log.2[index] = report.nis;
        log.3[index] = report.accepted;
    }

    fn epoch(&mut self, time: f64, nav: &AidedNavigator, accepted: bool) {
        if accepted {
            let n = self.states * self.states;
            let start = self.covariance.len();
            self.epochs.push(time);
            self.covariance.resize(start + n, 0.0);
            let _ = nav.write_covariance(&mut self.covariance[start..]);
        }
    }

    fn stop(&mut self) -> bool {
        self.failure.is_some()
    }
}

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
    #[pyo3(signature = (t, dtheta, dv, measurements, *, progress=None))]
    fn run(
        &self,
        py: Python<'_>,
        t: &Bound<'_, PyAny>,
        dtheta: &Bound<'_, PyAny>,
        dv: &Bound<'_, PyAny>,
        measurements: &Bound<'_, PyAny>,
        progress: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<PyAidedResult> {
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
        let sets: Vec<Bound<'_, PyMeasurementSet>> = measurements
            .try_iter()?
            .map(|item| {
                item?.cast_into::<PyMeasurementSet>().map_err(|e| {
                    pyo3::exceptions::PyTypeError::new_err(format!("`measurements` must hold measurement sets: {e}"))
                })
            })
            .collect::<PyResult<_>>()?;
        let slices: Vec<MeasurementSlices<'_>> = sets.iter().map(|s| s.get().slices()).collect();
        let mut nav = self.lock()?;
        let states = nav.states();
        let rows = count;
        let progress: Option<Py<PyAny>> = progress.filter(|p| !p.is_none()).map(|p| p.clone().unbind());
        let mut collector = Collector {
            states,
            angle: if self.degrees { 180.0 / core::f64::consts::PI } else { 1.0 },
            position: vec_of(3 * rows)?,
            velocity: vec_of(3 * rows)?,
            attitude: vec_of(4 * rows)?,
            sigma: vec_of(states * rows)?,
            imu_errors: vec_of((states - 9) * rows)?,
            epochs: Vec::new(),
            covariance: Vec::new(),
            logs: sets
                .iter()
                .map(|s| {
                    let (m, k) = (s.get().times.len(), s.get().kind.rows());
                    Ok((vec_of(m * k)?, vec_of(m * k)?, vec_of(m)?, vec![false; m]))
                })
                .collect::<PyResult<_>>()?,
            rows: sets.iter().map(|s| s.get().kind.rows()).collect(),
            progress: progress.as_ref(),
            total: rows - 1,
            failure: None,
        };
        let (angle_rows, rest_a) = angles.as_chunks::<3>();
        let (velocity_rows, rest_v) = velocities.as_chunks::<3>();
        debug_assert!(rest_a.is_empty() && rest_v.is_empty());
        let mut trial = *nav;
        let outcome = py.detach(|| {
            let dyn_sets: Vec<&dyn MeasurementSet> = slices.iter().map(|s| s as &dyn MeasurementSet).collect();
            trial.run(&times, angle_rows, velocity_rows, &dyn_sets, &mut collector)
        });
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
        collector.into_result(py, times, &sets)
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

/// A zero-filled buffer, or `MemoryError`.
fn vec_of(n: usize) -> PyResult<Vec<f64>> {
    let mut v = try_vec(n)?;
    v.resize(n, 0.0);
    Ok(v)
}

impl Collector<'_> {
    fn into_result(self, py: Python<'_>, times: Vec<f64>, sets: &[Bound<'_, PyMeasurementSet>]) -> PyResult<PyAidedResult> {
        let rows = times.len();
        let n = self.states;
        let column = |values: &[f64], i: usize| -> Vec<f64> { values.chunks_exact(3).map(|r| r[i]).collect() };
        let shaped = |values: Vec<f64>, dims: Vec<usize>| -> PyResult<Py<PyAny>> {
            Ok(PyArray1::from_vec(py, values).reshape(dims)?.into_any().unbind())
        };
        let k = self.epochs.len();
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
        Ok(PyAidedResult {
            lat: PyArray1::from_vec(py, column(&self.position, 0)).into_any().unbind(),
            lon: PyArray1::from_vec(py, column(&self.position, 1)).into_any().unbind(),
            h: PyArray1::from_vec(py, column(&self.position, 2)).into_any().unbind(),
            t: PyArray1::from_vec(py, times).into_any().unbind(),
            v_ned: shaped(self.velocity, vec![rows, 3])?,
            attitude: shaped(self.attitude, vec![rows, 4])?,
            sigma: shaped(self.sigma, vec![rows, n])?,
            imu_errors: shaped(self.imu_errors, vec![rows, n - 9])?,
            epochs: PyArray1::from_vec(py, self.epochs).into_any().unbind(),
            covariance: shaped(self.covariance, vec![k, n, n])?,
            innovations: logs.into_any().unbind(),
        })
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
