//! Earth orientation parameters from Python (`rotaframe::time::EarthOrientation`): the IERS files,
//! tables from arrays, and interpolation at arrays of UTC dates.

use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::time::{EarthOrientation, JulianDate};

use super::leap_seconds::{self, PyLeapSeconds};

use crate::plumbing::batch::threads;
use crate::plumbing::broadcast::{BatchArgs, Operand, map_elements, scalar_or_array};
use crate::plumbing::errors::to_py;

/// A 1-D float array argument as a vector.
fn vector(obj: &Bound<'_, PyAny>, name: &'static str) -> PyResult<Vec<f64>> {
    let array = crate::plumbing::broadcast::real_array(obj, name)?;
    if numpy::PyUntypedArrayMethods::ndim(&array) != 1 {
        return Err(crate::plumbing::errors::ShapeError::new_err(format!("`{name}` must be a 1-D array")));
    }
    Ok(array.readonly().as_array().iter().copied().collect())
}

/// Earth orientation parameters tabulated at UTC dates: UT1 − UTC (s), the pole coordinates
/// xp, yp and the celestial pole offsets dX, dY (rad), interpolated by 4-point Lagrange (IERS
/// Conventions 2010 §5.5; exact at the tabulated dates; UT1 − UTC continued across leap
/// seconds; diurnal and subdiurnal tidal terms not applied). Build one from arrays,
/// `EarthOrientation(mjd_utc, ut1_minus_utc, xp, yp, dx=None, dy=None, leap_seconds=None)`
/// (MJD of 0h UTC, increasing, from 1972, at least four rows; `dx`, `dy` may cover only the
/// first rows), or read an IERS file with `EarthOrientation.from_iers(path)`.
#[pyclass(name = "EarthOrientation", module = "rotaframe._native", frozen)]
#[derive(Debug)]
pub struct PyEarthOrientation {
    pub table: EarthOrientation,
}

#[pymethods]
impl PyEarthOrientation {
    #[new]
    #[pyo3(signature = (mjd_utc, ut1_minus_utc, xp, yp, dx=None, dy=None, leap_seconds=None))]
    fn new(
        mjd_utc: &Bound<'_, PyAny>,
        ut1_minus_utc: &Bound<'_, PyAny>,
        xp: &Bound<'_, PyAny>,
        yp: &Bound<'_, PyAny>,
        dx: Option<&Bound<'_, PyAny>>,
        dy: Option<&Bound<'_, PyAny>>,
        leap_seconds: Option<&Bound<'_, PyLeapSeconds>>,
    ) -> PyResult<Self> {
        let (mjd, dut1, x, y) =
            (vector(mjd_utc, "mjd_utc")?, vector(ut1_minus_utc, "ut1_minus_utc")?, vector(xp, "xp")?, vector(yp, "yp")?);
        let offsets = match (dx, dy) {
            (Some(a), Some(b)) if !a.is_none() && !b.is_none() => Some((vector(a, "dx")?, vector(b, "dy")?)),
            (None, None) => None,
            (Some(a), Some(b)) if a.is_none() && b.is_none() => None,
            _ => return Err(crate::plumbing::errors::RotaframeError::new_err("give both `dx` and `dy`, or neither")),
        };
        let table = EarthOrientation::new(&mjd, &dut1, &x, &y, offsets.as_ref().map(|(a, b)| (&a[..], &b[..])))
            .map_err(|e| to_py(&if e.quantity() == "mjd" { e.with_quantity("mjd_utc") } else { e }, ""))?;
        Ok(PyEarthOrientation { table: table.with_leap_seconds(leap_seconds::table(leap_seconds)) })
    }

    /// Reads an IERS file at `path`: `finals2000A` (`.all`, `.data`, `.daily`; its Bulletin A
    /// columns) or EOP C04 (`eopc04.1962-now`). The table holds the rows from 1972 on whose
    /// UT1 − UTC, xp and yp are given (blank prediction rows at the end are left out); dX, dY
    /// as long as given (see `offsets_until`). Raises `RotaframeError` giving the line of a
    /// malformed row, `OSError` when the file cannot be read.
    #[staticmethod]
    #[pyo3(signature = (path, *, leap_seconds=None))]
    fn from_iers(path: std::path::PathBuf, leap_seconds: Option<&Bound<'_, PyLeapSeconds>>) -> PyResult<Self> {
        let text = std::fs::read_to_string(&path)
            .map_err(|e| pyo3::exceptions::PyOSError::new_err(format!("cannot read `path` {}: {e}", path.display())))?;
        let table = EarthOrientation::from_iers_text(&text).map_err(|e| {
            crate::plumbing::errors::RotaframeError::new_err(format!(
                "`path` {} is not an IERS finals2000A or C04 file: {e}",
                path.display()
            ))
        })?;
        Ok(PyEarthOrientation { table: table.with_leap_seconds(leap_seconds::table(leap_seconds)) })
    }

    /// The first and last tabulated MJD (UTC).
    #[getter]
    fn mjd_span(&self) -> (f64, f64) {
        self.table.span()
    }

    /// The last MJD at which dX, dY are given (None if never).
    #[getter]
    fn offsets_until(&self) -> Option<f64> {
        self.table.offsets_until()
    }

