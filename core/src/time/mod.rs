//! Time scales: UTC, TAI, TT, GPS time and UT1 as two-part Julian dates, the leap-second
//! table, calendar dates, GPS weeks, and the IERS Earth orientation tables that give UT1 (with
//! the pole coordinates and celestial pole offsets published beside it).
//!
//! # Dates
//!
//! A [`JulianDate`] is a Julian date in two parts, `jd + fraction`, split any way (the JD of
//! 0h and the fraction of the day, say). The fraction carries the precision: a part below one
//! day holds about 1e-16 day (10 ps), where a single f64 Julian date resolves only 40 µs. A
//! conversion adds a few roundings of the fraction, so that a date survives a chain of them to
//! well under a nanosecond (the tests hold 1 ns against an IAU-standards reference library).
//!
//! # The scales (offsets from IERS Conventions 2010 ch. 10 and IS-GPS-200)
//!
//! ```text
//! TT  = TAI + 32.184 s                 (IERS Conventions 2010, ch. 10)
//! GPS = TAI − 19 s                     (IS-GPS-200: GPS time has no leap seconds)
//! TAI = UTC + ΔAT,  ΔAT = TAI − UTC    (the leap-second table, IERS Bulletin C)
//! UT1 = UTC + (UT1 − UTC)              (Earth orientation data, IERS Bulletins A and B)
//! ```
//!
//! A UTC date is a quasi Julian date, as in the IAU standards' convention: the fraction counts
//! the seconds of its UTC day over the day's length, 86,401 s on a day that ends in a leap
//! second, so a UTC date never repeats and 23:59:60.5 is 86,400.5/86,401 of the day. During a
//! leap second UT1 is taken as `TAI + (UT1 − UTC) − ΔAT` with the day's `ΔAT` (continuous in
//! TAI), the same as `UTC + (UT1 − UTC)` at every other time. UTC before 1972-01-01, when
//! ΔAT was not integral, is refused.
//!
//! Dates converted to or from UTC come back as the JD of their day's 0h (ending in .5) and
//! the fraction of the day in `[0, 1)`; between the other scales the offset is added to the
//! part of smaller magnitude and the caller's split is kept.
//!
//! # Why rotaframe's own
//!
//! The arithmetic is small (whole-second leap steps, fixed offsets, two-part dates, the
//! Gregorian day number) and every line of it is checked against the IAU reference library in
//! the tests; it must build without `std` or allocation, name the user's argument in every
//! error, and follow the quasi Julian date convention of UTC. The time-scale crates we know of
//! belong to larger astrodynamics toolkits, which this project neither adopts nor imitates, so
//! the module is written here rather than taken from one.

pub mod calendar;
pub mod gps;
pub mod gregorian;
pub mod leap_seconds;
pub mod orientation;

pub use calendar::{CalendarTime, calendar_date, julian_date};
pub use gps::{GPS_EPOCH_MJD, GpsTime, SECONDS_PER_WEEK, from_gps_week_seconds, gps_week_seconds};
pub use gregorian::{MAX_YEAR, MIN_YEAR, day_number};
pub use leap_seconds::{FIRST_UTC_MJD, LeapSeconds, MAX_LEAP_SECOND_STEPS};
#[cfg(feature = "alloc")]
pub use orientation::EarthOrientation;
pub use orientation::{EarthOrientationRows, EarthOrientationSample, EarthOrientationView, IersRow, read_iers_rows};

use crate::error::{Error, Result};

/// TT − TAI (s), exactly (IERS Conventions 2010, ch. 10).
pub const TT_MINUS_TAI: f64 = 32.184;
/// TAI − GPS time (s), exactly (IS-GPS-200).
pub const TAI_MINUS_GPS: f64 = 19.0;
/// The Julian date of MJD 0 (MJD = JD − 2400000.5; common practice).
pub const MJD_ZERO_JD: f64 = 2_400_000.5;
/// Largest magnitude of either part of a date (days): about 2.7 million years either side of
/// the epoch of Julian dates.
pub const MAX_JULIAN_DAY: f64 = 1.0e9;
/// Seconds per day.
const DAY: f64 = 86_400.0;

/// A time scale.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum TimeScale {
    /// Coordinated Universal Time (quasi Julian dates across leap seconds).
    Utc,
    /// International Atomic Time.
    Tai,
    /// Terrestrial Time.
    Tt,
    /// GPS time.
    Gps,
    /// Universal Time UT1 (needs `UT1 − UTC`).
    Ut1,
}

impl TimeScale {
    /// The scale's lower-case name (`"utc"`, `"tai"`, `"tt"`, `"gps"`, `"ut1"`).
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            TimeScale::Utc => "utc",
            TimeScale::Tai => "tai",
            TimeScale::Tt => "tt",
            TimeScale::Gps => "gps",
            TimeScale::Ut1 => "ut1",
        }
    }

    /// The scale of a lower-case name (as [`name`](Self::name) gives it).
    #[must_use]
    pub fn from_name(name: &str) -> Option<TimeScale> {
        [TimeScale::Utc, TimeScale::Tai, TimeScale::Tt, TimeScale::Gps, TimeScale::Ut1].into_iter().find(|s| s.name() == name)
    }
}

