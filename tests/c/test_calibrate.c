/* IMU calibration and Allan deviation through the C ABI. The reference readings are made
   here from the library's own site gravity and Earth rate (rf_gravity_ned, rf_earth_rate_ned,
   rf_quat_rotate), corrupted by a known error model written out in the test
   (x~ = (I + diag(s) + M) x + b), and calibrated back; the Allan checks use sequences whose
   deviations are known in closed form. Errors leave outputs untouched. */
#include "check.h"

#define POSITIONS 12

static const double EULER_DEG[POSITIONS][3] = { /* yaw, pitch, roll */
    {0, 0, 0}, {0, 0, 180}, {0, 0, 90}, {0, 0, -90}, {0, 90, 0}, {0, -90, 0},
    {30, 0, 45}, {120, 45, 0}, {200, 30, -45}, {290, -20, 135}, {10, 60, 60}, {75, -50, -120}};

static const double BIAS[3] = {0.021, -0.034, 0.012};
static const double SCALE[3] = {1.5e-3, -8e-4, 2.2e-3};
static const double MIS[9] = {0, 4e-4, -3e-4, 6e-4, 0, 1e-4, -2e-4, 7e-4, 0}; /* row-major */

static rf_quat attitude_of(const double *deg) {
    const double r = 3.14159265358979323846 / 180.0;
    rf_euler e;
    rf_quat q;
    e.yaw = deg[0] * r;
    e.pitch = deg[1] * r;
    e.roll = deg[2] * r;
    rf_quat_from_euler(&e, &q);
    return q;
}

/* The body-axes value of a NED vector at attitude q (body to NED). */
static rf_vec3 to_body(rf_quat q, rf_vec3 v) {
    rf_quat inverse = q;
    rf_vec3 out;
    inverse.x = -q.x;
    inverse.y = -q.y;
    inverse.z = -q.z;
    rf_quat_rotate(&inverse, &v, &out);
    return out;
}

static rf_vec3 corrupt(rf_vec3 x) {
    const double in[3] = {x.x, x.y, x.z};
    double o[3];
    int i, j;
    for (i = 0; i < 3; ++i) {
        o[i] = BIAS[i] + (1.0 + SCALE[i]) * in[i];
        for (j = 0; j < 3; ++j) o[i] += MIS[i * 3 + j] * in[j];
    }
    x.x = o[0];
    x.y = o[1];
    x.z = o[2];
    return x;
}

