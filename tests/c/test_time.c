/* Time scales and Earth orientation tables from C: GPS − UTC = 18 s since 2017 (IS-GPS-200 with
   IERS Bulletin C 52), the leap second that ended 2016 as a 61-second minute, the GPS week count
   from 1980-01-06 (IS-GPS-200), the IERS leap-second and EOP file layouts read into caller
   storage, and the statuses of bad input (nothing written). The comparison with an IAU-standards
   reference library is in tests/python/test_time.py; the arithmetic is the same core. */
#include "check.h"

static double seconds_apart(rf_julian_date a, rf_julian_date b) {
    return ((a.jd - b.jd) + (a.fraction - b.fraction)) * 86400.0;
}

/* Six invented C04-layout rows (MJD 57750 to 57755, across the leap second at the end of MJD
   57753), with a comment line. */
static const char c04[] =
    "# invented rows in the C04 layout\n"
    "2016  12  27   0  57749.00    0.030000    0.270000  -0.3900000    0.000100   -0.000100\n"
    "2016  12  28   0  57750.00    0.031000    0.271000  -0.3920000    0.000110   -0.000100\n"
    "2016  12  29   0  57751.00    0.032000    0.272000  -0.3940000    0.000120   -0.000100\n"
    "2016  12  30   0  57752.00    0.033000    0.273000  -0.3960000    0.000130   -0.000100\n"
    "2016  12  31   0  57753.00    0.034000    0.274000  -0.3980000    0.000140   -0.000100\n"
    "2017   1   1   0  57754.00    0.035000    0.275000   0.6000000    0.000150   -0.000100\n"
    "2017   1   2   0  57755.00    0.036000    0.276000   0.5980000    0.000160   -0.000100\n";

