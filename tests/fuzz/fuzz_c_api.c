/*
 * libFuzzer harness over the rotaframe C entry points. Each input is read as a function
 * selector, a NULL mask and a stream of doubles (any bit patterns: NaN, infinities,
 * subnormals, huge values). Properties checked on every call:
 *   - the status is a defined rf_status value and has a message;
 *   - on any status but RF_STATUS_OK the outputs are untouched;
 *   - nothing crashes or trips AddressSanitizer / UndefinedBehaviorSanitizer.
 *
 * Build and run (needs clang with libFuzzer, e.g. Debian's clang and libclang-rt-14-dev; not
 * part of CI). The Rust library is built with sanitizer coverage so that libFuzzer is guided by
 * the core's branches too (stable rustc; --target keeps the flags off build scripts):
 *   RUSTFLAGS="-C target-cpu=x86-64-v3 -C passes=sancov-module \
 *       -C llvm-args=-sanitizer-coverage-level=4 -C llvm-args=-sanitizer-coverage-inline-8bit-counters \
 *       -C llvm-args=-sanitizer-coverage-pc-table -C llvm-args=-sanitizer-coverage-trace-compares" \
 *     CARGO_TARGET_DIR=target/fuzz-build cargo build --release -p rotaframe-c --target x86_64-unknown-linux-gnu
 *   clang -g -O1 -fsanitize=fuzzer,address,undefined -Ibindings-c/include tests/fuzz/fuzz_c_api.c \
 *       target/fuzz-build/x86_64-unknown-linux-gnu/release/librotaframe_c.a -lpthread -ldl -lm -o target/fuzz_c_api
 *   mkdir -p target/fuzz-corpus && ./target/fuzz_c_api -max_total_time=300 target/fuzz-corpus
 */
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "rotaframe.h"

#define SENTINEL 0xA5

typedef struct reader {
    const uint8_t *data;
    size_t size;
    size_t pos;
} reader;

static double next_double(reader *r) {
    double d = 0.0;
    if (r->pos + sizeof d <= r->size) {
        memcpy(&d, r->data + r->pos, sizeof d);
        r->pos += sizeof d;
    }
    return d;
}

static void fill(reader *r, double *out, size_t n) {
    size_t i;
    for (i = 0; i < n; ++i) out[i] = next_double(r);
}

static void require(int cond) {
    if (!cond) abort();
}

static int untouched(const void *p, size_t n) {
    const unsigned char *b = (const unsigned char *)p;
    size_t i;
    for (i = 0; i < n; ++i)
        if (b[i] != SENTINEL) return 0;
    return 1;
}

/* Checks a status and, on error, that the output buffer kept its sentinel bytes. */
static void after(rf_status s, const void *out, size_t n) {
    require((unsigned)s <= RF_STATUS_INTERNAL_ERROR);
    require(rf_status_message(s) != NULL);
    require(s != RF_STATUS_INTERNAL_ERROR);
    if (s != RF_STATUS_OK && out != NULL) require(untouched(out, n));
}

