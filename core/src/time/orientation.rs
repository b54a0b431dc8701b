//! Earth orientation parameters: `UT1 − UTC`, the pole coordinates `xp, yp` and the celestial
//! pole offsets `dX, dY`, tabulated daily at 0h UTC by the IERS, read from its files and
//! interpolated.
//!
//! # Files
//!
//! * `finals2000A` (`.all`, `.data`, `.daily`; IERS Rapid Service / Prediction Centre): the
//!   standard fixed-column format, of which the Bulletin A columns are read: MJD (bytes
//!   8–15), `xp` and `yp` (19–27, 38–46, arcsec), `UT1 − UTC` (59–68, s), `dX` and `dY` (98–106,
//!   117–125, mas). The file ends with predictions and then with rows whose values are blank.
//! * EOP C04 (IERS Earth Orientation Centre, `eopc04.1962-now`): whitespace-separated columns
//!   `year month day hour MJD xp yp UT1−UTC dX dY …` (arcsec and s), comments starting `#`.
//!
//! # The usable span, and `dX, dY`
//!
//! The table holds the rows from the first on whose `UT1 − UTC`, `xp` and `yp` are given (and
//! not before 1972-01-01, where rotaframe's UTC starts: C04's rows from 1962 to 1971 are left
//! out), up to the last such row (blank prediction rows at the end are left out; a blank row inside the
//! span is refused). `dX, dY` are often given over a shorter span (the predictions of
//! finals2000A stop earlier): from the first row to the last that gives them. Past it,
//! [`EarthOrientation::at`] returns them as `None`; the celestial-to-terrestrial
//! transformation then uses the IAU 2006/2000A model alone (an error of a few tenths of a
//! milliarcsecond, the size of the offsets; IERS Conventions 2010 §5.5.4, from memory).
//!
//! # Storage
//!
//! [`EarthOrientationView`] interpolates rows held by the caller (no allocation: firmware and
//! the C library use it, with [`read_iers_rows`] filling caller arrays from a file);
//! [`EarthOrientation`] (with `alloc`) owns its rows.
//!
//! # Interpolation
//!
//! Each quantity is interpolated by 4-point Lagrange interpolation on the two tabulated days
//! either side of the date (the first or last four rows near the ends), as IERS Conventions
//! 2010 §5.5 recommends for these series:
//!
//! ```text
//! v(t) = Σ_j v_j Π_{m≠j} (t − t_m)/(t_j − t_m)
//! ```
//!
//! which reproduces the tabulated values exactly at the tabulated dates. `UT1 − UTC` jumps by
//! one second at a leap second; the values of the window's rows on the far side of a step are
//! moved by the step (`UT1 − TAI` is what is smooth), so that the interpolation has no jump,
//! and the result is `UT1 − UTC` for the date's UTC day.
//!
//! The diurnal and subdiurnal tidal terms (ocean tides and libration, IERS Conventions 2010
//! §5.5.1 and §5.5.3: up to about 0.5 mas in the pole and 0.05 ms in UT1, from memory) are
//! **not** applied: the tables are interpolated as published.

#[cfg(feature = "alloc")]
use alloc::vec::Vec;

use super::{JulianDate, LeapSeconds, MJD_ZERO_JD, Ut1Source};
use crate::error::{Error, ParseError, Result};

/// Radians per arcsecond.
pub(crate) const ARCSEC: f64 = core::f64::consts::PI / 648_000.0;

/// The largest pole coordinate or celestial pole offset accepted (rad): 10″ (the pole wanders
/// within about 1″).
pub(crate) const MAX_POLE: f64 = 10.0 * ARCSEC;

/// The Earth orientation at a date: `UT1 − UTC` (s), `xp`, `yp`, `dX`, `dY` (rad).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EarthOrientationSample {
    /// UT1 − UTC (s).
    pub ut1_minus_utc: f64,
    /// Pole coordinate x (rad).
    pub xp: f64,
    /// Pole coordinate y (rad).
    pub yp: f64,
    /// Celestial pole offset dX (rad), where the table gives it.
    pub dx: Option<f64>,
    /// Celestial pole offset dY (rad), where the table gives it.
    pub dy: Option<f64>,
}

