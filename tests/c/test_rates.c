/* IMU rate logs to increments through the C ABI (rf_increments_from_rates): increments
   against the exact integrals of an analytic signal (calculus: the antiderivatives of sin 3t,
   cos 2t and exp(t/2)) on jittered tags, the measured order of the rule, and the refusals
   (a gap beyond max_gap, duplicated and backward tags, NULL), which leave the outputs
   untouched. */
#include "check.h"

#include <string.h>

#define MAX_SAMPLES 401

static rf_vec3 signal(double t) {
    rf_vec3 v;
    v.x = sin(3 * t), v.y = cos(2 * t), v.z = exp(0.5 * t);
    return v;
}

static rf_vec3 antiderivative(double t) {
    rf_vec3 v;
    v.x = -cos(3 * t) / 3, v.y = sin(2 * t) / 2, v.z = 2 * exp(0.5 * t);
    return v;
}

/* The worst angle-increment error over the interior intervals of a log of `n` tags `h` apart
   over [0, 2], each tag moved by up to 20 % of h (a fixed pseudo-random pattern). */
static double worst_error(int n) {
    static double t[MAX_SAMPLES];
    static rf_vec3 w[MAX_SAMPLES], f[MAX_SAMPLES];
    static rf_imu_increment out[MAX_SAMPLES];
    double h = 2.0 / (n - 1), worst = 0;
    unsigned state = 12345u;
    int k;
    for (k = 0; k < n; ++k) {
        state = state * 1103515245u + 12345u;
        t[k] = k * h + (k > 0 && k < n - 1 ? 0.2 * h * (((state >> 8) % 2001) / 1000.0 - 1.0) : 0.0);
        w[k] = signal(t[k]);
        f[k] = w[k], f[k].x *= 2, f[k].y *= 2, f[k].z *= 2;
    }
    OK(rf_increments_from_rates(t, w, f, (size_t)n, INFINITY, out, NULL));
    for (k = 1; k < n - 2; ++k) {
        rf_vec3 a = antiderivative(t[k]), b = antiderivative(t[k + 1]);
        worst = fmax(worst, fabs(out[k].delta_angle.x - (b.x - a.x)));
        worst = fmax(worst, fabs(out[k].delta_angle.y - (b.y - a.y)));
        worst = fmax(worst, fabs(out[k].delta_angle.z - (b.z - a.z)));
        CHECK(out[k].interval == t[k + 1] - t[k], "interval %d", k);
        CHECK(fabs(out[k].delta_velocity.x - 2 * out[k].delta_angle.x) <= 1e-15, "velocity is twice the angle");
    }
    return worst;
}

int main(void) {
    double coarse = worst_error(101), fine = worst_error(201);
    printf("worst increment error: h = 20 ms %.2e, h = 10 ms %.2e (ratio %.1f)\n", coarse, fine, coarse / fine);
    /* h⁵ max|x⁗| (81 for sin 3t) times the rule's constant (about 1/100) bounds an
       increment's error; a fourth-order rule loses 32× per halving, less a jitter allowance. */
    CHECK(fine < 1e-9, "fine error %g", fine);
    CHECK(coarse / fine > 16, "order: ratio %g", coarse / fine);
    {
        double t[4] = {0.0, 0.01, 0.5, 0.51};
        rf_vec3 x[4];
        rf_imu_increment out[3];
        rf_data_gap gap;
        rf_status s;
        memset(x, 0, sizeof x);
        memset(out, 0xAB, sizeof out);
        s = rf_increments_from_rates(t, x, x, 4, 0.1, out, &gap);
        CHECK(s == RF_STATUS_DATA_GAP, "gap status %u", (unsigned)s);
        CHECK(gap.index == 1 && gap.start == 0.01 && gap.end == 0.5, "gap %zu %g %g", gap.index, gap.start, gap.end);
        CHECK(still_filled(out, sizeof out, 0xAB), "nothing written on a gap");
        CHECK(strstr(rf_status_message(RF_STATUS_DATA_GAP), "gap") != NULL, "message");
        OK(rf_increments_from_rates(t, x, x, 4, INFINITY, out, NULL)); /* any gap without a limit */
        CHECK(out[1].interval == 0.5 - 0.01, "the long interval");
        t[2] = 0.01; /* duplicated tag */
        memset(out, 0xAB, sizeof out);
        s = rf_increments_from_rates(t, x, x, 4, INFINITY, out, NULL);
        CHECK(s != RF_STATUS_OK && still_filled(out, sizeof out, 0xAB), "duplicate refused: %u", (unsigned)s);
        t[2] = 0.005; /* backward tag */
        s = rf_increments_from_rates(t, x, x, 4, INFINITY, out, NULL);
        CHECK(s != RF_STATUS_OK && still_filled(out, sizeof out, 0xAB), "backward refused: %u", (unsigned)s);
        t[2] = 0.5;
        x[3].y = NAN;
        s = rf_increments_from_rates(t, x, x, 4, INFINITY, out, NULL);
        CHECK(s == RF_STATUS_NON_FINITE && still_filled(out, sizeof out, 0xAB), "NaN refused: %u", (unsigned)s);
        x[3].y = 0;
        s = rf_increments_from_rates(t, x, x, 4, NAN, out, NULL);
        CHECK(s == RF_STATUS_NOT_POSITIVE, "NaN max_gap: %u", (unsigned)s);
        CHECK(rf_increments_from_rates(NULL, x, x, 4, INFINITY, out, NULL) == RF_STATUS_NULL_POINTER, "NULL times");
        CHECK(rf_increments_from_rates(t, x, x, 1, INFINITY, out, NULL) == RF_STATUS_INVALID_ARGUMENT, "one tag");
    }
    return check_report("test_rates");
}
