//! Time scales, calendar dates, GPS weeks and Earth orientation tables (`rotaframe::time`):
//! definitions of the trade (MJD, the GPS epoch and week rollovers, the leap seconds of IERS
//! Bulletin C), round trips, and the interpolation's properties. The comparison with an IAU-standards reference library and the IERS files
//! themselves is in `tests/python/test_time.py`.

use proptest::prelude::*;
use rotaframe::time::{
    CalendarTime, EarthOrientation, JulianDate, LeapSeconds, TimeScale, Ut1Source, calendar_date, convert_time, day_number,
    from_gps_week_seconds, gps_week_seconds, julian_date,
};
use rotaframe::{Error, Result};

const LEAPS: LeapSeconds = LeapSeconds::BUILT_IN;

/// Seconds between two dates, from the parts' differences (no loss to the size of a JD).
fn seconds_between(a: JulianDate, b: JulianDate) -> f64 {
    ((a.jd - b.jd) + (a.fraction - b.fraction)) * 86_400.0
}

fn convert(date: JulianDate, from: TimeScale, to: TimeScale) -> JulianDate {
    convert_time(date, from, to, &LEAPS, None).unwrap()
}

#[test]
fn day_numbers_match_the_definitions_of_mjd_and_the_gps_epoch() {
    // MJD 0 is 1858-11-17 0h and JD 2451544.5 is 2000-01-01 0h (common practice); the GPS
    // epoch 1980-01-06 0h is JD 2444244.5 (IS-GPS-200).
    assert_eq!(day_number(1858, 11, 17).unwrap(), 0);
    assert_eq!(day_number(2000, 1, 1).unwrap(), 51_544);
    assert_eq!(day_number(1980, 1, 6).unwrap(), 44_244);
    // 1900 is not a leap year, 2000 is (Gregorian rule).
    assert!(day_number(1900, 2, 29).is_err());
    assert_eq!(day_number(2000, 3, 1).unwrap() - day_number(2000, 2, 28).unwrap(), 2);
}

#[test]
fn impossible_dates_and_times_are_refused_by_name() {
    let bad = |r: Result<JulianDate>| r.unwrap_err().quantity();
    let jd = |y, mo, d, h, mi, s, scale| julian_date(&CalendarTime::new(y, mo, d, h, mi, s), scale, &LEAPS);
    assert_eq!(bad(jd(2023, 2, 29, 0, 0, 0.0, TimeScale::Tt)), "day");
    assert_eq!(bad(jd(2023, 13, 1, 0, 0, 0.0, TimeScale::Tt)), "month");
    assert_eq!(bad(jd(2023, 1, 1, 24, 0, 0.0, TimeScale::Tt)), "hour");
    assert_eq!(bad(jd(2023, 1, 1, 0, 60, 0.0, TimeScale::Tt)), "minute");
    // 23:59:60 exists only at the end of a UTC day with a leap second.
    assert_eq!(bad(jd(2015, 12, 31, 23, 59, 60.0, TimeScale::Utc)), "second");
    assert!(jd(2015, 6, 30, 23, 59, 60.0, TimeScale::Utc).is_ok());
    assert_eq!(bad(jd(2015, 6, 30, 23, 59, 60.0, TimeScale::Tt)), "second");
    assert_eq!(bad(jd(2015, 1, 1, 0, 0, f64::NAN, TimeScale::Tt)), "second");
    // UTC before 1972 is refused, naming the date and giving the first accepted one.
    match jd(1971, 12, 31, 12, 0, 0.0, TimeScale::Utc).unwrap_err() {
        Error::OutOfRange { quantity: "jd", min, .. } => assert_eq!(min, 2_441_317.5),
        e => panic!("{e}"),
    }
    let old = JulianDate::new(2_441_000.5, 0.0).unwrap();
    assert_eq!(convert_time(old, TimeScale::Utc, TimeScale::Tai, &LEAPS, None).unwrap_err().quantity(), "jd");
    assert_eq!(convert_time(old, TimeScale::Tt, TimeScale::Utc, &LEAPS, None).unwrap_err().quantity(), "jd");
    assert_eq!(convert_time(old, TimeScale::Tt, TimeScale::Ut1, &LEAPS, None).unwrap_err().quantity(), "eop");
}

