/*
 * Hand-written C implementations of the formulas behind four rotaframe C functions, for the
 * callgrind benchmark: the same algorithms and the same arithmetic, with no argument checks.
 *   - map point: quaternion to matrix, then the transport theorem;
 *   - apparent accelerations: the four terms and their sum;
 *   - geodetic to ECEF and ECEF to geodetic: rotaframe's double-double algorithms (table-free
 *     sine/cosine, table-driven arctangent, two Bowring steps), written out in C.
 */
#include <math.h>
#include <string.h>

#include "handwritten.h"
#include "dd_tables.h"

static void cross(const double a[3], const double b[3], double out[3]) {
    out[0] = a[1] * b[2] - a[2] * b[1];
    out[1] = a[2] * b[0] - a[0] * b[2];
    out[2] = a[0] * b[1] - a[1] * b[0];
}

static void matvec(const double m[9], const double v[3], double out[3]) {
    out[0] = m[0] * v[0] + m[1] * v[1] + m[2] * v[2];
    out[1] = m[3] * v[0] + m[4] * v[1] + m[5] * v[2];
    out[2] = m[6] * v[0] + m[7] * v[1] + m[8] * v[2];
}

void hw_map_point(const double *q, const double *p0, const double *v0, const double *a0, const double *w, const double *al,
                  const double *r, const double *v, const double *a, double *out_r, double *out_v, double *out_a) {
    double m[9], rr[3], rv[3], ra[3], wr[3], wrv[3], alr[3], wwr[3];
    double qw = q[0], qx = q[1], qy = q[2], qz = q[3];
    int k;
    m[0] = qw * qw + qx * qx - qy * qy - qz * qz;
    m[1] = 2.0 * (qx * qy - qw * qz);
    m[2] = 2.0 * (qx * qz + qw * qy);
    m[3] = 2.0 * (qx * qy + qw * qz);
    m[4] = qw * qw - qx * qx + qy * qy - qz * qz;
    m[5] = 2.0 * (qy * qz - qw * qx);
    m[6] = 2.0 * (qx * qz - qw * qy);
    m[7] = 2.0 * (qy * qz + qw * qx);
    m[8] = qw * qw - qx * qx - qy * qy + qz * qz;
    matvec(m, r, rr);
    matvec(m, v, rv);
    matvec(m, a, ra);
    cross(w, rr, wr);
    cross(w, rv, wrv);
    cross(al, rr, alr);
    cross(w, wr, wwr);
    for (k = 0; k < 3; ++k) {
        out_r[k] = p0[k] + rr[k];
        out_v[k] = v0[k] + rv[k] + wr[k];
        out_a[k] = a0[k] + ra[k] + 2.0 * wrv[k] + alr[k] + wwr[k];
    }
}

void hw_apparent(const double *w, const double *al, const double *a0, const double *r, const double *v, double *out) {
    double wv[3], wr[3], wwr[3], alr[3];
    int k;
    cross(w, v, wv);
    cross(w, r, wr);
    cross(w, wr, wwr);
    cross(al, r, alr);
    for (k = 0; k < 3; ++k) {
        out[k] = -a0[k];
        out[3 + k] = -2.0 * wv[k];
        out[6 + k] = -wwr[k];
        out[9 + k] = -alr[k];
        out[12 + k] = out[k] + out[3 + k] + out[6 + k] + out[9 + k];
    }
}

/* ---- double-double arithmetic, as in core/src/dd.rs ---- */
typedef struct dd {
    double hi, lo;
} dd;

static dd two_sum(double a, double b) {
    dd r;
    double bb;
    r.hi = a + b;
    bb = r.hi - a;
    r.lo = (a - (r.hi - bb)) + (b - bb);
    return r;
}
static dd fast_two_sum(double a, double b) {
    dd r;
    r.hi = a + b;
    r.lo = b - (r.hi - a);
    return r;
}
static dd two_prod(double a, double b) {
    dd r;
    r.hi = a * b;
    r.lo = fma(a, b, -r.hi);
    return r;
}
static dd dd_new(double hi, double lo) { return fast_two_sum(hi, lo); }
static dd dd_add(dd a, dd b) {
    dd s = two_sum(a.hi, b.hi);
    return dd_new(s.hi, s.lo + a.lo + b.lo);
}
static dd dd_add_f(dd a, double b) {
    dd s = two_sum(a.hi, b);
    return dd_new(s.hi, s.lo + a.lo);
}
static dd dd_mul(dd a, dd b) {
    dd p = two_prod(a.hi, b.hi);
    return dd_new(p.hi, p.lo + (a.hi * b.lo + a.lo * b.hi));
}
static dd dd_mul_f(dd a, double b) {
    dd p = two_prod(a.hi, b);
    return dd_new(p.hi, fma(a.lo, b, p.lo));
}
static dd dd_div(dd a, dd b) {
    double q = a.hi / b.hi;
    dd qb = dd_mul_f(b, q), neg, r;
    neg.hi = -qb.hi;
    neg.lo = -qb.lo;
    r = dd_add(a, neg);
    return dd_new(q, r.hi / b.hi);
}
static dd dd_sqrt(dd a) {
    double r = sqrt(a.hi);
    double residual = fma(-r, r, a.hi) + a.lo;
    return dd_new(r, r > 0.0 ? residual / (2.0 * r) : 0.0);
}

