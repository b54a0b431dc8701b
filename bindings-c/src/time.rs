//! Time scales from C (`rotaframe::time`): calendar dates ↔ two-part Julian dates, conversions
//! between UTC, TAI, TT, GPS time and UT1, GPS weeks, the leap-second table and IERS Earth
//! orientation tables, all on caller storage (no heap).

use rotaframe::time::{
    self, CalendarTime, EarthOrientationRows, EarthOrientationView, JulianDate, LeapSeconds, MAX_LEAP_SECOND_STEPS, TimeScale,
};

use crate::status::{Fallible, boundary, disjoint, out, read, region, rf_status, slice, slice_mut};

/// Steps an `rf_leap_seconds` holds.
pub const RF_MAX_LEAP_SECOND_STEPS: usize = 128;
const _: () = assert!(RF_MAX_LEAP_SECOND_STEPS == MAX_LEAP_SECOND_STEPS);

/// Time scales.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum rf_time_scale {
    /// Coordinated Universal Time (quasi Julian dates across leap seconds).
    RF_TIME_UTC = 0,
    /// International Atomic Time.
    RF_TIME_TAI = 1,
    /// Terrestrial Time (TAI + 32.184 s).
    RF_TIME_TT = 2,
    /// GPS time (TAI − 19 s).
    RF_TIME_GPS = 3,
    /// Universal Time UT1 (needs Earth orientation data).
    RF_TIME_UT1 = 4,
}

crate::enums::c_enum!(rf_time_scale { RF_TIME_UTC, RF_TIME_TAI, RF_TIME_TT, RF_TIME_GPS, RF_TIME_UT1 });

impl rf_time_scale {
    fn to_core(value: u32) -> Fallible<TimeScale> {
        Ok(match rf_time_scale::from_u32(value).ok_or(rf_status::RF_STATUS_INVALID_ARGUMENT)? {
            rf_time_scale::RF_TIME_UTC => TimeScale::Utc,
            rf_time_scale::RF_TIME_TAI => TimeScale::Tai,
            rf_time_scale::RF_TIME_TT => TimeScale::Tt,
            rf_time_scale::RF_TIME_GPS => TimeScale::Gps,
            rf_time_scale::RF_TIME_UT1 => TimeScale::Ut1,
        })
    }
}

/// A Julian date in two parts, `jd + fraction` (days).
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct rf_julian_date {
    /// One part, usually the JD of the day's 0h.
    pub jd: f64,
    /// The other part, usually the fraction of the day.
    pub fraction: f64,
}

impl From<rf_julian_date> for JulianDate {
    fn from(d: rf_julian_date) -> Self {
        JulianDate { jd: d.jd, fraction: d.fraction }
    }
}

impl From<JulianDate> for rf_julian_date {
    fn from(d: JulianDate) -> Self {
        rf_julian_date { jd: d.jd, fraction: d.fraction }
    }
}

/// A calendar date and time of day (`second` up to 61 in the last minute of a UTC day that ends
/// in a leap second).
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct rf_calendar_time {
    /// Year (astronomical numbering).
    pub year: i32,
    /// Month, 1 to 12.
    pub month: i32,
    /// Day of the month.
    pub day: i32,
    /// Hour, 0 to 23.
    pub hour: i32,
    /// Minute, 0 to 59.
    pub minute: i32,
    /// Second with its fraction.
    pub second: f64,
}

/// A leap-second table: `count` steps, the MJD at which TAI − UTC takes each value and the
/// value (s), and the MJD until which it is valid (0 if not known).
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct rf_leap_seconds {
    /// MJD at which each value starts.
    pub mjd: [i64; RF_MAX_LEAP_SECOND_STEPS],
    /// TAI − UTC from then (s).
    pub tai_minus_utc: [f64; RF_MAX_LEAP_SECOND_STEPS],
    /// Steps used.
    pub count: usize,
    /// MJD until which the table is valid; 0 if not known.
    pub expires: i64,
}

impl From<&LeapSeconds> for rf_leap_seconds {
    fn from(table: &LeapSeconds) -> Self {
        let mut c = rf_leap_seconds {
            mjd: [0; MAX_LEAP_SECOND_STEPS],
            tai_minus_utc: [0.0; MAX_LEAP_SECOND_STEPS],
            count: 0,
            expires: 0,
        };
        for (i, (mjd, value)) in table.steps().enumerate() {
            c.mjd[i] = mjd;
            c.tai_minus_utc[i] = value;
            c.count = i + 1;
        }
        c.expires = table.expires().unwrap_or(0);
        c
    }
}