#[test]
fn gps_time_leads_utc_by_18_s_since_2017_and_tt_leads_tai_by_32_184_s() {
    // GPS − UTC = 18 s from 2017-01-01 (IS-GPS-200 with IERS Bulletin C 52: TAI − UTC = 37 s,
    // TAI − GPS = 19 s); 17 s in 2016. TT − TAI = 32.184 s (IERS Conventions 2010).
    // Tolerance: the fraction's rounding, about 1e-11 s.
    let new_year = julian_date(&CalendarTime::new(2017, 1, 1, 0, 0, 0.0), TimeScale::Utc, &LEAPS).unwrap();
    assert!((seconds_between(convert(new_year, TimeScale::Utc, TimeScale::Gps), new_year) - 18.0).abs() < 1e-9);
    // (The day before the last day of 2016: that day has 86,401 s, so its quasi Julian date is
    // not a plain count of seconds.)
    let eve = julian_date(&CalendarTime::new(2016, 12, 30, 12, 0, 0.0), TimeScale::Utc, &LEAPS).unwrap();
    assert!((seconds_between(convert(eve, TimeScale::Utc, TimeScale::Gps), eve) - 17.0).abs() < 1e-9);
    let tai = JulianDate::new(2_460_000.5, 0.25).unwrap();
    assert!((seconds_between(convert(tai, TimeScale::Tai, TimeScale::Tt), tai) - 32.184).abs() < 1e-9);
}

#[test]
fn every_leap_second_is_a_61_second_minute_that_tai_counts_in_order() {
    // For each step of the table: the UTC seconds 23:59:59.5, 23:59:60.5 and 00:00:00.5 around
    // it are 1 SI second apart in TAI, and each comes back from TAI as the same calendar time.
    // Tolerance: 1 ns, the bound the reference comparison holds.
    for (mjd, _) in LEAPS.steps().skip(1) {
        let (y, m, d) = {
            let c = calendar_date(JulianDate::new(mjd as f64 - 1.0 + 2_400_000.5, 0.0).unwrap(), TimeScale::Tt, &LEAPS).unwrap();
            (c.year, c.month, c.day)
        };
        let before = julian_date(&CalendarTime::new(y, m, d, 23, 59, 59.5), TimeScale::Utc, &LEAPS).unwrap();
        let leap = julian_date(&CalendarTime::new(y, m, d, 23, 59, 60.5), TimeScale::Utc, &LEAPS).unwrap();
        let next = JulianDate::new(mjd as f64 + 2_400_000.5, 0.5 / 86_400.0).unwrap(); // 0:00:00.5 UTC
        let taic = |d| convert(d, TimeScale::Utc, TimeScale::Tai);
        assert!((seconds_between(taic(leap), taic(before)) - 1.0).abs() < 1e-9, "step at MJD {mjd}");
        assert!((seconds_between(taic(next), taic(leap)) - 1.0).abs() < 1e-9, "step at MJD {mjd}");
        let back = calendar_date(convert(taic(leap), TimeScale::Tai, TimeScale::Utc), TimeScale::Utc, &LEAPS).unwrap();
        assert_eq!((back.year, back.month, back.day, back.hour, back.minute), (y, m, d, 23, 59));
        assert!((back.second - 60.5).abs() < 1e-9, "{back:?}");
    }
}