/// The rows of an Earth orientation table.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EarthOrientationRows<'a> {
    /// MJD (UTC) of each row.
    pub mjd: &'a [f64],
    /// UT1 − UTC (s).
    pub ut1_minus_utc: &'a [f64],
    /// Pole coordinate x (rad).
    pub xp: &'a [f64],
    /// Pole coordinate y (rad).
    pub yp: &'a [f64],
    /// Celestial pole offset dX (rad) of the first rows, as many as give it.
    pub dx: &'a [f64],
    /// Celestial pole offset dY (rad), as `dx`.
    pub dy: &'a [f64],
}

/// An Earth orientation table over rows held by the caller, interpolated by
/// [`at`](Self::at). See the [module documentation](crate::time::orientation) for the files,
/// the span and the interpolation.
///
/// ```
/// use rotaframe::time::{EarthOrientationRows, EarthOrientationView, JulianDate, LeapSeconds};
/// // Four invented daily rows (MJD, UT1 − UTC in s, xp and yp in rad).
/// let mjd = [60_000.0, 60_001.0, 60_002.0, 60_003.0];
/// let dut1 = [0.01, 0.009, 0.008, 0.007];
/// let pole = [1e-6; 4];
/// let rows = EarthOrientationRows { mjd: &mjd, ut1_minus_utc: &dut1, xp: &pole, yp: &pole, dx: &[], dy: &[] };
/// let eop = EarthOrientationView::new(rows, &LeapSeconds::BUILT_IN).unwrap();
/// let noon = JulianDate::new(60_001.0 + 2_400_000.5, 0.5).unwrap();
/// assert!((eop.at(noon).unwrap().ut1_minus_utc - 0.0085).abs() < 1e-15);
/// assert_eq!(eop.at(noon).unwrap().dx, None);
/// ```
#[derive(Debug, Clone, Copy)]
pub struct EarthOrientationView<'a> {
    rows: EarthOrientationRows<'a>,
    leaps: &'a LeapSeconds,
}

impl<'a> EarthOrientationView<'a> {
    /// A table over `rows`: `mjd` (UTC, strictly increasing, at least four rows, from 1972),
    /// `ut1_minus_utc` (s), `xp`, `yp` (rad), and `dx`, `dy` (rad) for the first rows (as many
    /// as given, none to all); `leaps` gives the steps of `UT1 − UTC`.
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `mjd` (fewer than four rows, not increasing, before 1972);
    /// [`Error::LengthMismatch`] naming the array whose length differs; [`Error::NonFinite`]
    /// or [`Error::BeyondLimit`] naming the bad array (`UT1 − UTC` within 1 s; `xp`, `yp`,
    /// `dX`, `dY` within 10″).
    pub fn new(rows: EarthOrientationRows<'a>, leaps: &'a LeapSeconds) -> Result<Self> {
        let EarthOrientationRows { mjd, ut1_minus_utc, xp, yp, dx, dy } = rows;
        let n = mjd.len();
        if n < 4 {
            return Err(Error::Invalid { quantity: "mjd", reason: "needs at least four rows for 4-point interpolation" });
        }
        for (quantity, values) in [("ut1_minus_utc", ut1_minus_utc), ("xp", xp), ("yp", yp)] {
            if values.len() != n {
                return Err(Error::LengthMismatch { quantity, found: values.len(), expected: n });
            }
        }
        if dx.len() > n {
            return Err(Error::LengthMismatch { quantity: "dx", found: dx.len(), expected: n });
        }
        if dy.len() != dx.len() {
            return Err(Error::LengthMismatch { quantity: "dy", found: dy.len(), expected: dx.len() });
        }
        crate::limits::check_scalar(mjd[0], 1e6, "d", "mjd")?;
        crate::limits::check_scalar(mjd[n - 1], 1e6, "d", "mjd")?;
        for pair in mjd.windows(2) {
            if pair[1].partial_cmp(&pair[0]) != Some(core::cmp::Ordering::Greater) {
                return Err(Error::Invalid { quantity: "mjd", reason: "must be strictly increasing" });
            }
        }
        if mjd[0] < super::FIRST_UTC_MJD as f64 {
            return Err(Error::Invalid { quantity: "mjd", reason: "UTC dates before 1972 are not supported" });
        }
        for i in 0..n {
            let offsets = (i < dx.len()).then(|| [dx[i], dy[i]]);
            IersRow { line: i + 1, mjd: mjd[i], ut1_minus_utc: ut1_minus_utc[i], pole: [xp[i], yp[i]], offsets }.check()?;
        }
        Ok(EarthOrientationView { rows, leaps })
    }

