//! Measurement sets on numpy arrays: one class per kind, each checking its arrays when made,
//! and the table readers the navigator shares. Conversion and validation only; the
//! measurement models are the core's `aided::measurement`.

use numpy::{PyArray1, PyArrayMethods, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::aided::{self, Measurement, MeasurementSlices};
use rotaframe::earth::{Geodetic, WGS84};
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe::rotation::quaternion_to_wxyz;

use crate::plumbing::broadcast::{real_array, single};
use crate::plumbing::errors::{ShapeError, python_error, to_py};
use crate::plumbing::output::angle_scale;
use crate::rotation::quaternion;

/// The kinds of measurement set, with the numbers each row keeps (`width`) and its rows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Kind {
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
    pub(super) fn name(self) -> &'static str {
        self.entry().1
    }
    fn width(self) -> usize {
        self.entry().2
    }
    pub(super) fn rows(self) -> usize {
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
pub(super) fn table(obj: &Bound<'_, PyAny>, name: &'static str, columns: usize) -> PyResult<(usize, Vec<f64>)> {
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
pub(super) fn per_row(obj: &Bound<'_, PyAny>, name: &'static str, m: usize, k: usize) -> PyResult<Vec<f64>> {
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
    pub(super) kind: Kind,
    pub(super) times: Vec<f64>,
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

    pub(super) fn slices(&self) -> MeasurementSlices<'_> {
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
