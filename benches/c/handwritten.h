/* Hand-written C baselines for the callgrind benchmark (see handwritten.c). */
#ifndef ROTAFRAME_HANDWRITTEN_H
#define ROTAFRAME_HANDWRITTEN_H
void hw_map_point(const double *q, const double *p0, const double *v0, const double *a0, const double *w, const double *al,
                  const double *r, const double *v, const double *a, double *out_r, double *out_v, double *out_a);
void hw_apparent(const double *w, const double *al, const double *a0, const double *r, const double *v, double *out);
void hw_geodetic_to_ecef(double a, double e2, double lat, double lon, double h, double out[3]);
void hw_ecef_to_geodetic(double a, double b, double e2, double ep2, double f, double x, double y, double z, double out[3]);
#endif
