/* Finite in, finite out or an error status: every function of the C interface is called with
 * finite numbers drawn from the whole double range (subnormals to DBL_MAX, the supported
 * limits and just beyond them, and physical magnitudes). A call that returns RF_STATUS_OK
 * must have written only finite numbers; any other status must leave every output byte as it
 * was. (A hardening requirement of the library; common practice for numerical libraries.) */
#include <float.h>
#include <stdint.h>

#include "check.h"

static uint64_t rng_state = 0x9E3779B97F4A7C15u;

static uint64_t next_u64(void) {
    /* SplitMix64 (Steele, Lea and Flood, 2014). */
    uint64_t z = (rng_state += 0x9E3779B97F4A7C15u);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9u;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBu;
    return z ^ (z >> 31);
}

static double unit(void) { return (double)(next_u64() >> 11) / 9007199254740992.0; }

static const double specials[] = {0.0, -0.0, DBL_MIN, 5e-324, DBL_MAX, -DBL_MAX, 1e15, -1e15, 1.0000001e15, 1e10,
                                  1.0001e10, 1e9, 1e6, 1e12, 1e155, -1e155, 1e300, -1e300, 6378137.0, -3.2e6,
                                  1.5707963267948966, -1.5707963267948966, 1e-9, 1e5};

/* Any finite double, weighted so that every regime is drawn often. */
static double finite(void) {
    uint64_t pick = next_u64() % 100;
    if (pick < 40) return (unit() * 2.0 - 1.0) * 1e7;
    if (pick < 55) return unit() * 4.0 - 2.0;
    if (pick < 85) {
        for (;;) {
            uint64_t bits = next_u64();
            double x;
            memcpy(&x, &bits, sizeof x);
            if (isfinite(x)) return x;
        }
    }
    return specials[next_u64() % (sizeof specials / sizeof specials[0])];
}

static rf_vec3 vec(void) {
    rf_vec3 v = {finite(), finite(), finite()};
    return v;
}

static rf_quat quat(void) {
    rf_quat q = {finite(), finite(), finite(), finite()};
    if (next_u64() % 2) {
        double n;
        q.w = unit() - 0.5, q.x = unit() - 0.5, q.y = unit() - 0.5, q.z = unit() - 0.5;
        n = sqrt(q.w * q.w + q.x * q.x + q.y * q.y + q.z * q.z);
        q.w /= n, q.x /= n, q.y /= n, q.z /= n;
    }
    return q;
}

static void fill(double *d, size_t n) {
    size_t i;
    for (i = 0; i < n; ++i) d[i] = finite();
}

static rf_frame_motion motion(void) {
    rf_frame_motion m;
    fill(&m.position.x, 15);
    m.rotation = quat();
    if (next_u64() % 2) { /* physical parts, so that the accepting path runs */
        m.position.x = unit(), m.velocity.y = unit(), m.angular_velocity.z = unit(), m.acceleration.x = unit();
        m.position.y = m.position.z = m.velocity.x = m.velocity.z = m.acceleration.y = m.acceleration.z = 0.0;
        m.angular_velocity.x = m.angular_velocity.y = 0.0;
        m.angular_acceleration.x = m.angular_acceleration.y = m.angular_acceleration.z = 0.0;
    }
    return m;
}

static rf_earth_model model(void) {
    rf_earth_model m = {0};
    switch (next_u64() % 4) {
    case 0: rf_earth_model_wgs84(&m); break;
    case 1: break; /* all zero: WGS 84 */
    case 2: fill(&m.semi_major_axis, 8); break;
    default:
        rf_earth_model_wgs84(&m);
        ((double *)&m)[next_u64() % 8] = finite();
    }
    return m;
}

static rf_geodetic geodetic(void) {
    rf_geodetic g = {finite(), finite(), finite()};
    if (next_u64() % 2) g.latitude = unit() * 3.0 - 1.5, g.height = (unit() - 0.5) * 2e4;
    return g;
}

