//! The IERS celestial-to-terrestrial transformation from Python (`rotaframe::earth::celestial`):
//! the GCRS → ITRS matrix, the CIP coordinates and CIO locator, and the TIO locator, on arrays of
//! dates. (`earth_motion_iers`, which returns a `FrameMotion`, is in `motion.rs`.)

use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::earth::celestial::{self, PoleCoordinates};
use rotaframe::time::JulianDate;

use crate::plumbing::batch::threads;
use crate::plumbing::broadcast::{BatchArgs, Operand, map_elements, scalar_or_array};
use crate::plumbing::output::put_row_major;

/// The matrix, shape `(..., 3, 3)`, that maps GCRS coordinates to ITRS coordinates at TT dates
/// `jd_tt + jd_tt_fraction` and UT1 dates `jd_ut1 + jd_ut1_fraction` (days), with polar motion
/// `xp`, `yp` (rad) and the celestial pole offsets `dx`, `dy` (rad, added to the CIP's X and Y;
/// None means zero): IERS Conventions 2010, eq. 5.1 (CIO based, IAU 2006/2000A X, Y, s series,
/// the Earth Rotation Angle, s′ and the polar-motion matrix). Arguments broadcast. Raises
/// `OutOfRangeError` naming `jd_tt` more than ten centuries from J2000.0, or `xp`, `yp`, `dx`,
/// `dy` beyond 10″.
#[pyfunction]
#[pyo3(signature = (jd_tt, jd_tt_fraction, jd_ut1, jd_ut1_fraction, xp, yp, *, dx=None, dy=None, out=None, threads=1))]
pub fn celestial_to_terrestrial<'py>(
    py: Python<'py>,
    jd_tt: &Bound<'py, PyAny>,
    jd_tt_fraction: Option<&Bound<'py, PyAny>>,
    jd_ut1: &Bound<'py, PyAny>,
    jd_ut1_fraction: Option<&Bound<'py, PyAny>>,
    xp: &Bound<'py, PyAny>,
    yp: &Bound<'py, PyAny>,
    dx: Option<&Bound<'py, PyAny>>,
    dy: Option<&Bound<'py, PyAny>>,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let ops = [
        Operand::extract(jd_tt, "jd_tt", &[])?,
        Operand::optional(jd_tt_fraction, "jd_tt_fraction", &[])?,
        Operand::extract(jd_ut1, "jd_ut1", &[])?,
        Operand::optional(jd_ut1_fraction, "jd_ut1_fraction", &[])?,
        Operand::extract(xp, "xp", &[])?,
        Operand::extract(yp, "yp", &[])?,
        Operand::optional(dx, "dx", &[])?,
        Operand::optional(dy, "dy", &[])?,
    ];
    let (_, [matrix]) = map_elements(
        py,
        ops,
        &[3, 3],
        BatchArgs { out, threads },
        |e, _| e,
        |x, [o]| {
            let (tt, ut1) = (JulianDate { jd: x[0][0], fraction: x[1][0] }, JulianDate { jd: x[2][0], fraction: x[3][0] });
            let pole = PoleCoordinates { xp: x[4][0], yp: x[5][0], dx: x[6][0], dy: x[7][0] };
            put_row_major(o, &celestial::celestial_to_terrestrial(tt, ut1, &pole)?);
            Ok(())
        },
    )?;
    Ok(matrix.into_any())
}

/// The CIP coordinates and CIO locator `(x, y, s)` (rad) of the IAU 2006/2000A model at TT dates
/// `jd_tt + jd_tt_fraction` (IERS Conventions 2010, tables 5.2a, 5.2b, 5.2d; without observed
/// pole offsets).
#[pyfunction]
#[pyo3(signature = (jd_tt, jd_tt_fraction=None, *, threads=1))]
pub fn cip_coordinates<'py>(
    py: Python<'py>,
    jd_tt: &Bound<'py, PyAny>,
    jd_tt_fraction: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let ops = [Operand::extract(jd_tt, "jd_tt", &[])?, Operand::optional(jd_tt_fraction, "jd_tt_fraction", &[])?];
    let (plan, [x, y, s]) = map_elements(
        py,
        ops,
        &[],
        BatchArgs { out: None, threads },
        |e, _| e,
        |v, [x, y, s]| {
            let c = celestial::cip_coordinates(JulianDate { jd: v[0][0], fraction: v[1][0] })?;
            (x[0], y[0], s[0]) = (c.x, c.y, c.s);
            Ok(())
        },
    )?;
    crate::plumbing::broadcast::tuple_of(py, &plan, vec![x, y, s])
}

/// The TIO locator s′ (rad) at TT dates `jd_tt + jd_tt_fraction`: −47 µas per century from
/// J2000.0 (IERS Conventions 2010, eq. 5.13).
#[pyfunction]
#[pyo3(signature = (jd_tt, jd_tt_fraction=None, *, threads=1))]
pub fn tio_locator<'py>(
    py: Python<'py>,
    jd_tt: &Bound<'py, PyAny>,
    jd_tt_fraction: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let ops = [Operand::extract(jd_tt, "jd_tt", &[])?, Operand::optional(jd_tt_fraction, "jd_tt_fraction", &[])?];
    let (plan, [s]) = map_elements(
        py,
        ops,
        &[],
        BatchArgs { out: None, threads },
        |e, _| e,
        |v, [s]| {
            s[0] = celestial::tio_locator(JulianDate { jd: v[0][0], fraction: v[1][0] })?;
            Ok(())
        },
    )?;
    scalar_or_array(py, &plan, s)
}
