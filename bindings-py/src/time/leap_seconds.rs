//! The leap-second table from Python (`rotaframe::time::LeapSeconds`): the built-in one, the
//! IERS `Leap_Second.dat` file, or steps given as arrays.

use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::time::LeapSeconds;

use crate::plumbing::errors::to_py;

/// A table of leap seconds: the MJDs at which TAI − UTC (s) takes each value, from 1972-01-01
/// on. `LeapSeconds.built_in()` holds every step announced up to 2017-01-01 (37 s);
/// `LeapSeconds.from_iers(path)` reads the IERS `Leap_Second.dat` file (with its expiry date);
/// `LeapSeconds(mjd, tai_minus_utc, expires=None)` builds one from arrays. Pass it as
/// `leap_seconds=` to the time functions and `EarthOrientation`.
#[pyclass(name = "LeapSeconds", module = "rotaframe._native", frozen)]
#[derive(Debug)]
pub struct PyLeapSeconds {
    pub table: LeapSeconds,
}

#[pymethods]
impl PyLeapSeconds {
    /// A table from its steps: the MJDs at which TAI − UTC takes each value, the values (s), and
    /// the MJD until which the table is valid, if known.
    #[new]
    #[pyo3(signature = (mjd, tai_minus_utc, expires=None))]
    fn new(mjd: Vec<i64>, tai_minus_utc: Vec<f64>, expires: Option<i64>) -> PyResult<Self> {
        if mjd.len() != tai_minus_utc.len() {
            let e =
                rotaframe::Error::LengthMismatch { quantity: "tai_minus_utc", found: tai_minus_utc.len(), expected: mjd.len() };
            return Err(to_py(&e, ""));
        }
        let steps: Vec<(i64, f64)> = mjd.into_iter().zip(tai_minus_utc).collect();
        Ok(PyLeapSeconds { table: LeapSeconds::from_steps(&steps, expires).map_err(|e| to_py(&e, ""))? })
    }

    /// The table built into rotaframe (every step up to 2017-01-01, 37 s).
    #[staticmethod]
    fn built_in() -> Self {
        PyLeapSeconds { table: LeapSeconds::BUILT_IN }
    }

    /// Reads the IERS `Leap_Second.dat` file at `path`.
    #[staticmethod]
    fn from_iers(path: std::path::PathBuf) -> PyResult<Self> {
        let text = std::fs::read_to_string(&path)
            .map_err(|e| pyo3::exceptions::PyOSError::new_err(format!("cannot read `path` {}: {e}", path.display())))?;
        let table = LeapSeconds::from_iers_text(&text).map_err(|e| {
            crate::plumbing::errors::RotaframeError::new_err(format!("`path` {} is not a leap-second file: {e}", path.display()))
        })?;
        Ok(PyLeapSeconds { table })
    }

    /// The steps: `(mjd, tai_minus_utc)`, the MJDs at which each value starts and the values (s).
    #[getter]
    fn steps<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyTuple>> {
        let (mjd, value): (Vec<i64>, Vec<f64>) = self.table.steps().unzip();
        PyTuple::new(py, [numpy::PyArray1::from_vec(py, mjd).into_any(), numpy::PyArray1::from_vec(py, value).into_any()])
    }

    /// The MJD until which the file said it was valid, or None.
    #[getter]
    fn expires(&self) -> Option<i64> {
        self.table.expires()
    }

    /// TAI − UTC (s) on the UTC day `mjd`.
    fn tai_minus_utc(&self, mjd: i64) -> PyResult<f64> {
        self.table.tai_minus_utc(mjd).map_err(|e| to_py(&e.with_quantity("mjd"), ""))
    }

    fn __reduce__<'py>(slf: &Bound<'py, Self>, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let (mjd, value): (Vec<i64>, Vec<f64>) = slf.get().table.steps().unzip();
        Ok((slf.get_type().into_any(), (mjd, value, slf.get().table.expires()).into_pyobject(py)?))
    }

    fn __repr__(&self) -> String {
        let (first, last) = (self.table.steps().next(), self.table.steps().last());
        match (first, last) {
            (Some((a, _)), Some((b, v))) => format!("LeapSeconds(MJD {a} to {b}, last TAI − UTC {v} s)"),
            _ => "LeapSeconds()".into(),
        }
    }
}

/// The leap-second table of a `leap_seconds` argument (the built-in one for None).
pub fn table(leap_seconds: Option<&Bound<'_, PyLeapSeconds>>) -> LeapSeconds {
    leap_seconds.map_or(LeapSeconds::BUILT_IN, |t| t.get().table)
}