    /// The first and last MJD (UTC) of the table.
    #[must_use]
    pub fn span(&self) -> (f64, f64) {
        (self.rows.mjd[0], self.rows.mjd[self.rows.mjd.len() - 1])
    }

    /// The last MJD at which `dX, dY` are given, if any are.
    #[must_use]
    pub fn offsets_until(&self) -> Option<f64> {
        self.rows.dx.len().checked_sub(1).map(|i| self.rows.mjd[i])
    }

    /// The tabulated rows.
    #[must_use]
    pub fn rows(&self) -> EarthOrientationRows<'a> {
        self.rows
    }

    /// The leap-second table used for the steps of `UT1 − UTC`.
    #[must_use]
    pub fn leap_seconds(&self) -> &'a LeapSeconds {
        self.leaps
    }

    /// The Earth orientation at the UTC date `utc`, interpolated by 4-point Lagrange with
    /// `UT1 − UTC` continued across leap seconds (see the [module documentation](crate::time::orientation)).
    ///
    /// # Errors
    /// As [`JulianDate::new`]; [`Error::OutOfRange`] naming `jd` for a date outside the
    /// table's span (giving the span as Julian dates).
    pub fn at(&self, utc: JulianDate) -> Result<EarthOrientationSample> {
        Ok(self.at_with_rates(utc)?[0])
    }

    /// The Earth orientation at the UTC date `utc` and its first and second time derivatives
    /// (per second and per second squared), from the derivatives of the same interpolating
    /// cubics: `[value, rate, acceleration]`. (`UT1 − UTC` is continued across a leap second
    /// as in [`at`](Self::at), so its rate is that of `UT1 − TAI`.)
    ///
    /// # Errors
    /// As [`at`](Self::at).
    ///
    /// ```
    /// use rotaframe::time::{EarthOrientationRows, EarthOrientationView, JulianDate, LeapSeconds};
    /// // UT1 − UTC falling 1 ms a day: a rate of −1e-3/86400 s/s.
    /// let mjd = [60_000.0, 60_001.0, 60_002.0, 60_003.0];
    /// let (dut1, zero) = ([0.010, 0.009, 0.008, 0.007], [0.0; 4]);
    /// let rows = EarthOrientationRows { mjd: &mjd, ut1_minus_utc: &dut1, xp: &zero, yp: &zero, dx: &[], dy: &[] };
    /// let eop = EarthOrientationView::new(rows, &LeapSeconds::BUILT_IN).unwrap();
    /// let [_, rate, _] = eop.at_with_rates(JulianDate::new(2_460_001.5, 0.3).unwrap()).unwrap();
    /// assert!((rate.ut1_minus_utc + 1e-3 / 86_400.0).abs() < 1e-20);
    /// ```
    pub fn at_with_rates(&self, utc: JulianDate) -> Result<[EarthOrientationSample; 3]> {
        let (day, fraction) = utc.mjd_split()?;
        let (first, last) = self.span();
        let t_day = day as f64;
        // Compared from the whole days first, so that the fraction keeps its precision.
        if (t_day - first) + fraction < 0.0 || (t_day - last) + fraction > 0.0 {
            return Err(Error::OutOfRange {
                quantity: "jd",
                value: utc.jd + utc.fraction,
                min: first + MJD_ZERO_JD,
                max: last + MJD_ZERO_JD,
            });
        }
        let mjd = self.rows.mjd;
        let window = window_start(mjd, t_day + fraction);
        let weights = lagrange_weights(&mjd[window..window + 4], t_day, fraction);
        let dat = self.leaps.tai_minus_utc(day)?;
        let mut dut1 = [0.0; 4];
        for (j, value) in dut1.iter_mut().enumerate() {
            let row = window + j;
            // A row on the far side of a leap second, moved by the step.
            let step = dat - self.leaps.tai_minus_utc(crate::math::floor(mjd[row]) as i64)?;
            let tabulated = self.rows.ut1_minus_utc[row];
            *value = if step == 0.0 { tabulated } else { tabulated + step };
        }
        // Per day, then per second.
        let scale = [1.0, 1.0 / 86_400.0, 1.0 / (86_400.0 * 86_400.0)];
        let combine = |w: &[[f64; 4]; 3], values: &[f64]| -> [f64; 3] {
            core::array::from_fn(|order| w[order].iter().zip(values).map(|(w, v)| w * v).sum::<f64>() * scale[order])
        };
        let ut1 = combine(&weights, &dut1);
        let xp = combine(&weights, &self.rows.xp[window..window + 4]);
        let yp = combine(&weights, &self.rows.yp[window..window + 4]);
        let given = self.rows.dx.len();
        let offsets = if given >= 4 && t_day + fraction <= mjd[given - 1] {
            let start = window_start(&mjd[..given], t_day + fraction);
            let w = lagrange_weights(&mjd[start..start + 4], t_day, fraction);
            Some((combine(&w, &self.rows.dx[start..start + 4]), combine(&w, &self.rows.dy[start..start + 4])))
        } else {
            None
        };
        Ok(core::array::from_fn(|order| EarthOrientationSample {
            ut1_minus_utc: ut1[order],
            xp: xp[order],
            yp: yp[order],
            dx: offsets.map(|(dx, _)| dx[order]),
            dy: offsets.map(|(_, dy)| dy[order]),
        }))
    }
}

