/* The bad-input cases of the hardening review, through the C interface: each gets an error
 * status and leaves its outputs untouched, or (zero-initialised structs) is a valid default.
 * Set ROTAFRAME_EXPECT_FAST_KERNELS=0 or 1 to check which CPU code path runs (the emulated-CPU
 * runs of scripts/test-c do). */
#include "check.h"

/* A function edge that works on its first `budget` calls and fails after: a callback that
   is not deterministic, as C code reading a sensor may be. */
static int calls_left = 0;
static rf_status flaky(void *context, double time, rf_frame_motion *out) {
    (void)context, (void)time;
    if (calls_left-- <= 0) return RF_STATUS_INVALID_ARGUMENT;
    return rf_motion_identity(out);
}

static rf_earth_model wgs84_for_frame;
static rf_status earth_frame(void *context, double time, rf_frame_motion *out) {
    (void)context;
    return rf_earth_motion(&wgs84_for_frame, time, 0.0, out);
}

int main(void) {
    rf_earth_model wgs84, zero_model, bad;
    const char *expect = getenv("ROTAFRAME_EXPECT_FAST_KERNELS");
    OK(rf_earth_model_wgs84(&wgs84));
    memset(&zero_model, 0, sizeof zero_model);

    printf("CPU code path: %s\n", rf_fast_kernels_active() ? "AVX2 + FMA" : "baseline x86-64");
    if (expect != NULL) CHECK((int)rf_fast_kernels_active() == atoi(expect), "fast kernels %u, expected %s", rf_fast_kernels_active(), expect);

    { /* An ECEF point 1e155 m out: refused, not NaN with status OK. */
        rf_vec3 far = {1e155, 0.0, 0.0};
        rf_geodetic out;
        memset(&out, 0xA5, sizeof out);
        CHECK(rf_ecef_to_geodetic(&wgs84, &far, &out) == RF_STATUS_OUT_OF_RANGE, "1e155 m refused as out of range");
        CHECK(still_filled(&out, sizeof out, 0xA5), "output untouched");
    }
    { /* A height of 1e160 m: refused. */
        rf_geodetic up = {0.5, 0.1, 1e160};
        rf_vec3 out;
        memset(&out, 0xA5, sizeof out);
        CHECK(rf_geodetic_to_ecef(&wgs84, &up, &out) == RF_STATUS_OUT_OF_RANGE, "height 1e160 refused");
        CHECK(still_filled(&out, sizeof out, 0xA5), "output untouched");
    }
    { /* A model with semi_major_axis = 1 m: refused by every function that takes it. */
        rf_geodetic here = {0.5, 0.1, 0.0};
        rf_vec3 out;
        bad = wgs84;
        bad.semi_major_axis = 1.0;
        memset(&out, 0xA5, sizeof out);
        CHECK(rf_geodetic_to_ecef(&bad, &here, &out) == RF_STATUS_OUT_OF_RANGE, "a = 1 m refused");
        CHECK(still_filled(&out, sizeof out, 0xA5), "output untouched");
        bad = wgs84;
        bad.rotation_rate = 1.0; /* spins so fast that normal gravity would be negative */
        CHECK(rf_geodetic_to_ecef(&bad, &here, &out) == RF_STATUS_OUT_OF_RANGE, "omega = 1 rad/s refused");
        CHECK(rf_earth_model_from_defining_constants(6.4e6, 0.003, 3.9e14, 1.0, &bad) == RF_STATUS_OUT_OF_RANGE,
              "a level ellipsoid spinning at 1 rad/s refused");
        CHECK(rf_earth_model_custom(6378137.0, 1.0 / 298.257223563, 3.986004418e14, 7.292115e-5, 9.78, 9.83, 0.5, &bad) ==
                  RF_STATUS_OUT_OF_RANGE,
              "a J2 inconsistent with the flattening refused");
    }
    { /* Zero-initialised model = WGS 84. */
        rf_geodetic here = {0.5, 0.1, 100.0};
        rf_vec3 a, b;
        OK(rf_geodetic_to_ecef(&wgs84, &here, &a));
        OK(rf_geodetic_to_ecef(&zero_model, &here, &b));
        CHECK(memcmp(&a, &b, sizeof a) == 0, "the all-zero model is WGS 84");
    }
    { /* Normal gravity 7000 km below the ellipsoid: refused. */
        double g = 0.0;
        CHECK(rf_normal_gravity(&wgs84, 0.8, -7e6, &g) == RF_STATUS_OUT_OF_RANGE && g == 0.0, "h = -7000 km refused");
    }
    { /* Strapdown: a start 7000 km down, and an aided vertical channel beyond its stable range. */
        rf_strapdown_config config;
        rf_nav_state start = {{0.8, 0.1, -7e6}, {0.0, 0.0, 0.0}, {1.0, 0.0, 0.0, 0.0}};
        rf_strapdown sd;
        memset(&config, 0, sizeof config); /* NED, normal gravity, free, WGS 84 */
        memset(&sd, 0xA5, sizeof sd);
        CHECK(rf_strapdown_init(&config, &start, &sd) == RF_STATUS_OUT_OF_RANGE, "start 7000 km down refused");
        CHECK(still_filled(&sd, sizeof sd, 0xA5), "stepper untouched");
        start.position.height = 100.0;
        OK(rf_strapdown_init(&config, &start, &sd)); /* the zero config is valid */
        config.vertical = RF_VERTICAL_AIDED;
        config.height_time_constant = 1e6;
        CHECK(rf_strapdown_init(&config, &start, &sd) == RF_STATUS_OUT_OF_RANGE, "aided time constant 1e6 s refused");
        config.height_time_constant = 300.0;
        OK(rf_strapdown_init(&config, &start, &sd));
    }
    { /* Negative noise densities. */
        double d = 7.0;
        CHECK(rf_angle_random_walk_si(-1.0, &d) != RF_STATUS_OK && d == 7.0, "negative ARW refused");
        CHECK(rf_velocity_random_walk_si(-1.0, &d) != RF_STATUS_OK && d == 7.0, "negative VRW refused");
        OK(rf_angle_random_walk_si(0.0, &d));
        CHECK(d == 0.0, "zero ARW is zero");
    }
    { /* A zero-initialised error model is a perfect IMU. */
        rf_imu_error_model perfect;
        rf_imu_errors errors;
        rf_imu_increment ideal = {{1e-4, -2e-4, 3e-5}, {0.01, 0.02, -0.098}, 0.01}, measured;
        memset(&perfect, 0, sizeof perfect);
        OK(rf_imu_errors_init(&perfect, 1, &errors));
        OK(rf_imu_errors_apply(&errors, &ideal, &measured));
        CHECK(memcmp(&ideal, &measured, sizeof ideal) == 0, "a perfect IMU reports the ideal increment bit for bit");
        perfect.gyro.markov_sigma.x = 1e-5; /* a Gauss-Markov sigma needs a correlation time */
        CHECK(rf_imu_errors_init(&perfect, 1, &errors) == RF_STATUS_NOT_POSITIVE, "sigma without a time refused");
    }
    { /* Overlapping arrays: refused before anything is written. */
        rf_geodetic g[4] = {{0.1, 0.2, 0.0}, {0.2, 0.3, 10.0}, {0.3, 0.4, 20.0}, {0.4, 0.5, 30.0}};
        rf_geodetic copy[4];
        rf_vec3 v[4] = {{6.4e6, 0, 0}, {0, 6.4e6, 0}, {0, 0, 6.4e6}, {4e6, 4e6, 4e6}};
        rf_point_kinematics points[3];
        rf_frame_motion identity;
        rf_imu_increment inc[3] = {{{0, 0, 0}, {0, 0, -0.098}, 0.01}, {{0, 0, 0}, {0, 0, -0.098}, 0.01}, {{0, 0, 0}, {0, 0, -0.098}, 0.01}};
        rf_strapdown_config config;
        rf_nav_state start = {{0.8, 0.1, 100.0}, {0.0, 0.0, 0.0}, {1.0, 0.0, 0.0, 0.0}};
        rf_strapdown sd, sd_before;
        memcpy(copy, g, sizeof g);
        /* rf_geodetic and rf_vec3 are both three doubles: the same storage for input and output. */
        CHECK(rf_geodetic_to_ecef_batch(&wgs84, g, 4, (rf_vec3 *)g) == RF_STATUS_OVERLAPPING_BUFFERS, "identical arrays refused");
        CHECK(rf_geodetic_to_ecef_batch(&wgs84, g, 3, (rf_vec3 *)(g + 1)) == RF_STATUS_OVERLAPPING_BUFFERS, "shifted arrays refused");
        CHECK(memcmp(copy, g, sizeof g) == 0, "input untouched");
        CHECK(rf_ecef_to_geodetic_batch(&wgs84, v, 4, (rf_geodetic *)v) == RF_STATUS_OVERLAPPING_BUFFERS, "inverse in place refused");
        OK(rf_geodetic_to_ecef_batch(&wgs84, g, 2, (rf_vec3 *)(g + 2))); /* adjacent, not overlapping */
        memset(points, 0, sizeof points);
        OK(rf_motion_identity(&identity));
        CHECK(rf_motion_map_points(&identity, points, 3, points) == RF_STATUS_OVERLAPPING_BUFFERS, "map_points in place refused");
        memset(&config, 0, sizeof config);
        OK(rf_strapdown_init(&config, &start, &sd));
        sd_before = sd;
        CHECK(rf_strapdown_run(&sd, inc, NULL, 3, (rf_nav_state *)inc) == RF_STATUS_OVERLAPPING_BUFFERS, "states over increments refused");
        CHECK(memcmp(&sd, &sd_before, sizeof sd) == 0, "stepper untouched");
    }
    { /* Single-value functions work in place. */
        rf_quat q = {0.5, 0.5, 0.5, 0.5}, p = {0.0, 1.0, 0.0, 0.0}, expected;
        OK(rf_quat_multiply(&q, &p, &expected));
        OK(rf_quat_multiply(&q, &p, &q));
        CHECK(memcmp(&q, &expected, sizeof q) == 0, "rf_quat_multiply in place");
    }
    { /* Newer modules, all or nothing. The Allan cluster-size list is refused, not cut, when
         the caller's capacity is short, and nothing is written. */
        uint64_t sizes[4];
        size_t count = 77;
        memset(sizes, 0xA5, sizeof sizes);
        CHECK(rf_allan_default_cluster_sizes(100001, sizes, 4, &count) == RF_STATUS_INVALID_ARGUMENT, "short capacity refused");
        CHECK(still_filled(sizes, sizeof sizes, 0xA5) && count == 77, "sizes and count untouched");
    }
    { /* rf_propagate: a count pointer inside the states array is refused before the run. */
        rf_propagate_config config;
        rf_propagated_state states[8];
        rf_propagation_result result;
        rf_geodetic start = {0.6, -1.2, 1000.0};
        rf_vec3 r0, v0 = {100.0, 0.0, 0.0};
        memset(&config, 0, sizeof config);
        wgs84_for_frame = wgs84;
        OK(rf_geodetic_to_ecef(&wgs84, &start, &r0));
        memset(states, 0xA5, sizeof states);
        CHECK(rf_propagate(&config, earth_frame, NULL, NULL, NULL, NULL, NULL, 0.0, 10.0, &r0, &v0, states, 8, (size_t *)&states[3], &result) ==
                  RF_STATUS_OVERLAPPING_BUFFERS,
              "out_count inside out_states refused");
        CHECK(still_filled(states, sizeof states, 0xA5), "states untouched");
        CHECK(rf_propagate(&config, earth_frame, NULL, NULL, NULL, NULL, NULL, 0.0, 10.0, &r0, &v0, states, 8, NULL, (rf_propagation_result *)&states[1]) ==
                  RF_STATUS_OVERLAPPING_BUFFERS,
              "out_result inside out_states refused");
    }
    { /* A graph batch whose function edge fails only on the second (writing) pass leaves no
         partial result: every output is a NaN motion. */
        rf_graph_node storage[4];
        rf_graph g;
        rf_frame_motion out[5];
        double times[5] = {0.0, 1.0, 2.0, 3.0, 4.0};
        uint32_t f;
        size_t i;
        OK(rf_graph_init(storage, 4, 1, &g));
        OK(rf_graph_add_function(&g, 0, flaky, NULL, &f));
        calls_left = 5 + 2; /* the checking pass, then two times of the writing pass */
        memset(out, 0xA5, sizeof out);
        CHECK(rf_graph_motion_batch(&g, 0, f, times, 5, out) == RF_STATUS_INVALID_ARGUMENT, "the late failure is reported");
        for (i = 0; i < 5; i++) CHECK(isnan(out[i].rotation.w) && isnan(out[i].position.x), "output %zu is a NaN motion", i);
        calls_left = 0;
        memset(out, 0xA5, sizeof out);
        CHECK(rf_graph_motion_batch(&g, 0, f, times, 5, out) == RF_STATUS_INVALID_ARGUMENT, "an early failure is reported");
        CHECK(still_filled(out, sizeof out, 0xA5), "outputs untouched by an early failure");
    }
    { /* Two outputs over one address are refused before either is written (two mutable
         references to one place would be undefined behaviour in the library). */
        double x = -7.0, jac[9];
        rf_geodetic here = {0.5, 0.1, 10.0};
        rf_vec3 ecef;
        CHECK(rf_radii_of_curvature(&wgs84, 0.5, &x, &x) == RF_STATUS_OVERLAPPING_BUFFERS && x == -7.0, "radii into one double refused");
        memset(jac, 0xA5, sizeof jac);
        CHECK(rf_geodetic_to_ecef_jacobian(&wgs84, &here, (rf_vec3 *)&jac[6], jac) == RF_STATUS_OVERLAPPING_BUFFERS, "ECEF inside the Jacobian refused");
        CHECK(still_filled(jac, sizeof jac, 0xA5), "Jacobian untouched");
        OK(rf_geodetic_to_ecef_jacobian(&wgs84, &here, &ecef, jac));
    }
    return check_report("test_hardening");
}
