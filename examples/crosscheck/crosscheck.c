/* The cross-language check of `bash scripts/demo`, C side: the scenario of crosscheck.rs (see
 * there) through the C library, printed as `name value`. Build: see scripts/demo. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "rotaframe.h"

static const double PI = 3.14159265358979323846;

static void put(const char *name, double value) { printf("%s %.16e\n", name, value); }

static void put3(const char *name, rf_vec3 v) {
    char label[96];
    snprintf(label, sizeof label, "%s.x", name);
    put(label, v.x);
    snprintf(label, sizeof label, "%s.y", name);
    put(label, v.y);
    snprintf(label, sizeof label, "%s.z", name);
    put(label, v.z);
}

static rf_vec3 vec3(double x, double y, double z) {
    rf_vec3 v;
    v.x = x, v.y = y, v.z = z;
    return v;
}

static void check(rf_status status, const char *what) {
    if (status != RF_STATUS_OK) {
        fprintf(stderr, "%s failed with status %d\n", what, (int)status);
        exit(1);
    }
}

int main(void) {
    rf_earth_model wgs;
    rf_geodetic aircraft, apron;
    rf_vec3 v_ned, out, zero = vec3(0.0, 0.0, 0.0), rate;
    rf_apparent_terms terms;
    rf_strapdown_config config;
    rf_nav_state start, end;
    rf_strapdown ins;
    rf_imu_increment increment;
    double value, gamma, heading, dt = 0.01, bias = 1e-3 * 9.80665;
    int k;

    check(rf_earth_model_wgs84(&wgs), "rf_earth_model_wgs84");
    /* 1. The aircraft. */
    aircraft.latitude = 48.2 * PI / 180.0;
    aircraft.longitude = 11.6 * PI / 180.0;
    aircraft.height = 5000.0;
    heading = 60.0 * PI / 180.0;
    v_ned = vec3(130.0 * cos(heading), 130.0 * sin(heading), -2.0);
    check(rf_geodetic_to_ecef(&wgs, &aircraft, &out), "rf_geodetic_to_ecef");
    put3("aircraft.ecef", out);
    check(rf_normal_gravity(&wgs, aircraft.latitude, aircraft.height, &value), "rf_normal_gravity");
    put("aircraft.normal_gravity", value);
    check(rf_transport_rate_ned(&wgs, aircraft.latitude, aircraft.height, &v_ned, &out), "rf_transport_rate_ned");
    put3("aircraft.transport_rate_ned", out);
    check(rf_coriolis_ned(&wgs, aircraft.latitude, aircraft.height, &v_ned, &out), "rf_coriolis_ned");
    put3("aircraft.coriolis_ned", out);
    check(rf_eotvos_correction(&wgs, aircraft.latitude, aircraft.height, &v_ned, &value), "rf_eotvos_correction");
    put("aircraft.eotvos_correction", value);
    /* 2. The rate table. */
    {
        rf_vec3 w = vec3(0.0, 0.0, 200.0 * PI / 180.0), alpha = vec3(0.0, 0.0, 20.0 * PI / 180.0);
        rf_vec3 r = vec3(0.12, 0.0, 0.03), v = vec3(0.05, 0.0, 0.0);
        check(rf_apparent_terms_compute(&w, &alpha, &zero, &r, &v, &terms), "rf_apparent_terms_compute");
    }
    put3("table.coriolis", terms.coriolis);
    put3("table.centrifugal", terms.centrifugal);
    put3("table.euler", terms.euler);
    /* 3. The stationary INS. */
    memset(&config, 0, sizeof config);
    config.earth = wgs;
    config.gravity = RF_GRAVITY_NORMAL;
    config.vertical = RF_VERTICAL_FREE;
    config.frame = RF_NAV_FRAME_NED;
    config.height_time_constant = 60.0;
    apron = aircraft;
    apron.height = 0.0;
    memset(&start, 0, sizeof start);
    start.position = apron;
    start.velocity_ned = zero;
    start.attitude.w = 1.0;
    check(rf_normal_gravity(&wgs, apron.latitude, 0.0, &gamma), "rf_normal_gravity");
    check(rf_earth_rate_ned(&wgs, apron.latitude, &rate), "rf_earth_rate_ned");
    increment.delta_angle = vec3(rate.x * dt, rate.y * dt, rate.z * dt);
    increment.delta_velocity = vec3(bias * dt, 0.0 * dt, -gamma * dt);
    increment.interval = dt;
    check(rf_strapdown_init(&config, &start, &ins), "rf_strapdown_init");
    for (k = 0; k < 60000; ++k) check(rf_strapdown_step(&ins, &increment), "rf_strapdown_step");
    check(rf_strapdown_state(&ins, &end), "rf_strapdown_state");
    put("ins.lat_deg", end.position.latitude * 180.0 / PI);
    put("ins.lon_deg", end.position.longitude * 180.0 / PI);
    put("ins.h", end.position.height);
    put3("ins.v_ned", end.velocity_ned);
    return 0;
}