impl Ut1Source for EarthOrientationView<'_> {
    fn ut1_minus_utc(&self, utc: JulianDate) -> Result<f64> {
        Ok(self.at(utc)?.ut1_minus_utc)
    }
}

/// One usable row of an IERS file, as [`read_iers_rows`] hands it out.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IersRow {
    /// The file's line (1-based).
    pub line: usize,
    /// MJD (UTC).
    pub mjd: f64,
    /// UT1 − UTC (s).
    pub ut1_minus_utc: f64,
    /// Pole coordinates `xp`, `yp` (rad).
    pub pole: [f64; 2],
    /// Celestial pole offsets `dX`, `dY` (rad), while the file gives them.
    pub offsets: Option<[f64; 2]>,
}

impl IersRow {
    /// Checks the row's values: `UT1 − UTC` within 1 s, `xp`, `yp`, `dX`, `dY` within 10″.
    ///
    /// # Errors
    /// [`Error::NonFinite`] or [`Error::BeyondLimit`] naming `ut1_minus_utc`, `xp`, `yp`, `dx`
    /// or `dy`.
    pub fn check(&self) -> Result<()> {
        crate::limits::check_scalar(self.ut1_minus_utc, 1.0, "s", "ut1_minus_utc")?;
        crate::limits::check_scalar(self.pole[0], MAX_POLE, "rad", "xp")?;
        crate::limits::check_scalar(self.pole[1], MAX_POLE, "rad", "yp")?;
        if let Some([dx, dy]) = self.offsets {
            crate::limits::check_scalar(dx, MAX_POLE, "rad", "dx")?;
            crate::limits::check_scalar(dy, MAX_POLE, "rad", "dy")?;
        }
        Ok(())
    }
}

