/* rf_propagate: a flight in ECEF against Newton's law in the inertial frame mapped back, the
   classical eastward deflection of a dropped body (Gauss 1803, Laplace; Kibble and Berkshire,
   Classical Mechanics, 5th ed., section 5.4), the drag equation, the trajectory array, and
   errors that leave every output untouched. */
#include "check.h"

static rf_earth_model wgs84;

/* ECEF relative to the inertial frame. */
static rf_status earth_frame(void *context, double time, rf_frame_motion *out) {
    (void)context;
    return rf_earth_motion(&wgs84, time, 0.0, out);
}

/* The inertial frame itself. */
static rf_status inertial_frame(void *context, double time, rf_frame_motion *out) {
    (void)context, (void)time;
    memset(out, 0, sizeof *out);
    out->rotation.w = 1.0;
    return RF_STATUS_OK;
}

/* A graph frame: the context is the graph, the frame its site (index 2). */
static rf_status site_frame(void *context, double time, rf_frame_motion *out) {
    return rf_graph_motion((const rf_graph *)context, 0, 2, time, out);
}

/* The ground plane of the site's NED frame: z crosses zero. */
static rf_status ground(void *context, double time, const double *r, const double *v, double *out) {
    (void)context, (void)time, (void)v;
    *out = r[2];
    return RF_STATUS_OK;
}

static rf_status nan_force(void *context, double time, const double *r, const double *v, double *out) {
    (void)context, (void)time, (void)r, (void)v;
    out[0] = NAN, out[1] = 0.0, out[2] = 0.0;
    return RF_STATUS_OK;
}

static rf_status refusing_force(void *context, double time, const double *r, const double *v, double *out) {
    (void)context, (void)time, (void)r, (void)v, (void)out;
    return RF_STATUS_ZERO_NORM;
}

