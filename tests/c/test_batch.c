/* Batch functions give exactly what the single calls give (so firmware may use either). */
#include "check.h"

#define N 37

int main(void) {
    rf_earth_model m;
    rf_geodetic g[N], g_back[N], one_g;
    rf_vec3 x[N], one_x, w[N], al[N], a0[N], r[N], v[N];
    rf_point_kinematics p[N], p_out[N], one_p;
    rf_apparent_terms t[N], one_t;
    rf_frame_motion motion;
    rf_vec3 axis = {0.3, -0.4, 0.866};
    int i;
    OK(rf_earth_model_wgs84(&m));
    OK(rf_motion_about_axis(&axis, 0.7, 0.2, -0.05, &motion));
    motion.position.x = 12.0;
    motion.velocity.y = -3.0;
    for (i = 0; i < N; ++i) {
        double s = (double)i / N;
        g[i].latitude = (s - 0.5) * 3.0, g[i].longitude = (s - 0.3) * 6.0, g[i].height = 1e4 * s - 5e3;
        w[i].x = s, w[i].y = 1 - s, w[i].z = 0.5 * s;
        al[i].x = 0.1 * s, al[i].y = -0.2, al[i].z = s * s;
        a0[i].x = 9.8 * s, a0[i].y = 0.0, a0[i].z = -1.0;
        r[i].x = 3 * s, r[i].y = -2.0, r[i].z = 1.5 - s;
        v[i].x = -s, v[i].y = 4 * s, v[i].z = 0.25;
        p[i].position = r[i], p[i].velocity = v[i], p[i].acceleration = a0[i];
    }
    OK(rf_geodetic_to_ecef_batch(&m, g, N, x));
    OK(rf_ecef_to_geodetic_batch(&m, x, N, g_back));
    OK(rf_apparent_terms_batch(w, al, a0, r, v, N, t));
    OK(rf_motion_map_points(&motion, p, N, p_out));
    for (i = 0; i < N; ++i) {
        OK(rf_geodetic_to_ecef(&m, &g[i], &one_x));
        CHECK(memcmp(&one_x, &x[i], sizeof one_x) == 0, "geodetic_to_ecef batch element %d", i);
        OK(rf_ecef_to_geodetic(&m, &x[i], &one_g));
        CHECK(memcmp(&one_g, &g_back[i], sizeof one_g) == 0, "ecef_to_geodetic batch element %d", i);
        OK(rf_apparent_terms_compute(&w[i], &al[i], &a0[i], &r[i], &v[i], &one_t));
        CHECK(memcmp(&one_t, &t[i], sizeof one_t) == 0, "apparent batch element %d", i);
        OK(rf_motion_map_point(&motion, &p[i], &one_p));
        CHECK(memcmp(&one_p, &p_out[i], sizeof one_p) == 0, "map_points element %d", i);
    }
    return check_report("test_batch");
}
