/* Every bad-input class returns its status and leaves the outputs untouched. */
#include "check.h"

/* Fills an output with a recognisable pattern and checks it afterwards. */
#define SENTINEL 0x5A
#define UNTOUCHED(obj) still_filled(&(obj), sizeof(obj), SENTINEL)

#define EXPECT(call, status, out)                                          \
    do {                                                                   \
        rf_status s_;                                                      \
        memset(&(out), SENTINEL, sizeof(out));                             \
        s_ = (call);                                                       \
        CHECK(s_ == (status), "%s returned %u (%s), expected %u", #call, (unsigned)s_, rf_status_message(s_), (unsigned)(status)); \
        CHECK(UNTOUCHED(out), "%s wrote its output on error", #call);      \
    } while (0)

int main(void) {
    rf_earth_model m;
    rf_vec3 zero = {0, 0, 0}, unit_z = {0, 0, 1}, out_v, nan_v, inf_v;
    rf_quat identity = {1, 0, 0, 0}, zero_q = {0, 0, 0, 0}, long_q = {2, 0, 0, 0}, nan_q = {1, 0, 0, 0};
    rf_frame_motion motion, out_motion;
    rf_point_kinematics point, out_point;
    rf_apparent_terms out_terms;
    rf_geodetic good = {0.5, 0.2, 10.0}, bad_lat = {1.6, 0.0, 0.0}, out_g;
    rf_geodetic batch_in[3] = {{0.1, 0.1, 0}, {0.2, 0.2, 0}, {0.3, 0.3, 0}};
    rf_vec3 batch_out[3];
    double out_d, out_m[9], bad_m[9] = {1, 0, 0, 0, 1, 0, 0, 0, -1};
    rf_euler out_e;

    OK(rf_earth_model_wgs84(&m));
    nan_v = zero;
    nan_v.y = NAN;
    inf_v = zero;
    inf_v.z = INFINITY;
    nan_q.z = NAN;
    OK(rf_motion_identity(&motion));
    memset(&point, 0, sizeof point);

    /* NULL pointers, inputs and outputs. */
    EXPECT(rf_geodetic_to_ecef(NULL, &good, &out_v), RF_STATUS_NULL_POINTER, out_v);
    EXPECT(rf_geodetic_to_ecef(&m, NULL, &out_v), RF_STATUS_NULL_POINTER, out_v);
    CHECK(rf_geodetic_to_ecef(&m, &good, NULL) == RF_STATUS_NULL_POINTER, "NULL output");
    EXPECT(rf_motion_map_point(NULL, &point, &out_point), RF_STATUS_NULL_POINTER, out_point);
    EXPECT(rf_motion_compose(&motion, NULL, &out_motion), RF_STATUS_NULL_POINTER, out_motion);
    EXPECT(rf_apparent_terms_compute(&unit_z, NULL, &zero, &zero, &zero, &out_terms), RF_STATUS_NULL_POINTER, out_terms);
    EXPECT(rf_geodetic_to_ecef_batch(&m, NULL, 3, batch_out), RF_STATUS_NULL_POINTER, batch_out);
    CHECK(rf_geodetic_to_ecef_batch(&m, NULL, 0, NULL) == RF_STATUS_OK, "an empty batch accepts NULL");

    /* NaN and infinity. */
    EXPECT(rf_apparent_terms_compute(&unit_z, &zero, &zero, &nan_v, &zero, &out_terms), RF_STATUS_NON_FINITE, out_terms);
    EXPECT(rf_apparent_terms_compute(&unit_z, &zero, &inf_v, &zero, &zero, &out_terms), RF_STATUS_NON_FINITE, out_terms);
    EXPECT(rf_ecef_to_geodetic(&m, &nan_v, &out_g), RF_STATUS_NON_FINITE, out_g);
    point.velocity = inf_v;
    EXPECT(rf_motion_map_point(&motion, &point, &out_point), RF_STATUS_NON_FINITE, out_point);
    point.velocity = zero;
    motion.angular_velocity = nan_v;
    EXPECT(rf_motion_inverse(&motion, &out_motion), RF_STATUS_NON_FINITE, out_motion);
    motion.angular_velocity = zero;
    {
        rf_geodetic g = good;
        g.height = NAN;
        EXPECT(rf_geodetic_to_ecef(&m, &g, &out_v), RF_STATUS_NON_FINITE, out_v);
        EXPECT(rf_normal_gravity(&m, NAN, 0.0, &out_d), RF_STATUS_NON_FINITE, out_d);
        EXPECT(rf_earth_rotation_angle(INFINITY, 0.0, &out_d), RF_STATUS_NON_FINITE, out_d);
    }

    /* Latitude out of range, near a pole, near the centre. */
    EXPECT(rf_geodetic_to_ecef(&m, &bad_lat, &out_v), RF_STATUS_OUT_OF_RANGE, out_v);
    EXPECT(rf_normal_gravity(&m, -2.0, 0.0, &out_d), RF_STATUS_OUT_OF_RANGE, out_d);
    EXPECT(rf_ned_from_ecef(1.7, 0.0, out_m), RF_STATUS_OUT_OF_RANGE, out_m);
    EXPECT(rf_transport_rate_ned(&m, 1.5707963267948966, 0.0, &unit_z, &out_v), RF_STATUS_NEAR_POLE, out_v);
    {
        rf_vec3 centre = {1000.0, 0.0, 0.0};
        EXPECT(rf_ecef_to_geodetic(&m, &centre, &out_g), RF_STATUS_NEAR_EARTH_CENTRE, out_g);
    }
    /* A batch with one bad element writes nothing. */
    batch_in[2].latitude = 3.0;
    EXPECT(rf_geodetic_to_ecef_batch(&m, batch_in, 3, batch_out), RF_STATUS_OUT_OF_RANGE, batch_out);

    /* Quaternions: zero, far from unit, NaN; matrices that are not rotations. */
    EXPECT(rf_euler_from_quat(&zero_q, &out_e), RF_STATUS_ZERO_NORM, out_e);
    EXPECT(rf_quat_to_matrix(&long_q, out_m), RF_STATUS_NOT_UNIT_QUATERNION, out_m);
    EXPECT(rf_quat_multiply(&identity, &nan_q, &zero_q), RF_STATUS_NON_FINITE, zero_q);
    EXPECT(rf_matrix_to_quat(bad_m, &zero_q), RF_STATUS_NOT_ROTATION_MATRIX, zero_q);
    motion.rotation = long_q;
    EXPECT(rf_motion_map_point(&motion, &point, &out_point), RF_STATUS_NOT_UNIT_QUATERNION, out_point);
    EXPECT(rf_motion_about_axis(&zero, 0.1, 0.0, 0.0, &out_motion), RF_STATUS_ZERO_NORM, out_motion);

    /* Invalid models. */
    {
        rf_earth_model broken = m, out_model;
        broken.gm = -1.0;
        EXPECT(rf_geodetic_to_ecef(&broken, &good, &out_v), RF_STATUS_NOT_POSITIVE, out_v);
        EXPECT(rf_earth_model_from_defining_constants(6378137.0, 0.5, 3.986e14, 7.29e-5, &out_model), RF_STATUS_OUT_OF_RANGE, out_model);
    }

    /* Every status has a message; unknown values too. */
    CHECK(strcmp(rf_status_message(RF_STATUS_OK), "ok") == 0, "ok message");
    CHECK(strlen(rf_status_message(RF_STATUS_NEAR_POLE)) > 10, "near-pole message");
    CHECK(strcmp(rf_status_message(999u), "unknown rotaframe status") == 0, "unknown status message");
    return check_report("test_errors");
}
