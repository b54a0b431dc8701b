//! Time scales from Python (`rotaframe::time`): Julian dates from calendar dates, conversions
//! between UTC, TAI, TT, GPS time and UT1, GPS weeks (here), the leap-second table
//! (`leap_seconds`) and Earth orientation tables (`orientation`). Arrays of dates broadcast;
//! the arithmetic is the core's.

pub mod leap_seconds;
pub mod orientation;

use pyo3::prelude::*;
use pyo3::types::{PyInt, PyTuple};
use rotaframe::time::{self, JulianDate, TimeScale};

use self::leap_seconds::{PyLeapSeconds, table};

use crate::plumbing::batch::threads;
use crate::plumbing::broadcast::{BatchArgs, Operand, Plan, map_elements, scalar_or_array};

/// The scales by name, as the `scale`, `from_scale` and `to_scale` arguments take them.
const SCALES: [&str; 5] = ["utc", "tai", "tt", "gps", "ut1"];

/// A scale argument.
fn scale(obj: &Bound<'_, PyAny>, name: &str) -> PyResult<TimeScale> {
    let given = crate::plumbing::args::keyword(obj, name, &SCALES)?;
    Ok(TimeScale::from_name(given).expect("a name from SCALES"))
}

/// An integral value given as a float (a calendar field, a GPS week), naming its argument.
/// Values beyond ±1e9 are refused as out of range (no calendar field or GPS week comes near).
fn whole(value: f64, quantity: &'static str) -> rotaframe::Result<i32> {
    if !value.is_finite() {
        return Err(rotaframe::Error::NonFinite { quantity });
    }
    if value.abs() > 1e9 {
        return Err(rotaframe::Error::OutOfRange { quantity, value, min: -1e9, max: 1e9 });
    }
    if value != value.floor() {
        return Err(rotaframe::Error::Invalid { quantity, reason: "must be a whole number" });
    }
    Ok(value as i32)
}

/// An array of integral floats as int64 (a Python int for a scalar call).
fn integers<'py>(py: Python<'py>, plan: &Plan, array: Bound<'py, numpy::PyArrayDyn<f64>>) -> PyResult<Bound<'py, PyAny>> {
    let value = scalar_or_array(py, plan, array)?;
    if let Ok(x) = value.extract::<f64>() {
        Ok(PyInt::new(py, x as i64).into_any())
    } else {
        value.call_method1("astype", ("int64",))
    }
}

/// The arguments of a function of dates: `jd` and `jd_fraction` as operands, the `scale`
/// (`default` for None) and the leap-second table.
fn date_arguments<'py>(
    jd: &Bound<'py, PyAny>,
    jd_fraction: Option<&Bound<'py, PyAny>>,
    scale: Option<&Bound<'py, PyAny>>,
    default: TimeScale,
    leap_seconds: Option<&Bound<'py, PyLeapSeconds>>,
) -> PyResult<([Operand<'py>; 2], TimeScale, rotaframe::time::LeapSeconds)> {
    let scale = scale.map_or(Ok(default), |s| self::scale(s, "scale"))?;
    let ops = [Operand::extract(jd, "jd", &[])?, Operand::optional(jd_fraction, "jd_fraction", &[])?];
    Ok((ops, scale, table(leap_seconds)))
}

/// Runs `date` over the broadcast `ops` and returns its dates as `(jd, jd_fraction)`.
fn dates<'py, const N: usize>(
    py: Python<'py>,
    ops: [Operand<'py>; N],
    threads: usize,
    date: impl Fn(&[&[f64]; N]) -> rotaframe::Result<JulianDate> + Sync,
) -> PyResult<Bound<'py, PyTuple>> {
    let (plan, [jd, fraction]) = map_elements(
        py,
        ops,
        &[],
        BatchArgs { out: None, threads },
        |e, _| e,
        |x, [jd, fraction]| {
            let d = date(x)?;
            (jd[0], fraction[0]) = (d.jd, d.fraction);
            Ok(())
        },
    )?;
    crate::plumbing::broadcast::tuple_of(py, &plan, vec![jd, fraction])
}

