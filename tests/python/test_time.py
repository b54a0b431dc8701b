"""Time scales, GPS weeks, leap seconds and IERS Earth orientation tables from Python, against
outside references: pyerfa (the IAU SOFA-derived reference library: ``dtf2d``, ``utctai``,
``taiutc``, ``taitt``, ``utcut1``, ``ut1utc``) for the time scales within 1 ns, IS-GPS-200 for
GPS time (TAI − GPS = 19 s, the epoch 1980-01-06, the full week count), and the IERS files
themselves as the astropy-iers-data package ships them (``Leap_Second.dat``,
``finals2000A.all``, ``eopc04.1962-now``), read here independently by their published column
layouts, with a 4-point Lagrange interpolation written in this file (IERS Conventions 2010
§5.5)."""

import pickle
from pathlib import Path

import astropy_iers_data
import erfa
import numpy as np
import pytest
import rotaframe as rf

DATA = Path(astropy_iers_data.__file__).parent / "data"
# erfa flags years some years past its own leap-second table's release as "dubious" (a
# leap second might have been announced since); it still uses its last value, as rotaframe's
# built-in table does, so dates up to 2030 compare.
pytestmark = pytest.mark.filterwarnings("ignore:.*dubious year:erfa.ErfaWarning")
ARCSEC = np.pi / 648000.0
NS = 1e-9 / 86400.0  # one nanosecond in days


def seconds_apart(a, b):
    """Seconds between two-part dates, from the parts' differences."""
    return ((a[0] - b[0]) + (a[1] - b[1])) * 86400.0


def random_utc(n, seed, first=1972, last=2030):
    """Random UTC dates (as erfa builds them from calendar fields) over the years given."""
    rng = np.random.default_rng(seed)
    years = rng.integers(first, last + 1, n)
    months = rng.integers(1, 13, n)
    days = rng.integers(1, 29, n)
    seconds = rng.uniform(0, 86400, n)
    hours, rest = np.divmod(seconds, 3600.0)
    minutes, secs = np.divmod(rest, 60.0)
    return years, months, days, hours.astype(int), minutes.astype(int), secs


def test_julian_dates_match_the_reference_library_including_leap_second_days():
    y, mo, d, h, mi, s = random_utc(4000, 1)
    ours = rf.julian_date(y, mo, d, h, mi, s)
    ref = erfa.dtf2d("UTC", y, mo, d, h, mi, s)
    assert np.max(np.abs(seconds_apart(ours, ref))) < 1e-9
    # The second half of the leap second that ended 2016 (IERS Bulletin C 52): 86,400.5 of
    # the day's 86,401 seconds, as erfa's quasi Julian date has it.
    ours = rf.julian_date(2016, 12, 31, 23, 59, 60.5)
    ref = erfa.dtf2d("UTC", 2016, 12, 31, 23, 59, 60.5)
    assert abs(seconds_apart(ours, ref)) < 1e-9
    assert ours == (2457753.5, 86400.5 / 86401.0)
    with pytest.raises(rf.OutOfRangeError, match="`second`"):
        rf.julian_date(2016, 12, 30, 23, 59, 60.5)
    with pytest.raises(rf.OutOfRangeError, match="`day`"):
        rf.julian_date(2023, 2, 29)
    with pytest.raises(rf.OutOfRangeError, match="`jd`"):
        rf.julian_date(1971, 6, 1)  # UTC before 1972 is refused


def test_calendar_dates_come_back_from_julian_dates_as_the_reference_prints_them():
    y, mo, d, h, mi, s = random_utc(500, 2)
    jd = rf.julian_date(y, mo, d, h, mi, s)
    back = rf.calendar_date(*jd)
    for a, b in zip(back[:5], (y, mo, d, h, mi)):
        np.testing.assert_array_equal(a, b)
    np.testing.assert_allclose(back[5], s, atol=1e-9)
    # Inside a leap second: 23:59:60.25.
    assert rf.calendar_date(*rf.julian_date(2015, 6, 30, 23, 59, 60.25))[3:5] == (23, 59)
    assert abs(rf.calendar_date(*rf.julian_date(2015, 6, 30, 23, 59, 60.25))[5] - 60.25) < 1e-9


def test_utc_tai_tt_gps_conversions_match_the_reference_within_a_nanosecond():
    y, mo, d, h, mi, s = random_utc(5000, 3)
    utc = erfa.dtf2d("UTC", y, mo, d, h, mi, s)
    tai = erfa.utctai(*utc)
    tt = erfa.taitt(*tai)
    assert np.max(np.abs(seconds_apart(rf.convert_time(*utc, "utc", "tai"), tai))) < 1e-9
    assert np.max(np.abs(seconds_apart(rf.convert_time(*utc, "utc", "tt"), tt))) < 1e-9
    assert np.max(np.abs(seconds_apart(rf.convert_time(*tt, "tt", "utc"), utc))) < 1e-9
    assert np.max(np.abs(seconds_apart(rf.convert_time(*tai, "tai", "utc"), utc))) < 1e-9
    # GPS = TAI − 19 s (IS-GPS-200).
    gps = rf.convert_time(*utc, "utc", "gps")
    assert np.max(np.abs(seconds_apart(gps, tai) + 19.0)) < 1e-9
    assert np.max(np.abs(seconds_apart(rf.convert_time(*gps, "gps", "utc"), utc))) < 1e-9


