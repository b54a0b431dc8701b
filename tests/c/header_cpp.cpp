// The C header compiles as C++ (and its functions are callable from C++).
#include "rotaframe.h"

#include <cstdio>

int main() {
    rf_earth_model model;
    rf_geodetic position = {0.7, 0.1, 100.0};
    rf_vec3 ecef;
    if (rf_earth_model_wgs84(&model) != RF_STATUS_OK || rf_geodetic_to_ecef(&model, &position, &ecef) != RF_STATUS_OK) {
        std::printf("header_cpp: call failed\n");
        return 1;
    }
    std::printf("header_cpp: header compiles as C++ and links (x = %.3f m)\n", ecef.x);
    return 0;
}
