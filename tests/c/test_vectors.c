/* The shared cross-language vectors (tests/vectors/shared_cases.txt, written by the Rust core):
   the C interface must reproduce every output bit for bit. */
#include "check.h"

#define MAX_NUMBERS 64

static rf_frame_motion motion_of(const double *x) {
    rf_frame_motion m;
    m.rotation.w = x[0];
    m.rotation.x = x[1];
    m.rotation.y = x[2];
    m.rotation.z = x[3];
    m.position.x = x[4], m.position.y = x[5], m.position.z = x[6];
    m.velocity.x = x[7], m.velocity.y = x[8], m.velocity.z = x[9];
    m.acceleration.x = x[10], m.acceleration.y = x[11], m.acceleration.z = x[12];
    m.angular_velocity.x = x[13], m.angular_velocity.y = x[14], m.angular_velocity.z = x[15];
    m.angular_acceleration.x = x[16], m.angular_acceleration.y = x[17], m.angular_acceleration.z = x[18];
    return m;
}

static rf_vec3 vec(const double *x) {
    rf_vec3 v;
    v.x = x[0];
    v.y = x[1];
    v.z = x[2];
    return v;
}

static int put_vec(double *y, rf_vec3 v) {
    y[0] = v.x;
    y[1] = v.y;
    y[2] = v.z;
    return 3;
}

static int put_motion(double *y, const rf_frame_motion *m) {
    y[0] = m->rotation.w;
    y[1] = m->rotation.x;
    y[2] = m->rotation.y;
    y[3] = m->rotation.z;
    put_vec(y + 4, m->position);
    put_vec(y + 7, m->velocity);
    put_vec(y + 10, m->acceleration);
    put_vec(y + 13, m->angular_velocity);
    put_vec(y + 16, m->angular_acceleration);
    return 19;
}