/// A Julian date in two parts, `jd + fraction` (days).
///
/// ```
/// use rotaframe::time::JulianDate;
/// let j2000 = JulianDate::new(2_451_545.0, 0.0).unwrap();
/// assert_eq!(j2000.mjd_split().unwrap(), (51_544, 0.5));
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct JulianDate {
    /// One part (days), usually the whole days.
    pub jd: f64,
    /// The other part (days), usually the fraction of the day.
    pub fraction: f64,
}

impl JulianDate {
    /// A date from its two parts (days).
    ///
    /// # Errors
    /// [`Error::NonFinite`] or [`Error::BeyondLimit`] (beyond [`MAX_JULIAN_DAY`]) naming `jd`
    /// or `jd_fraction`.
    pub fn new(jd: f64, fraction: f64) -> Result<JulianDate> {
        crate::limits::check_scalar(jd, MAX_JULIAN_DAY, "days", "jd")?;
        crate::limits::check_scalar(fraction, MAX_JULIAN_DAY, "days", "jd_fraction")?;
        Ok(JulianDate { jd, fraction })
    }

    /// The MJD of the date's day and the fraction of the day in `[0, 1)`, without losing the
    /// fraction's precision to the size of the day number.
    ///
    /// # Errors
    /// As [`new`](Self::new).
    pub fn mjd_split(self) -> Result<(i64, f64)> {
        let JulianDate { jd, fraction } = JulianDate::new(self.jd, self.fraction)?;
        // Whole days and remainders of each part (exact), then of the MJD's origin.
        let (whole_a, whole_b) = (crate::math::floor(jd), crate::math::floor(fraction));
        let mut days = whole_a as i64 + whole_b as i64 - 2_400_001;
        let mut rest = (jd - whole_a) + (fraction - whole_b) + 0.5;
        while rest >= 1.0 {
            rest -= 1.0;
            days += 1;
        }
        Ok((days, rest))
    }

    /// `self` moved by `seconds` (s), added to the part of smaller magnitude.
    fn plus_seconds(self, seconds: f64) -> JulianDate {
        if self.jd.abs() >= self.fraction.abs() {
            JulianDate { jd: self.jd, fraction: self.fraction + seconds / DAY }
        } else {
            JulianDate { jd: self.jd + seconds / DAY, fraction: self.fraction }
        }
    }

    /// The date `seconds` after 0h of the MJD `mjd`, as that day's JD and a fraction.
    fn from_day_and_seconds(mjd: i64, seconds: f64) -> JulianDate {
        JulianDate { jd: mjd as f64 + MJD_ZERO_JD, fraction: seconds / DAY }
    }
}

/// A source of `UT1 − UTC` (s) at a UTC date: Earth orientation data.
pub trait Ut1Source {
    /// `UT1 − UTC` (s) at the UTC date `utc`.
    ///
    /// # Errors
    /// Whatever the source refuses (a date outside its table, say).
    fn ut1_minus_utc(&self, utc: JulianDate) -> Result<f64>;
}

/// TAI of a UTC date: `0h + ΔAT(day) + fraction × L(day)` in SI seconds, `L` the day's length.
fn utc_to_tai(utc: JulianDate, leaps: &LeapSeconds) -> Result<JulianDate> {
    let (mjd, fraction) = utc.mjd_split()?;
    let offset = leaps.tai_minus_utc(mjd)?;
    Ok(JulianDate::from_day_and_seconds(mjd, fraction * leaps.day_length(mjd)? + offset))
}

/// The UTC date of a TAI date: the UTC day `d` (the TAI day or the one before) whose start
/// `0h + ΔAT(d)` precedes it, and the fraction of that day's length.
fn tai_to_utc(tai: JulianDate, leaps: &LeapSeconds) -> Result<JulianDate> {
    let (mjd, fraction) = tai.mjd_split()?;
    let seconds = fraction * DAY;
    let offset = leaps.tai_minus_utc(mjd)?;
    let (day, into_day) = if seconds >= offset {
        (mjd, seconds - offset)
    } else {
        let previous = leaps.tai_minus_utc(mjd - 1).map_err(|e| e.with_quantity("jd"))?;
        (mjd - 1, seconds + DAY - previous)
    };
    let length = leaps.day_length(day)?;
    // Rounding can put a time a few ps before a day's end at its very end: keep it inside.
    let fraction = (into_day / length).min(1.0 - f64::EPSILON / 2.0);
    Ok(JulianDate { jd: day as f64 + MJD_ZERO_JD, fraction })
}