#[test]
fn gps_weeks_roll_over_at_1024_and_2048_and_are_never_reduced() {
    // The first two rollovers of the 10-bit broadcast week: 1999-08-22 and 2019-04-07 0h GPS
    // (common practice; IS-GPS-200 defines the count from 1980-01-06).
    for ((y, m, d), week) in [((1999, 8, 22), 1024), ((2019, 4, 7), 2048), ((1980, 1, 6), 0)] {
        let date = julian_date(&CalendarTime::new(y, m, d, 0, 0, 0.0), TimeScale::Gps, &LEAPS).unwrap();
        let t = gps_week_seconds(date).unwrap();
        assert_eq!((t.week, t.seconds), (week, 0.0));
        assert_eq!(from_gps_week_seconds(week, 0.0).unwrap(), date);
    }
    assert_eq!(from_gps_week_seconds(-1, 0.0).unwrap_err().quantity(), "week");
    assert_eq!(from_gps_week_seconds(10, 604_800.0).unwrap_err().quantity(), "seconds");
    assert_eq!(gps_week_seconds(JulianDate::new(2_444_244.0, 0.0).unwrap()).unwrap_err().quantity(), "jd");
}

/// A smooth invented `UT1 − UTC` for round trips: the source needs only to be smooth.
struct Drift;
impl Ut1Source for Drift {
    fn ut1_minus_utc(&self, utc: JulianDate) -> Result<f64> {
        let (mjd, fraction) = utc.mjd_split()?;
        let days = (mjd - 50_000) as f64 + fraction;
        Ok(0.3 * (days / 400.0).sin() - 0.2)
    }
}

proptest! {
    // Dates over 1972 to 2030 (MJD 41317 to 62502): every scale there and back, within 1 ns
    // (a few roundings of a fraction of about 1e-16 day each, some 1e-11 s).
    #[test]
    fn conversions_there_and_back_return_the_date_within_a_nanosecond(
        day in 41_318i64..62_500, fraction in 0.0..1.0f64,
        a in 0usize..5, b in 0usize..5,
    ) {
        let scales = [TimeScale::Utc, TimeScale::Tai, TimeScale::Tt, TimeScale::Gps, TimeScale::Ut1];
        let date = JulianDate::new(day as f64 + 2_400_000.5, fraction).unwrap();
        let there = convert_time(date, scales[a], scales[b], &LEAPS, Some(&Drift)).unwrap();
        let back = convert_time(there, scales[b], scales[a], &LEAPS, Some(&Drift)).unwrap();
        prop_assert!(seconds_between(back, date).abs() < 1e-9, "{:?} → {:?} → {:?}", date, there, back);
    }

    // Calendar dates over every accepted year, there and back (TT: days of 86,400 s), within
    // 1e-10 s (the fraction's rounding times a day).
    #[test]
    fn calendar_dates_survive_a_round_trip(
        year in -4712i32..=9999, month in 1i32..=12, day in 1i32..=28,
        hour in 0i32..24, minute in 0i32..60, second in 0.0..60.0f64,
    ) {
        let d = julian_date(&CalendarTime::new(year, month, day, hour, minute, second), TimeScale::Tt, &LEAPS).unwrap();
        let c = calendar_date(d, TimeScale::Tt, &LEAPS).unwrap();
        let back = julian_date(&c, TimeScale::Tt, &LEAPS).unwrap();
        prop_assert_eq!((c.year, c.month, c.day), (year, month, day));
        prop_assert!(seconds_between(back, d).abs() < 1e-10);
    }
}

/// Daily rows of invented Earth orientation data, with a leap second at the end of MJD 57753
/// (2016-12-31, IERS Bulletin C 52): UT1 − TAI falls smoothly, so UT1 − UTC jumps by +1 s.
fn table() -> EarthOrientation {
    let mjd: Vec<f64> = (57_740..57_770).map(f64::from).collect();
    let ut1_minus_tai = |t: f64| -36.4 - 0.0015 * (t - 57_740.0) + 1e-6 * (t - 57_740.0).powi(3);
    let dut1: Vec<f64> = mjd.iter().map(|&t| ut1_minus_tai(t) + if t < 57_754.0 { 36.0 } else { 37.0 }).collect();
    let x: Vec<f64> = mjd.iter().map(|&t| 1e-6 * (1.0 + 0.01 * (t - 57_740.0))).collect();
    let offsets: Vec<f64> = x[..20].iter().map(|v| v * 0.001).collect();
    EarthOrientation::new(&mjd, &dut1, &x, &x, Some((&offsets, &offsets))).unwrap()
}