def test_every_leap_second_boundary_matches_the_reference():
    # Around each step of the IERS table: the last second before the leap, inside it, and the
    # first second after, each through UTC → TAI → UTC, against erfa within 1 ns.
    mjd, _ = rf.LeapSeconds.built_in().steps
    for step in mjd[1:]:
        y, mo, d, _ = erfa.jd2cal(2400000.5, float(step) - 1.0)
        for (yy, mm, dd, hh, mi, ss) in [(y, mo, d, 23, 59, 59.25), (y, mo, d, 23, 59, 60.5), (y, mo, d, 23, 59, 60.999)]:
            utc = erfa.dtf2d("UTC", yy, mm, dd, hh, mi, ss)
            assert abs(seconds_apart(rf.julian_date(yy, mm, dd, hh, mi, ss), utc)) < 1e-9
            tai = erfa.utctai(*utc)
            assert abs(seconds_apart(rf.convert_time(*utc, "utc", "tai"), tai)) < 1e-9
            assert abs(seconds_apart(rf.convert_time(*tai, "tai", "utc"), utc)) < 1e-9
        after = erfa.dtf2d("UTC", *erfa.jd2cal(2400000.5, float(step))[:3], 0, 0, 0.5)
        assert abs(seconds_apart(rf.convert_time(*after, "utc", "tai"), erfa.utctai(*after))) < 1e-9


def test_gps_time_is_18_s_ahead_of_utc_since_2017_and_weeks_count_from_1980():
    # IS-GPS-200 (TAI − GPS = 19 s) with IERS Bulletin C 52 (TAI − UTC = 37 s from 2017-01-01).
    utc = rf.julian_date(2024, 7, 1, 12, 0, 0.0)
    assert abs(seconds_apart(rf.convert_time(*utc, "utc", "gps"), utc) - 18.0) < 1e-9
    week, sow = rf.gps_week_seconds(*rf.julian_date(1980, 1, 6, scale="gps"))
    assert (week, sow) == (0, 0.0)
    # The full count, not modulo 1024: 2019-04-07 0h GPS is week 2048 (the second rollover).
    assert rf.gps_week_seconds(*rf.julian_date(2019, 4, 7, scale="gps")) == (2048, 0.0)
    # From UTC directly: the 18 s show in the second of the week.
    week, sow = rf.gps_week_seconds(*rf.julian_date(2019, 4, 7), scale="utc")
    assert week == 2048 and abs(sow - 18.0) < 1e-9
    jd = rf.from_gps_week_seconds(2048, 18.0, scale="utc")
    assert abs(seconds_apart(jd, rf.julian_date(2019, 4, 7))) < 1e-9
    weeks, seconds = rf.gps_week_seconds(np.array([2458849.5, 2458850.5]), 0.0)
    assert weeks.dtype == np.int64 and list(weeks) == [2086, 2086]
    with pytest.raises(rf.OutOfRangeError, match="`seconds`"):
        rf.from_gps_week_seconds(2000, 604800.0)


def leap_second_file():
    """The IERS file's steps, read here: MJD and TAI − UTC of each non-comment line."""
    rows = [line.split() for line in (DATA / "Leap_Second.dat").read_text().splitlines() if line.strip() and not line.startswith("#")]
    return np.array([int(float(r[0])) for r in rows]), np.array([float(r[4]) for r in rows])


def test_the_built_in_leap_seconds_are_those_of_the_iers_file():
    mjd, value = leap_second_file()
    table = rf.LeapSeconds.from_iers(DATA / "Leap_Second.dat")
    for t in (rf.LeapSeconds.built_in(), table):
        np.testing.assert_array_equal(t.steps[0], mjd)
        np.testing.assert_array_equal(t.steps[1], value)
    assert table.expires is not None and table.expires > mjd[-1]
    assert pickle.loads(pickle.dumps(table)).steps[0].tolist() == mjd.tolist()
    # erfa's own table says the same at each step.
    for m, v in zip(mjd, value):
        y, mo, d, _ = erfa.jd2cal(2400000.5, float(m))
        assert erfa.dat(y, mo, d, 0.0) == v