/// The core table of a C one (the built-in table for NULL).
///
/// # Safety
/// `p` is NULL or points to a valid `rf_leap_seconds`.
unsafe fn leap_table(p: *const rf_leap_seconds) -> Fallible<LeapSeconds> {
    // SAFETY: as the caller guarantees.
    let Some(c) = (unsafe { p.as_ref() }) else { return Ok(LeapSeconds::BUILT_IN) };
    let count = c.count.min(MAX_LEAP_SECOND_STEPS);
    if c.count != count {
        return Err(rf_status::RF_STATUS_INVALID_ARGUMENT);
    }
    let mut steps = [(0i64, 0.0f64); MAX_LEAP_SECOND_STEPS];
    for (i, s) in steps.iter_mut().enumerate().take(count) {
        *s = (c.mjd[i], c.tai_minus_utc[i]);
    }
    let expires = if c.expires == 0 { None } else { Some(c.expires) };
    Ok(LeapSeconds::from_steps(&steps[..count], expires)?)
}

/// The table built into rotaframe (every step up to 2017-01-01, TAI − UTC = 37 s).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_leap_seconds_built_in(out_table: *mut rf_leap_seconds) -> rf_status {
    boundary(|| {
        *unsafe { out(out_table) }? = (&LeapSeconds::BUILT_IN).into();
        Ok(())
    })
}

/// Reads the IERS `Leap_Second.dat` file's text (`length` bytes, UTF-8). On a malformed file
/// returns `RF_STATUS_INVALID_ARGUMENT` and, given `out_error_line`, the 1-based line (0 for
/// the file as a whole); `out_table` is then untouched.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_leap_seconds_read_iers(
    text: *const u8,
    length: usize,
    out_table: *mut rf_leap_seconds,
    out_error_line: *mut usize,
) -> rf_status {
    boundary(|| {
        let bytes = unsafe { slice(text, length) }?;
        let text = core::str::from_utf8(bytes).map_err(|_| rf_status::RF_STATUS_INVALID_ARGUMENT)?;
        let o = unsafe { out(out_table) }?;
        match LeapSeconds::from_iers_text(text) {
            Ok(table) => {
                *o = (&table).into();
                Ok(())
            }
            Err(e) => {
                // SAFETY: NULL or valid, as documented.
                if let Some(line) = unsafe { out_error_line.as_mut() } {
                    *line = e.line;
                }
                Err(rf_status::RF_STATUS_INVALID_ARGUMENT)
            }
        }
    })
}

/// The two-part Julian date (the JD of the day's 0h and the fraction) of a calendar date and
/// time in `scale`; `leap_seconds` NULL means the built-in table. Impossible dates and times,
/// and UTC before 1972, return `RF_STATUS_OUT_OF_RANGE`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_julian_date_from_calendar(
    calendar: *const rf_calendar_time,
    scale: u32,
    leap_seconds: *const rf_leap_seconds,
    out_date: *mut rf_julian_date,
) -> rf_status {
    boundary(|| {
        let c = unsafe { read(calendar) }?;
        let (scale, leaps) = (rf_time_scale::to_core(scale)?, unsafe { leap_table(leap_seconds) }?);
        let o = unsafe { out(out_date) }?;
        let calendar = CalendarTime::new(c.year, c.month, c.day, c.hour, c.minute, c.second);
        *o = time::julian_date(&calendar, scale, &leaps)?.into();
        Ok(())
    })
}

/// The calendar date and time of a two-part Julian date in `scale`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_calendar_date(
    date: *const rf_julian_date,
    scale: u32,
    leap_seconds: *const rf_leap_seconds,
    out_calendar: *mut rf_calendar_time,
) -> rf_status {
    boundary(|| {
        let d = unsafe { read(date) }?;
        let (scale, leaps) = (rf_time_scale::to_core(scale)?, unsafe { leap_table(leap_seconds) }?);
        let o = unsafe { out(out_calendar) }?;
        let c = time::calendar_date(d.into(), scale, &leaps)?;
        *o = rf_calendar_time { year: c.year, month: c.month, day: c.day, hour: c.hour, minute: c.minute, second: c.second };
        Ok(())
    })
}

