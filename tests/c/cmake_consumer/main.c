/* Links against the installed library (find_package or pkg-config) and makes one call: the
   ECEF position of a point on the equator at the prime meridian is (a, 0, 0) for WGS 84
   (a = 6378137 m, NIMA TR8350.2). */
#include <math.h>
#include <stdio.h>

#include "rotaframe.h"

int main(void) {
    rf_earth_model wgs84;
    rf_geodetic point = {0.0, 0.0, 0.0};
    rf_vec3 xyz;
    if (rf_earth_model_wgs84(&wgs84) != RF_STATUS_OK || rf_geodetic_to_ecef(&wgs84, &point, &xyz) != RF_STATUS_OK) return 1;
    if (fabs(xyz.x - 6378137.0) > 1e-6 || fabs(xyz.y) > 1e-6 || fabs(xyz.z) > 1e-6) return 1;
    printf("consumer linked rotaframe: x = %.3f m\n", xyz.x);
    return 0;
}