/// Reads an IERS file's text, `finals2000A` (its Bulletin A columns) or EOP C04 (told apart by
/// their layout: C04 rows start with a four-digit year), handing each usable row to `row` in
/// order, checked ([`IersRow::check`]): from 1972 on, while `UT1 − UTC`, `xp` and `yp` are
/// given. Nothing is allocated.
///
/// # Errors
/// [`ParseError`] giving the line and why: a field that is not a number, a row with its values
/// blank followed by one with them given (a gap inside the table), `dX, dY` given again after
/// rows without them, MJDs not increasing, a value out of range; or whatever `row` returns.
///
/// ```
/// use rotaframe::time::read_iers_rows;
/// let c04 = "2020   1   1   0  58849.00    0.076577    0.282336  -0.1771520    0.000086    0.000002\n";
/// let mut mjd = Vec::new();
/// read_iers_rows(c04, |r| { mjd.push(r.mjd); Ok(()) }).unwrap();
/// assert_eq!(mjd, [58849.0]);
/// ```
pub fn read_iers_rows(
    text: &str,
    mut row: impl FnMut(IersRow) -> core::result::Result<(), ParseError>,
) -> core::result::Result<(), ParseError> {
    let first = text.lines().find(|l| !l.trim().is_empty() && !l.trim_start().starts_with('#')).unwrap_or("");
    let c04 = first.split_whitespace().next().is_some_and(|w| w.len() == 4 && w.bytes().all(|b| b.is_ascii_digit()));
    let (mut ended, mut offsets_ended, mut previous) = (false, false, f64::NEG_INFINITY);
    for (number, line) in text.lines().enumerate() {
        if line.trim().is_empty() || line.trim_start().starts_with('#') {
            continue;
        }
        let fail = |reason| ParseError { line: number + 1, reason };
        let (mjd, main, offsets) = if c04 { c04_row(line) } else { finals_row(line) }.map_err(fail)?;
        if mjd < super::FIRST_UTC_MJD as f64 {
            continue; // UTC starts in 1972 here (C04 starts in 1962).
        }
        if mjd <= previous {
            return Err(fail("MJDs must increase"));
        }
        previous = mjd;
        let Some([ut1_minus_utc, xp, yp]) = main else {
            ended = true;
            continue;
        };
        if ended {
            return Err(fail("UT1 − UTC, xp and yp given after rows without them (a gap inside the table)"));
        }
        if offsets.is_some() && offsets_ended {
            return Err(fail("dX, dY given again after rows without them"));
        }
        offsets_ended |= offsets.is_none();
        let checked = IersRow { line: number + 1, mjd, ut1_minus_utc, pole: [xp, yp], offsets };
        checked.check().map_err(|e| fail(table_refusal(&e)))?;
        row(checked)?;
    }
    Ok(())
}

/// A table of Earth orientation parameters at UTC dates (MJD) that owns its rows; see
/// [`EarthOrientationView`] for the interpolation.
///
/// ```
/// use rotaframe::time::{EarthOrientation, JulianDate};
/// let mjd = [60_000.0, 60_001.0, 60_002.0, 60_003.0];
/// let eop = EarthOrientation::new(&mjd, &[0.01, 0.009, 0.008, 0.007], &[1e-6; 4], &[1e-6; 4], None).unwrap();
/// let noon = JulianDate::new(60_001.0 + 2_400_000.5, 0.5).unwrap();
/// assert!((eop.at(noon).unwrap().ut1_minus_utc - 0.0085).abs() < 1e-15);
/// ```
#[cfg(feature = "alloc")]
#[derive(Debug, Clone, PartialEq)]
pub struct EarthOrientation {
    mjd: Vec<f64>,
    ut1_minus_utc: Vec<f64>,
    xp: Vec<f64>,
    yp: Vec<f64>,
    dx: Vec<f64>,
    dy: Vec<f64>,
    leaps: LeapSeconds,
}