int main(void) {
    const double arcsec = 3.14159265358979323846 / 648000.0;
    rf_calendar_time when;
    rf_julian_date utc, gps, back, tai;
    rf_leap_seconds leaps;
    memset(&when, 0, sizeof when);
    {
        /* 2017-01-01 0h UTC is 18 s behind GPS time; the fraction's rounding is ~1e-11 s. */
        when.year = 2017, when.month = 1, when.day = 1;
        OK(rf_julian_date_from_calendar(&when, RF_TIME_UTC, NULL, &utc));
        OK(rf_convert_time(&utc, RF_TIME_UTC, RF_TIME_GPS, NULL, NULL, &gps));
        CLOSE(seconds_apart(gps, utc), 18.0, 1e-9, "GPS − UTC in 2017");
        OK(rf_convert_time(&gps, RF_TIME_GPS, RF_TIME_UTC, NULL, NULL, &back));
        CLOSE(seconds_apart(back, utc), 0.0, 1e-9, "GPS → UTC");
        /* 23:59:60.5 on 2016-12-31 is 86400.5/86401 of its day, and 1 s of TAI after 23:59:59.5. */
        when.year = 2016, when.month = 12, when.day = 31, when.hour = 23, when.minute = 59, when.second = 60.5;
        OK(rf_julian_date_from_calendar(&when, RF_TIME_UTC, NULL, &utc));
        CHECK(utc.jd == 2457753.5 && utc.fraction == 86400.5 / 86401.0, "quasi Julian date %.17g %.17g", utc.jd, utc.fraction);
        OK(rf_convert_time(&utc, RF_TIME_UTC, RF_TIME_TAI, NULL, NULL, &tai));
        when.second = 59.5;
        OK(rf_julian_date_from_calendar(&when, RF_TIME_UTC, NULL, &back));
        OK(rf_convert_time(&back, RF_TIME_UTC, RF_TIME_TAI, NULL, NULL, &gps));
        CLOSE(seconds_apart(tai, gps), 1.0, 1e-9, "the leap second lasts one SI second");
        {
            rf_calendar_time c;
            OK(rf_convert_time(&tai, RF_TIME_TAI, RF_TIME_UTC, NULL, NULL, &back));
            OK(rf_calendar_date(&back, RF_TIME_UTC, NULL, &c));
            CHECK(c.hour == 23 && c.minute == 59 && fabs(c.second - 60.5) < 1e-9, "back to 23:59:%.12f", c.second);
        }
    }
    {
        /* GPS weeks: 2019-04-07 0h GPS is week 2048, the full count (IS-GPS-200). */
        int64_t week = -1;
        double seconds = -1.0;
        memset(&when, 0, sizeof when);
        when.year = 2019, when.month = 4, when.day = 7;
        OK(rf_julian_date_from_calendar(&when, RF_TIME_GPS, NULL, &gps));
        OK(rf_gps_week_seconds(&gps, &week, &seconds));
        CHECK(week == 2048 && seconds == 0.0, "week %lld second %g", (long long)week, seconds);
        OK(rf_from_gps_week_seconds(2048, 0.0, &back));
        CHECK(back.jd == gps.jd && back.fraction == gps.fraction, "from the week");
        memset(&back, 0xAB, sizeof back);
        CHECK(rf_from_gps_week_seconds(2048, 604800.0, &back) == RF_STATUS_OUT_OF_RANGE && still_filled(&back, sizeof back, 0xAB), "second 604800");
    }
    {
        /* The built-in leap seconds, and the IERS file layout read from text. */
        static const char file[] = "#  File expires on 28 June 2027\n    41317.0    1  1 1972       10\n    41499.0    1  7 1972       11\n";
        size_t line = 99;
        OK(rf_leap_seconds_built_in(&leaps));
        CHECK(leaps.count == 28 && leaps.mjd[27] == 57754 && leaps.tai_minus_utc[27] == 37.0, "built in: %zu steps", leaps.count);
        OK(rf_leap_seconds_read_iers((const uint8_t *)file, sizeof file - 1, &leaps, &line));
        CHECK(leaps.count == 2 && leaps.expires == 61584, "read: %zu steps, expires %lld", leaps.count, (long long)leaps.expires);
        CHECK(rf_leap_seconds_read_iers((const uint8_t *)"41317.0 1 1 1972 10\n41300.0 1 7 1972 11\n", 40, &leaps, &line) == RF_STATUS_INVALID_ARGUMENT && line == 2,
              "bad file refused at line %zu", line);
    }
    {
        /* An EOP table read into caller arrays, interpolated, and UT1 through it. */
        double mjd[8], dut1[8], xp[8], yp[8], dx[8], dy[8];
        size_t rows = 0, offset_rows = 0, line = 0;
        rf_earth_orientation table;
        rf_earth_orientation_sample s;
        rf_julian_date at, ut1;
        CHECK(rf_earth_orientation_read_iers((const uint8_t *)c04, sizeof c04 - 1, 3, mjd, dut1, xp, yp, dx, dy, &rows, &offset_rows, &line) == RF_STATUS_OUT_OF_MEMORY && rows == 7,
              "capacity 3: %zu rows needed", rows);
        OK(rf_earth_orientation_read_iers((const uint8_t *)c04, sizeof c04 - 1, 8, mjd, dut1, xp, yp, dx, dy, &rows, &offset_rows, &line));
        CHECK(rows == 7 && offset_rows == 7 && mjd[0] == 57749.0 && dut1[6] == 0.598, "read %zu rows", rows);
        memset(&table, 0, sizeof table);
        table.mjd = mjd, table.ut1_minus_utc = dut1, table.xp = xp, table.yp = yp, table.dx = dx, table.dy = dy;
        table.rows = rows, table.offset_rows = offset_rows;
        at.jd = 2457751.5, at.fraction = 0.0;
        OK(rf_earth_orientation_at(&table, &at, &s));
        CHECK(s.ut1_minus_utc == -0.394 && s.xp == 0.032 * arcsec && s.offsets_given, "a tabulated row, exactly");
        /* UT1 through the table, and back. */
        at.fraction = 0.75;
        OK(rf_convert_time(&at, RF_TIME_UTC, RF_TIME_UT1, NULL, &table, &ut1));
        OK(rf_earth_orientation_at(&table, &at, &s));
        CLOSE(seconds_apart(ut1, at), s.ut1_minus_utc, 1e-9, "UT1 − UTC");
        OK(rf_convert_time(&ut1, RF_TIME_UT1, RF_TIME_UTC, NULL, &table, &back));
        CLOSE(seconds_apart(back, at), 0.0, 1e-9, "UT1 → UTC");
        /* Outside the table, and UT1 without a table. */
        at.jd = 2457760.5;
        memset(&s, 0xAB, sizeof s);
        CHECK(rf_earth_orientation_at(&table, &at, &s) == RF_STATUS_OUT_OF_RANGE && still_filled(&s, sizeof s, 0xAB), "outside the table");
        CHECK(rf_convert_time(&at, RF_TIME_UTC, RF_TIME_UT1, NULL, NULL, &ut1) == RF_STATUS_NULL_POINTER, "UT1 needs a table");
    }
    {
        /* The GCRS → ITRS matrix (IERS Conventions 2010, eq. 5.1): a rotation whose third row,
           the ITRS pole in GCRS, is the CIP (X, Y, √(1 − X² − Y²)) when polar motion is zero
           (to s′, below 1e-12 rad); and the motion from the EOP table has the matrix's
           transpose as its rotation. The comparison with the reference library is in
           tests/python/test_celestial.py. */
        rf_julian_date tt = {2457752.5, 0.4}, ut1 = {2457752.5, 0.4 - 68.6 / 86400.0};
        rf_cip_xys cip;
        double m[9], z;
        int i, j, k;
        OK(rf_cip_coordinates(&tt, &cip));
        OK(rf_celestial_to_terrestrial(&tt, &ut1, NULL, m));
        for (i = 0; i < 3; ++i)
            for (j = 0; j < 3; ++j) {
                double dot = 0.0;
                for (k = 0; k < 3; ++k) dot += m[3 * i + k] * m[3 * j + k];
                CLOSE(dot, i == j ? 1.0 : 0.0, 1e-15, "orthonormal rows");
            }
        z = sqrt(1.0 - cip.x * cip.x - cip.y * cip.y);
        CLOSE(m[6], cip.x, 1e-12, "pole x");
        CLOSE(m[7], cip.y, 1e-12, "pole y");
        CLOSE(m[8], z, 1e-12, "pole z");
        {
            double mjd[8], dut1[8], xp[8], yp[8], dx[8], dy[8];
            size_t rows = 0, offset_rows = 0;
            rf_earth_orientation table;
            rf_frame_motion motion;
            OK(rf_earth_orientation_read_iers((const uint8_t *)c04, sizeof c04 - 1, 8, mjd, dut1, xp, yp, dx, dy, &rows, &offset_rows, NULL));
            memset(&table, 0, sizeof table);
            table.mjd = mjd, table.ut1_minus_utc = dut1, table.xp = xp, table.yp = yp, table.dx = dx, table.dy = dy;
            table.rows = rows, table.offset_rows = offset_rows;
            OK(rf_earth_motion_iers(&tt, &table, &motion));
            CLOSE(sqrt(motion.angular_velocity.x * motion.angular_velocity.x + motion.angular_velocity.y * motion.angular_velocity.y +
                       motion.angular_velocity.z * motion.angular_velocity.z),
                  7.292115146706979e-5, 1e-10, "the Earth's rate (the ERA's, with the excess length of day)");
            tt.jd = 2457900.5;
            memset(&motion, 0xAB, sizeof motion);
            CHECK(rf_earth_motion_iers(&tt, &table, &motion) == RF_STATUS_OUT_OF_RANGE && still_filled(&motion, sizeof motion, 0xAB), "outside the table");
        }
    }
    {
        /* Bad input: UTC before 1972, an impossible date, an unknown scale, NULL output. */
        rf_julian_date d;
        memset(&when, 0, sizeof when);
        when.year = 1971, when.month = 12, when.day = 31;
        memset(&d, 0xAB, sizeof d);
        CHECK(rf_julian_date_from_calendar(&when, RF_TIME_UTC, NULL, &d) == RF_STATUS_OUT_OF_RANGE && still_filled(&d, sizeof d, 0xAB), "UTC in 1971");
        when.year = 2023, when.month = 2, when.day = 29;
        CHECK(rf_julian_date_from_calendar(&when, RF_TIME_TT, NULL, &d) == RF_STATUS_OUT_OF_RANGE, "29 February 2023");
        when.day = 28;
        CHECK(rf_julian_date_from_calendar(&when, 9, NULL, &d) == RF_STATUS_INVALID_ARGUMENT, "scale 9");
        CHECK(rf_julian_date_from_calendar(&when, RF_TIME_TT, NULL, NULL) == RF_STATUS_NULL_POINTER, "NULL output");
    }
    return check_report("test_time");
}
