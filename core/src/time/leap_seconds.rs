//! The leap-second table: TAI − UTC, an integral number of seconds since 1972-01-01, stepping
//! by one second at the end of the UTC days that IERS Bulletin C announces.
//!
//! The table built in ([`LeapSeconds::BUILT_IN`]) holds every step announced up to the one at
//! 2017-01-01 (TAI − UTC = 37 s; IERS Bulletin C; none has been announced since, as of the
//! table's date). A newer table is read from the IERS `Leap_Second.dat` file with
//! [`LeapSeconds::from_iers_text`]: its data lines give the MJD, day, month and year at which a
//! value starts and the value (s), and a comment gives the date until which the file is valid.
//!
//! After the last step the last value holds: a date past the file's expiry assumes that no
//! leap second was added, which is true only until one is. UTC before 1972 (when TAI − UTC was
//! not integral and UTC seconds were not SI seconds) is refused.

use crate::error::{Error, ParseError, Result};

/// Most steps a table holds (27 steps from 1972 to 2017; room for decades more).
pub const MAX_LEAP_SECOND_STEPS: usize = 128;

/// MJD of 1972-01-01, the first UTC day rotaframe accepts.
pub const FIRST_UTC_MJD: i64 = 41_317;

/// A leap-second table: the MJDs at which TAI − UTC takes a new value, and the values (s).
///
/// ```
/// use rotaframe::time::LeapSeconds;
/// let table = LeapSeconds::BUILT_IN;
/// assert_eq!(table.tai_minus_utc(57_754).unwrap(), 37.0); // from 2017-01-01 (IERS Bulletin C)
/// assert_eq!(table.tai_minus_utc(57_753).unwrap(), 36.0);
/// assert!(table.tai_minus_utc(41_316).is_err());          // 1971-12-31: before integral UTC
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LeapSeconds {
    starts: [i32; MAX_LEAP_SECOND_STEPS],
    values: [i16; MAX_LEAP_SECOND_STEPS],
    len: usize,
    expires: Option<i32>,
}

/// A table without steps, to fill.
const EMPTY: LeapSeconds =
    LeapSeconds { starts: [0; MAX_LEAP_SECOND_STEPS], values: [0; MAX_LEAP_SECOND_STEPS], len: 0, expires: None };

/// The steps announced in IERS Bulletin C up to 2017-01-01: (MJD at which the value starts,
/// TAI − UTC in s). `tests/tests/time_scales.rs` checks them against the IERS file itself.
const ANNOUNCED: [(i32, i16); 28] = [
    (41_317, 10),
    (41_499, 11),
    (41_683, 12),
    (42_048, 13),
    (42_413, 14),
    (42_778, 15),
    (43_144, 16),
    (43_509, 17),
    (43_874, 18),
    (44_239, 19),
    (44_786, 20),
    (45_151, 21),
    (45_516, 22),
    (46_247, 23),
    (47_161, 24),
    (47_892, 25),
    (48_257, 26),
    (48_804, 27),
    (49_169, 28),
    (49_534, 29),
    (50_083, 30),
    (50_630, 31),
    (51_179, 32),
    (53_736, 33),
    (54_832, 34),
    (56_109, 35),
    (57_204, 36),
    (57_754, 37),
];

impl LeapSeconds {
    /// The table built in: every step up to 2017-01-01 (37 s).
    pub const BUILT_IN: LeapSeconds = {
        let mut table = EMPTY;
        let mut i = 0;
        while i < ANNOUNCED.len() {
            table.starts[i] = ANNOUNCED[i].0;
            table.values[i] = ANNOUNCED[i].1;
            i += 1;
        }
        table.len = ANNOUNCED.len();
        table
    };

    /// Reads the IERS `Leap_Second.dat` file's text: lines starting with `#` are comments (one
    /// of them may read `File expires on 28 June 2027`, kept as [`expires`](Self::expires)),
    /// every other non-blank line holds `MJD day month year TAI−UTC`.
    ///
    /// # Errors
    /// [`ParseError`] giving the line (1-based) and why: a line without five numbers, an MJD
    /// that is not the calendar date given, MJDs not increasing, a value that does not step by
    /// one second, a first step before 1972-01-01, no steps, more than
    /// [`MAX_LEAP_SECOND_STEPS`].
    ///
    /// ```
    /// use rotaframe::time::LeapSeconds;
    /// let text = "#  File expires on 28 June 2027\n 41317.0 1 1 1972 10\n 41499.0 1 7 1972 11\n";
    /// let table = LeapSeconds::from_iers_text(text).unwrap();
    /// assert_eq!(table.tai_minus_utc(41_500).unwrap(), 11.0);
    /// assert_eq!(table.expires(), Some(61_584)); // MJD of 2027-06-28
    /// ```
    pub fn from_iers_text(text: &str) -> core::result::Result<LeapSeconds, ParseError> {
        let mut table = EMPTY;
        for (number, line) in text.lines().enumerate() {
            let fail = |reason| ParseError { line: number + 1, reason };
            let line = line.trim();
            if let Some(comment) = line.strip_prefix('#') {
                if let Some(date) = comment.trim().strip_prefix("File expires on") {
                    table.expires = Some(
                        expiry_mjd(date)
                            .map(|d| d as i32)
                            .ok_or_else(|| fail("an expiry date that is not `day month-name year`"))?,
                    );
                }
                continue;
            }
            if line.is_empty() {
                continue;
            }
            let mut fields = line.split_whitespace();
            let mut next = || -> core::result::Result<f64, ParseError> {
                fields
                    .next()
                    .and_then(|f| f.parse::<f64>().ok())
                    .filter(|v| v.is_finite())
                    .ok_or_else(|| fail("expected five numbers: MJD day month year TAI−UTC"))
            };
            let (mjd, day, month, year, value) = (next()?, next()?, next()?, next()?, next()?);
            let whole = |v: f64| v == crate::math::floor(v) && v.abs() < 1e7;
            if ![mjd, day, month, year, value].into_iter().all(whole) {
                return Err(fail("the MJD, date and TAI−UTC must be whole numbers"));
            }
            let calendar =
                super::gregorian::day_number(year as i32, month as i32, day as i32).map_err(|_| fail("not a calendar date"))?;
            if calendar != mjd as i64 {
                return Err(fail("the MJD is not that of the calendar date on the line"));
            }
            table.push(mjd as i64, value).map_err(fail)?;
        }
        if table.len == 0 {
            return Err(ParseError { line: 0, reason: "no leap-second steps" });
        }
        Ok(table)
    }