#[cfg(feature = "alloc")]
impl EarthOrientation {
    /// A table from arrays, checked as [`EarthOrientationView::new`] checks them, with the
    /// built-in leap seconds; `offsets` gives `(dx, dy)` for the first rows.
    ///
    /// # Errors
    /// As [`EarthOrientationView::new`].
    pub fn new(mjd: &[f64], ut1_minus_utc: &[f64], xp: &[f64], yp: &[f64], offsets: Option<(&[f64], &[f64])>) -> Result<Self> {
        let (dx, dy) = offsets.unwrap_or((&[], &[]));
        EarthOrientationView::new(EarthOrientationRows { mjd, ut1_minus_utc, xp, yp, dx, dy }, &LeapSeconds::BUILT_IN)?;
        Ok(EarthOrientation {
            mjd: mjd.to_vec(),
            ut1_minus_utc: ut1_minus_utc.to_vec(),
            xp: xp.to_vec(),
            yp: yp.to_vec(),
            dx: dx.to_vec(),
            dy: dy.to_vec(),
            leaps: LeapSeconds::BUILT_IN,
        })
    }

    /// The same table using `leaps` for the steps of `UT1 − UTC`.
    #[must_use]
    pub fn with_leap_seconds(mut self, leaps: LeapSeconds) -> Self {
        self.leaps = leaps;
        self
    }

    /// Reads an IERS file's text ([`read_iers_rows`]).
    ///
    /// # Errors
    /// As [`read_iers_rows`]; [`ParseError`] at line 0 for a table that
    /// [`EarthOrientationView::new`] refuses (fewer than four rows, values out of range).
    pub fn from_iers_text(text: &str) -> core::result::Result<Self, ParseError> {
        let mut t = EarthOrientation {
            mjd: Vec::new(),
            ut1_minus_utc: Vec::new(),
            xp: Vec::new(),
            yp: Vec::new(),
            dx: Vec::new(),
            dy: Vec::new(),
            leaps: LeapSeconds::BUILT_IN,
        };
        read_iers_rows(text, |r| {
            t.mjd.push(r.mjd);
            t.ut1_minus_utc.push(r.ut1_minus_utc);
            t.xp.push(r.pole[0]);
            t.yp.push(r.pole[1]);
            if let Some([a, b]) = r.offsets {
                t.dx.push(a);
                t.dy.push(b);
            }
            Ok(())
        })?;
        EarthOrientationView::new(t.rows(), &LeapSeconds::BUILT_IN)
            .map_err(|e| ParseError { line: 0, reason: table_refusal(&e) })?;
        Ok(t)
    }

    /// The interpolating view of the table.
    #[must_use]
    pub fn view(&self) -> EarthOrientationView<'_> {
        // Checked when built.
        EarthOrientationView { rows: self.rows(), leaps: &self.leaps }
    }

    /// The tabulated rows.
    #[must_use]
    pub fn rows(&self) -> EarthOrientationRows<'_> {
        EarthOrientationRows {
            mjd: &self.mjd,
            ut1_minus_utc: &self.ut1_minus_utc,
            xp: &self.xp,
            yp: &self.yp,
            dx: &self.dx,
            dy: &self.dy,
        }
    }

    /// The first and last MJD (UTC) of the table.
    #[must_use]
    pub fn span(&self) -> (f64, f64) {
        self.view().span()
    }

    /// The last MJD at which `dX, dY` are given, if any are.
    #[must_use]
    pub fn offsets_until(&self) -> Option<f64> {
        self.view().offsets_until()
    }

    /// The leap-second table used for the steps of `UT1 − UTC`.
    #[must_use]
    pub fn leap_seconds(&self) -> &LeapSeconds {
        &self.leaps
    }

    /// The Earth orientation at the UTC date `utc` ([`EarthOrientationView::at`]).
    ///
    /// # Errors
    /// As [`EarthOrientationView::at`].
    pub fn at(&self, utc: JulianDate) -> Result<EarthOrientationSample> {
        self.view().at(utc)
    }
}

#[cfg(feature = "alloc")]
impl Ut1Source for EarthOrientation {
    fn ut1_minus_utc(&self, utc: JulianDate) -> Result<f64> {
        Ok(self.at(utc)?.ut1_minus_utc)
    }
}