/* Every double in `n` bytes at `p` is finite. */
static int all_finite(const void *p, size_t n) {
    const unsigned char *b = (const unsigned char *)p;
    size_t i;
    for (i = 0; i + sizeof(double) <= n; i += sizeof(double)) {
        double x;
        memcpy(&x, b + i, sizeof x);
        if (!isfinite(x)) return 0;
    }
    return 1;
}

static unsigned long accepted = 0, refused = 0;

/* Calls `call` with `out` (n bytes, pre-filled with 0xA5) and checks the contract. */
#define PROBE(name, call, out, n)                                                                 \
    do {                                                                                          \
        rf_status probe_status_;                                                                  \
        memset((out), 0xA5, (n));                                                                 \
        probe_status_ = (call);                                                                   \
        if (probe_status_ == RF_STATUS_OK) {                                                      \
            ++accepted;                                                                           \
            CHECK(all_finite((out), (n)), "%s: finite input gave non-finite output", name);        \
        } else {                                                                                  \
            ++refused;                                                                            \
            CHECK(still_filled((out), (n), 0xA5), "%s: status %u but the output was written", name, \
                  (unsigned)probe_status_);                                                       \
            CHECK(strcmp(rf_status_message(probe_status_), "unknown rotaframe status") != 0,      \
                  "%s: unknown status %u", name, (unsigned)probe_status_);                        \
        }                                                                                         \
    } while (0)

/* A trajectory callback that returns the motion held in its context. */
static rf_status held_motion(void *context, double time, rf_frame_motion *out_motion) {
    (void)time;
    *out_motion = *(const rf_frame_motion *)context;
    return RF_STATUS_OK;
}

