//! GPS weeks and seconds of the week: GPS time counted from its epoch, 1980-01-06 0h
//! (IS-GPS-200), in weeks of 604,800 s. The week is the full count since the epoch, not the
//! broadcast count modulo 1024 (or 8192): resolving the rollover is the caller's knowledge of
//! the era.

use super::{JulianDate, MJD_ZERO_JD};
use crate::error::{Error, Result};

/// MJD of the GPS epoch, 1980-01-06 0h (JD 2444244.5; IS-GPS-200).
pub const GPS_EPOCH_MJD: i64 = 44_244;
/// Seconds in a GPS week.
pub const SECONDS_PER_WEEK: f64 = 604_800.0;
/// The largest week accepted (about year 9999).
const MAX_WEEK: i64 = 417_000;

/// A GPS time as a week and the seconds into it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GpsTime {
    /// Full weeks since 1980-01-06 0h GPS.
    pub week: i64,
    /// Seconds into the week, in `[0, 604800)`.
    pub seconds: f64,
}

/// The GPS week and second of a date on the GPS time scale.
///
/// # Errors
/// As [`JulianDate::new`]; [`Error::OutOfRange`] naming `jd` before the GPS epoch or past week
/// 417,000.
///
/// ```
/// use rotaframe::time::{gps_week_seconds, JulianDate};
/// // 2020-01-01 0h GPS: week 2086, Wednesday 0h (3 days into the week).
/// let t = gps_week_seconds(JulianDate::new(2_458_849.5, 0.0).unwrap()).unwrap();
/// assert_eq!((t.week, t.seconds), (2086, 3.0 * 86_400.0));
/// ```
pub fn gps_week_seconds(gps: JulianDate) -> Result<GpsTime> {
    let (mjd, fraction) = gps.mjd_split()?;
    let days = mjd - GPS_EPOCH_MJD;
    if !(0..7 * (MAX_WEEK + 1)).contains(&days) {
        let min = GPS_EPOCH_MJD as f64 + MJD_ZERO_JD;
        return Err(Error::OutOfRange {
            quantity: "jd",
            value: gps.jd + gps.fraction,
            min,
            max: min + 7.0 * (MAX_WEEK + 1) as f64,
        });
    }
    let (week, day) = (days / 7, days % 7);
    // Whole days first, so that the fraction's precision is kept (about 1e-11 s).
    let seconds = (day as f64 * 86_400.0 + fraction * 86_400.0).min(SECONDS_PER_WEEK * (1.0 - f64::EPSILON));
    Ok(GpsTime { week, seconds })
}

/// The date on the GPS time scale of a GPS week and second (the JD of the day's 0h and the
/// fraction of the day).
///
/// # Errors
/// [`Error::OutOfRange`] naming `week` (below 0 or above 417,000) or `seconds` (outside
/// `[0, 604800)`, or not finite).
///
/// ```
/// use rotaframe::time::from_gps_week_seconds;
/// let d = from_gps_week_seconds(2086, 3.0 * 86_400.0 + 43_200.0).unwrap();
/// assert_eq!((d.jd, d.fraction), (2_458_849.5, 0.5)); // 2020-01-01 12h GPS
/// ```
pub fn from_gps_week_seconds(week: i64, seconds: f64) -> Result<JulianDate> {
    if !(0..=MAX_WEEK).contains(&week) {
        return Err(Error::OutOfRange { quantity: "week", value: week as f64, min: 0.0, max: MAX_WEEK as f64 });
    }
    if !(0.0..SECONDS_PER_WEEK).contains(&seconds) {
        return Err(Error::OutOfRange { quantity: "seconds", value: seconds, min: 0.0, max: SECONDS_PER_WEEK });
    }
    let day = crate::math::floor(seconds / 86_400.0).min(6.0);
    let mjd = GPS_EPOCH_MJD + 7 * week + day as i64;
    Ok(JulianDate { jd: mjd as f64 + MJD_ZERO_JD, fraction: (seconds - day * 86_400.0) / 86_400.0 })
}
