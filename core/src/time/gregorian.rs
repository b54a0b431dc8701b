//! The proleptic Gregorian calendar as day numbers: calendar dates ↔ MJD.
//!
//! The day number (MJD of the date's 0h) comes from the integer algorithm of Fliegel and Van
//! Flandern (Comm. ACM 11(10), 657, 1968; common practice), written with floor division so that
//! it holds for every year in [`MIN_YEAR`, `MAX_YEAR`]:
//!
//! ```text
//! a = ⌊(14 − month)/12⌋,  y = year + 4800 − a,  m = month + 12a − 3
//! JDN = day + ⌊(153m + 2)/5⌋ + 365y + ⌊y/4⌋ − ⌊y/100⌋ + ⌊y/400⌋ − 32045,   MJD = JDN − 2400001
//! ```
//!

use crate::error::{Error, Result};

/// Earliest year accepted (4713 BC, the start of Julian day numbers).
pub const MIN_YEAR: i32 = -4712;
/// Latest year accepted.
pub const MAX_YEAR: i32 = 9999;

/// Days in `month` of `year` (Gregorian).
fn days_in_month(year: i32, month: i32) -> i32 {
    match month {
        2 if (year % 4 == 0 && year % 100 != 0) || year % 400 == 0 => 29,
        2 => 28,
        4 | 6 | 9 | 11 => 30,
        _ => 31,
    }
}

/// The MJD of 0h on a calendar date.
///
/// # Errors
/// [`Error::OutOfRange`] naming `year`, `month` or `day` for an impossible date.
///
/// ```
/// use rotaframe::time::day_number;
/// assert_eq!(day_number(2000, 1, 1).unwrap(), 51_544); // JD 2451544.5 (common practice)
/// assert!(day_number(2023, 2, 29).is_err());
/// ```
pub fn day_number(year: i32, month: i32, day: i32) -> Result<i64> {
    let range = |quantity, value: i32, min: i32, max: i32| {
        if (min..=max).contains(&value) {
            Ok(())
        } else {
            Err(Error::OutOfRange { quantity, value: f64::from(value), min: f64::from(min), max: f64::from(max) })
        }
    };
    range("year", year, MIN_YEAR, MAX_YEAR)?;
    range("month", month, 1, 12)?;
    range("day", day, 1, days_in_month(year, month))?;
    let a = i64::from((14 - month) / 12);
    let y = i64::from(year) + 4800 - a;
    let m = i64::from(month) + 12 * a - 3;
    let jdn = i64::from(day) + (153 * m + 2) / 5 + 365 * y + y.div_euclid(4) - y.div_euclid(100) + y.div_euclid(400) - 32_045;
    Ok(jdn - 2_400_001)
}

/// The calendar date of the MJD `mjd` (the inverse of [`day_number`]).
pub(super) fn calendar_of(mjd: i64) -> (i32, i32, i32) {
    // Fliegel and Van Flandern's inverse, on the Julian day number (positive for the years
    // accepted, so truncating division is floor division).
    let mut l = mjd + 2_400_001 + 68_569;
    let n = 4 * l / 146_097;
    l -= (146_097 * n + 3) / 4;
    let i = 4000 * (l + 1) / 1_461_001;
    l = l - 1461 * i / 4 + 31;
    let j = 80 * l / 2447;
    let day = l - 2447 * j / 80;
    l = j / 11;
    let month = j + 2 - 12 * l;
    let year = 100 * (n - 49) + i + l;
    (year as i32, month as i32, day as i32)
}