    /// The tabulated rows `(mjd_utc, ut1_minus_utc, xp, yp, dx, dy)` (dx, dy as long as given).
    #[getter]
    fn rows<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyTuple>> {
        PyTuple::new(py, row_arrays(py, &self.table))
    }

    /// The orientation at UTC dates `jd_utc + jd_utc_fraction` (days), interpolated: an
    /// `EarthOrientationAt` with `ut1_minus_utc` (s), `xp`, `yp`, `dx`, `dy` (rad; dx, dy are 0
    /// past `offsets_until`, where `offsets_given` is False), each shaped like the dates.
    /// Raises `OutOfRangeError` naming `jd_utc` outside the table (giving its span).
    #[pyo3(signature = (jd_utc, jd_utc_fraction=None, *, threads=1))]
    fn at<'py>(
        &self,
        py: Python<'py>,
        jd_utc: &Bound<'py, PyAny>,
        jd_utc_fraction: Option<&Bound<'py, PyAny>>,
        #[pyo3(from_py_with = threads)] threads: usize,
    ) -> PyResult<PyEarthOrientationAt> {
        let ops = [Operand::extract(jd_utc, "jd_utc", &[])?, Operand::optional(jd_utc_fraction, "jd_utc_fraction", &[])?];
        let table = &self.table;
        let (plan, outputs) = map_elements::<2, 6, _, _>(
            py,
            ops,
            &[],
            BatchArgs { out: None, threads },
            |e, _| match e.quantity() {
                "jd" => e.with_quantity("jd_utc"),
                "jd_fraction" => e.with_quantity("jd_utc_fraction"),
                _ => e,
            },
            |x, o| {
                let s = table.at(JulianDate { jd: x[0][0], fraction: x[1][0] })?;
                let values =
                    [s.ut1_minus_utc, s.xp, s.yp, s.dx.unwrap_or(0.0), s.dy.unwrap_or(0.0), f64::from(u8::from(s.dx.is_some()))];
                for (slot, v) in o.iter_mut().zip(values) {
                    slot[0] = v;
                }
                Ok(())
            },
        )?;
        let [ut1, xp, yp, dx, dy, given] = outputs.map(|a| scalar_or_array(py, &plan, a));
        let given = given?;
        let offsets_given = if let Ok(v) = given.extract::<f64>() {
            pyo3::types::PyBool::new(py, v != 0.0).to_owned().into_any()
        } else {
            given.call_method1("astype", ("bool",))?
        };
        Ok(PyEarthOrientationAt {
            ut1_minus_utc: ut1?.unbind(),
            xp: xp?.unbind(),
            yp: yp?.unbind(),
            dx: dx?.unbind(),
            dy: dy?.unbind(),
            offsets_given: offsets_given.unbind(),
        })
    }

    fn __reduce__<'py>(slf: &Bound<'py, Self>, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let leaps = Bound::new(py, PyLeapSeconds { table: *slf.get().table.leap_seconds() })?;
        let mut args: Vec<Bound<'py, PyAny>> = row_arrays(py, &slf.get().table).into_iter().map(Bound::into_any).collect();
        args.push(leaps.into_any());
        Ok((slf.get_type().into_any(), PyTuple::new(py, args)?))
    }

    fn __repr__(&self) -> String {
        let (a, b) = self.table.span();
        format!("EarthOrientation(MJD {a} to {b}, {} rows)", self.table.rows().mjd.len())
    }
}

/// The Earth orientation at dates: `ut1_minus_utc` (s), `xp`, `yp`, `dx`, `dy` (rad; dx, dy
/// zero where the table does not give them, as `offsets_given` says).
#[pyclass(name = "EarthOrientationAt", module = "rotaframe._native", frozen, get_all)]
#[derive(Debug)]
pub struct PyEarthOrientationAt {
    ut1_minus_utc: Py<PyAny>,
    xp: Py<PyAny>,
    yp: Py<PyAny>,
    dx: Py<PyAny>,
    dy: Py<PyAny>,
    offsets_given: Py<PyAny>,
}

/// The rows of a table as arrays `(mjd_utc, ut1_minus_utc, xp, yp, dx, dy)`.
fn row_arrays<'py>(py: Python<'py>, table: &EarthOrientation) -> [Bound<'py, PyArray1<f64>>; 6] {
    let r = table.rows();
    [r.mjd, r.ut1_minus_utc, r.xp, r.yp, r.dx, r.dy].map(|v| PyArray1::from_slice(py, v))
}

/// The table of an `eop` argument (None if not given).
pub fn ut1_source<'py>(eop: Option<&Bound<'py, PyAny>>) -> PyResult<Option<Bound<'py, PyEarthOrientation>>> {
    match eop {
        None => Ok(None),
        Some(o) if o.is_none() => Ok(None),
        Some(o) => o.cast::<PyEarthOrientation>().map(|b| Some(b.clone())).map_err(|_| {
            crate::plumbing::errors::input_type_error(format!(
                "`eop` must be an EarthOrientation, got {}",
                crate::plumbing::args::type_name(o)
            ))
        }),
    }
}
