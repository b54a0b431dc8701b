/*
 * Driver for the callgrind strapdown benchmark: CALLS steps of rf_strapdown_step inside
 * bench_loop (which callgrind measures), for the NED or ECEF mechanization, with normal or J2
 * gravity. The increments are a fixed pseudo-random manoeuvre at 100 Hz on top of the
 * stationary outputs at 45° N, so every branch of the step runs as in flight.
 * Usage: bench_strapdown {ned|ecef} {normal|j2}
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "rotaframe.h"

#define N 256
#define CALLS 4096

static rf_imu_increment increments[N];
static rf_strapdown stepper;

static unsigned long long seed = 2026;
static double next(void) {
    seed = seed * 6364136223846793005ULL + 1442695040888963407ULL;
    return ((double)(seed >> 11) / 9007199254740992.0) * 2.0 - 1.0;
}

/* The measured region. */
__attribute__((noinline)) int bench_loop(void) {
    int c, bad = 0;
    for (c = 0; c < CALLS; ++c) bad += rf_strapdown_step(&stepper, &increments[c % N]) != RF_STATUS_OK;
    return bad;
}

int main(int argc, char **argv) {
    rf_strapdown_config config;
    rf_nav_state start, end;
    int i, bad;
    if (argc < 3) {
        fprintf(stderr, "usage: %s {ned|ecef} {normal|j2}\n", argv[0]);
        return 2;
    }
    memset(&config, 0, sizeof config);
    memset(&start, 0, sizeof start);
    rf_earth_model_wgs84(&config.earth);
    config.frame = strcmp(argv[1], "ecef") == 0 ? RF_NAV_FRAME_ECEF : RF_NAV_FRAME_NED;
    config.gravity = strcmp(argv[2], "j2") == 0 ? RF_GRAVITY_J2 : RF_GRAVITY_NORMAL;
    config.vertical = RF_VERTICAL_FREE;
    start.position.latitude = 0.785398, start.position.longitude = 0.2, start.position.height = 1500.0;
    start.velocity_ned.x = 120.0, start.velocity_ned.y = -35.0;
    start.attitude.w = 1.0;
    for (i = 0; i < N; ++i) {
        increments[i].delta_angle.x = 1e-3 * next(), increments[i].delta_angle.y = 1e-3 * next(), increments[i].delta_angle.z = 1e-3 * next();
        increments[i].delta_velocity.x = 0.02 * next(), increments[i].delta_velocity.y = 0.02 * next();
        increments[i].delta_velocity.z = -0.0980 + 0.02 * next();
        increments[i].interval = 0.01;
    }
    if (rf_strapdown_init(&config, &start, &stepper) != RF_STATUS_OK) return 1;
    bad = bench_loop();
    rf_strapdown_state(&stepper, &end);
    printf("steps %d failed %d lat %.9f h %.3f\n", CALLS, bad, end.position.latitude, end.position.height);
    return bad != 0;
}