/// An Earth orientation table over caller arrays of `rows` rows: MJD (UTC, increasing, from
/// 1972), UT1 − UTC (s), xp, yp (rad), and dX, dY (rad) for the first `offset_rows` rows (0
/// to `rows`; `dx`, `dy` may be NULL when it is 0). `leap_seconds` NULL means the built-in
/// table.
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct rf_earth_orientation {
    /// MJD (UTC) of each row.
    pub mjd: *const f64,
    /// UT1 − UTC (s).
    pub ut1_minus_utc: *const f64,
    /// Pole coordinate x (rad).
    pub xp: *const f64,
    /// Pole coordinate y (rad).
    pub yp: *const f64,
    /// Celestial pole offset dX (rad).
    pub dx: *const f64,
    /// Celestial pole offset dY (rad).
    pub dy: *const f64,
    /// Rows.
    pub rows: usize,
    /// Rows (from the first) that give dX, dY.
    pub offset_rows: usize,
    /// The leap seconds for the steps of UT1 − UTC (NULL: built in).
    pub leap_seconds: *const rf_leap_seconds,
}

/// The Earth orientation at a date.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct rf_earth_orientation_sample {
    /// UT1 − UTC (s).
    pub ut1_minus_utc: f64,
    /// Pole coordinate x (rad).
    pub xp: f64,
    /// Pole coordinate y (rad).
    pub yp: f64,
    /// Celestial pole offset dX (rad); 0 where the table does not give it.
    pub dx: f64,
    /// Celestial pole offset dY (rad); 0 where the table does not give it.
    pub dy: f64,
    /// 1 where the table gives dX, dY at the date, 0 where it does not.
    pub offsets_given: i32,
}

/// Runs `body` on the core view of a C table (checked: lengths, order, ranges).
///
/// # Safety
/// The table's pointers are valid for the counts it states.
pub(crate) unsafe fn with_view<R>(
    table: &rf_earth_orientation,
    body: impl FnOnce(&EarthOrientationView<'_>) -> Fallible<R>,
) -> Fallible<R> {
    let n = table.rows;
    if table.offset_rows > n {
        return Err(rf_status::RF_STATUS_INVALID_ARGUMENT);
    }
    let m = table.offset_rows;
    let rows = unsafe {
        EarthOrientationRows {
            mjd: slice(table.mjd, n)?,
            ut1_minus_utc: slice(table.ut1_minus_utc, n)?,
            xp: slice(table.xp, n)?,
            yp: slice(table.yp, n)?,
            dx: slice(table.dx, m)?,
            dy: slice(table.dy, m)?,
        }
    };
    let leaps = unsafe { leap_table(table.leap_seconds) }?;
    let view = EarthOrientationView::new(rows, &leaps)?;
    body(&view)
}

/// The Earth orientation at the UTC date `utc`, interpolated by 4-point Lagrange (IERS
/// Conventions 2010 §5.5). A date outside the table returns `RF_STATUS_OUT_OF_RANGE`. The
/// table is checked whole at every call (order, ranges: O(rows), some tens of microseconds for
/// a 20,000-row C04 table); a loop over many dates is faster with a table of the rows that
/// cover them.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_earth_orientation_at(
    table: *const rf_earth_orientation,
    utc: *const rf_julian_date,
    out_sample: *mut rf_earth_orientation_sample,
) -> rf_status {
    boundary(|| {
        let (table, utc) = (unsafe { read(table) }?, unsafe { read(utc) }?);
        let o = unsafe { out(out_sample) }?;
        let s = unsafe { with_view(&table, |view| Ok(view.at(utc.into())?)) }?;
        *o = rf_earth_orientation_sample {
            ut1_minus_utc: s.ut1_minus_utc,
            xp: s.xp,
            yp: s.yp,
            dx: s.dx.unwrap_or(0.0),
            dy: s.dy.unwrap_or(0.0),
            offsets_given: i32::from(s.dx.is_some()),
        };
        Ok(())
    })
}