def finals_columns():
    """finals2000A.all by its published byte layout (Bulletin A): MJD, xp, yp, UT1 − UTC, dX,
    dY, with NaN where blank."""

    def number(line, first, last):
        text = line[first - 1 : last].strip()
        return float(text) if text else np.nan

    rows = [
        [number(line, *span) for span in [(8, 15), (19, 27), (38, 46), (59, 68), (98, 106), (117, 125)]]
        for line in (DATA / "finals2000A.all").read_text().splitlines()
        if line.strip()
    ]
    return np.array(rows).T


def lagrange4(nodes, values, t):
    """4-point Lagrange interpolation on the two nodes either side of t (IERS Conventions 2010
    §5.5), written independently of rotaframe."""
    i = np.searchsorted(nodes, t, side="right")
    start = int(min(max(i - 2, 0), len(nodes) - 4))
    x, v = nodes[start : start + 4], values[start : start + 4]
    total = 0.0
    for j in range(4):
        weight = 1.0
        for m in range(4):
            if m != j:
                weight *= (t - x[m]) / (x[j] - x[m])
        total += weight * v[j]
    return total


def test_finals2000a_is_read_by_its_columns_and_reproduced_exactly_at_its_rows():
    mjd, xp, yp, dut1, dx, dy = finals_columns()
    eop = rf.EarthOrientation.from_iers(DATA / "finals2000A.all")
    given = ~np.isnan(xp) & ~np.isnan(yp) & ~np.isnan(dut1)
    last = np.flatnonzero(given)[-1]
    assert eop.mjd_span == (mjd[0], mjd[last])
    offsets = np.flatnonzero(~np.isnan(dx))
    assert eop.offsets_until == mjd[offsets[-1]]
    rows = eop.rows
    np.testing.assert_array_equal(rows[0], mjd[: last + 1])
    np.testing.assert_array_equal(rows[1], dut1[: last + 1])
    np.testing.assert_array_equal(rows[2], xp[: last + 1] * ARCSEC)
    np.testing.assert_array_equal(rows[4], dx[: offsets[-1] + 1] * (ARCSEC / 1000.0))
    # At the tabulated dates the tabulated values, exactly.
    sample = np.arange(0, last + 1, 97)
    at = eop.at(mjd[sample] + 2400000.5)
    np.testing.assert_array_equal(at.ut1_minus_utc, dut1[sample])
    np.testing.assert_array_equal(at.xp, xp[sample] * ARCSEC)
    np.testing.assert_array_equal(at.yp, yp[sample] * ARCSEC)
    # Past the offsets' end: dX, dY are zero and flagged as not given.
    beyond = eop.at(mjd[last] + 2400000.5)
    assert (beyond.dx, beyond.offsets_given) == (0.0, offsets[-1] == last)
    with pytest.raises(rf.OutOfRangeError, match="`jd_utc`"):
        eop.at(mjd[last] + 2400001.5)


def test_interpolation_agrees_with_lagrange_written_here_and_ut1_with_the_reference():
    mjd, xp, yp, dut1, dx, dy = finals_columns()
    eop = rf.EarthOrientation.from_iers(DATA / "finals2000A.all")
    n = len(eop.rows[0])
    rng = np.random.default_rng(11)
    t = rng.uniform(mjd[0] + 3, mjd[n - 1] - 3, 3000)
    at = eop.at(np.floor(t) + 2400000.5, t - np.floor(t))
    leaps = rf.LeapSeconds.built_in()
    # UT1 − TAI is what is smooth: interpolate it, and add TAI − UTC of the date's day.
    ut1_tai = dut1[:n] - np.array([leaps.tai_minus_utc(int(m)) for m in mjd[:n]])
    for k in range(len(t)):
        expected = lagrange4(mjd[:n], ut1_tai, t[k]) + leaps.tai_minus_utc(int(np.floor(t[k])))
        # 1e-12 s: the two evaluations round differently (terms of order 1 s in UT1 − TAI).
        assert abs(at.ut1_minus_utc[k] - expected) < 1e-12, t[k]
        assert abs(at.xp[k] - lagrange4(mjd[:n], xp[:n] * ARCSEC, t[k])) < 1e-20
    # UT1 from UTC through the table, against erfa's utcut1 given the same UT1 − UTC: 1 ns.
    utc = (np.floor(t) + 2400000.5, t - np.floor(t))
    ut1 = rf.convert_time(*utc, "utc", "ut1", eop=eop)
    ref = erfa.utcut1(*utc, at.ut1_minus_utc)
    assert np.max(np.abs(seconds_apart(ut1, ref))) < 1e-9
    back = rf.convert_time(*ut1, "ut1", "utc", eop=eop)
    assert np.max(np.abs(seconds_apart(back, utc))) < 1e-9
    with pytest.raises(rf.RotaframeError, match="`eop`"):
        rf.convert_time(*utc, "utc", "ut1")


