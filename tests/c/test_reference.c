/* Published values through the C interface; the source is named beside each check. */
#include "check.h"

#define PI 3.14159265358979323846
#define DEG (PI / 180.0)

int main(void) {
    rf_earth_model wgs84;
    OK(rf_earth_model_wgs84(&wgs84));

    /* NIMA TR8350.2, Tables 3.1 and 3.4. */
    CHECK(wgs84.semi_major_axis == 6378137.0, "a");
    CHECK(wgs84.gm == 3.986004418e14, "GM");
    CHECK(wgs84.rotation_rate == 7.292115e-5, "omega");
    CHECK(wgs84.gamma_equator == 9.7803253359 && wgs84.gamma_pole == 9.8321849378, "normal gravity constants");

    /* Somigliana at 0, 45 and 90 degrees (TR8350.2; 45 deg computed, shared table). */
    {
        double g;
        OK(rf_normal_gravity(&wgs84, 0.0, 0.0, &g));
        CLOSE(g, 9.7803253359, 1e-10, "gamma(0)");
        OK(rf_normal_gravity(&wgs84, 45.0 * DEG, 0.0, &g));
        CLOSE(g, 9.8061977694, 1e-10, "gamma(45)");
        OK(rf_normal_gravity(&wgs84, 90.0 * DEG, 0.0, &g));
        CLOSE(g, 9.8321849378, 1e-10, "gamma(90)");
        OK(rf_normal_gravity(&wgs84, 45.0 * DEG, 1000.0, &g));
        CLOSE(g, 9.8031129436, 1e-10, "gamma(45, 1000 m)");
    }

    /* Schuler period 2 pi sqrt(R / g), R = sqrt(M N) + h (Schuler 1923; shared table). At the
       equator sqrt(M N) = a sqrt(1 - e^2) with a, e^2 and gamma_e of TR8350.2 Tables 3.1, 3.3
       and 3.4. 1e-3 s: the constants carry 10-11 digits (see earth_reference.rs). */
    {
        double t;
        OK(rf_schuler_period(&wgs84, 0.0, 0.0, &t));
        CLOSE(t, 2.0 * PI * sqrt(6378137.0 * sqrt(1.0 - 6.69437999014e-3) / 9.7803253359), 1e-3, "Schuler period at the equator");
    }

    /* IOGP 373-7-2, method 9602 worked example (published to the millimetre). */
    {
        rf_geodetic p = {(53.0 + 48.0 / 60.0 + 33.820 / 3600.0) * DEG, (2.0 + 7.0 / 60.0 + 46.380 / 3600.0) * DEG, 73.0};
        rf_vec3 x;
        rf_geodetic back;
        OK(rf_geodetic_to_ecef(&wgs84, &p, &x));
        CLOSE(x.x, 3771793.968, 5e-4, "X");
        CLOSE(x.y, 140253.342, 5e-4, "Y");
        CLOSE(x.z, 5124304.349, 5e-4, "Z");
        OK(rf_ecef_to_geodetic(&wgs84, &x, &back));
        CLOSE(back.latitude, p.latitude, 1e-15, "round-trip latitude");
        CLOSE(back.height, 73.0, 1e-9, "round-trip height");
    }

    /* Radii of curvature at 45 degrees (computed from the WGS 84 formulas, shared table). */
    {
        double m, n;
        OK(rf_radii_of_curvature(&wgs84, 45.0 * DEG, &m, &n));
        CLOSE(m, 6367381.8156, 1e-4, "M(45)");
        CLOSE(n, 6388838.2901, 1e-4, "N(45)");
    }

    /* Earth Rotation Angle at J2000.0 (IERS Conventions 2010, eq. 5.15). */
    {
        double era;
        OK(rf_earth_rotation_angle(2451545.0, 0.0, &era));
        CLOSE(era, 2.0 * PI * 0.7790572732640, 1e-15, "ERA(J2000)");
    }

    /* Coriolis parameter at 45 degrees: about 1.03e-4 1/s (common practice). */
    {
        double f;
        OK(rf_coriolis_parameter(&wgs84, 45.0 * DEG, &f));
        CLOSE(f, 1.0312608e-4, 1e-11, "f(45)");
    }

    /* Eotvos correction: about 7.5 mGal per knot eastward at the equator (SEG Wiki). */
    {
        rf_vec3 v = {0.0, 1852.0 / 3600.0, 0.0};
        double e;
        OK(rf_eotvos_correction(&wgs84, 0.0, 0.0, &v, &e));
        CLOSE(e * 1e5, 7.503 + 0.004154, 0.002, "Eotvos, 1 knot east");
    }

    /* Centripetal acceleration at the equator, omega^2 a = 0.0339157 m/s^2 (computed). */
    {
        rf_vec3 r = {6378137.0, 0.0, 0.0}, a;
        OK(rf_centripetal_acceleration_ecef(&wgs84, &r, &a));
        CLOSE(a.x, -0.0339157, 1e-7, "centripetal");
    }

    /* Stationary point: Earth rate in NED is Omega (cos lat, 0, -sin lat) (strapdown texts). */
    {
        rf_vec3 w;
        OK(rf_earth_rate_ned(&wgs84, 45.0 * DEG, &w));
        CLOSE(w.x, 7.292115e-5 * cos(45.0 * DEG), 1e-19, "earth rate north");
        CLOSE(w.z, -7.292115e-5 * sin(45.0 * DEG), 1e-19, "earth rate down");
    }

    /* A counter-clockwise turntable deflects a body moving across it to the right (common
       practice): omega = +z, moving along -x at (1, 0, 0) gives +y. */
    {
        rf_vec3 w = {0, 0, 1}, zero = {0, 0, 0}, r = {1, 0, 0}, v = {-0.5, 0, 0};
        rf_apparent_terms t;
        OK(rf_apparent_terms_compute(&w, &zero, &zero, &r, &v, &t));
        CHECK(t.coriolis.y > 0.0, "deflected right: %g", t.coriolis.y);
        CLOSE(t.centrifugal.x, 1.0, 1e-15, "centrifugal");
    }
    return check_report("test_reference");
}