/* Evaluates one shared function; returns the number of outputs, or -1 for an unknown name. */
static int evaluate(const rf_earth_model *wgs, const char *name, const double *x, double *y) {
    rf_status s = RF_STATUS_OK;
    int n = -1;
    if (strcmp(name, "map_point") == 0) {
        rf_frame_motion m = motion_of(x);
        rf_point_kinematics p, q;
        p.position = vec(x + 19), p.velocity = vec(x + 22), p.acceleration = vec(x + 25);
        s = rf_motion_map_point(&m, &p, &q);
        n = put_vec(y, q.position) + put_vec(y + 3, q.velocity) + put_vec(y + 6, q.acceleration);
    } else if (strcmp(name, "compose") == 0) {
        rf_frame_motion a = motion_of(x), b = motion_of(x + 19), c;
        s = rf_motion_compose(&a, &b, &c);
        n = put_motion(y, &c);
    } else if (strcmp(name, "inverse") == 0) {
        rf_frame_motion a = motion_of(x), c;
        s = rf_motion_inverse(&a, &c);
        n = put_motion(y, &c);
    } else if (strcmp(name, "apparent_acceleration") == 0) {
        rf_vec3 w = vec(x), al = vec(x + 3), a0 = vec(x + 6), r = vec(x + 9), v = vec(x + 12);
        rf_apparent_terms t;
        s = rf_apparent_terms_compute(&w, &al, &a0, &r, &v, &t);
        n = put_vec(y, t.translational) + put_vec(y + 3, t.coriolis) + put_vec(y + 6, t.centrifugal) + put_vec(y + 9, t.euler) + put_vec(y + 12, t.total);
    } else if (strcmp(name, "geodetic_to_ecef") == 0) {
        rf_geodetic g;
        rf_vec3 e;
        g.latitude = x[0], g.longitude = x[1], g.height = x[2];
        s = rf_geodetic_to_ecef(wgs, &g, &e);
        n = put_vec(y, e);
    } else if (strcmp(name, "ecef_to_geodetic") == 0) {
        rf_vec3 e = vec(x);
        rf_geodetic g;
        s = rf_ecef_to_geodetic(wgs, &e, &g);
        y[0] = g.latitude, y[1] = g.longitude, y[2] = g.height;
        n = 3;
    } else if (strcmp(name, "quat_from_euler") == 0) {
        rf_euler e;
        rf_quat q;
        e.yaw = x[0], e.pitch = x[1], e.roll = x[2];
        s = rf_quat_from_euler(&e, &q);
        y[0] = q.w, y[1] = q.x, y[2] = q.y, y[3] = q.z;
        n = 4;
    } else if (strcmp(name, "euler_from_quat") == 0) {
        rf_quat q;
        rf_euler e;
        q.w = x[0], q.x = x[1], q.y = x[2], q.z = x[3];
        s = rf_euler_from_quat(&q, &e);
        y[0] = e.yaw, y[1] = e.pitch, y[2] = e.roll;
        n = 3;
    } else if (strcmp(name, "normal_gravity") == 0) {
        s = rf_normal_gravity(wgs, x[0], x[1], y);
        n = 1;
    } else if (strcmp(name, "gravitation_ecef") == 0 || strcmp(name, "gravity_ecef") == 0) {
        rf_vec3 e = vec(x), g;
        s = name[7] == 't' ? rf_gravitation_ecef(wgs, &e, &g) : rf_gravity_ecef(wgs, &e, &g);
        n = put_vec(y, g);
    } else if (strcmp(name, "earth_rate_ned") == 0) {
        rf_vec3 w;
        s = rf_earth_rate_ned(wgs, x[0], &w);
        n = put_vec(y, w);
    } else if (strcmp(name, "transport_rate_ned") == 0) {
        rf_vec3 v = vec(x + 2), w;
        s = rf_transport_rate_ned(wgs, x[0], x[1], &v, &w);
        n = put_vec(y, w);
    } else if (strcmp(name, "eotvos_correction") == 0) {
        rf_vec3 v = vec(x + 2);
        s = rf_eotvos_correction(wgs, x[0], x[1], &v, y);
        n = 1;
    } else if (strcmp(name, "coriolis_parameter") == 0) {
        s = rf_coriolis_parameter(wgs, x[0], y);
        n = 1;
    } else if (strcmp(name, "earth_rotation_angle") == 0) {
        s = rf_earth_rotation_angle(x[0], x[1], y);
        n = 1;
    } else if (strcmp(name, "radii_of_curvature") == 0) {
        s = rf_radii_of_curvature(wgs, x[0], y, y + 1);
        n = 2;
    } else if (strcmp(name, "ned_from_ecef") == 0) {
        s = rf_ned_from_ecef(x[0], x[1], y);
        n = 9;
    } else if (strcmp(name, "local_level_motion") == 0) {
        rf_geodetic g;
        rf_vec3 v = vec(x + 3), a = vec(x + 6);
        rf_frame_motion mo;
        g.latitude = x[0], g.longitude = x[1], g.height = x[2];
        s = rf_local_level_motion(wgs, &g, &v, &a, &mo);
        n = put_motion(y, &mo);
    } else if (strcmp(name, "ideal_imu") == 0) {
        rf_frame_motion body = motion_of(x);
        rf_imu_sample out;
        s = rf_ideal_imu(wgs, RF_GRAVITY_NORMAL, &body, &out);
        n = put_vec(y, out.angular_rate) + put_vec(y + 3, out.specific_force);
    } else if (strcmp(name, "strapdown_ned") == 0 || strcmp(name, "strapdown_ecef") == 0) {
        rf_strapdown_config config;
        rf_nav_state start, end;
        rf_strapdown sd;
        int k;
        memset(&config, 0, sizeof config);
        memset(&end, 0, sizeof end);
        config.earth = *wgs;
        config.gravity = RF_GRAVITY_NORMAL;
        config.vertical = RF_VERTICAL_FREE;
        config.frame = strcmp(name, "strapdown_ecef") == 0 ? RF_NAV_FRAME_ECEF : RF_NAV_FRAME_NED;
        start.position.latitude = x[0], start.position.longitude = x[1], start.position.height = x[2];
        start.velocity_ned = vec(x + 3);
        start.attitude.w = x[6], start.attitude.x = x[7], start.attitude.y = x[8], start.attitude.z = x[9];
        s = rf_strapdown_init(&config, &start, &sd);
        for (k = 0; k < 5 && s == RF_STATUS_OK; ++k) {
            rf_imu_increment inc;
            inc.delta_angle = vec(x + 10 + 7 * k);
            inc.delta_velocity = vec(x + 13 + 7 * k);
            inc.interval = x[16 + 7 * k];
            s = rf_strapdown_step(&sd, &inc);
        }
        if (s == RF_STATUS_OK) {
            s = rf_strapdown_state(&sd, &end);
        }
        y[0] = end.position.latitude, y[1] = end.position.longitude, y[2] = end.position.height;
        put_vec(y + 3, end.velocity_ned);
        y[6] = end.attitude.w, y[7] = end.attitude.x, y[8] = end.attitude.y, y[9] = end.attitude.z;
        n = 10;
    } else if (strcmp(name, "graph_chain") == 0) {
        rf_graph_node nodes[6];
        rf_graph g;
        uint32_t ecef = 0, pad = 0, table = 0, sensor = 0, camera = 0;
        rf_geodetic site;
        rf_vec3 axis = vec(x + 4), offset = vec(x + 14), camera_offset = vec(x + 21);
        rf_quat mount, camera_mount;
        rf_frame_motion a, b;
        site.latitude = x[1], site.longitude = x[2], site.height = x[3];
        mount.w = x[10], mount.x = x[11], mount.y = x[12], mount.z = x[13];
        camera_mount.w = x[17], camera_mount.x = x[18], camera_mount.y = x[19], camera_mount.z = x[20];
        memset(&a, 0, sizeof a);
        memset(&b, 0, sizeof b);
        s = rf_graph_init(nodes, 6, 1, &g);
        if (s == RF_STATUS_OK) s = rf_graph_add_earth(&g, 0, wgs, x[0], &ecef);
        if (s == RF_STATUS_OK) s = rf_graph_add_site(&g, ecef, wgs, &site, RF_AXES_NED, &pad);
        if (s == RF_STATUS_OK) s = rf_graph_add_spin(&g, pad, &axis, x[7], x[8], x[9], &table);
        if (s == RF_STATUS_OK) s = rf_graph_add_fixed(&g, table, &mount, &offset, &sensor);
        if (s == RF_STATUS_OK) s = rf_graph_add_fixed(&g, pad, &camera_mount, &camera_offset, &camera);
        if (s == RF_STATUS_OK) s = rf_graph_motion(&g, 0, sensor, x[24], &a);
        if (s == RF_STATUS_OK) s = rf_graph_motion(&g, camera, sensor, x[24], &b);
        n = put_motion(y, &a) + put_motion(y + 19, &b);
    }
    CHECK(s == RF_STATUS_OK, "%s: status %u", name, (unsigned)s);
    return n;
}

