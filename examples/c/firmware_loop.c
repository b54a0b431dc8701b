/*
 * Firmware-shaped example: a fixed-rate loop with no heap and no global mutable state.
 *
 * Invented scenario: a survey rover at 47.4 deg N, 8.5 deg E drives a 20 m circle at 2 m/s.
 * On its roof a scanner head spins at 10 rev/s about a vertical axis 0.3 m behind the
 * navigation point; an accelerometer sits on the head 0.08 m from the spin axis. At 100 Hz the
 * loop updates the rover's state (dead reckoning of heading and position), chains the frames
 * inertial -> Earth-fixed -> NED -> rover body -> scanner head, and computes the apparent
 * accelerations the head's accelerometer feels; once a second it prints the budget.
 *
 * Build (after `cargo build --release -p rotaframe-c`):
 *   gcc -std=c99 -O2 -Ibindings-c/include examples/c/firmware_loop.c \
 *       target/release/librotaframe_c.a -lpthread -ldl -lm -o firmware_loop
 */
#include <math.h>
#include <stdio.h>

#include "rotaframe.h"

#define PI 3.14159265358979323846
#define RATE_HZ 100
#define SECONDS 5

/* The whole state of the loop, kept on the stack of main. */
typedef struct rover_state {
    rf_geodetic position; /* navigation point */
    double heading;       /* rad from north */
    double speed;         /* m/s */
    double turn_rate;     /* rad/s */
    double head_angle;    /* scanner head angle (rad) */
} rover_state;

static void fail(const char *what, rf_status s) {
    printf("%s failed: %s\n", what, rf_status_message(s));
}

/* One control tick: advance the state by dt and compute the sensor's apparent terms. */
static rf_status tick(const rf_earth_model *model, rover_state *st, double t, double dt, rf_apparent_terms *terms) {
    double m, n;
    rf_status s;
    rf_vec3 v_ned, a_ned, up = {0, 0, -1};
    rf_frame_motion earth, ned, body, head_offset, head_spin, head, chain;
    rf_point_kinematics sensor = {{0.08, 0.0, 0.0}, {0, 0, 0}, {0, 0, 0}};
    const double spin = 2.0 * PI * 10.0;

    /* Dead reckoning on the ellipsoid. */
    if ((s = rf_radii_of_curvature(model, st->position.latitude, &m, &n)) != RF_STATUS_OK) return s;
    st->heading += st->turn_rate * dt;
    st->position.latitude += st->speed * cos(st->heading) * dt / (m + st->position.height);
    st->position.longitude += st->speed * sin(st->heading) * dt / ((n + st->position.height) * cos(st->position.latitude));
    st->head_angle = fmod(st->head_angle + spin * dt, 2.0 * PI);

    v_ned.x = st->speed * cos(st->heading);
    v_ned.y = st->speed * sin(st->heading);
    v_ned.z = 0.0;
    /* Turning at constant speed: the acceleration relative to the Earth is centripetal. */
    a_ned.x = -st->turn_rate * v_ned.y;
    a_ned.y = st->turn_rate * v_ned.x;
    a_ned.z = 0.0;

    if ((s = rf_earth_motion(model, t, 0.0, &earth)) != RF_STATUS_OK) return s;
    if ((s = rf_local_level_motion(model, &st->position, &v_ned, &a_ned, &ned)) != RF_STATUS_OK) return s;
    /* Body: NED turned by the heading about down (z), turning at the turn rate. */
    {
        rf_vec3 down = {0, 0, 1};
        if ((s = rf_motion_about_axis(&down, st->heading, st->turn_rate, 0.0, &body)) != RF_STATUS_OK) return s;
    }
    /* Scanner head: 0.3 m behind and 0.5 m above the navigation point, spinning about up. */
    if ((s = rf_motion_identity(&head_offset)) != RF_STATUS_OK) return s;
    head_offset.position.x = -0.3;
    head_offset.position.z = -0.5;
    if ((s = rf_motion_about_axis(&up, st->head_angle, spin, 0.0, &head_spin)) != RF_STATUS_OK) return s;
    if ((s = rf_motion_compose(&head_offset, &head_spin, &head)) != RF_STATUS_OK) return s;

    if ((s = rf_motion_compose(&earth, &ned, &chain)) != RF_STATUS_OK) return s;
    if ((s = rf_motion_compose(&chain, &body, &chain)) != RF_STATUS_OK) return s;
    if ((s = rf_motion_compose(&chain, &head, &chain)) != RF_STATUS_OK) return s;
    return rf_apparent_of_motion(&chain, &sensor, terms);
}

static double norm(rf_vec3 v) {
    return sqrt(v.x * v.x + v.y * v.y + v.z * v.z);
}

int main(void) {
    rf_earth_model model;
    rover_state st;
    rf_apparent_terms terms;
    rf_status s;
    int k;
    const double dt = 1.0 / RATE_HZ;

    if ((s = rf_earth_model_wgs84(&model)) != RF_STATUS_OK) {
        fail("model", s);
        return 1;
    }
    st.position.latitude = 47.4 * PI / 180.0;
    st.position.longitude = 8.5 * PI / 180.0;
    st.position.height = 420.0;
    st.heading = 0.0;
    st.speed = 2.0;
    st.turn_rate = 2.0 / 10.0; /* 2 m/s on a 10 m radius */
    st.head_angle = 0.0;

    printf("rover at 47.4 N, 8.5 E; scanner head at 10 rev/s; accelerometer 0.08 m off the spin axis\n");
    printf("%6s %12s %12s %12s %12s %12s  (|a| in m/s^2, head axes)\n", "t (s)", "transl.", "Coriolis", "centrif.", "Euler", "total");
    for (k = 1; k <= RATE_HZ * SECONDS; ++k) {
        double t = k * dt;
        if ((s = tick(&model, &st, t, dt, &terms)) != RF_STATUS_OK) {
            fail("tick", s);
            return 1;
        }
        if (k % RATE_HZ == 0) {
            printf("%6.1f %12.5e %12.5e %12.5e %12.5e %12.5e\n", t, norm(terms.translational), norm(terms.coriolis), norm(terms.centrifugal),
                   norm(terms.euler), norm(terms.total));
        }
    }
    return 0;
}