static const double ROUNDING_SHIFT = 6755399441055744.0;
static const double SIN_TAIL[7] = {8.333333333333333e-3, -1.984126984126984e-4, 2.7557319223985893e-6, -2.505210838544172e-8,
                                   1.6059043836821613e-10, -7.647163731819816e-13, 2.8114572543455206e-15};
static const double COS_TAIL[8] = {-1.388888888888889e-3, 2.48015873015873e-5, -2.755731922398589e-7, 2.08767569878681e-9,
                                   -1.1470745597729725e-11, 4.779477332387385e-14, -1.5619206968586225e-16, 4.110317623312165e-19};

static int shifted_integer(double shifted) {
    unsigned long long bits;
    memcpy(&bits, &shifted, sizeof bits);
    return (int)(unsigned)bits;
}

static void sin_cos_dd(double x, dd *sin_x, dd *cos_x) {
    const double frac_2_pi = 0.63661977236758134308;
    double k_shifted = x * frac_2_pi + ROUNDING_SHIFT, k = k_shifted - ROUNDING_SHIFT;
    double t1 = x - k * HALF_PI_PARTS[0];
    dd re = two_sum(t1, -(k * HALF_PI_PARTS[1]));
    double r = re.hi, r_lo = re.lo - k * HALF_PI_PARTS[2];
    dd u = two_prod(r, r), sixth = {0.16666666666666666, 9.25185853854297e-18}, tw = {0.041666666666666664, 2.3129646346357427e-18};
    double u1 = u.hi;
    dd cube = dd_mul(dd_mul_f(u, r), sixth);
    double q = SIN_TAIL[0] + u1 * (SIN_TAIL[1] + u1 * (SIN_TAIL[2] + u1 * (SIN_TAIL[3] + u1 * (SIN_TAIL[4] + u1 * (SIN_TAIL[5] + u1 * SIN_TAIL[6])))));
    double tail = r * u1 * u1 * q;
    dd s = two_sum(r, -cube.hi);
    dd sin_r = dd_new(s.hi, s.lo - cube.lo + tail + r_lo * (1.0 - 0.5 * u1));
    dd quartic = dd_mul(dd_mul(u, u), tw);
    double rr = COS_TAIL[0] + u1 * (COS_TAIL[1] + u1 * (COS_TAIL[2] + u1 * (COS_TAIL[3] + u1 * (COS_TAIL[4] + u1 * (COS_TAIL[5] + u1 * (COS_TAIL[6] + u1 * COS_TAIL[7]))))));
    double tail_c = u1 * u1 * u1 * rr;
    dd c1 = two_sum(1.0, -0.5 * u.hi);
    dd c2 = fast_two_sum(c1.hi, quartic.hi);
    dd cos_r = dd_new(c2.hi, c1.lo + c2.lo - 0.5 * u.lo + quartic.lo + tail_c - r_lo * r * (1.0 - u1 / 6.0));
    int quadrant = shifted_integer(k_shifted) & 3;
    int swap = quadrant & 1;
    double sin_sign = (quadrant & 2) ? -1.0 : 1.0, cos_sign = ((quadrant + 1) & 2) ? -1.0 : 1.0;
    sin_x->hi = sin_sign * (swap ? cos_r.hi : sin_r.hi);
    sin_x->lo = sin_sign * (swap ? cos_r.lo : sin_r.lo);
    cos_x->hi = cos_sign * (swap ? sin_r.hi : cos_r.hi);
    cos_x->lo = cos_sign * (swap ? sin_r.lo : cos_r.lo);
}