/// Why a table read from a file was refused, for a [`ParseError`].
fn table_refusal(error: &Error) -> &'static str {
    match error.quantity() {
        "ut1_minus_utc" => "a UT1 − UTC beyond 1 s",
        "xp" | "yp" => "a pole coordinate beyond 10 arcsec",
        "dx" | "dy" => "a celestial pole offset beyond 10 arcsec",
        _ => "fewer than four usable rows",
    }
}

/// One row as read from a file: MJD, UT1 − UTC, xp, yp (given or not), dX, dY (given or not).
type Row = (f64, Option<[f64; 3]>, Option<[f64; 2]>);

/// The first of the four rows used at `t`: the two tabulated dates either side of it, moved
/// inside the table at its ends.
fn window_start(mjd: &[f64], t: f64) -> usize {
    let after = mjd.partition_point(|&m| m <= t);
    after.saturating_sub(2).min(mjd.len() - 4)
}

/// The 4-point Lagrange weights of `nodes` at `day + fraction` (the differences taken from the
/// whole day first, so that the fraction keeps its precision), and the weights of the first and
/// second derivatives (per day): `[ℓ_j, ℓ_j′, ℓ_j″]`. The value weights are exactly one and
/// zero at a node.
fn lagrange_weights(nodes: &[f64], day: f64, fraction: f64) -> [[f64; 4]; 3] {
    let d: [f64; 4] = core::array::from_fn(|m| (day - nodes[m]) + fraction);
    let mut w = [[0.0; 4]; 3];
    for j in 0..4 {
        let others: [usize; 3] = core::array::from_fn(|k| if k < j { k } else { k + 1 });
        let denominator: f64 = others.iter().map(|&m| nodes[j] - nodes[m]).product();
        let [a, b, c] = others.map(|m| d[m]);
        // ℓ = abc/den (each factor divided in turn keeps a node's weight exactly 1 or 0).
        w[0][j] = others.iter().fold(1.0, |acc, &m| acc * (d[m] / (nodes[j] - nodes[m])));
        w[1][j] = (a * b + a * c + b * c) / denominator;
        w[2][j] = 2.0 * (a + b + c) / denominator;
    }
    w
}

/// Splits a fixed-column field of `line` (1-based inclusive bytes) into a number, `None` for
/// blank.
fn field(line: &str, first: usize, last: usize) -> core::result::Result<Option<f64>, &'static str> {
    let bytes = line.as_bytes();
    if bytes.len() < first {
        return Ok(None);
    }
    let text = line.get(first - 1..last.min(bytes.len())).ok_or("a line that is not plain ASCII")?.trim();
    if text.is_empty() {
        return Ok(None);
    }
    text.parse::<f64>().ok().filter(|v| v.is_finite()).map(Some).ok_or("a field that is not a number")
}

/// A finals2000A row (Bulletin A columns).
fn finals_row(line: &str) -> core::result::Result<Row, &'static str> {
    let mjd = field(line, 8, 15)?.ok_or("a row without its MJD (bytes 8–15)")?;
    let main = match (field(line, 19, 27)?, field(line, 38, 46)?, field(line, 59, 68)?) {
        (Some(x), Some(y), Some(dut1)) => Some([dut1, x * ARCSEC, y * ARCSEC]),
        _ => None,
    };
    let mas = ARCSEC / 1000.0;
    let offsets = match (field(line, 98, 106)?, field(line, 117, 125)?) {
        (Some(dx), Some(dy)) => Some([dx * mas, dy * mas]),
        _ => None,
    };
    Ok((mjd, main, offsets))
}

/// An EOP C04 row.
fn c04_row(line: &str) -> core::result::Result<Row, &'static str> {
    let mut values = [0.0; 10];
    let mut fields = line.split_whitespace();
    for v in &mut values {
        *v = fields
            .next()
            .and_then(|f| f.parse::<f64>().ok())
            .filter(|v| v.is_finite())
            .ok_or("a C04 row needs ten numbers: year month day hour MJD xp yp UT1−UTC dX dY")?;
    }
    Ok((values[4], Some([values[7], values[5] * ARCSEC, values[6] * ARCSEC]), Some([values[8] * ARCSEC, values[9] * ARCSEC])))
}