int main(void) {
    rf_calibration_site site;
    rf_accelerometer_position positions[POSITIONS];
    rf_vec3 gravity, up;
    int k;
    memset(&site, 0, sizeof site); /* all zero: WGS 84, normal gravity */
    site.latitude = 51.3 * 3.14159265358979323846 / 180.0;
    site.height = 95.0;
    OK(rf_gravity_ned(&site.model, site.latitude, site.height, &gravity));
    up.x = -gravity.x;
    up.y = -gravity.y;
    up.z = -gravity.z;
    for (k = 0; k < POSITIONS; ++k) {
        positions[k].attitude = attitude_of(EULER_DEG[k]);
        positions[k].specific_force = corrupt(to_body(positions[k].attitude, up));
    }

    { /* Every parameter back to 1e-9 (the bound), residuals at rounding. */
        rf_triad_calibration cal;
        double residuals[3 * POSITIONS];
        int i;
        OK(rf_calibrate_accelerometers(&site, positions, POSITIONS, RF_TRIAD_FULL, NULL, &cal, residuals));
        for (i = 0; i < 3; ++i) {
            CLOSE((&cal.bias.x)[i], BIAS[i], 1e-9, "bias");
            CLOSE((&cal.scale_factor.x)[i], SCALE[i], 1e-9, "scale factor");
        }
        for (i = 0; i < 9; ++i) CLOSE(cal.misalignment[i], MIS[i], 1e-9, "misalignment");
        for (i = 0; i < 3 * POSITIONS; ++i) CLOSE(residuals[i], 0.0, 1e-12, "residual");
        CHECK(cal.estimated == 0x0fff, "estimated %llx", (unsigned long long)cal.estimated);
        CHECK(cal.degrees_of_freedom == POSITIONS - 4, "dof %llu", (unsigned long long)cal.degrees_of_freedom);
        CHECK(cal.condition_number > 1.0 && cal.condition_number < 10.0, "condition %g", cal.condition_number);

        { /* correct_increment inverts the model: a 10 ms increment of a known force. */
            rf_vec3 truth = {0.05, -0.02, -0.098}, measured, back;
            measured.x = (BIAS[0] * 0.01) + ((1.0 + SCALE[0]) * truth.x + MIS[1] * truth.y + MIS[2] * truth.z);
            measured.y = (BIAS[1] * 0.01) + (MIS[3] * truth.x + (1.0 + SCALE[1]) * truth.y + MIS[5] * truth.z);
            measured.z = (BIAS[2] * 0.01) + (MIS[6] * truth.x + MIS[7] * truth.y + (1.0 + SCALE[2]) * truth.z);
            OK(rf_triad_correct_increment(&cal, &measured, 0.01, &back));
            /* The calibration is exact to ~1e-12 here, the solve to rounding. */
            CLOSE(back.x, truth.x, 1e-12, "corrected x");
            CLOSE(back.y, truth.y, 1e-12, "corrected y");
            CLOSE(back.z, truth.z, 1e-12, "corrected z");
        }
    }

    { /* Level positions only: RF_STATUS_UNOBSERVABLE, the outputs untouched. */
        rf_accelerometer_position level[6];
        rf_triad_calibration cal;
        double residuals[18];
        rf_status s;
        for (k = 0; k < 6; ++k) {
            double deg[3];
            deg[0] = 60.0 * k;
            deg[1] = 0.0;
            deg[2] = 0.0;
            level[k].attitude = attitude_of(deg);
            level[k].specific_force = corrupt(to_body(level[k].attitude, up));
        }
        memset(&cal, 0xAB, sizeof cal);
        memset(residuals, 0xAB, sizeof residuals);
        s = rf_calibrate_accelerometers(&site, level, 6, RF_TRIAD_FULL, NULL, &cal, residuals);
        CHECK(s == RF_STATUS_UNOBSERVABLE, "status %u", (unsigned)s);
        CHECK(still_filled(&cal, sizeof cal, 0xAB) && still_filled(residuals, sizeof residuals, 0xAB), "outputs written on error");
        OK(rf_calibrate_accelerometers(&site, level, 6, RF_TRIAD_BIAS, NULL, &cal, NULL));
        CHECK(cal.estimated == 0x7, "bias only: %llx", (unsigned long long)cal.estimated);
        /* Too few positions, a bad parameter choice, a NULL site, overlapping residuals. */
        CHECK(rf_calibrate_accelerometers(&site, level, 3, RF_TRIAD_FULL, NULL, &cal, NULL) == RF_STATUS_INVALID_ARGUMENT, "too few");
        CHECK(rf_calibrate_accelerometers(&site, level, 6, 7, NULL, &cal, NULL) == RF_STATUS_INVALID_ARGUMENT, "bad choice");
        CHECK(rf_calibrate_accelerometers(NULL, level, 6, RF_TRIAD_BIAS, NULL, &cal, NULL) == RF_STATUS_NULL_POINTER, "NULL site");
        CHECK(rf_calibrate_accelerometers(&site, level, 6, RF_TRIAD_BIAS, NULL, &cal, (double *)(void *)level) ==
                  RF_STATUS_OVERLAPPING_BUFFERS,
              "overlap");
        CHECK(strstr(rf_status_message(RF_STATUS_UNOBSERVABLE), "cannot determine") != NULL, "message");
    }

    { /* Gyros from static positions: biases against the site's Earth rate, to rounding. */
        rf_gyro_record records[POSITIONS];
        rf_triad_calibration cal;
        rf_vec3 earth;
        OK(rf_earth_rate_ned(&site.model, site.latitude, &earth));
        memset(records, 0, sizeof records);
        for (k = 0; k < POSITIONS; ++k) {
            rf_vec3 w = to_body(positions[k].attitude, earth);
            records[k].attitude = positions[k].attitude;
            records[k].angular_rate = w;
            records[k].angular_rate.x += 1e-5;
            records[k].angular_rate.z -= 3e-6;
        }
        OK(rf_calibrate_gyros(&site, records, POSITIONS, RF_TRIAD_BIAS, NULL, &cal, NULL));
        CLOSE(cal.bias.x, 1e-5, 1e-18, "gyro bias x");
        CLOSE(cal.bias.y, 0.0, 1e-18, "gyro bias y");
        CLOSE(cal.bias.z, -3e-6, 1e-18, "gyro bias z");
    }

    { /* The magnitude fit of a model with a lower-triangular misalignment. */
        rf_vec3 forces[18];
        rf_triad_calibration cal;
        double residuals[18];
        for (k = 0; k < 18; ++k) {
            double deg[3];
            rf_vec3 x;
            double o[3], in[3];
            deg[0] = 37.0 * k;
            deg[1] = -80.0 + 9.5 * k;
            deg[2] = 53.0 * k + 11.0;
            x = to_body(attitude_of(deg), up);
            in[0] = x.x;
            in[1] = x.y;
            in[2] = x.z;
            o[0] = BIAS[0] + (1.0 + SCALE[0]) * in[0];
            o[1] = BIAS[1] + MIS[3] * in[0] + (1.0 + SCALE[1]) * in[1];
            o[2] = BIAS[2] + MIS[6] * in[0] + MIS[7] * in[1] + (1.0 + SCALE[2]) * in[2];
            forces[k].x = o[0];
            forces[k].y = o[1];
            forces[k].z = o[2];
        }
        OK(rf_calibrate_accelerometers_by_magnitude(&site, forces, 18, NULL, &cal, residuals));
        CLOSE(cal.bias.y, BIAS[1], 1e-9, "magnitude bias y");
        CLOSE(cal.scale_factor.z, SCALE[2], 1e-9, "magnitude scale z");
        CLOSE(cal.misalignment[7], MIS[7], 1e-9, "magnitude M_zy");
        CLOSE(cal.misalignment[1], 0.0, 0.0, "magnitude M_xy is zero by definition");
    }

    { /* Allan deviation of a rate alternating +1, -1 at 1 s: sqrt(2) at 1 s, 0 at even
         clusters (closed form); bounds around it; default octaves. */
        double samples[1001], scratch[1002];
        uint64_t sizes[RF_MAX_CLUSTER_SIZES];
        size_t count = 0;
        rf_allan_point points[RF_MAX_CLUSTER_SIZES];
        for (k = 0; k < 1001; ++k) samples[k] = (k % 2 == 0) ? 1.0 : -1.0;
        OK(rf_allan_default_cluster_sizes(1001, sizes, RF_MAX_CLUSTER_SIZES, &count));
        CHECK(count == 9 && sizes[8] == 256, "%zu sizes", count);
        OK(rf_allan_deviation(samples, 1001, 1.0, sizes, count, 0.683, scratch, points));
        CLOSE(points[0].deviation, sqrt(2.0), 1e-12, "alternating, tau = 1 s");
        CLOSE(points[1].deviation, 0.0, 1e-12, "alternating, tau = 2 s");
        CHECK(points[0].lower < points[0].deviation && points[0].deviation < points[0].upper, "bounds around the value");
        CHECK(rf_allan_deviation(samples, 1001, 1.0, sizes, count, 0.683, samples, points) == RF_STATUS_OVERLAPPING_BUFFERS,
              "scratch over the samples");
        sizes[0] = 600; /* beyond (N - 1)/2 */
        CHECK(rf_allan_deviation(samples, 1001, 1.0, sizes, 1, 0.683, scratch, points) == RF_STATUS_OUT_OF_RANGE, "cluster too long");
    }

    { /* Noise terms of an exact curve come back to rounding. */
        double taus[20], adev[20];
        rf_noise_terms terms;
        const double n = 3e-4, b = 5e-6, kk = 2e-7, f = 0.6642824746177508;
        for (k = 0; k < 20; ++k) {
            taus[k] = 0.01 * pow(2.0, k);
            adev[k] = sqrt(n * n / taus[k] + f * f * b * b + kk * kk * taus[k] / 3.0);
        }
        OK(rf_fit_noise_terms(taus, adev, 20, NULL, &terms));
        CLOSE(terms.white_noise / n, 1.0, 1e-9, "white noise");
        CLOSE(terms.bias_instability / b, 1.0, 1e-9, "bias instability");
        CLOSE(terms.rate_random_walk / kk, 1.0, 1e-9, "rate random walk");
    }
    return check_report("test_calibrate");
}