/// Two-part Julian dates `(jd, jd_fraction)` (days) of calendar dates and times of day in
/// `scale` (`"utc"` by default; also `"tai"`, `"tt"`, `"gps"`, `"ut1"`): `jd` is the Julian date
/// of the day's 0h, `jd_fraction` the fraction of the day. Arguments broadcast; `year`, `month`,
/// `day`, `hour`, `minute` must be whole numbers, `second` may have a fraction. On a UTC day
/// that ends in a leap second the day has 86,401 s and 23:59:60.x exists (the IAU standards'
/// quasi Julian date: `julian_date(2016, 12, 31, 23, 59, 60.5)` is
/// `(2457753.5, 86400.5 / 86401)`). Raises `OutOfRangeError` naming the field for an impossible
/// date or time, and naming `jd` for UTC before 1972. `leap_seconds` replaces the built-in table
/// (a `LeapSeconds`).
#[pyfunction]
#[pyo3(signature = (year, month, day, hour=None, minute=None, second=None, *, scale=None, leap_seconds=None, threads=1))]
pub fn julian_date<'py>(
    py: Python<'py>,
    year: &Bound<'py, PyAny>,
    month: &Bound<'py, PyAny>,
    day: &Bound<'py, PyAny>,
    hour: Option<&Bound<'py, PyAny>>,
    minute: Option<&Bound<'py, PyAny>>,
    second: Option<&Bound<'py, PyAny>>,
    scale: Option<&Bound<'py, PyAny>>,
    leap_seconds: Option<&Bound<'py, PyLeapSeconds>>,
    #[pyo3(from_py_with = threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let scale = scale.map_or(Ok(TimeScale::Utc), |s| self::scale(s, "scale"))?;
    let leaps = table(leap_seconds);
    let ops = [
        Operand::extract(year, "year", &[])?,
        Operand::extract(month, "month", &[])?,
        Operand::extract(day, "day", &[])?,
        Operand::optional(hour, "hour", &[])?,
        Operand::optional(minute, "minute", &[])?,
        Operand::optional(second, "second", &[])?,
    ];
    dates(py, ops, threads, |x| {
        let field = |i: usize, name| whole(x[i][0], name);
        let calendar = time::CalendarTime::new(
            field(0, "year")?,
            field(1, "month")?,
            field(2, "day")?,
            field(3, "hour")?,
            field(4, "minute")?,
            x[5][0],
        );
        time::julian_date(&calendar, scale, &leaps)
    })
}

/// The calendar dates and times of day `(year, month, day, hour, minute, second)` of two-part
/// Julian dates `jd + jd_fraction` (days) in `scale` (`"utc"` by default): integers (int64
/// arrays, or ints for scalar input) and the second as a float; the inverse of
/// `julian_date` (inside a UTC leap second the minute is 59 and the second 60.x). Raises
/// `OutOfRangeError` naming `jd` outside the years −4712 to 9999 or for UTC before 1972.
#[pyfunction]
#[pyo3(signature = (jd, jd_fraction=None, *, scale=None, leap_seconds=None, threads=1))]
pub fn calendar_date<'py>(
    py: Python<'py>,
    jd: &Bound<'py, PyAny>,
    jd_fraction: Option<&Bound<'py, PyAny>>,
    scale: Option<&Bound<'py, PyAny>>,
    leap_seconds: Option<&Bound<'py, PyLeapSeconds>>,
    #[pyo3(from_py_with = threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let (ops, scale, leaps) = date_arguments(jd, jd_fraction, scale, TimeScale::Utc, leap_seconds)?;
    let (plan, outputs) = map_elements::<2, 6, _, _>(
        py,
        ops,
        &[],
        BatchArgs { out: None, threads },
        |e, _| e,
        |x, o| {
            let c = time::calendar_date(JulianDate { jd: x[0][0], fraction: x[1][0] }, scale, &leaps)?;
            let fields = [c.year, c.month, c.day, c.hour, c.minute].map(f64::from);
            for (slot, value) in o.iter_mut().zip(fields.into_iter().chain([c.second])) {
                slot[0] = value;
            }
            Ok(())
        },
    )?;
    let [year, month, day, hour, minute, second] = outputs;
    let mut items = Vec::with_capacity(6);
    for a in [year, month, day, hour, minute] {
        items.push(integers(py, &plan, a)?);
    }
    items.push(scalar_or_array(py, &plan, second)?);
    PyTuple::new(py, items)
}