    /// A table from its steps: (MJD at which each value starts, TAI − UTC in s), and the MJD
    /// until which it is valid, if known.
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `leap_seconds`: no steps, a step before 1972-01-01, MJDs not
    /// increasing, values that do not step by one second, too many steps.
    ///
    /// ```
    /// use rotaframe::time::LeapSeconds;
    /// let steps: Vec<(i64, f64)> = LeapSeconds::BUILT_IN.steps().collect();
    /// assert_eq!(LeapSeconds::from_steps(&steps, None).unwrap(), LeapSeconds::BUILT_IN);
    /// ```
    pub fn from_steps(steps: &[(i64, f64)], expires: Option<i64>) -> Result<LeapSeconds> {
        let mut table = EMPTY;
        let invalid = |reason| Error::Invalid { quantity: "leap_seconds", reason };
        for &(mjd, value) in steps {
            table.push(mjd, value).map_err(invalid)?;
        }
        if table.len == 0 {
            return Err(invalid("no leap-second steps"));
        }
        table.expires = match expires {
            Some(day) => Some(i32::try_from(day).map_err(|_| invalid("an expiry MJD out of range"))?),
            None => None,
        };
        Ok(table)
    }

    /// Appends a step, checking it against the table so far.
    fn push(&mut self, mjd: i64, value: f64) -> core::result::Result<(), &'static str> {
        if mjd < FIRST_UTC_MJD || mjd > i64::from(i32::MAX) {
            return Err("a step before 1972-01-01 (when UTC was not yet an integral offset from TAI), or out of range");
        }
        if !(value.is_finite() && value == crate::math::floor(value) && value.abs() < 1000.0) {
            return Err("TAI − UTC must be a whole number of seconds");
        }
        if self.len == MAX_LEAP_SECOND_STEPS {
            return Err("more leap-second steps than a table holds");
        }
        if let Some(last) = self.len.checked_sub(1) {
            if mjd as i32 <= self.starts[last] {
                return Err("MJDs must increase");
            }
            if (value - f64::from(self.values[last])).abs() != 1.0 {
                return Err("TAI − UTC must change by one second at a step");
            }
        }
        self.starts[self.len] = mjd as i32;
        self.values[self.len] = value as i16;
        self.len += 1;
        Ok(())
    }

    /// TAI − UTC (s) on the UTC day `mjd` (the value from its 0h UTC).
    ///
    /// # Errors
    /// [`Error::OutOfRange`] naming `jd` for a day before the table's first step.
    pub fn tai_minus_utc(&self, mjd: i64) -> Result<f64> {
        let steps = &self.starts[..self.len];
        let count = steps.partition_point(|&start| i64::from(start) <= mjd);
        if count == 0 {
            let first = f64::from(steps[0]) + super::MJD_ZERO_JD;
            return Err(Error::OutOfRange {
                quantity: "jd",
                value: mjd as f64 + super::MJD_ZERO_JD,
                min: first,
                max: super::MAX_JULIAN_DAY,
            });
        }
        Ok(f64::from(self.values[count - 1]))
    }

    /// The length of the UTC day `mjd` (s): 86,400 plus the step at its end (86,401 on a day
    /// that ends in a leap second).
    ///
    /// # Errors
    /// As [`tai_minus_utc`](Self::tai_minus_utc).
    pub fn day_length(&self, mjd: i64) -> Result<f64> {
        Ok(86_400.0 + self.tai_minus_utc(mjd + 1)? - self.tai_minus_utc(mjd)?)
    }

    /// The MJD until which the file said it was valid, if it said (`None` for the built-in
    /// table).
    #[must_use]
    pub fn expires(&self) -> Option<i64> {
        self.expires.map(i64::from)
    }

    /// The steps: (MJD at which each value starts, TAI − UTC in s).
    pub fn steps(&self) -> impl Iterator<Item = (i64, f64)> + '_ {
        self.starts[..self.len].iter().zip(&self.values[..self.len]).map(|(&s, &v)| (i64::from(s), f64::from(v)))
    }
}

impl Default for LeapSeconds {
    fn default() -> Self {
        LeapSeconds::BUILT_IN
    }
}

/// The MJD of `day month-name year` (`28 June 2027`).
fn expiry_mjd(text: &str) -> Option<i64> {
    const MONTHS: [&str; 12] = [
        "january",
        "february",
        "march",
        "april",
        "may",
        "june",
        "july",
        "august",
        "september",
        "october",
        "november",
        "december",
    ];
    let mut fields = text.split_whitespace();
    let day: i32 = fields.next()?.parse().ok()?;
    let name = fields.next()?;
    let month = MONTHS.iter().position(|m| m.eq_ignore_ascii_case(name))? as i32 + 1;
    let year: i32 = fields.next()?.parse().ok()?;
    super::gregorian::day_number(year, month, day).ok()
}
