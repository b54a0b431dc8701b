/* The smoother through the C interface: a van standing still 5 s at 100 Hz with a small
   uncompensated gyro and accelerometer bias, zero-velocity updates once a second. The smoothed
   solution is checked against the filter it smooths (its σ never above the filter's, equal at
   the end; Rauch, Tung and Striebel 1965: the smoother conditions on more data) and against the
   truth (the van does not move: its smoothed velocity error stays within 3σ). A copy of the
   smoother's navigator records nothing; a diverged navigator written back is refused; bad input
   gets named statuses. The numbers equal the Rust core's (bindings-c/tests/smoother_matches_core.rs). */
#include "check.h"

#define STEPS 500

static rf_vec3 v3(double x, double y, double z) {
    rf_vec3 v;
    v.x = x, v.y = y, v.z = z;
    return v;
}

int main(void) {
    static rf_nav_state smoothed[STEPS + 1];
    static double sigma[(STEPS + 1) * 15], errors[(STEPS + 1) * 6], filtered[(STEPS + 1) * 15];
    rf_strapdown start;
    rf_aided_nav nav, copy;
    rf_aided_nav *recording;
    rf_smoother *smoother = NULL;
    rf_aided_report report;
    rf_imu_increment still;
    rf_vec3 zupt;
    double p0[225], p[225];
    size_t count = 0;
    int i, k;
    const double lat = 0.91, lon = 0.085, h = 15.0, dt = 0.01;

    CHECK(check_level_van(lat, lon, h, dt, &start, p0, &still), "the van at rest");
    OK(rf_aided_init(&start, NULL, p0, 15, 0.999, 1, &nav));
    OK(rf_smoother_new(&nav, STEPS, 10, &smoother));
    recording = rf_smoother_nav(smoother);
    CHECK(recording != NULL, "the smoother's navigator");

    /* Sensed with small biases the filter does not know. */
    still.delta_angle.x += 2e-6 * dt, still.delta_angle.y -= 1e-6 * dt;
    still.delta_velocity.x += 3e-3 * dt, still.delta_velocity.y -= 2e-3 * dt;
    zupt = v3(0.01, 0.01, 0.01);
    OK(rf_aided_covariance(recording, filtered, 225));
    for (k = 1; k <= STEPS; ++k) {
        OK(rf_aided_predict(recording, &still));
        if (k % 100 == 0) {
            OK(rf_aided_update_zero_velocity(recording, &zupt, &report));
            CHECK(report.accepted == 1, "zero-velocity update accepted at %d", k);
        }
        OK(rf_aided_covariance(recording, p, 225));
        for (i = 0; i < 15; ++i) filtered[k * 15 + i] = sqrt(p[i * 16]);
    }
    for (i = 0; i < 15; ++i) filtered[i] = sqrt(filtered[i * 16]);

    /* A copy elsewhere is an ordinary navigator: it records nothing. */
    copy = *recording;
    OK(rf_aided_predict(&copy, &still));
    OK(rf_smoother_len(smoother, &count));
    CHECK(count == STEPS + 1, "%zu IMU times recorded", count);

    OK(rf_smoother_smooth(smoother, count, smoothed, sigma, errors));
    for (k = 0; k <= STEPS; ++k) {
        for (i = 0; i < 15; ++i)
            CHECK(sigma[k * 15 + i] <= filtered[k * 15 + i] * (1 + 1e-9), "smoothed sigma %d at %d not above the filter's", i, k);
        for (i = 0; i < 3; ++i) {
            double v = i == 0 ? smoothed[k].velocity_ned.x : (i == 1 ? smoothed[k].velocity_ned.y : smoothed[k].velocity_ned.z);
            CHECK(fabs(v) <= 3 * sigma[k * 15 + 3 + i], "velocity %d at %d within 3 sigma (%g vs %g)", i, k, v, sigma[k * 15 + 3 + i]);
        }
    }
    for (i = 0; i < 15; ++i) CLOSE(sigma[STEPS * 15 + i], filtered[STEPS * 15 + i], 1e-12 * filtered[STEPS * 15 + i], "equal at the end");
    CHECK(sigma[50 * 15 + 3] < 0.5 * filtered[50 * 15 + 3], "half-way to the first update the smoother knows more (%g vs %g)",
          sigma[50 * 15 + 3], filtered[50 * 15 + 3]);

    /* Recording goes on after smoothing; an update at the time just closed is refused. */
    CHECK(rf_aided_update_zero_velocity(recording, &zupt, &report) == RF_STATUS_INVALID_ARGUMENT, "update at a closed time");
    OK(rf_aided_predict(recording, &still));
    OK(rf_smoother_len(smoother, &count));
    CHECK(count == STEPS + 2, "recording goes on (%zu)", count);

    /* Bad input: named statuses, nothing written. */
    smoothed[0].position.height = -1.0;
    CHECK(rf_smoother_smooth(smoother, count - 1, smoothed, sigma, errors) == RF_STATUS_INVALID_ARGUMENT, "wrong count");
    CHECK(smoothed[0].position.height == -1.0, "nothing written");
    CHECK(rf_smoother_smooth(smoother, count, smoothed, sigma, sigma) == RF_STATUS_OVERLAPPING_BUFFERS, "overlapping outputs");
    CHECK(rf_smoother_smooth(NULL, count, smoothed, sigma, errors) == RF_STATUS_NULL_POINTER, "NULL smoother");
    CHECK(rf_smoother_len(smoother, NULL) == RF_STATUS_NULL_POINTER, "NULL count");
    CHECK(rf_smoother_new(NULL, 0, 0, &smoother) == RF_STATUS_NULL_POINTER, "NULL navigator");
    CHECK(rf_smoother_nav(NULL) == NULL, "NULL smoother's navigator");

    /* A navigator that diverged behind the smoother's back, written back over it, is refused. */
    copy = *recording;
    OK(rf_aided_predict(&copy, &still));
    *recording = copy;
    CHECK(rf_aided_predict(recording, &still) == RF_STATUS_INVALID_ARGUMENT, "a diverged navigator");

    /* Smoothing needs the covariance at every increment. */
    {
        rf_smoother *other = NULL;
        OK(rf_aided_init(&start, NULL, p0, 15, 0.999, 2, &nav));
        CHECK(rf_smoother_new(&nav, 0, 0, &other) == RF_STATUS_INVALID_ARGUMENT && other == NULL, "propagate_every 2 refused");
    }
    CHECK(strstr(rf_status_message(RF_STATUS_OUT_OF_MEMORY), "memory") != NULL, "message");
    rf_smoother_free(smoother);
    rf_smoother_free(NULL);
    return check_report("test_smoother");
}