/// Converts two-part Julian dates `jd + jd_fraction` (days) from `from_scale` to `to_scale`
/// (`"utc"`, `"tai"`, `"tt"`, `"gps"` or `"ut1"`) and returns `(jd, jd_fraction)`:
/// TT = TAI + 32.184 s, GPS = TAI − 19 s, TAI − UTC from the leap-second table (the built-in
/// one, or `leap_seconds`), UT1 = UTC + (UT1 − UTC) from `eop` (an `EarthOrientation`, needed
/// only when a scale is `"ut1"`). Dates to or from UTC come back as the JD of the day's 0h and
/// the fraction of the day; between the other scales the offset is added to the smaller part.
/// Precise to well under a nanosecond (the fraction carries about 10 ps). Raises
/// `OutOfRangeError` naming `jd` for UTC before 1972 or a date outside `eop`'s table, and
/// `RotaframeError` naming `eop` when UT1 is asked for without it.
#[pyfunction]
#[pyo3(signature = (jd, jd_fraction, from_scale, to_scale, *, eop=None, leap_seconds=None, threads=1))]
pub fn convert_time<'py>(
    py: Python<'py>,
    jd: &Bound<'py, PyAny>,
    jd_fraction: Option<&Bound<'py, PyAny>>,
    from_scale: &Bound<'py, PyAny>,
    to_scale: &Bound<'py, PyAny>,
    eop: Option<&Bound<'py, PyAny>>,
    leap_seconds: Option<&Bound<'py, PyLeapSeconds>>,
    #[pyo3(from_py_with = threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let (from, to) = (scale(from_scale, "from_scale")?, scale(to_scale, "to_scale")?);
    let leaps = table(leap_seconds);
    let eop = orientation::ut1_source(eop)?;
    let source = eop.as_ref().map(|b| &b.get().table);
    let ops = [Operand::extract(jd, "jd", &[])?, Operand::optional(jd_fraction, "jd_fraction", &[])?];
    dates(py, ops, threads, |x| {
        let date = JulianDate { jd: x[0][0], fraction: x[1][0] };
        time::convert_time(date, from, to, &leaps, source.map(|s| s as &dyn time::Ut1Source))
    })
}

/// The GPS week and second of the week `(week, seconds)` of two-part Julian dates
/// `jd + jd_fraction` (days) in `scale` (`"gps"` unless said; `"utc"` adds the leap seconds on
/// the way): `week` is the full count since 1980-01-06 0h GPS (IS-GPS-200), not the broadcast
/// count modulo 1024 (int64, or an int for scalar input), `seconds` the second of the week in
/// [0, 604800). Raises `OutOfRangeError` naming `jd` before the GPS epoch.
#[pyfunction]
#[pyo3(signature = (jd, jd_fraction=None, *, scale=None, leap_seconds=None, threads=1))]
pub fn gps_week_seconds<'py>(
    py: Python<'py>,
    jd: &Bound<'py, PyAny>,
    jd_fraction: Option<&Bound<'py, PyAny>>,
    scale: Option<&Bound<'py, PyAny>>,
    leap_seconds: Option<&Bound<'py, PyLeapSeconds>>,
    #[pyo3(from_py_with = threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let (ops, from, leaps) = date_arguments(jd, jd_fraction, scale, TimeScale::Gps, leap_seconds)?;
    let (plan, [week, seconds]) = map_elements(
        py,
        ops,
        &[],
        BatchArgs { out: None, threads },
        |e, _| e,
        |x, [week, seconds]| {
            let gps = time::convert_time(JulianDate { jd: x[0][0], fraction: x[1][0] }, from, TimeScale::Gps, &leaps, None)?;
            let t = time::gps_week_seconds(gps)?;
            (week[0], seconds[0]) = (t.week as f64, t.seconds);
            Ok(())
        },
    )?;
    PyTuple::new(py, [integers(py, &plan, week)?, scalar_or_array(py, &plan, seconds)?])
}

/// Two-part Julian dates `(jd, jd_fraction)` in `scale` (`"gps"` unless said) of GPS weeks
/// `week` (whole, the full count since 1980-01-06) and seconds of the week `seconds` (s, in
/// [0, 604800)). Raises `OutOfRangeError` naming `week` or `seconds`.
#[pyfunction]
#[pyo3(signature = (week, seconds, *, scale=None, leap_seconds=None, threads=1))]
pub fn from_gps_week_seconds<'py>(
    py: Python<'py>,
    week: &Bound<'py, PyAny>,
    seconds: &Bound<'py, PyAny>,
    scale: Option<&Bound<'py, PyAny>>,
    leap_seconds: Option<&Bound<'py, PyLeapSeconds>>,
    #[pyo3(from_py_with = threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let to = scale.map_or(Ok(TimeScale::Gps), |s| self::scale(s, "scale"))?;
    let leaps = table(leap_seconds);
    let ops = [Operand::extract(week, "week", &[])?, Operand::extract(seconds, "seconds", &[])?];
    dates(py, ops, threads, |x| {
        let gps = time::from_gps_week_seconds(i64::from(whole(x[0][0], "week")?), x[1][0])?;
        time::convert_time(gps, TimeScale::Gps, to, &leaps, None)
    })
}