/// `date` in `from` converted to `to`. `leaps` is the leap-second table
/// ([`LeapSeconds::BUILT_IN`] unless a newer file was read); `ut1` gives `UT1 − UTC` and is
/// needed only when one of the scales is UT1. See the [module documentation](self) for the
/// definitions and the split of the result.
///
/// # Errors
/// As [`JulianDate::new`]; [`Error::OutOfRange`] naming `jd` for UTC before 1972 (or a date
/// that converts to one); [`Error::Invalid`] naming `eop` when UT1 is asked for without a
/// source; whatever the source refuses.
///
/// ```
/// use rotaframe::time::{convert_time, JulianDate, LeapSeconds, TimeScale};
/// // 2020-01-01 0h UTC is 18 s behind GPS time (IS-GPS-200; ΔAT = 37 s).
/// let utc = JulianDate::new(2_458_849.5, 0.0).unwrap();
/// let gps = convert_time(utc, TimeScale::Utc, TimeScale::Gps, &LeapSeconds::BUILT_IN, None).unwrap();
/// assert!(((gps.jd - utc.jd) + (gps.fraction - utc.fraction) - 18.0 / 86_400.0).abs() < 1e-15);
/// ```
pub fn convert_time(
    date: JulianDate,
    from: TimeScale,
    to: TimeScale,
    leaps: &LeapSeconds,
    ut1: Option<&dyn Ut1Source>,
) -> Result<JulianDate> {
    let date = JulianDate::new(date.jd, date.fraction)?;
    if from == to {
        return Ok(date);
    }
    let source = || ut1.ok_or(Error::Invalid { quantity: "eop", reason: "UT1 needs Earth orientation data (UT1 − UTC)" });
    if from == TimeScale::Ut1 || to == TimeScale::Ut1 {
        source()?;
    }
    // Through TAI, except UTC ↔ UT1, which is direct.
    let tai = match from {
        TimeScale::Tai => date,
        TimeScale::Tt => date.plus_seconds(-TT_MINUS_TAI),
        TimeScale::Gps => date.plus_seconds(TAI_MINUS_GPS),
        TimeScale::Utc if to == TimeScale::Ut1 => return utc_to_ut1(date, leaps, source()?),
        TimeScale::Utc => utc_to_tai(date, leaps)?,
        TimeScale::Ut1 => {
            let utc = ut1_to_utc(date, leaps, source()?)?;
            if to == TimeScale::Utc {
                return Ok(utc);
            }
            utc_to_tai(utc, leaps)?
        }
    };
    match to {
        TimeScale::Tai => Ok(tai),
        TimeScale::Tt => Ok(tai.plus_seconds(TT_MINUS_TAI)),
        TimeScale::Gps => Ok(tai.plus_seconds(-TAI_MINUS_GPS)),
        TimeScale::Utc => tai_to_utc(tai, leaps),
        TimeScale::Ut1 => utc_to_ut1(tai_to_utc(tai, leaps)?, leaps, source()?),
    }
}

/// UT1 of a UTC date: `TAI + (UT1 − UTC) − ΔAT(day)`.
fn utc_to_ut1(utc: JulianDate, leaps: &LeapSeconds, source: &dyn Ut1Source) -> Result<JulianDate> {
    let (mjd, fraction) = utc.mjd_split()?;
    let dut1 = source.ut1_minus_utc(utc)?;
    crate::limits::check_scalar(dut1, 1.0, "s", "ut1_minus_utc")?;
    let seconds = fraction * leaps.day_length(mjd)? + dut1;
    Ok(JulianDate::from_day_and_seconds(mjd, seconds))
}

/// The UTC date of a UT1 date, by fixed-point iteration on `UT1 − UTC` (which changes by
/// milliseconds a day, so that three rounds settle it to the last bit; a fourth confirms).
fn ut1_to_utc(ut1: JulianDate, leaps: &LeapSeconds, source: &dyn Ut1Source) -> Result<JulianDate> {
    let (mjd, fraction) = ut1.mjd_split()?;
    let ut1_seconds = fraction * DAY;
    // First guess: UTC = UT1, on the same day.
    let mut utc = JulianDate { jd: mjd as f64 + MJD_ZERO_JD, fraction };
    for _ in 0..4 {
        let dut1 = source.ut1_minus_utc(utc)?;
        crate::limits::check_scalar(dut1, 1.0, "s", "ut1_minus_utc")?;
        // UT1 = TAI + dut1 − ΔAT(day of the UTC date): TAI = UT1 − dut1 + ΔAT.
        let (utc_day, _) = utc.mjd_split()?;
        let tai_seconds = ut1_seconds - dut1 + leaps.tai_minus_utc(utc_day)?;
        utc = tai_to_utc(JulianDate::from_day_and_seconds(mjd, tai_seconds), leaps)?;
    }
    Ok(utc)
}
