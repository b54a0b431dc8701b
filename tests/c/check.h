/* Minimal test helpers for rotaframe's C tests (C99). */
#ifndef ROTAFRAME_TEST_CHECK_H
#define ROTAFRAME_TEST_CHECK_H

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "rotaframe.h"

static int check_failures = 0;
static int check_count = 0;

#define CHECK(cond, ...)                                                   \
    do {                                                                   \
        ++check_count;                                                     \
        if (!(cond)) {                                                     \
            ++check_failures;                                              \
            fprintf(stderr, "%s:%d: check failed: %s: ", __FILE__, __LINE__, #cond); \
            fprintf(stderr, __VA_ARGS__);                                  \
            fprintf(stderr, "\n");                                         \
        }                                                                  \
    } while (0)

/* The call must succeed. */
#define OK(call)                                                           \
    do {                                                                   \
        rf_status ok_status_ = (call);                                     \
        CHECK(ok_status_ == RF_STATUS_OK, "%s returned %u: %s", #call, (unsigned)ok_status_, rf_status_message(ok_status_)); \
    } while (0)

/* |got - want| <= tol. */
#define CLOSE(got, want, tol, what)                                        \
    do {                                                                   \
        double close_g_ = (got), close_w_ = (want);                        \
        CHECK(fabs(close_g_ - close_w_) <= (tol), "%s: got %.17g, want %.17g (tolerance %g)", what, close_g_, close_w_, (double)(tol)); \
    } while (0)

/* Every one of the `n` bytes at `p` still holds the `fill` byte written before a call. */
static inline int still_filled(const void *p, size_t n, unsigned char fill) {
    const unsigned char *b = (const unsigned char *)p;
    size_t i;
    for (i = 0; i < n; ++i)
        if (b[i] != fill) return 0;
    return 1;
}

/* The aided tests' van standing level at rest at (lat, lon, h) on WGS 84: its strapdown in
   `start`, the diagonal initial covariance in `p0` (latitude and longitude 1e-12 rad², the other
   navigation states 1e-4, the sensor errors 1e-6) and the ideal increment over `dt` in `still`
   (the Earth's rate and minus gravity, NED = body axes). */
static inline int check_level_van(double lat, double lon, double h, double dt, rf_strapdown *start, double p0[225], rf_imu_increment *still) {
    rf_earth_model wgs;
    rf_strapdown_config config;
    rf_nav_state initial;
    rf_vec3 rate, gravity;
    int i;
    if (rf_earth_model_wgs84(&wgs) != RF_STATUS_OK) return 0;
    memset(&config, 0, sizeof config);
    config.earth = wgs;
    memset(&initial, 0, sizeof initial);
    initial.position.latitude = lat, initial.position.longitude = lon, initial.position.height = h;
    initial.attitude.w = 1.0;
    if (rf_strapdown_init(&config, &initial, start) != RF_STATUS_OK) return 0;
    memset(p0, 0, 225 * sizeof p0[0]);
    for (i = 0; i < 15; ++i) p0[i * 16] = i < 2 ? 1e-12 : (i < 9 ? 1e-4 : 1e-6);
    if (rf_earth_rate_ned(&wgs, lat, &rate) != RF_STATUS_OK || rf_gravity_ned(&wgs, lat, h, &gravity) != RF_STATUS_OK) return 0;
    still->delta_angle.x = rate.x * dt, still->delta_angle.y = rate.y * dt, still->delta_angle.z = rate.z * dt;
    still->delta_velocity.x = -gravity.x * dt, still->delta_velocity.y = -gravity.y * dt, still->delta_velocity.z = -gravity.z * dt;
    still->interval = dt;
    return 1;
}

static int check_report(const char *name) {
    if (check_failures == 0) {
        printf("%s: %d checks passed\n", name, check_count);
        return 0;
    }
    printf("%s: %d of %d checks FAILED\n", name, check_failures, check_count);
    return 1;
}

#endif