static dd atan2_dd(double y, double x) {
    double ax = fabs(x), ay = fabs(y);
    int swap = ay > ax;
    double num = swap ? ax : ay, den = swap ? ay : ax;
    double den_safe = den == 0.0 ? 1.0 : den;
    double t = num / den_safe, t_lo = fma(-t, den_safe, num) / den_safe;
    double j_shifted = t * 64.0 + ROUNDING_SHIFT, c = (j_shifted - ROUNDING_SHIFT) / 64.0;
    double u = ((t - c) + t_lo) / fma(t, c, 1.0), u2 = u * u;
    double poly = u * u2 * (-1.0 / 3.0 + u2 * (0.2 - u2 * (1.0 / 7.0)));
    int j = shifted_integer(j_shifted);
    dd s, r, angle, tt;
    int x_negative = signbit(x) != 0;
    double off_hi, off_lo, sign, y_sign;
    j = j < 0 ? 0 : (j > 64 ? 64 : j);
    s = two_sum(ATAN_TABLE[j][0], u);
    r = dd_new(s.hi, s.lo + ATAN_TABLE[j][1] + poly);
    if (swap) {
        off_hi = HALF_PI_DD[0], off_lo = HALF_PI_DD[1];
    } else if (x_negative) {
        off_hi = PI_DD[0], off_lo = PI_DD[1];
    } else {
        off_hi = 0.0, off_lo = 0.0;
    }
    sign = (swap != x_negative) ? -1.0 : 1.0;
    tt = two_sum(off_hi, sign * r.hi);
    angle = dd_new(tt.hi, tt.lo + off_lo + sign * r.lo);
    y_sign = signbit(y) ? -1.0 : 1.0;
    angle.hi *= y_sign;
    angle.lo *= y_sign;
    return angle;
}

void hw_geodetic_to_ecef(double a, double e2, double lat, double lon, double h, double out[3]) {
    dd sl, cl, so, co, w, n, horizontal, vertical, x, y;
    sin_cos_dd(lat, &sl, &cl);
    sin_cos_dd(lon, &so, &co);
    w = dd_sqrt(two_sum(1.0, -(e2 * sl.hi * sl.hi)));
    n.hi = a;
    n.lo = 0.0;
    n = dd_div(n, w);
    horizontal = dd_mul(dd_add_f(n, h), cl);
    vertical = dd_mul(dd_add_f(dd_mul(n, two_sum(1.0, -e2)), h), sl);
    x = dd_mul(horizontal, co);
    y = dd_mul(horizontal, so);
    out[0] = x.hi + x.lo;
    out[1] = y.hi + y.lo;
    out[2] = vertical.hi + vertical.lo;
}

static void normalise(double c, double s, double *oc, double *os) {
    double inv = 1.0 / sqrt(c * c + s * s);
    *oc = c * inv;
    *os = s * inv;
}

void hw_ecef_to_geodetic(double a, double b, double e2, double ep2, double f, double x, double y, double z, double out[3]) {
    double ep2b = ep2 * b, e2a = e2 * a, one_minus_f = 1.0 - f;
    dd p = dd_sqrt(dd_add(two_prod(x, x), two_prod(y, y)));
    double cb, sb, num0, den0, sin_lat;
    dd num, den, angle, norm, projection, aw, negaw;
    normalise(b * p.hi, a * z, &cb, &sb);
    num0 = z + ep2b * sb * sb * sb;
    den0 = p.hi - e2a * cb * cb * cb;
    normalise(den0, one_minus_f * num0, &cb, &sb);
    num = two_sum(z, ep2b * sb * sb * sb);
    den = dd_add_f(p, -(e2a * cb * cb * cb));
    angle = atan2_dd(num.hi, den.hi);
    out[0] = angle.hi + (angle.lo + (num.lo * den.hi - den.lo * num.hi) / (num.hi * num.hi + den.hi * den.hi));
    {
        dd lon = atan2_dd(y, x);
        out[1] = p.hi == 0.0 ? 0.0 : lon.hi + lon.lo;
    }
    norm = dd_sqrt(dd_add(dd_mul(num, num), dd_mul(den, den)));
    projection = dd_div(dd_add(dd_mul(p, den), dd_mul_f(num, z)), norm);
    sin_lat = num.hi / norm.hi;
    aw = dd_mul_f(dd_sqrt(two_sum(1.0, -(e2 * sin_lat * sin_lat))), a);
    negaw.hi = -aw.hi;
    negaw.lo = -aw.lo;
    {
        dd hh = dd_add(projection, negaw);
        out[2] = hh.hi + hh.lo;
    }
}
