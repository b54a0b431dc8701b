/* Aided navigation through the C interface: a van standing still with zero-velocity updates
   (the velocity σ shrinks, the state stays), a 50 m position jump rejected with its report,
   stationary alignment, the stepper read back, and bad input leaving the storage untouched.
   The numbers equal the Rust core's (bindings-c/tests/aided_matches_core.rs). */
#include "check.h"

static rf_vec3 v3(double x, double y, double z) {
    rf_vec3 v;
    v.x = x, v.y = y, v.z = z;
    return v;
}

int main(void) {
    rf_strapdown start;
    rf_nav_state initial;
    rf_aided_nav nav, before;
    rf_aided_report report;
    rf_imu_increment still;
    rf_vec3 sigma;
    rf_nav_state state;
    rf_geodetic jump;
    double p0[225], p[225], errors[6];
    int i, k;
    const double lat = 0.91, lon = 0.085, h = 15.0, dt = 0.01;

    CHECK(check_level_van(lat, lon, h, dt, &start, p0, &still), "the van at rest");
    OK(rf_aided_init(&start, NULL, p0, 15, 0.999, 1, &nav));
    OK(rf_aided_state(&nav, &initial));
    sigma = v3(0.01, 0.01, 0.01);
    for (k = 0; k < 1000; ++k) {
        OK(rf_aided_predict(&nav, &still));
        if ((k + 1) % 10 == 0) OK(rf_aided_update_zero_velocity(&nav, &sigma, &report));
    }
    CHECK(report.accepted == 1 && report.rows == 3, "zero-velocity update accepted");
    OK(rf_aided_covariance(&nav, p, 225));
    CHECK(sqrt(p[3 * 16]) < 0.01, "velocity sigma %g below the update noise", sqrt(p[3 * 16]));
    for (i = 0; i < 15; ++i)
        for (k = 0; k < 15; ++k) CHECK(p[i * 15 + k] == p[k * 15 + i], "covariance symmetric at %d %d", i, k);
    OK(rf_aided_state(&nav, &state));
    CLOSE(state.position.height, h, 1e-6, "height held");
    OK(rf_aided_sensor_errors(&nav, errors, 6));

    /* A 50 m jump north in one fix is rejected and changes nothing. */
    jump.latitude = lat + 50.0 / 6.39e6, jump.longitude = lon, jump.height = h;
    before = nav;
    OK(rf_aided_update_position(&nav, &jump, &sigma, NULL, &report));
    CHECK(report.accepted == 0, "the jump is rejected (NIS %g)", report.nis);
    CLOSE(report.innovation.x, 50.0, 0.5, "the jump's innovation");
    CHECK(memcmp(&nav, &before, sizeof nav) == 0, "a rejected fix leaves the navigator unchanged");

    /* Bad input: named statuses, storage untouched. */
    still.interval = NAN;
    CHECK(rf_aided_predict(&nav, &still) == RF_STATUS_NON_FINITE, "NaN interval");
    still.interval = dt;
    sigma.y = -1.0;
    CHECK(rf_aided_update_zero_velocity(&nav, &sigma, &report) == RF_STATUS_NOT_POSITIVE, "negative sigma");
    CHECK(memcmp(&nav, &before, sizeof nav) == 0, "failed calls leave the navigator unchanged");
    CHECK(rf_aided_covariance(&nav, p, 224) == RF_STATUS_INVALID_ARGUMENT, "wrong covariance size");
    p0[1] = 2.0; /* asymmetric p0 */
    CHECK(rf_aided_init(&start, NULL, p0, 15, 0.999, 1, &before) != RF_STATUS_OK, "asymmetric p0 refused");
    p0[1] = 0.0;
    CHECK(rf_aided_init(&start, NULL, p0, 16, 0.999, 1, &before) == RF_STATUS_INVALID_ARGUMENT, "16 states refused");
    memset(&before, 0, sizeof before);
    CHECK(rf_aided_predict(&before, &still) == RF_STATUS_INVALID_ARGUMENT, "storage not made by rf_aided_init");

    /* The stepper read back continues where the filter is; setting its state keeps its time. */
    OK(rf_aided_strapdown(&nav, &start));
    CLOSE(start.elapsed, 10.0, 1e-9, "elapsed time of the stepper read back");
    OK(rf_strapdown_set_state(&start, &initial));
    CLOSE(start.elapsed, 10.0, 1e-9, "set_state keeps the elapsed time");

    /* Stationary alignment of the same record: level, north, σ from the record alone. */
    {
        rf_imu_increment record[100];
        rf_quat attitude;
        rf_vec3 sd;
        double given[2] = {1.0, 0.01};
        for (k = 0; k < 100; ++k) record[k] = still;
        OK(rf_align_stationary(record, 100, lat, h, NULL, NULL, &attitude, &sd));
        CLOSE(attitude.w, 1.0, 1e-9, "aligned attitude is the identity");
        OK(rf_align_stationary(record, 100, lat, h, NULL, given, &attitude, &sd));
        CLOSE(sd.z, 0.01, 0.0, "a given heading's sigma");
    }

    printf("rf_aided_nav: %u bytes\n", (unsigned)sizeof(rf_aided_nav));
    return check_report("test_aided");
}