#define PTR(mask, bit, p) (((mask) >> (bit)) & 1 ? NULL : (p))

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) {
    reader r = {data, size, 0};
    uint8_t selector, mask;
    rf_earth_model model;
    double in[64];
    union {
        rf_vec3 v;
        rf_geodetic g;
        rf_frame_motion m;
        rf_point_kinematics p;
        rf_apparent_terms t;
        rf_quat q;
        rf_euler e;
        double d[16];
        rf_vec3 batch[4];
        rf_geodetic gbatch[4];
        rf_imu_sample imu;
        rf_strapdown sd;
        rf_imu_errors errors;
        rf_imu_increment incs[8];
    } out;
    rf_strapdown before;
    rf_status s;
    if (size < 2) return 0;
    selector = data[0];
    mask = data[1];
    r.pos = 2;
    fill(&r, in, 64);
    memset(&out, SENTINEL, sizeof out);
    if (mask & 0x80) {
        /* An arbitrary (possibly invalid) model. */
        memcpy(&model, in + 40, sizeof model);
    } else {
        rf_earth_model_wgs84(&model);
    }
    switch (selector % 22) {
    case 0: s = rf_geodetic_to_ecef(PTR(mask, 0, &model), PTR(mask, 1, (const rf_geodetic *)in), PTR(mask, 2, &out.v)); after(s, &out, sizeof out.v); break;
    case 1: s = rf_ecef_to_geodetic(PTR(mask, 0, &model), PTR(mask, 1, (const rf_vec3 *)in), PTR(mask, 2, &out.g)); after(s, &out, sizeof out.g); break;
    case 2: s = rf_motion_map_point(PTR(mask, 0, (const rf_frame_motion *)in), PTR(mask, 1, (const rf_point_kinematics *)(in + 19)), PTR(mask, 2, &out.p)); after(s, &out, sizeof out.p); break;
    case 3: s = rf_motion_compose(PTR(mask, 0, (const rf_frame_motion *)in), PTR(mask, 1, (const rf_frame_motion *)(in + 19)), PTR(mask, 2, &out.m)); after(s, &out, sizeof out.m); break;
    case 4: s = rf_motion_inverse(PTR(mask, 0, (const rf_frame_motion *)in), PTR(mask, 1, &out.m)); after(s, &out, sizeof out.m); break;
    case 5: {
        const rf_vec3 *v = (const rf_vec3 *)in;
        s = rf_apparent_terms_compute(PTR(mask, 0, v), PTR(mask, 1, v + 1), PTR(mask, 2, v + 2), PTR(mask, 3, v + 3), PTR(mask, 4, v + 4), PTR(mask, 5, &out.t));
        after(s, &out, sizeof out.t);
        break;
    }
    case 6: s = rf_quat_from_euler(PTR(mask, 0, (const rf_euler *)in), PTR(mask, 1, &out.q)); after(s, &out, sizeof out.q); break;
    case 7: s = rf_euler_from_quat(PTR(mask, 0, (const rf_quat *)in), PTR(mask, 1, &out.e)); after(s, &out, sizeof out.e); break;
    case 8: s = rf_matrix_to_quat(PTR(mask, 0, in), PTR(mask, 1, &out.q)); after(s, &out, sizeof out.q); break;
    case 9: s = rf_local_level_motion(PTR(mask, 0, &model), PTR(mask, 1, (const rf_geodetic *)in), PTR(mask, 2, (const rf_vec3 *)(in + 3)), PTR(mask, 3, (const rf_vec3 *)(in + 6)), PTR(mask, 4, &out.m)); after(s, &out, sizeof out.m); break;
    case 10: s = rf_normal_gravity(PTR(mask, 0, &model), in[0], in[1], PTR(mask, 1, out.d)); after(s, &out, sizeof(double)); break;
    case 11: s = rf_gravity_ecef(PTR(mask, 0, &model), PTR(mask, 1, (const rf_vec3 *)in), PTR(mask, 2, &out.v)); after(s, &out, sizeof out.v); break;
    case 12: s = rf_eotvos_correction(PTR(mask, 0, &model), in[0], in[1], PTR(mask, 1, (const rf_vec3 *)(in + 2)), PTR(mask, 2, out.d)); after(s, &out, sizeof(double)); break;
    case 13: s = rf_geodetic_to_ecef_batch(PTR(mask, 0, &model), PTR(mask, 1, (const rf_geodetic *)in), (size_t)(mask >> 2) % 5, PTR(mask, 6, out.batch)); after(s, &out, sizeof out.batch); break;
    case 14: s = rf_ecef_to_geodetic_batch(PTR(mask, 0, &model), PTR(mask, 1, (const rf_vec3 *)in), (size_t)(mask >> 2) % 5, PTR(mask, 6, out.gbatch)); after(s, &out, sizeof out.gbatch); break;
    case 15: s = rf_ideal_imu(PTR(mask, 0, &model), (uint32_t)(selector / 21) % 3, PTR(mask, 1, (const rf_frame_motion *)in), PTR(mask, 2, &out.imu)); after(s, &out, sizeof out.imu); break;
    case 16: s = rf_strapdown_init(PTR(mask, 0, (const rf_strapdown_config *)in), PTR(mask, 1, (const rf_nav_state *)(in + 16)), PTR(mask, 2, &out.sd)); after(s, &out, sizeof out.sd); break;
    case 17: {
        /* A valid stepper (frame and vertical channel from the selector) fed a fuzzed increment. */
        rf_strapdown_config c;
        rf_nav_state start;
        memset(&c, 0, sizeof c);
        memset(&start, 0, sizeof start);
        rf_earth_model_wgs84(&c.earth);
        c.frame = (uint32_t)(selector / 21) % 2;
        c.vertical = (uint32_t)(selector / 42) % 3;
        c.height_time_constant = 30.0;
        start.position.latitude = in[20], start.position.longitude = in[21], start.position.height = in[22];
        start.attitude.w = 1.0;
        if (rf_strapdown_init(&c, &start, &out.sd) != RF_STATUS_OK) break;
        before = out.sd;
        s = rf_strapdown_step(&out.sd, PTR(mask, 0, (const rf_imu_increment *)in));
        require((unsigned)s < RF_STATUS_INTERNAL_ERROR);
        if (s != RF_STATUS_OK) require(memcmp(&before, &out.sd, sizeof before) == 0);
        break;
    }
    case 18:
        /* Arbitrary stepper bytes: every field is validated before use. */
        memcpy(&out.sd, in, sizeof out.sd);
        before = out.sd;
        s = rf_strapdown_step(&out.sd, (const rf_imu_increment *)(in + 40));
        require((unsigned)s < RF_STATUS_INTERNAL_ERROR);
        if (s != RF_STATUS_OK) require(memcmp(&before, &out.sd, sizeof before) == 0);
        break;
    case 19: {
        rf_imu_increment measured;
        memset(&measured, SENTINEL, sizeof measured);
        s = rf_imu_errors_init(PTR(mask, 0, (const rf_imu_error_model *)in), (uint64_t)mask, PTR(mask, 1, &out.errors));
        after(s, &out, sizeof out.errors);
        if (s == RF_STATUS_OK) {
            s = rf_imu_errors_apply(&out.errors, PTR(mask, 2, (const rf_imu_increment *)(in + 56)), &measured);
            after(s, &measured, sizeof measured);
        }
        break;
    }
    case 20: {
        /* Up to 8 logged samples of 8 doubles each; the grid is the log's times or in[0..]. */
        size_t count = (size_t)(mask >> 2) % 9, grid = (size_t)(selector / 22) % 9;
        const double *times = (mask & 2) ? NULL : in;
        if (times == NULL) grid = 0;
        s = rf_imu_increments_from_record(PTR(mask, 0, &model), (uint32_t)(selector / 22) % 3, (const rf_recorded_sample *)in, count, times,
                                          grid, out.incs);
        after(s, &out, sizeof out.incs);
        break;
    }
    default: s = rf_earth_rotation_angle(in[0], in[1], PTR(mask, 0, out.d)); after(s, &out, sizeof(double)); break;
    }
    return 0;
}