def test_eop_c04_is_read_and_reproduced_exactly_at_its_rows():
    lines = [line.split() for line in (DATA / "eopc04.1962-now").read_text().splitlines() if line.strip() and not line.startswith("#")]
    table = np.array([[float(v) for v in row[:10]] for row in lines])
    keep = table[:, 4] >= 41317  # UTC from 1972 (rotaframe refuses earlier UTC)
    leaps = rf.LeapSeconds.from_iers(DATA / "Leap_Second.dat")
    # A table from 1972 on, given as arrays: the same numbers as the file's rows.
    eop = rf.EarthOrientation(table[keep, 4], table[keep, 7], table[keep, 5] * ARCSEC, table[keep, 6] * ARCSEC,
                              table[keep, 8] * ARCSEC, table[keep, 9] * ARCSEC, leap_seconds=leaps)
    sample = np.arange(0, keep.sum(), 113)
    at = eop.at(table[keep, 4][sample] + 2400000.5)
    np.testing.assert_array_equal(at.ut1_minus_utc, table[keep, 7][sample])
    np.testing.assert_array_equal(at.dy, table[keep, 9][sample] * ARCSEC)
    assert pickle.loads(pickle.dumps(eop)).mjd_span == eop.mjd_span
    # The file read directly: the same table (its rows before 1972 left out).
    read = rf.EarthOrientation.from_iers(DATA / "eopc04.1962-now", leap_seconds=leaps)
    for a, b in zip(read.rows, eop.rows):
        np.testing.assert_array_equal(a, b)
    # Before 1972: refused, naming the date and giving the span.
    with pytest.raises(rf.OutOfRangeError, match="2441317.5"):
        read.at(2441000.5)


def test_ut1_inside_leap_seconds_matches_the_reference_and_runs_on_smoothly():
    # Inside each leap second the table covers (finals2000A starts in 1973): UT1 from rotaframe
    # against erfa's utcut1 given the same UT1 − UTC, within 1 ns; and UT1 advances by the SI
    # seconds elapsed (less the day's drift of UT1 − TAI, a few ms a day: 1e-6 s over 1.5 s).
    eop = rf.EarthOrientation.from_iers(DATA / "finals2000A.all")
    mjd, _ = rf.LeapSeconds.built_in().steps
    for step in mjd[mjd > eop.mjd_span[0] + 2]:
        y, mo, d, _ = erfa.jd2cal(2400000.5, float(step) - 1.0)
        inside = rf.julian_date(y, mo, d, 23, 59, 60.5)
        dut1 = eop.at(*inside).ut1_minus_utc
        ours = rf.convert_time(*inside, "utc", "ut1", eop=eop)
        assert abs(seconds_apart(ours, erfa.utcut1(*inside, dut1))) < 1e-9
        before = rf.convert_time(*rf.julian_date(y, mo, d, 23, 59, 59.75), "utc", "ut1", eop=eop)
        after = rf.convert_time(*rf.julian_date(*erfa.jd2cal(2400000.5, float(step))[:3], 0, 0, 0.25), "utc", "ut1", eop=eop)
        assert abs(seconds_apart(after, before) - 1.5) < 1e-6


@pytest.mark.parametrize("value", [0.0, -0.0, 1.0, 2451545.0, 2460000.5, 1e9, -1e9, 1e300, -1e300, np.nan, np.inf, -np.inf, 5e-324])
def test_time_functions_give_finite_results_or_named_errors(value):
    # The house convention (finite input in range gives finite output; anything else a
    # RotaframeError naming the argument), over edge values in every date argument.
    eop = rf.EarthOrientation.from_iers(DATA / "finals2000A.all")
    calls = [
        lambda: rf.convert_time(value, 0.25, "utc", "tt"),
        lambda: rf.convert_time(2451545.0, value, "tt", "utc"),
        lambda: rf.convert_time(value, 0.0, "ut1", "utc", eop=eop),
        lambda: rf.calendar_date(value, 0.5),
        lambda: rf.gps_week_seconds(value, 0.0),
        lambda: rf.from_gps_week_seconds(2000, value),
        lambda: rf.from_gps_week_seconds(value, 0.0),
        lambda: rf.julian_date(value, 1, 1),
        lambda: eop.at(value, 0.0).ut1_minus_utc,
        lambda: rf.cip_coordinates(value, 0.0),
        lambda: rf.celestial_to_terrestrial(value, 0.0, value, 0.0, 0.0, 0.0),
        lambda: rf.celestial_to_terrestrial(2451545.0, 0.0, 2451545.0, 0.0, value * 1e-9, 0.0),
        lambda: rf.earth_motion_iers(value, 0.0, eop).angular_velocity,
    ]
    for call in calls:
        try:
            result = call()
        except rf.RotaframeError as e:
            assert "`" in str(e), str(e)  # the message names the argument
            continue
        assert np.all(np.isfinite(np.asarray(result, dtype=float)))
