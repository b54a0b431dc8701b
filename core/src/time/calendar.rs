//! Calendar dates and times of day ↔ two-part Julian dates, in the proleptic Gregorian
//! calendar.
//!
//! The day number is [`day_number`]'s (the proleptic Gregorian calendar).
//!
//! The time of day becomes the fraction `(3600 h + 60 min + s) / L` of a day of `L` seconds:
//! 86,400, except on a UTC day that ends in a leap second, where `L` = 86,401 and the last
//! minute has 61 seconds (`23:59:60.5` is 86,400.5/86,401 of the day): the quasi Julian date
//! of the IAU standards' convention. A date is returned as the Julian date of its 0h (ending in
//! .5) and that fraction.

use super::gregorian::{MAX_YEAR, MIN_YEAR, calendar_of, day_number};
use super::{JulianDate, LeapSeconds, MJD_ZERO_JD, TimeScale};
use crate::error::{Error, Result};

/// A calendar date and time of day (`second` in [0, 60), or [0, 61) in the last minute of a
/// UTC day that ends in a leap second).
///
/// ```
/// use rotaframe::time::CalendarTime;
/// let noon = CalendarTime::new(2024, 3, 1, 12, 0, 0.0);
/// assert_eq!(noon.hour, 12);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CalendarTime {
    /// Year (astronomical numbering: 0 is 1 BC).
    pub year: i32,
    /// Month, 1 to 12.
    pub month: i32,
    /// Day of the month, from 1.
    pub day: i32,
    /// Hour, 0 to 23.
    pub hour: i32,
    /// Minute, 0 to 59.
    pub minute: i32,
    /// Second, with its fraction.
    pub second: f64,
}

impl CalendarTime {
    /// A calendar date and time (checked when converted).
    #[must_use]
    pub fn new(year: i32, month: i32, day: i32, hour: i32, minute: i32, second: f64) -> Self {
        CalendarTime { year, month, day, hour, minute, second }
    }
}

/// The two-part Julian date of a calendar date and time of day in `scale` (`leaps` gives the
/// length of UTC days): the JD of the day's 0h and the fraction of the day.
///
/// # Errors
/// [`Error::OutOfRange`] naming `year`, `month`, `day`, `hour`, `minute` or `second` for an
/// impossible date or time (`second` = 60 on a UTC day without a leap second, say);
/// [`Error::NonFinite`] naming `second`; [`Error::OutOfRange`] naming `jd` for UTC before
/// 1972.
///
/// ```
/// use rotaframe::time::{julian_date, CalendarTime, LeapSeconds, TimeScale};
/// // Half a second into the leap second that ended 2016 (IERS Bulletin C 52):
/// let leap = CalendarTime { year: 2016, month: 12, day: 31, hour: 23, minute: 59, second: 60.5 };
/// let d = julian_date(&leap, TimeScale::Utc, &LeapSeconds::BUILT_IN).unwrap();
/// assert_eq!(d.jd, 2_457_753.5);
/// assert_eq!(d.fraction, 86_400.5 / 86_401.0);
/// ```
pub fn julian_date(calendar: &CalendarTime, scale: TimeScale, leaps: &LeapSeconds) -> Result<JulianDate> {
    let CalendarTime { year, month, day, hour, minute, second } = *calendar;
    let mjd = day_number(year, month, day)?;
    let length = if scale == TimeScale::Utc { leaps.day_length(mjd)? } else { 86_400.0 };
    let range = |quantity, value: i32, max: i32| {
        if (0..=max).contains(&value) {
            Ok(())
        } else {
            Err(Error::OutOfRange { quantity, value: f64::from(value), min: 0.0, max: f64::from(max) })
        }
    };
    range("hour", hour, 23)?;
    range("minute", minute, 59)?;
    crate::error::ensure_finite1(second, "second")?;
    // The last minute of the day holds what the day's length leaves of it.
    let minute_length = if hour == 23 && minute == 59 { length - 86_340.0 } else { 60.0 };
    if !(0.0..minute_length).contains(&second) {
        return Err(Error::OutOfRange { quantity: "second", value: second, min: 0.0, max: minute_length });
    }
    let seconds = f64::from(3600 * hour + 60 * minute) + second;
    Ok(JulianDate { jd: mjd as f64 + MJD_ZERO_JD, fraction: seconds / length })
}

/// The calendar date and time of day of `date` in `scale` (the inverse of [`julian_date`]).
///
/// # Errors
/// As [`JulianDate::new`]; [`Error::OutOfRange`] naming `jd` for a year outside
/// [`MIN_YEAR`, `MAX_YEAR`] or UTC before 1972.
///
/// ```
/// use rotaframe::time::{calendar_date, JulianDate, LeapSeconds, TimeScale};
/// let d = JulianDate::new(2_457_753.5, 86_400.5 / 86_401.0).unwrap();
/// let c = calendar_date(d, TimeScale::Utc, &LeapSeconds::BUILT_IN).unwrap();
/// assert_eq!((c.year, c.month, c.day, c.hour, c.minute), (2016, 12, 31, 23, 59));
/// assert!((c.second - 60.5).abs() < 1e-9);
/// ```
pub fn calendar_date(date: JulianDate, scale: TimeScale, leaps: &LeapSeconds) -> Result<CalendarTime> {
    let (mjd, fraction) = date.mjd_split()?;
    let first = day_number(MIN_YEAR, 1, 1)?;
    let last = day_number(MAX_YEAR, 12, 31)?;
    if !(first..=last).contains(&mjd) {
        let min = first as f64 + MJD_ZERO_JD;
        return Err(Error::OutOfRange {
            quantity: "jd",
            value: date.jd + date.fraction,
            min,
            max: last as f64 + 1.0 + MJD_ZERO_JD,
        });
    }
    let length = if scale == TimeScale::Utc { leaps.day_length(mjd)? } else { 86_400.0 };
    let (year, month, day) = calendar_of(mjd);
    let seconds = fraction * length;
    // Whole minutes of the day, the last minute taking any leap second.
    let minutes = (crate::math::floor(seconds / 60.0) as i32).clamp(0, 1439);
    let second = (seconds - 60.0 * f64::from(minutes)).max(0.0);
    Ok(CalendarTime { year, month, day, hour: minutes / 60, minute: minutes % 60, second })
}