int main(void) {
    rf_propagate_config config;
    rf_propagation_result result;
    rf_propagated_state states[400];
    size_t count = 0;
    OK(rf_earth_model_wgs84(&wgs84));
    memset(&config, 0, sizeof config); /* WGS 84, point mass, all terms, default tolerances */

    { /* A 10-minute flight in ECEF equals Newton's law in the inertial frame mapped back:
         1e-9 relative (the goal; both runs at rtol 1e-10). */
        rf_geodetic start = {0.6, -1.2, 1000.0};
        rf_vec3 r0, v0 = {800.0, -300.0, 2500.0};
        rf_frame_motion e0, e1, inv;
        rf_point_kinematics p, inertial, back;
        rf_propagation_result in_ecef, in_inertial;
        double err, scale;
        OK(rf_geodetic_to_ecef(&wgs84, &start, &r0));
        OK(rf_propagate(&config, earth_frame, NULL, NULL, NULL, NULL, NULL, 0.0, 600.0, &r0, &v0, NULL, 0, &count, &in_ecef));
        CHECK(count == 0, "no states asked for");
        OK(rf_earth_motion(&wgs84, 0.0, 0.0, &e0));
        memset(&p, 0, sizeof p);
        p.position = r0, p.velocity = v0;
        OK(rf_motion_map_point(&e0, &p, &inertial));
        OK(rf_propagate(&config, inertial_frame, NULL, NULL, NULL, NULL, NULL, 0.0, 600.0, &inertial.position, &inertial.velocity, NULL, 0,
                        NULL, &in_inertial));
        OK(rf_earth_motion(&wgs84, 600.0, 0.0, &e1));
        OK(rf_motion_inverse(&e1, &inv));
        memset(&p, 0, sizeof p);
        p.position = in_inertial.end.position, p.velocity = in_inertial.end.velocity;
        OK(rf_motion_map_point(&inv, &p, &back));
        err = sqrt(pow(back.position.x - in_ecef.end.position.x, 2) + pow(back.position.y - in_ecef.end.position.y, 2) +
                   pow(back.position.z - in_ecef.end.position.z, 2));
        scale = sqrt(pow(back.position.x, 2) + pow(back.position.y, 2) + pow(back.position.z, 2));
        CHECK(err / scale < 1e-9, "ECEF vs inertial: %g relative", err / scale);
    }

    { /* A 1 km drop at 45 deg N from a graph site frame lands east by (1/3) Omega g t^3 cos(lat),
         to 1 %; the budget's Coriolis part carries it. */
        rf_graph_node nodes[3];
        rf_graph g;
        uint32_t ecef, pad;
        rf_geodetic site = {0.25 * 3.14159265358979323846, 0.0, 0.0};
        rf_vec3 r0 = {0.0, 0.0, -1000.0}, v0 = {0.0, 0.0, 0.0};
        double t, gee, expected;
        size_t k;
        OK(rf_graph_init(nodes, 3, 1, &g));
        OK(rf_graph_add_earth(&g, 0, &wgs84, 0.0, &ecef));
        OK(rf_graph_add_site(&g, ecef, &wgs84, &site, RF_AXES_NED, &pad));
        config.gravitation = RF_GRAVITATION_J2;
        config.budget = 1;
        OK(rf_propagate(&config, site_frame, &g, NULL, NULL, ground, NULL, 0.0, 100.0, &r0, &v0, states, 400, &count, &result));
        CHECK(result.event_found == 1, "lands");
        t = result.end.time;
        gee = 2.0 * 1000.0 / (t * t);
        expected = 7.292115e-5 * gee * t * t * t * cos(site.latitude) / 3.0;
        CHECK(fabs(result.end.position.y / expected - 1.0) < 0.01, "east %g vs %g", result.end.position.y, expected);
        CHECK(fabs(result.budget.coriolis.y / expected - 1.0) < 0.01, "budget %g vs %g", result.budget.coriolis.y, expected);
        CHECK(count == result.steps + 1, "one state per step plus the start: %zu vs %llu", count, (unsigned long long)result.steps);
        CHECK(states[0].time == 0.0 && states[0].position.z == -1000.0, "the first state is the start");
        CHECK(memcmp(&states[count - 1], &result.end, sizeof result.end) == 0, "the last state is the event");
        for (k = 1; k < count; ++k) CHECK(states[k].time > states[k - 1].time, "times increase");
        config.gravitation = 0;
        config.budget = 0;

        { /* Built-in drag: the drag equation rho |v| v / (2 beta) (common practice), and a
             drop with drag falls slower. */
            rf_drag drag;
            double r[3] = {0.0, 0.0, 0.0}, v[3] = {3.0, 0.0, 4.0}, f[3];
            rf_propagation_result with_drag;
            memset(&drag, 0, sizeof drag);
            drag.ballistic_coefficient = 2.5, drag.density = 1.2;
            OK(rf_drag_force(&drag, 0.0, r, v, f));
            CLOSE(f[0], -1.2 * 5.0 * 3.0 / 5.0, 1e-15, "drag x");
            CLOSE(f[2], -1.2 * 5.0 * 4.0 / 5.0, 1e-15, "drag z");
            OK(rf_propagate(&config, site_frame, &g, rf_drag_force, &drag, ground, NULL, 0.0, 100.0, &r0, &v0, NULL, 0, NULL, &with_drag));
            CHECK(with_drag.end.time > t * 1.5, "drag slows the fall: %g s vs %g s", with_drag.end.time, t);
            drag.ballistic_coefficient = -1.0;
            memset(f, 0x5a, sizeof f);
            CHECK(rf_drag_force(&drag, 0.0, r, v, f) == RF_STATUS_OUT_OF_RANGE && still_filled(f, sizeof f, 0x5a), "bad drag refused");
        }

        { /* Errors leave every output untouched. */
            rf_propagate_config limited = config;
            rf_status s;
            memset(states, 0x5a, sizeof states);
            memset(&result, 0x5a, sizeof result);
            count = 12345;
            limited.max_steps = 3;
            s = rf_propagate(&limited, site_frame, &g, NULL, NULL, NULL, NULL, 0.0, 3600.0, &r0, &v0, states, 400, &count, &result);
            CHECK(s == RF_STATUS_INVALID_ARGUMENT, "step limit: %u", (unsigned)s);
            s = rf_propagate(&config, site_frame, &g, nan_force, NULL, NULL, NULL, 0.0, 10.0, &r0, &v0, states, 400, &count, &result);
            CHECK(s == RF_STATUS_NON_FINITE, "NaN force: %u", (unsigned)s);
            s = rf_propagate(&config, site_frame, &g, refusing_force, NULL, NULL, NULL, 0.0, 10.0, &r0, &v0, states, 400, &count, &result);
            CHECK(s == RF_STATUS_ZERO_NORM, "a callback's status passes through: %u", (unsigned)s);
            s = rf_propagate(&config, site_frame, &g, NULL, NULL, NULL, NULL, 5.0, 5.0, &r0, &v0, states, 400, &count, &result);
            CHECK(s == RF_STATUS_NOT_POSITIVE, "zero span: %u", (unsigned)s);
            s = rf_propagate(&config, site_frame, &g, NULL, NULL, ground, NULL, 0.0, 100.0, &r0, &v0, states, 2, &count, &result);
            CHECK(s == RF_STATUS_INVALID_ARGUMENT, "capacity too small: %u", (unsigned)s);
            s = rf_propagate(&config, NULL, NULL, NULL, NULL, NULL, NULL, 0.0, 10.0, &r0, &v0, states, 400, &count, &result);
            CHECK(s == RF_STATUS_NULL_POINTER, "no frame: %u", (unsigned)s);
            s = rf_propagate(&config, site_frame, &g, NULL, NULL, NULL, NULL, 0.0, 10.0, (const rf_vec3 *)&states[1].position, &v0, states,
                             400, &count, &result);
            CHECK(s == RF_STATUS_OVERLAPPING_BUFFERS, "overlap: %u", (unsigned)s);
            limited = config;
            limited.gravitation = 7;
            s = rf_propagate(&limited, site_frame, &g, NULL, NULL, NULL, NULL, 0.0, 10.0, &r0, &v0, states, 400, &count, &result);
            CHECK(s == RF_STATUS_INVALID_ARGUMENT, "unknown gravitation: %u", (unsigned)s);
            CHECK(still_filled(states, sizeof states, 0x5a), "states untouched on error");
            CHECK(still_filled(&result, sizeof result, 0x5a), "result untouched on error");
            CHECK(count == 12345, "count untouched on error");
        }
    }
    return check_report("test_propagate");
}