/// Reads an IERS file's text (`finals2000A` or EOP C04, `length` bytes) into caller arrays of
/// `capacity` rows each: MJD (UTC), UT1 − UTC (s), xp, yp, dX, dY (rad); writes the rows read
/// to `out_rows` and the rows that give dX, dY to `out_offset_rows`. Rows before 1972 and the
/// blank rows at the end are left out. On a malformed file returns
/// `RF_STATUS_INVALID_ARGUMENT` and, given `out_error_line`, the line; with too small a
/// capacity, `RF_STATUS_OUT_OF_MEMORY` and the rows needed in `out_rows`. Nothing else is
/// written on error (the text is read twice: checked, then copied).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_earth_orientation_read_iers(
    text: *const u8,
    length: usize,
    capacity: usize,
    mjd: *mut f64,
    ut1_minus_utc: *mut f64,
    xp: *mut f64,
    yp: *mut f64,
    dx: *mut f64,
    dy: *mut f64,
    out_rows: *mut usize,
    out_offset_rows: *mut usize,
    out_error_line: *mut usize,
) -> rf_status {
    boundary(|| {
        let bytes = unsafe { slice(text, length) }?;
        let text = core::str::from_utf8(bytes).map_err(|_| rf_status::RF_STATUS_INVALID_ARGUMENT)?;
        let (rows_out, offsets_out) = (unsafe { out(out_rows) }?, unsafe { out(out_offset_rows) }?);
        let fail = |e: rotaframe::error::ParseError| {
            // SAFETY: NULL or valid, as documented.
            if let Some(line) = unsafe { out_error_line.as_mut() } {
                *line = e.line;
            }
            rf_status::RF_STATUS_INVALID_ARGUMENT
        };
        let (mut count, mut offsets) = (0usize, 0usize);
        time::read_iers_rows(text, |r| {
            count += 1;
            offsets += usize::from(r.offsets.is_some());
            Ok(())
        })
        .map_err(fail)?;
        if count > capacity {
            *rows_out = count;
            return Err(rf_status::RF_STATUS_OUT_OF_MEMORY);
        }
        if count < 4 {
            return Err(fail(rotaframe::error::ParseError { line: 0, reason: "fewer than four usable rows" }));
        }
        let arrays = [mjd, ut1_minus_utc, xp, yp, dx, dy];
        let regions = arrays.map(|p| region(p.cast_const(), count));
        for (k, r) in regions.iter().enumerate() {
            disjoint(*r, &regions[k + 1..])?;
            disjoint(*r, &[region(bytes.as_ptr(), length)])?;
        }
        let [a, b, c, d, e, f] = arrays;
        let (mjd, dut1, xp, yp) =
            unsafe { (slice_mut(a, count)?, slice_mut(b, count)?, slice_mut(c, count)?, slice_mut(d, count)?) };
        let (dx, dy) = unsafe { (slice_mut(e, offsets)?, slice_mut(f, offsets)?) };
        let mut i = 0;
        time::read_iers_rows(text, |r| {
            if i < count {
                (mjd[i], dut1[i], xp[i], yp[i]) = (r.mjd, r.ut1_minus_utc, r.pole[0], r.pole[1]);
                if let (Some([x, y]), true) = (r.offsets, i < offsets) {
                    (dx[i], dy[i]) = (x, y);
                }
            }
            i += 1;
            Ok(())
        })
        .map_err(fail)?;
        (*rows_out, *offsets_out) = (count, offsets);
        Ok(())
    })
}

/// Converts a two-part Julian date from scale `from` to scale `to` (`rf_time_scale` values).
/// `leap_seconds` NULL means the built-in table; `eop` is needed (non-NULL) only when one of
/// the scales is UT1, else ignored. UTC before 1972 returns `RF_STATUS_OUT_OF_RANGE`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_convert_time(
    date: *const rf_julian_date,
    from: u32,
    to: u32,
    leap_seconds: *const rf_leap_seconds,
    eop: *const rf_earth_orientation,
    out_date: *mut rf_julian_date,
) -> rf_status {
    boundary(|| {
        let d = unsafe { read(date) }?;
        let (from, to) = (rf_time_scale::to_core(from)?, rf_time_scale::to_core(to)?);
        let leaps = unsafe { leap_table(leap_seconds) }?;
        let o = unsafe { out(out_date) }?;
        let needs_ut1 = from == TimeScale::Ut1 || to == TimeScale::Ut1;
        let result = if needs_ut1 {
            let table = unsafe { read(eop) }?;
            unsafe { with_view(&table, |view| Ok(time::convert_time(d.into(), from, to, &leaps, Some(view))?)) }?
        } else {
            time::convert_time(d.into(), from, to, &leaps, None)?
        };
        *o = result.into();
        Ok(())
    })
}

/// The GPS week (full count since 1980-01-06) and second of the week of a date on the GPS time
/// scale.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_gps_week_seconds(gps: *const rf_julian_date, out_week: *mut i64, out_seconds: *mut f64) -> rf_status {
    boundary(|| {
        let d = unsafe { read(gps) }?;
        let (w, s) = (unsafe { out(out_week) }?, unsafe { out(out_seconds) }?);
        let t = time::gps_week_seconds(d.into())?;
        (*w, *s) = (t.week, t.seconds);
        Ok(())
    })
}

/// The date on the GPS time scale of a GPS week and second (`seconds` in [0, 604800)).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_from_gps_week_seconds(week: i64, seconds: f64, out_date: *mut rf_julian_date) -> rf_status {
    boundary(|| {
        let o = unsafe { out(out_date) }?;
        *o = time::from_gps_week_seconds(week, seconds)?.into();
        Ok(())
    })
}
