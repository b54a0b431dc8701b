/*
 * Driver for the callgrind benchmark: calls one rotaframe C function (or its hand-written C
 * counterpart) CALLS times over fixed inputs inside bench_loop, which callgrind measures.
 * Usage: bench_callgrind {map_point|apparent|geodetic_to_ecef|ecef_to_geodetic} {rf|c}
 * Also checks that both implementations agree on the inputs (to the bit for the geodesy).
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "handwritten.h"
#include "rotaframe.h"

#define N 256
#define CALLS 4096

static rf_frame_motion motions[N];
static rf_point_kinematics points[N];
static rf_vec3 vectors[5][N];
static rf_geodetic positions[N];
static rf_vec3 ecef[N];
static rf_earth_model model;
static double sink;

static unsigned long long seed = 12345;
static double next(void) {
    seed = seed * 6364136223846793005ULL + 1442695040888963407ULL;
    return ((double)(seed >> 11) / 9007199254740992.0) * 2.0 - 1.0;
}

static void setup(void) {
    int i, k;
    rf_earth_model_wgs84(&model);
    for (i = 0; i < N; ++i) {
        double q[4] = {next() + 2.0, next(), next(), next()}, nq = 0.0;
        for (k = 0; k < 4; ++k) nq += q[k] * q[k];
        nq = sqrt(nq);
        motions[i].rotation.w = q[0] / nq, motions[i].rotation.x = q[1] / nq, motions[i].rotation.y = q[2] / nq, motions[i].rotation.z = q[3] / nq;
        motions[i].position.x = next() * 1e3, motions[i].position.y = next() * 1e3, motions[i].position.z = next() * 1e3;
        motions[i].velocity.x = next(), motions[i].velocity.y = next(), motions[i].velocity.z = next();
        motions[i].acceleration.x = next(), motions[i].acceleration.y = next(), motions[i].acceleration.z = next();
        motions[i].angular_velocity.x = next(), motions[i].angular_velocity.y = next(), motions[i].angular_velocity.z = next();
        motions[i].angular_acceleration.x = next(), motions[i].angular_acceleration.y = next(), motions[i].angular_acceleration.z = next();
        points[i].position.x = next() * 10, points[i].position.y = next() * 10, points[i].position.z = next() * 10;
        points[i].velocity.x = next(), points[i].velocity.y = next(), points[i].velocity.z = next();
        points[i].acceleration.x = next(), points[i].acceleration.y = next(), points[i].acceleration.z = next();
        for (k = 0; k < 5; ++k) vectors[k][i].x = next(), vectors[k][i].y = next(), vectors[k][i].z = next();
        positions[i].latitude = next() * 1.5, positions[i].longitude = next() * 3.1, positions[i].height = next() * 1e4;
        rf_geodetic_to_ecef(&model, &positions[i], &ecef[i]);
    }
}

static double e2_of(void) { return model.flattening * (2.0 - model.flattening); }

/* One call of the selected implementation on input i. */
static void call(int which, int rf, int i) {
    switch (which) {
    case 0:
        if (rf) {
            rf_point_kinematics out;
            rf_motion_map_point(&motions[i], &points[i], &out);
            sink += out.acceleration.z;
        } else {
            double o1[3], o2[3], o3[3];
            const rf_frame_motion *m = &motions[i];
            hw_map_point(&m->rotation.w, &m->position.x, &m->velocity.x, &m->acceleration.x, &m->angular_velocity.x, &m->angular_acceleration.x,
                         &points[i].position.x, &points[i].velocity.x, &points[i].acceleration.x, o1, o2, o3);
            sink += o3[2];
        }
        break;
    case 1:
        if (rf) {
            rf_apparent_terms t;
            rf_apparent_terms_compute(&vectors[0][i], &vectors[1][i], &vectors[2][i], &vectors[3][i], &vectors[4][i], &t);
            sink += t.total.z;
        } else {
            double t[15];
            hw_apparent(&vectors[0][i].x, &vectors[1][i].x, &vectors[2][i].x, &vectors[3][i].x, &vectors[4][i].x, t);
            sink += t[14];
        }
        break;
    case 2:
        if (rf) {
            rf_vec3 x;
            rf_geodetic_to_ecef(&model, &positions[i], &x);
            sink += x.z;
        } else {
            double x[3];
            hw_geodetic_to_ecef(model.semi_major_axis, e2_of(), positions[i].latitude, positions[i].longitude, positions[i].height, x);
            sink += x[2];
        }
        break;
    default:
        if (rf) {
            rf_geodetic g;
            rf_ecef_to_geodetic(&model, &ecef[i], &g);
            sink += g.height;
        } else {
            double g[3], e2 = e2_of();
            hw_ecef_to_geodetic(model.semi_major_axis, model.semi_major_axis * (1.0 - model.flattening), e2, e2 / (1.0 - e2), model.flattening,
                                ecef[i].x, ecef[i].y, ecef[i].z, g);
            sink += g[2];
        }
    }
}

/* The measured region. */
__attribute__((noinline)) void bench_loop(int which, int rf) {
    int c;
    for (c = 0; c < CALLS; ++c) call(which, rf, c % N);
}

static int agree(void) {
    int i, bad = 0;
    for (i = 0; i < N; ++i) {
        rf_vec3 x;
        double hx[3], g[3], e2 = e2_of();
        rf_geodetic rg;
        rf_geodetic_to_ecef(&model, &positions[i], &x);
        hw_geodetic_to_ecef(model.semi_major_axis, e2, positions[i].latitude, positions[i].longitude, positions[i].height, hx);
        bad += memcmp(&x.x, hx, sizeof hx) != 0;
        rf_ecef_to_geodetic(&model, &ecef[i], &rg);
        hw_ecef_to_geodetic(model.semi_major_axis, model.semi_major_axis * (1.0 - model.flattening), e2, e2 / (1.0 - e2), model.flattening, ecef[i].x,
                            ecef[i].y, ecef[i].z, g);
        bad += memcmp(&rg.latitude, g, sizeof g) != 0;
    }
    return bad;
}

int main(int argc, char **argv) {
    static const char *names[4] = {"map_point", "apparent", "geodetic_to_ecef", "ecef_to_geodetic"};
    int which = -1, k;
    if (argc < 3) {
        fprintf(stderr, "usage: %s FUNCTION {rf|c}\n", argv[0]);
        return 2;
    }
    for (k = 0; k < 4; ++k) if (strcmp(argv[1], names[k]) == 0) which = k;
    if (which < 0) return 2;
    setup();
    if (agree() != 0) {
        fprintf(stderr, "hand-written geodesy differs from rotaframe's in %d cases\n", agree());
        return 1;
    }
    bench_loop(which, strcmp(argv[2], "rf") == 0);
    printf("calls %d sink %g\n", CALLS, sink);
    return 0;
}