static int parse_numbers(char *text, double *out) {
    int n = 0;
    char *tok = strtok(text, " \t\n");
    while (tok != NULL && n < MAX_NUMBERS) {
        out[n++] = strtod(tok, NULL);
        tok = strtok(NULL, " \t\n");
    }
    return n;
}

int main(int argc, char **argv) {
    const char *path = argc > 1 ? argv[1] : "tests/vectors/shared_cases.txt";
    FILE *f = fopen(path, "r");
    char line[8192];
    rf_earth_model wgs;
    int cases = 0;
    CHECK(f != NULL, "cannot open %s", path);
    if (f == NULL) {
        return check_report("test_vectors");
    }
    OK(rf_earth_model_wgs84(&wgs));
    while (fgets(line, sizeof line, f) != NULL) {
        char *bar1, *bar2, name[64];
        double x[MAX_NUMBERS], want[MAX_NUMBERS], got[MAX_NUMBERS];
        int nx, nw, ng, k;
        if (line[0] == '#' || line[0] == '\n') {
            continue;
        }
        bar1 = strchr(line, '|');
        bar2 = bar1 ? strchr(bar1 + 1, '|') : NULL;
        CHECK(bar1 && bar2, "malformed line");
        if (!bar1 || !bar2) {
            continue;
        }
        *bar1 = '\0';
        *bar2 = '\0';
        CHECK(sscanf(line, "%63s", name) == 1, "name");
        nx = parse_numbers(bar1 + 1, x);
        nw = parse_numbers(bar2 + 1, want);
        ng = evaluate(&wgs, name, x, got);
        CHECK(ng == nw, "%s: %d outputs, file has %d (inputs %d)", name, ng, nw, nx);
        for (k = 0; k < ng && k < nw; ++k) {
            CHECK(memcmp(&got[k], &want[k], sizeof(double)) == 0, "%s output %d: got %.17g, file has %.17g", name, k, got[k], want[k]);
        }
        ++cases;
    }
    fclose(f);
    CHECK(cases >= 100, "only %d cases", cases);
    return check_report("test_vectors");
}