int main(void) {
    int round;
    for (round = 0; round < 20000; ++round) {
        rf_earth_model m = model(), out_model;
        rf_geodetic g = geodetic(), out_g, gs[3], out_gs[3];
        rf_vec3 v = vec(), w = vec(), a = vec(), r = vec(), out_v, out_w, vs[3], out_vs[3];
        rf_frame_motion mo = motion(), mo2 = motion(), out_mo;
        rf_point_kinematics pk, out_pk, pks[2], out_pks[2];
        rf_apparent_terms out_terms, out_terms_many[2];
        rf_quat q = quat(), out_q;
        rf_euler e = {finite(), finite(), finite()}, out_e;
        double x = finite(), y = finite(), z = finite(), out_x, mat[9], out_mat[9], times[6];
        rf_imu_sample samples[6], out_sample;
        rf_imu_increment inc, out_inc, incs[2];
        rf_nav_state state, out_state, out_states[2];
        rf_strapdown_config config = {0};
        rf_strapdown sd, before;
        rf_imu_error_model em;
        rf_imu_errors errors, errors_before;
        rf_recorded_sample record[4];
        int i;

        fill(&pk.position.x, 9);
        fill(&pks[0].position.x, 18);
        fill(mat, 9);
        for (i = 0; i < 3; ++i) gs[i] = geodetic(), vs[i] = vec();

        PROBE("rf_earth_model_from_defining_constants", rf_earth_model_from_defining_constants(x, y, z, finite(), &out_model), &out_model, sizeof out_model);
        PROBE("rf_earth_model_custom", rf_earth_model_custom(x, y, z, finite(), finite(), finite(), finite(), &out_model), &out_model, sizeof out_model);
        PROBE("rf_geodetic_to_ecef", rf_geodetic_to_ecef(&m, &g, &out_v), &out_v, sizeof out_v);
        PROBE("rf_ecef_to_geodetic", rf_ecef_to_geodetic(&m, &v, &out_g), &out_g, sizeof out_g);
        PROBE("rf_geodetic_to_ecef_batch", rf_geodetic_to_ecef_batch(&m, gs, 3, out_vs), out_vs, sizeof out_vs);
        PROBE("rf_ecef_to_geodetic_batch", rf_ecef_to_geodetic_batch(&m, vs, 3, out_gs), out_gs, sizeof out_gs);
        PROBE("rf_ned_from_ecef", rf_ned_from_ecef(x, y, out_mat), out_mat, sizeof out_mat);
        PROBE("rf_enu_from_ecef", rf_enu_from_ecef(x, y, out_mat), out_mat, sizeof out_mat);
        {
            double radii[2];
            memset(radii, 0xA5, sizeof radii);
            PROBE("rf_radii_of_curvature", rf_radii_of_curvature(&m, x, &radii[0], &radii[1]), radii, sizeof radii);
        }
        PROBE("rf_earth_rate_ned", rf_earth_rate_ned(&m, x, &out_v), &out_v, sizeof out_v);
        PROBE("rf_transport_rate_ned", rf_transport_rate_ned(&m, g.latitude, g.height, &v, &out_v), &out_v, sizeof out_v);
        PROBE("rf_coriolis_ned", rf_coriolis_ned(&m, g.latitude, g.height, &v, &out_v), &out_v, sizeof out_v);
        PROBE("rf_local_level_motion", rf_local_level_motion(&m, &g, &v, &a, &out_mo), &out_mo, sizeof out_mo);
        PROBE("rf_earth_motion", rf_earth_motion(&m, x, y, &out_mo), &out_mo, sizeof out_mo);
        PROBE("rf_earth_rotation_angle", rf_earth_rotation_angle(x, y, &out_x), &out_x, sizeof out_x);
        PROBE("rf_normal_gravity", rf_normal_gravity(&m, g.latitude, g.height, &out_x), &out_x, sizeof out_x);
        PROBE("rf_schuler_period", rf_schuler_period(&m, g.latitude, g.height, &out_x), &out_x, sizeof out_x);
        PROBE("rf_coriolis_parameter", rf_coriolis_parameter(&m, x, &out_x), &out_x, sizeof out_x);
        PROBE("rf_gravity_ned", rf_gravity_ned(&m, g.latitude, g.height, &out_v), &out_v, sizeof out_v);
        PROBE("rf_gravitation_ecef", rf_gravitation_ecef(&m, &v, &out_v), &out_v, sizeof out_v);
        PROBE("rf_gravity_ecef", rf_gravity_ecef(&m, &v, &out_v), &out_v, sizeof out_v);
        PROBE("rf_centripetal_acceleration_ecef", rf_centripetal_acceleration_ecef(&m, &v, &out_v), &out_v, sizeof out_v);
        PROBE("rf_eotvos_correction", rf_eotvos_correction(&m, g.latitude, g.height, &v, &out_x), &out_x, sizeof out_x);
        PROBE("rf_motion_about_axis", rf_motion_about_axis(&v, x, y, z, &out_mo), &out_mo, sizeof out_mo);
        PROBE("rf_motion_compose", rf_motion_compose(&mo, &mo2, &out_mo), &out_mo, sizeof out_mo);
        PROBE("rf_motion_inverse", rf_motion_inverse(&mo, &out_mo), &out_mo, sizeof out_mo);
        PROBE("rf_motion_map_point", rf_motion_map_point(&mo, &pk, &out_pk), &out_pk, sizeof out_pk);
        PROBE("rf_motion_map_points", rf_motion_map_points(&mo, pks, 2, out_pks), out_pks, sizeof out_pks);
        PROBE("rf_motion_map_vector", rf_motion_map_vector(&mo, &v, &out_v), &out_v, sizeof out_v);
        {
            rf_vec3 rates[2];
            memset(rates, 0xA5, sizeof rates);
            PROBE("rf_motion_rates_in_child", rf_motion_rates_in_child(&mo, &rates[0], &rates[1]), rates, sizeof rates);
        }
        PROBE("rf_apparent_terms_compute", rf_apparent_terms_compute(&w, &a, &v, &r, &w, &out_terms), &out_terms, sizeof out_terms);
        PROBE("rf_apparent_terms_batch", rf_apparent_terms_batch(vs, vs + 1, vs, vs + 1, vs, 2, out_terms_many), out_terms_many, sizeof out_terms_many);
        PROBE("rf_apparent_of_motion", rf_apparent_of_motion(&mo, &pk, &out_terms), &out_terms, sizeof out_terms);
        PROBE("rf_ideal_imu", rf_ideal_imu(&m, (uint32_t)(next_u64() % 2), &mo, &out_sample), &out_sample, sizeof out_sample);
        PROBE("rf_quadrature_times", rf_quadrature_times(x, y, times), times, sizeof times);
        for (i = 0; i < 6; ++i) fill(&samples[i].angular_rate.x, 6);
        PROBE("rf_imu_increment_from_samples", rf_imu_increment_from_samples(x, y, samples, &out_inc), &out_inc, sizeof out_inc);
        PROBE("rf_imu_increment_of_trajectory", rf_imu_increment_of_trajectory(&m, 0, held_motion, &mo, x, y, &out_inc), &out_inc, sizeof out_inc);
        for (i = 0; i < 4; ++i) {
            record[i].time = (double)i * (next_u64() % 2 ? 0.1 : fabs(finite()));
            record[i].position = geodetic();
            record[i].attitude = quat();
        }
        {
            rf_imu_increment from_record[3];
            PROBE("rf_imu_increments_from_record", rf_imu_increments_from_record(&m, 0, record, 4, NULL, 0, from_record), from_record, sizeof from_record);
        }

        /* Navigation. */
        state.position = g;
        state.velocity_ned = next_u64() % 2 ? v : (rf_vec3){0.0, 0.0, 0.0};
        state.attitude = q;
        config.earth = m;
        config.frame = (uint32_t)(next_u64() % 2);
        config.vertical = (uint32_t)(next_u64() % 3);
        config.gravity = (uint32_t)(next_u64() % 2);
        config.height_time_constant = next_u64() % 2 ? finite() : 100.0;
        fill(&inc.delta_angle.x, 7);
        if (next_u64() % 2) inc.delta_angle.x *= 1e-12, inc.delta_velocity.y *= 1e-12, inc.interval = 0.01;
        memset(&sd, 0xA5, sizeof sd);
        if (rf_strapdown_init(&config, &state, &sd) == RF_STATUS_OK) {
            CHECK(all_finite(&sd.position, 3 * sizeof(rf_vec3) + sizeof(rf_quat)), "rf_strapdown_init: finite state");
            before = sd;
            if (rf_strapdown_step(&sd, &inc) != RF_STATUS_OK) {
                CHECK(memcmp(&sd, &before, sizeof sd) == 0, "rf_strapdown_step: unchanged on error");
            } else {
                CHECK(all_finite(&sd.position, 3 * sizeof(rf_vec3) + sizeof(rf_quat)), "rf_strapdown_step: finite state");
            }
            PROBE("rf_strapdown_state", rf_strapdown_state(&sd, &out_state), &out_state, sizeof out_state);
            incs[0] = inc, incs[1] = inc;
            before = sd;
            PROBE("rf_strapdown_run", rf_strapdown_run(&sd, incs, NULL, 2, out_states), out_states, sizeof out_states);
            if (memcmp(&sd, &before, sizeof sd) != 0)
                CHECK(all_finite(&sd.position, 3 * sizeof(rf_vec3) + sizeof(rf_quat)), "rf_strapdown_run: finite state");
            before = sd;
            if (rf_strapdown_set_height_reference(&sd, x) != RF_STATUS_OK)
                CHECK(memcmp(&sd, &before, sizeof sd) == 0, "rf_strapdown_set_height_reference: unchanged on error");
        }
        PROBE("rf_angle_random_walk_si", rf_angle_random_walk_si(x, &out_x), &out_x, sizeof out_x);
        PROBE("rf_velocity_random_walk_si", rf_velocity_random_walk_si(x, &out_x), &out_x, sizeof out_x);
        memset(&em, 0, sizeof em);
        if (next_u64() % 2) {
            fill(&em.gyro.bias.x, 3);
            em.gyro.scale_factor = (rf_vec3){unit() * 1e-3, 0.0, 0.0};
            em.accelerometer.noise_density = (rf_vec3){fabs(finite()), 0.0, 0.0};
            em.accelerometer.markov_sigma = (rf_vec3){fabs(finite()), 0.0, 0.0};
            em.accelerometer.markov_time = (rf_vec3){fabs(finite()), 0.0, 0.0};
        }
        memset(&errors, 0xA5, sizeof errors);
        if (rf_imu_errors_init(&em, next_u64(), &errors) == RF_STATUS_OK) {
            errors_before = errors;
            PROBE("rf_imu_errors_apply", rf_imu_errors_apply(&errors, &inc, &out_inc), &out_inc, sizeof out_inc);
            if (memcmp(&errors, &errors_before, sizeof errors) != 0)
                CHECK(all_finite(&errors.gyro_markov, 2 * sizeof(rf_vec3)), "rf_imu_errors_apply: finite Gauss-Markov states");
        } else {
            CHECK(still_filled(&errors, sizeof errors, 0xA5), "rf_imu_errors_init: output written on error");
        }
        {
            struct { rf_geodetic p; rf_vec3 v; } lever;
            memset(&lever, 0xA5, sizeof lever);
            PROBE("rf_lever_arm_state", rf_lever_arm_state(&m, &state, &w, &a, &lever.p, &lever.v), &lever, sizeof lever);
        }

        /* Frame graphs: edges from any numbers, then queries at any time. */
        {
            rf_graph_node nodes[6];
            rf_graph graph;
            uint32_t f[5] = {0, 0, 0, 0, 0};
            rf_quat qq = quat();
            rf_vec3 axis = vec();
            rf_frame_motion gm;
            rf_apparent_terms gt;
            rf_point_kinematics gp;
            fill(&gp.position.x, 9);
            OK(rf_graph_init(nodes, 6, 1, &graph));
            if (rf_graph_add_earth(&graph, 0, &m, x, &f[0]) != RF_STATUS_OK) f[0] = 0;
            if (rf_graph_add_site(&graph, f[0], &m, &g, (uint32_t)(next_u64() % 2), &f[1]) != RF_STATUS_OK) f[1] = f[0];
            if (rf_graph_add_spin(&graph, f[1], &axis, y, z, finite(), &f[2]) != RF_STATUS_OK) f[2] = f[1];
            if (rf_graph_add_fixed(&graph, f[2], &qq, &v, &f[3]) != RF_STATUS_OK) f[3] = f[2];
            if (rf_graph_add_function(&graph, f[3], held_motion, &mo, &f[4]) != RF_STATUS_OK) f[4] = f[3];
            PROBE("rf_graph_motion", rf_graph_motion(&graph, f[next_u64() % 5], f[next_u64() % 5], finite(), &gm), &gm, sizeof gm);
            PROBE("rf_graph_apparent", rf_graph_apparent(&graph, f[next_u64() % 5], finite(), &gp, &gt), &gt, sizeof gt);
        }

        /* Rotations. */
        PROBE("rf_quat_from_euler", rf_quat_from_euler(&e, &out_q), &out_q, sizeof out_q);
        PROBE("rf_euler_from_quat", rf_euler_from_quat(&q, &out_e), &out_e, sizeof out_e);
        PROBE("rf_quat_to_matrix", rf_quat_to_matrix(&q, out_mat), out_mat, sizeof out_mat);
        PROBE("rf_matrix_to_quat", rf_matrix_to_quat(mat, &out_q), &out_q, sizeof out_q);
        PROBE("rf_quat_multiply", rf_quat_multiply(&q, &mo.rotation, &out_q), &out_q, sizeof out_q);
        PROBE("rf_quat_rotate", rf_quat_rotate(&q, &v, &out_w), &out_w, sizeof out_w);
        PROBE("rf_quat_from_rotvec", rf_quat_from_rotvec(&v, &out_q), &out_q, sizeof out_q);
        PROBE("rf_quat_to_rotvec", rf_quat_to_rotvec(&q, &out_w), &out_w, sizeof out_w);
    }
    printf("finite-input sweep: %lu calls accepted, %lu refused\n", accepted, refused);
    CHECK(accepted > 100000 && refused > 100000, "both paths exercised");
    for (round = 0; round < 3000; ++round) { /* calibration and Allan deviation */
        rf_calibration_site site = {0};
        rf_accelerometer_position positions[10];
        rf_gyro_record records[10];
        rf_vec3 forces[10], noise = vec(), out_v;
        rf_triad_calibration cal;
        double residuals[30], samples[9], scratch[10], taus[3], devs[3], dofs[3];
        uint64_t sizes[RF_MAX_CLUSTER_SIZES];
        size_t count = 0;
        rf_allan_point points[RF_MAX_CLUSTER_SIZES];
        rf_noise_terms terms;
        int i, physical = (int)(next_u64() % 2);
        site.model = model();
        site.latitude = physical ? unit() - 0.5 : finite();
        site.height = physical ? unit() * 100.0 : finite();
        site.gravity = (uint32_t)(next_u64() % 3);
        noise.x = fabs(noise.x), noise.y = fabs(noise.y), noise.z = fabs(noise.z);
        for (i = 0; i < 10; ++i) {
            rf_vec3 f = vec();
            if (physical) f.x = 10.0 * (unit() - 0.5), f.y = 10.0 * (unit() - 0.5), f.z = 10.0 * (unit() - 0.5);
            positions[i].attitude = quat();
            positions[i].specific_force = f;
            forces[i] = f;
            records[i].attitude = positions[i].attitude;
            records[i].table_axis_ned = vec();
            records[i].table_rate = physical ? unit() : finite();
            records[i].duration = finite();
            records[i].angular_rate = f;
        }
        PROBE("rf_calibrate_accelerometers", rf_calibrate_accelerometers(&site, positions, 10, (uint32_t)(next_u64() % 4), (next_u64() % 2) ? &noise : NULL, &cal, NULL), &cal, sizeof cal);
        PROBE("rf_calibrate_accelerometers residuals", rf_calibrate_accelerometers(&site, positions, 10, RF_TRIAD_FULL, NULL, &cal, residuals), residuals, sizeof residuals);
        PROBE("rf_calibrate_gyros", rf_calibrate_gyros(&site, records, 10, (uint32_t)(next_u64() % 3), NULL, &cal, NULL), &cal, sizeof cal);
        PROBE("rf_calibrate_accelerometers_by_magnitude", rf_calibrate_accelerometers_by_magnitude(&site, forces, 10, NULL, &cal, residuals), residuals, sizeof(double) * 10);
        PROBE("rf_triad_correct_increment", rf_triad_correct_increment(&cal, &forces[0], finite(), &out_v), &out_v, sizeof out_v);
        fill(samples, 9);
        if (physical)
            for (i = 0; i < 9; ++i) samples[i] = unit();
        OK(rf_allan_default_cluster_sizes(9, sizes, RF_MAX_CLUSTER_SIZES, &count));
        PROBE("rf_allan_deviation", rf_allan_deviation(samples, 9, physical ? 0.01 : finite(), sizes, count, physical ? 0.683 : finite(), scratch, points), points, sizeof(rf_allan_point) * count);
        fill(taus, 3), fill(devs, 3), fill(dofs, 3);
        PROBE("rf_fit_noise_terms", rf_fit_noise_terms(taus, devs, 3, (next_u64() % 2) ? dofs : NULL, &terms), &terms, sizeof terms);
    }
    return check_report("test_finite");
}
