/* Frame graphs in caller storage: a chain query equals the hand-composed chain, batches equal
   single queries, sampled and function edges, and every error leaves its output untouched.
   Reference for the algebra: composition and inverse of frame motions (the transport theorem,
   as rf_motion_compose and rf_motion_inverse implement it). */
#include "check.h"

static double t_global = 0.0;

/* A function edge: a rotor turning at 2 rad/s about the parent's x axis. */
static rf_status rotor(void *context, double time, rf_frame_motion *out) {
    rf_vec3 x = {1.0, 0.0, 0.0};
    (void)context;
    return rf_motion_about_axis(&x, 2.0 * time, 2.0, 0.0, out);
}

static rf_status failing(void *context, double time, rf_frame_motion *out) {
    (void)context, (void)time, (void)out;
    return RF_STATUS_NON_FINITE;
}

static int same_motion(const rf_frame_motion *a, const rf_frame_motion *b) {
    const double *x = (const double *)a, *y = (const double *)b;
    size_t i;
    for (i = 0; i < sizeof *a / sizeof(double); ++i)
        if (x[i] != y[i]) return 0;
    return 1;
}

int main(void) {
    rf_earth_model wgs84;
    rf_graph_node nodes[9];
    rf_graph g;
    uint32_t ecef, pad, table, sensor, camera, rotor_frame, cart;
    rf_geodetic site = {-0.55, 2.02, 40.0};
    rf_vec3 axis = {0.0, 0.0, 1.0}, offset = {0.3, -0.1, 0.05}, camera_offset = {10.0, 2.0, -1.5};
    rf_quat mount = {0.9, 0.1, -0.3, 0.3}, camera_mount = {0.5, 0.5, 0.5, 0.5};
    double n = sqrt(0.9 * 0.9 + 0.1 * 0.1 + 0.3 * 0.3 + 0.3 * 0.3);
    rf_pose_sample poses[40];
    int k;
    mount.w /= n, mount.x /= n, mount.y /= n, mount.z /= n;
    OK(rf_earth_model_wgs84(&wgs84));
    OK(rf_graph_init(nodes, 9, 1, &g));
    OK(rf_graph_add_earth(&g, 0, &wgs84, 1.25, &ecef));
    OK(rf_graph_add_site(&g, ecef, &wgs84, &site, RF_AXES_NED, &pad));
    OK(rf_graph_add_spin(&g, pad, &axis, 3.0, 0.4, 0.2, &table));
    OK(rf_graph_add_fixed(&g, table, &mount, &offset, &sensor));
    OK(rf_graph_add_fixed(&g, pad, &camera_mount, &camera_offset, &camera));
    CHECK(ecef == 1 && pad == 2 && table == 3 && sensor == 4 && camera == 5, "frames numbered in order of addition");

    { /* The chain query equals the hand-composed chain (same order of composition). */
        double t = 12.5;
        rf_frame_motion earth, local, spin, fixed, a, b, c, chain, graph;
        rf_vec3 zero = {0.0, 0.0, 0.0}, unit_axis;
        double norm = sqrt(axis.x * axis.x + axis.y * axis.y + axis.z * axis.z);
        unit_axis.x = axis.x / norm, unit_axis.y = axis.y / norm, unit_axis.z = axis.z / norm;
        OK(rf_earth_motion(&wgs84, t, 1.25, &earth));
        OK(rf_local_level_motion(&wgs84, &site, &zero, &zero, &local));
        OK(rf_motion_about_axis(&unit_axis, 0.4 + t * (3.0 + 0.5 * 0.2 * t), 3.0 + 0.2 * t, 0.2, &spin));
        memset(&fixed, 0, sizeof fixed);
        fixed.rotation = mount;
        fixed.position = offset;
        OK(rf_motion_compose(&earth, &local, &a));
        OK(rf_motion_compose(&a, &spin, &b));
        OK(rf_motion_compose(&b, &fixed, &chain));
        OK(rf_graph_motion(&g, 0, sensor, t, &graph));
        CHECK(same_motion(&chain, &graph), "graph query equals the hand-composed chain bit for bit");
        /* Up and down: camera → pad ← table ← sensor. */
        OK(rf_graph_motion(&g, camera, sensor, t, &a));
        OK(rf_graph_motion(&g, pad, camera, t, &b));
        OK(rf_motion_inverse(&b, &c));
        OK(rf_graph_motion(&g, pad, sensor, t, &b));
        OK(rf_motion_compose(&c, &b, &chain));
        CHECK(same_motion(&a, &chain), "a query through the common ancestor is inverse(down) then down");
        t_global = t;
    }
    { /* Batches equal single queries. */
        double times[5] = {0.0, 0.5, 1.0, 100.0, -3.0};
        rf_frame_motion batch[5], one;
        OK(rf_graph_motion_batch(&g, camera, sensor, times, 5, batch));
        for (k = 0; k < 5; ++k) {
            OK(rf_graph_motion(&g, camera, sensor, times[k], &one));
            CHECK(same_motion(&one, &batch[k]), "batch element %d", k);
        }
    }
    { /* A function edge and a Cartesian sampled edge. */
        rf_frame_motion m;
        rf_vec3 z = {0.0, 0.0, 1.0};
        OK(rf_graph_add_function(&g, table, rotor, NULL, &rotor_frame));
        OK(rf_graph_motion(&g, table, rotor_frame, 0.25, &m));
        CLOSE(m.angular_velocity.x, 2.0, 0.0, "function edge rate");
        CLOSE(m.rotation.w, cos(0.25), 1e-15, "function edge angle");
        for (k = 0; k < 40; ++k) { /* a cart circling at 0.5 rad/s on a 4 m radius, turning with it */
            double t = 0.1 * k, s = sin(0.5 * t), c = cos(0.5 * t);
            rf_frame_motion turn;
            poses[k].time = t;
            poses[k].position.x = 4.0 * c, poses[k].position.y = 4.0 * s, poses[k].position.z = 0.0;
            OK(rf_motion_about_axis(&z, 0.5 * t, 0.5, 0.0, &turn));
            poses[k].attitude = turn.rotation;
        }
        OK(rf_graph_add_samples_cartesian(&g, pad, poses, 40, &cart));
        OK(rf_graph_motion(&g, pad, cart, 1.55, &m));
        /* Bounds: the interpolation error at 10 Hz (about 1e-9 m/s for this motion, see the Rust
           tests), with margin. */
        CLOSE(m.velocity.x, -4.0 * 0.5 * sin(0.5 * 1.55), 1e-7, "sampled velocity x");
        CLOSE(m.velocity.y, 4.0 * 0.5 * cos(0.5 * 1.55), 1e-7, "sampled velocity y");
        CLOSE(m.angular_velocity.z, 0.5, 1e-7, "sampled angular velocity");
    }
    { /* Apparent accelerations in the table frame: the centrifugal term of the table's own spin. */
        rf_point_kinematics p;
        rf_apparent_terms terms;
        memset(&p, 0, sizeof p);
        p.position.x = 0.2;
        OK(rf_graph_apparent(&g, table, 0.0, &p, &terms));
        CHECK(terms.centrifugal.x > 0.0, "centrifugal term points away from the axis");
    }
    { /* Errors leave outputs untouched. */
        rf_frame_motion m, before;
        double times[2] = {0.0, 99.0};
        rf_frame_motion two[2], two_before[2];
        uint32_t frame = 77;
        rf_graph small;
        rf_graph_node one_node[2];
        memset(&m, 0xA5, sizeof m);
        before = m;
        CHECK(rf_graph_motion(&g, 0, 42, 0.0, &m) == RF_STATUS_OUT_OF_RANGE, "unknown frame");
        CHECK(rf_graph_motion(&g, pad, cart, 99.0, &m) == RF_STATUS_OUT_OF_RANGE, "time outside the samples' span");
        CHECK(memcmp(&m, &before, sizeof m) == 0, "output untouched");
        memset(two, 0xA5, sizeof two);
        memcpy(two_before, two, sizeof two);
        CHECK(rf_graph_motion_batch(&g, pad, cart, times, 2, two) == RF_STATUS_OUT_OF_RANGE, "batch with a bad time");
        CHECK(memcmp(two, two_before, sizeof two) == 0, "batch output untouched");
        CHECK(rf_graph_motion_batch(&g, pad, cart, (const double *)two, 2, two) == RF_STATUS_OVERLAPPING_BUFFERS, "overlap refused");
        OK(rf_graph_add_function(&g, pad, failing, NULL, &frame));
        CHECK(rf_graph_motion(&g, pad, frame, 0.0, &m) == RF_STATUS_NON_FINITE, "a function edge's status is returned");
        CHECK(rf_graph_add_fixed(&g, pad, &mount, &offset, &frame) != RF_STATUS_OK, "storage full");
        OK(rf_graph_init(one_node, 2, 0, &small));
        CHECK(rf_graph_add_samples_geodetic(&small, 0, &wgs84, NULL, 0, &frame) != RF_STATUS_OK, "geodetic samples need an Earth parent");
        CHECK(rf_graph_add_spin(&small, 5, &axis, 1.0, 0.0, 0.0, &frame) == RF_STATUS_OUT_OF_RANGE, "unknown parent");
        CHECK(rf_graph_apparent(&small, 0, 0.0, NULL, NULL) == RF_STATUS_NULL_POINTER, "null point");
        {
            rf_point_kinematics p;
            rf_apparent_terms terms;
            memset(&p, 0, sizeof p);
            CHECK(rf_graph_apparent(&small, 0, 0.0, &p, &terms) == RF_STATUS_INVALID_ARGUMENT, "a non-inertial root has no apparent accelerations");
        }
    }
    (void)t_global;
    return check_report("test_graph");
}
