/* Linearisation through the C ABI: Jacobians against central differences of the library's own
   nonlinear functions (the check that the linearisation is the code's), inverse pairs, the
   error-state model's discrete form against its first-order Taylor terms, and covariance
   prediction against the same recursion written here with the library's Phi and Q_d. Errors
   leave outputs untouched. */
#include "check.h"

#define N 15

/* c = a b for n x n row-major matrices. */
static void multiply(const double *a, const double *b, double *c, int n) {
    int i, j, k;
    for (i = 0; i < n; ++i)
        for (j = 0; j < n; ++j) {
            double s = 0.0;
            for (k = 0; k < n; ++k) s += a[i * n + k] * b[k * n + j];
            c[i * n + j] = s;
        }
}

static void transpose(const double *a, double *t, int n) {
    int i, j;
    for (i = 0; i < n; ++i)
        for (j = 0; j < n; ++j) t[j * n + i] = a[i * n + j];
}

int main(void) {
    rf_earth_model wgs84;
    OK(rf_earth_model_wgs84(&wgs84));

    { /* geodetic -> ECEF: central differences with steps 1e-6 rad and 1 m leave about 1e-10
         of each column's scale (truncation h^2 |x'''|/6, rounding eps |x| / h); the issue's
         bound is 1e-7 relative. */
        rf_geodetic p = {0.71, -1.3, 2500.0}, q;
        rf_vec3 x, plus, minus;
        double j[9], steps[3] = {1e-6, 1e-6, 1.0};
        int k, r;
        OK(rf_geodetic_to_ecef_jacobian(&wgs84, &p, &x, j));
        for (k = 0; k < 3; ++k) {
            double num[3], scale = 0.0;
            q = p;
            if (k == 0) q.latitude += steps[0];
            if (k == 1) q.longitude += steps[1];
            if (k == 2) q.height += steps[2];
            OK(rf_geodetic_to_ecef(&wgs84, &q, &plus));
            q = p;
            if (k == 0) q.latitude -= steps[0];
            if (k == 1) q.longitude -= steps[1];
            if (k == 2) q.height -= steps[2];
            OK(rf_geodetic_to_ecef(&wgs84, &q, &minus));
            num[0] = (plus.x - minus.x) / (2 * steps[k]);
            num[1] = (plus.y - minus.y) / (2 * steps[k]);
            num[2] = (plus.z - minus.z) / (2 * steps[k]);
            for (r = 0; r < 3; ++r) scale = fmax(scale, fabs(num[r]));
            for (r = 0; r < 3; ++r) CLOSE(j[3 * r + k], num[r], 1e-7 * scale, "geodetic Jacobian entry");
        }
        { /* ECEF -> geodetic is its inverse: J_inverse J = I to 1e-9. */
            rf_geodetic back;
            double ji[9], prod[9];
            OK(rf_ecef_to_geodetic_jacobian(&wgs84, &x, &back, ji));
            multiply(ji, j, prod, 3);
            for (k = 0; k < 9; ++k) CLOSE(prod[k], (k % 4 == 0) ? 1.0 : 0.0, 1e-9, "J_inverse J");
        }
    }

    { /* Euler angles: the two Jacobians are inverses (1e-12); gimbal lock is refused and the
         outputs are untouched. */
        rf_euler e = {0.3, -0.2, 1.1}, back, locked = {0.1, 1.5707963267948966, 0.2};
        rf_quat q, ql;
        double j[9], ji[9], prod[9], sentinel[9];
        int k;
        OK(rf_quat_from_euler_jacobian(&e, &q, j));
        OK(rf_euler_from_quat_jacobian(&q, &back, ji));
        multiply(ji, j, prod, 3);
        for (k = 0; k < 9; ++k) CLOSE(prod[k], (k % 4 == 0) ? 1.0 : 0.0, 1e-12, "Euler Jacobians are inverses");
        OK(rf_quat_from_euler(&locked, &ql));
        memset(sentinel, 0x5a, sizeof sentinel);
        memcpy(ji, sentinel, sizeof ji);
        CHECK(rf_euler_from_quat_jacobian(&ql, &back, ji) == RF_STATUS_INVALID_ARGUMENT, "gimbal lock must be refused");
        CHECK(memcmp(ji, sentinel, sizeof ji) == 0, "output untouched on error");
    }

    { /* The error model at a moving state; Phi and Q_d over 1 ms against their Taylor series
         to third order (Van Loan 1978): the remainders are below |F T|^4 / 12 and
         (2 |F T|)^3 / 24 |Q_c| T in every entry, with |F T|_inf = 0.02 here. */
        rf_strapdown_config c;
        rf_nav_state start;
        rf_strapdown sd;
        rf_imu_error_model model;
        rf_vec3 f = {0.3, -0.1, -9.7}, w = {1e-3, 2e-3, -5e-4};
        static double F[N * N], G[N * 12], phi[N * N], qd[N * N], psd[12];
        static double ft[N * N], ft2[N * N], ft3[N * N], qc[N * N], l1[N * N], l2[N * N], tmp1[N * N], tmp2[N * N];
        double t = 1e-3, norm = 0.0, qmax = 0.0;
        int i, j, m;
        memset(&c, 0, sizeof c);
        c.earth = wgs84;
        memset(&start, 0, sizeof start);
        start.position.latitude = 0.69, start.position.longitude = 0.12, start.position.height = 300.0;
        start.velocity_ned.x = 30.0, start.velocity_ned.y = -5.0;
        start.attitude.w = 1.0;
        OK(rf_strapdown_init(&c, &start, &sd));
        memset(&model, 0, sizeof model);
        for (i = 0; i < 3; ++i) {
            (&model.accelerometer.noise_density.x)[i] = 5e-4;
            (&model.gyro.noise_density.x)[i] = 1.5e-5;
            (&model.accelerometer.markov_sigma.x)[i] = 5e-4;
            (&model.accelerometer.markov_time.x)[i] = 300.0;
        }
        OK(rf_strapdown_error_model(&sd, &f, &w, &model, N, F, G));
        CLOSE(F[9 * N + 9], -1.0 / 300.0, 1e-18, "accelerometer bias decay");
        CLOSE(F[12 * N + 12], 0.0, 0.0, "random-constant gyro bias");
        OK(rf_noise_psd(&model, psd));
        CLOSE(psd[0], 2.5e-7, 1e-20, "accelerometer white-noise density");
        OK(rf_discrete_error_model(N, F, G, psd, t, phi, qd));
        for (i = 0; i < N * N; ++i) ft[i] = F[i] * t;
        for (i = 0; i < N; ++i) {
            double row = 0.0;
            for (j = 0; j < N; ++j) row += fabs(ft[i * N + j]);
            norm = fmax(norm, row);
        }
        multiply(ft, ft, ft2, N);
        multiply(ft2, ft, ft3, N);
        for (i = 0; i < N; ++i)
            for (j = 0; j < N; ++j) {
                double s = 0.0;
                for (m = 0; m < 12; ++m) s += G[i * 12 + m] * psd[m] * G[j * 12 + m];
                qc[i * N + j] = s;
                qmax = fmax(qmax, fabs(s));
            }
        /* l1 = F Q_c + Q_c F^T, l2 = F l1 + l1 F^T. */
        multiply(F, qc, tmp1, N);
        for (i = 0; i < N; ++i)
            for (j = 0; j < N; ++j) l1[i * N + j] = tmp1[i * N + j] + tmp1[j * N + i];
        multiply(F, l1, tmp2, N);
        for (i = 0; i < N; ++i)
            for (j = 0; j < N; ++j) l2[i * N + j] = tmp2[i * N + j] + tmp2[j * N + i];
        for (i = 0; i < N; ++i)
            for (j = 0; j < N; ++j) {
                int k = i * N + j;
                double series = (i == j ? 1.0 : 0.0) + ft[k] + ft2[k] / 2 + ft3[k] / 6;
                double q3 = qc[k] * t + l1[k] * t * t / 2 + l2[k] * t * t * t / 6;
                CLOSE(phi[k], series, pow(norm, 4) / 12 + 1e-16, "Phi against its series");
                CHECK(qd[k] == qd[j * N + i], "Q_d symmetric at (%d, %d)", i, j);
                CLOSE(qd[k], q3, pow(2 * norm, 3) / 24 * qmax * t + 1e-30, "Q_d against its series");
            }
        { /* The second-order form is the series' first three terms, built here from the same
             products: equal to rounding (4e-16 of Phi's unit diagonal; 1e-15 of the largest
             Q_c T for Q_d). */
            static double phi2[N * N], qd2[N * N];
            OK(rf_discrete_error_model_second_order(N, F, G, psd, t, phi2, qd2));
            for (i = 0; i < N; ++i)
                for (j = 0; j < N; ++j) {
                    int k = i * N + j;
                    CLOSE(phi2[k], (i == j ? 1.0 : 0.0) + ft[k] + ft2[k] / 2, 4e-16, "second-order Phi");
                    CLOSE(qd2[k], qc[k] * t + l1[k] * t * t / 2, 1e-15 * qmax * t, "second-order Q_d");
                    CHECK(qd2[k] == qd2[j * N + i], "second-order Q_d symmetric at (%d, %d)", i, j);
                }
            CHECK(rf_discrete_error_model_second_order(N, F, G, psd, t, NULL, qd2) == RF_STATUS_NULL_POINTER, "NULL output refused");
            CHECK(rf_discrete_error_model_second_order(N, F, G, psd, -1.0, phi2, qd2) == RF_STATUS_NOT_POSITIVE, "negative interval refused");
        }
        CHECK(rf_strapdown_error_model(&sd, &f, &w, &model, 16, F, G) == RF_STATUS_INVALID_ARGUMENT, "16 states refused");
        CHECK(rf_discrete_error_model(N, F, G, psd, 0.0, phi, qd) == RF_STATUS_NOT_POSITIVE, "zero interval refused");

        { /* Covariance prediction over 100 steps at 100 Hz kept every 10 steps: the last equals
             the recursion P <- Phi P Phi^T + Q_d with this library's Phi and Q_d at the state
             before each step, to 1e-9 of each entry's scale sqrt(P_ii P_jj) (two orders of
             summation over 100 steps). */
            rf_imu_increment inc[100];
            static double p0[N * N], out[10 * N * N], p[N * N], tmp[N * N], phit[N * N];
            rf_strapdown walker = sd;
            size_t kept = rf_covariance_count(100, 10);
            int k;
            CHECK(kept == 10, "kept %zu", kept);
            CHECK(rf_covariance_count(101, 10) == 11 && rf_covariance_count(5, 0) == 0, "covariance counts");
            for (k = 0; k < 100; ++k) {
                inc[k].delta_angle.x = 1e-5, inc[k].delta_angle.y = -2e-5, inc[k].delta_angle.z = 3e-6;
                inc[k].delta_velocity.x = 0.003, inc[k].delta_velocity.y = 0.0, inc[k].delta_velocity.z = -0.0979;
                inc[k].interval = 0.01;
            }
            memset(p0, 0, sizeof p0);
            for (i = 0; i < N; ++i) p0[i * N + i] = (i < 2) ? 1e-12 : (i == 2 ? 4.0 : (i < 6 ? 0.01 : (i < 9 ? 1e-6 : 1e-8)));
            OK(rf_predict_covariance(&sd, inc, NULL, 100, &model, N, p0, 10, out));
            memcpy(p, p0, sizeof p);
            for (k = 0; k < 100; ++k) {
                rf_vec3 fk = {inc[k].delta_velocity.x / 0.01, inc[k].delta_velocity.y / 0.01, inc[k].delta_velocity.z / 0.01};
                rf_vec3 wk = {inc[k].delta_angle.x / 0.01, inc[k].delta_angle.y / 0.01, inc[k].delta_angle.z / 0.01};
                OK(rf_strapdown_error_model(&walker, &fk, &wk, &model, N, F, G));
                OK(rf_discrete_error_model(N, F, G, psd, 0.01, phi, qd));
                multiply(phi, p, tmp, N);
                transpose(phi, phit, N);
                multiply(tmp, phit, p, N);
                for (i = 0; i < N * N; ++i) p[i] += qd[i];
                OK(rf_strapdown_step(&walker, &inc[k]));
            }
            for (i = 0; i < N; ++i)
                for (j = 0; j < N; ++j) {
                    double scale = sqrt(p[i * N + i] * p[j * N + j]);
                    CLOSE(out[9 * N * N + i * N + j], p[i * N + j], 1e-9 * scale, "predicted covariance entry");
                }
            { /* An asymmetric P0 and a bad increment are refused before anything is written. */
                static double sentinel[10 * N * N];
                memset(sentinel, 0x33, sizeof sentinel);
                memcpy(out, sentinel, sizeof out);
                p0[1] = 1.0;
                CHECK(rf_predict_covariance(&sd, inc, NULL, 100, &model, N, p0, 10, out) == RF_STATUS_INVALID_ARGUMENT, "asymmetric P0");
                p0[1] = 0.0;
                inc[57].interval = -0.01;
                CHECK(rf_predict_covariance(&sd, inc, NULL, 100, &model, N, p0, 10, out) == RF_STATUS_NOT_POSITIVE, "bad interval");
                CHECK(memcmp(out, sentinel, sizeof out) == 0, "outputs untouched on error");
            }
        }
    }
    return check_report("test_linearise");
}