#[test]
fn interpolation_reproduces_the_rows_and_cubics_and_has_no_jump_at_a_leap_second() {
    let eop = table();
    let rows = eop.rows();
    let (mjd, dut1, xp) = (rows.mjd, rows.ut1_minus_utc, rows.xp);
    // At tabulated dates: the tabulated values, exactly (IERS Conventions 2010 §5.5: the
    // interpolation passes through the rows).
    for i in 0..mjd.len() {
        let s = eop.at(JulianDate::new(mjd[i] + 2_400_000.5, 0.0).unwrap()).unwrap();
        assert_eq!((s.ut1_minus_utc, s.xp), (dut1[i], xp[i]));
    }
    // Between rows, the cubic UT1 − TAI is reproduced (4-point Lagrange is exact for cubics):
    // 1e-12 s allows for the rounding of the weights.
    let at = |t: f64| eop.at(JulianDate::new(2_400_000.5 + t.floor(), t - t.floor()).unwrap()).unwrap();
    for t in [57_745.3f64, 57_753.9, 57_754.2, 57_760.75] {
        let expected = -36.4 - 0.0015 * (t - 57_740.0) + 1e-6 * (t - 57_740.0).powi(3) + if t < 57_754.0 { 36.0 } else { 37.0 };
        assert!((at(t).ut1_minus_utc - expected).abs() < 1e-12, "{t}: {}", at(t).ut1_minus_utc - expected);
    }
    // Across the leap second UT1 advances with TAI: 1.2 SI seconds pass from 23:59:59.9 to
    // 0:00:00.1, and UT1 advances 1.2 s less the day's drift of UT1 − TAI (1.5 ms a day).
    let before = julian_date(&CalendarTime::new(2016, 12, 31, 23, 59, 59.9), TimeScale::Utc, &LEAPS).unwrap();
    let after = julian_date(&CalendarTime::new(2017, 1, 1, 0, 0, 0.1), TimeScale::Utc, &LEAPS).unwrap();
    let ut1 = |d| convert_time(d, TimeScale::Utc, TimeScale::Ut1, &LEAPS, Some(&eop)).unwrap();
    assert!((seconds_between(ut1(after), ut1(before)) - 1.2).abs() < 1e-6);
    // dX, dY are given for the first 20 rows only.
    assert!(at(57_758.5).dx.is_some());
    assert_eq!(at(57_760.5).dx, None);
    // Outside the table: refused, naming the date and giving the span.
    match eop.at(JulianDate::new(2_457_739.0, 0.0).unwrap()).unwrap_err() {
        Error::OutOfRange { quantity: "jd", min, max, .. } => assert_eq!((min, max), (2_457_740.5, 2_457_769.5)),
        e => panic!("{e}"),
    }
}

#[test]
fn c04_text_is_read_up_to_its_blank_end_and_bad_rows_are_refused_by_line() {
    let row = |mjd: i32, dut1: f64| {
        format!("2016  12  31   0  {mjd}.00    0.100000    0.300000   {dut1:.7}    0.000100   -0.000100    0 0 0\n")
    };
    let mut text = String::from("# a comment line\n");
    for (k, mjd) in (57_750..57_756).enumerate() {
        text += &row(mjd, 0.4 - 0.001 * k as f64);
    }
    let eop = EarthOrientation::from_iers_text(&text).unwrap();
    assert_eq!(eop.span(), (57_750.0, 57_755.0));
    let arcsec = std::f64::consts::PI / 648_000.0;
    let s = eop.at(JulianDate::new(2_457_752.5, 0.0).unwrap()).unwrap();
    assert_eq!((s.ut1_minus_utc, s.xp, s.dx), (0.398, 0.1 * arcsec, Some(0.0001 * arcsec)));
    let broken = text.replace("57753.00", "57751.00");
    assert_eq!(EarthOrientation::from_iers_text(&broken).unwrap_err().line, 5);
}
