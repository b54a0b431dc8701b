"""The NED strapdown mechanization written as a per-step numpy loop: the baseline that
``bench_strapdown.py`` times ``rotaframe.Strapdown.run`` against.

It follows the algorithm of the core's ``nav::strapdown`` step for step (two-sample coning and
sculling with the unequal-interval coefficient, the exact constant-rate rotation compensation,
the two-pass predictor-corrector for Earth rate, transport rate, Coriolis and normal gravity
with height, free vertical channel, WGS 84), the way an analyst would write it with numpy
arrays. It is a benchmark baseline, not part of the library; the tests check that it agrees
with the library so that the benchmark compares like with like.
"""

import numpy as np

# WGS 84 (NIMA TR8350.2).
A = 6378137.0
F = 1 / 298.257223563
E2 = F * (2 - F)
OMEGA = 7.292115e-5
GM = 3.986004418e14
GAMMA_E = 9.7803253359
GAMMA_P = 9.8321849378
B = A * (1 - F)
K = 0.00193185265241  # Somigliana constant, TR8350.2 Table 3.4
M_RATIO = OMEGA**2 * A**2 * B / GM


def qmul(p, q):
    w1, x1, y1, z1 = p
    w2, x2, y2, z2 = q
    return np.array(
        [
            w1 * w2 - x1 * x2 - y1 * y2 - z1 * z2,
            w1 * x2 + x1 * w2 + y1 * z2 - z1 * y2,
            w1 * y2 - x1 * z2 + y1 * w2 + z1 * x2,
            w1 * z2 + x1 * y2 - y1 * x2 + z1 * w2,
        ]
    )


def qexp(v):
    angle = np.linalg.norm(v)
    if angle == 0.0:
        return np.array([1.0, 0.0, 0.0, 0.0])
    return np.concatenate([[np.cos(angle / 2)], np.sin(angle / 2) * v / angle])


def qrot(q, v):
    u = q[1:]
    t = 2 * np.cross(u, v)
    return v + q[0] * t + np.cross(u, t)


def gravity(lat, h):
    s2 = np.sin(lat) ** 2
    g0 = GAMMA_E * (1 + K * s2) / np.sqrt(1 - E2 * s2)
    return g0 * (1 - 2 / A * (1 + F + M_RATIO - 2 * F * s2) * h + 3 / A**2 * h * h)


def radii(lat):
    w2 = 1 - E2 * np.sin(lat) ** 2
    n = A / np.sqrt(w2)
    return n * (1 - E2) / w2, n


def compensation(theta2):
    if theta2 < 0.0025:
        return 0.5 - theta2 / 24 + theta2**2 / 720, 1 / 6 - theta2 / 120 + theta2**2 / 5040
    theta = np.sqrt(theta2)
    return 2 * np.sin(theta / 2) ** 2 / theta2, (theta - np.sin(theta)) / (theta2 * theta)


def run(lat, lon, h, v_ned, attitude, dtheta, dv, dt):
    """Mechanizes increments ``dtheta``, ``dv`` (N, 3) over intervals ``dt`` (N,) from the
    given state; returns arrays lat, lon, h (N,), v_ned (N, 3), attitude (N, 4)."""
    v = np.asarray(v_ned, float)
    q = np.asarray(attitude, float)
    n = len(dt)
    out_lat, out_lon, out_h = np.empty(n), np.empty(n), np.empty(n)
    out_v, out_q = np.empty((n, 3)), np.empty((n, 4))
    previous = None
    for k in range(n):
        t = dt[k]
        th, vel = dtheta[k], dv[k]
        a, b = compensation(th @ th)
        turned = np.cross(th, vel)
        phi = th.copy()
        dv_body = vel + a * turned + b * np.cross(th, turned)
        if previous is not None:
            pth, pv, pt = previous
            c = t * t / (6 * pt * (t + pt))
            phi = phi + c * np.cross(pth, th)
            dv_body = dv_body + c * (np.cross(pth, vel) + np.cross(pv, th))
        q_body = qexp(phi)
        specific = qrot(q, dv_body)
        lat_mid, h_mid, v_mid = lat, h, v
        for _ in range(2):
            s, co = np.sin(lat_mid), np.cos(lat_mid)
            m_r, n_r = radii(lat_mid)
            w_ie = np.array([OMEGA * co, 0.0, -OMEGA * s])
            rho = np.array([v_mid[1] / (n_r + h_mid), -v_mid[0] / (m_r + h_mid), -v_mid[1] * s / (co * (n_r + h_mid))])
            zeta = (w_ie + rho) * t
            g = np.array([0.0, 0.0, gravity(lat_mid, h_mid)])
            coriolis = -np.cross(2 * w_ie + rho, v_mid)
            v_new = v + specific - 0.5 * np.cross(zeta, specific) + (g + coriolis) * t
            v_avg = 0.5 * (v + v_new)
            h_new = h - v_avg[2] * t
            lat_new = lat + v_avg[0] * t / (m_r + h_mid)
            lon_new = lon + v_avg[1] * t / ((n_r + h_mid) * co)
            q_new = qmul(qmul(qexp(-zeta), q), q_body)
            lat_mid, h_mid, v_mid = 0.5 * (lat + lat_new), 0.5 * (h + h_new), v_avg
        if lon_new > np.pi:
            lon_new -= 2 * np.pi
        elif lon_new <= -np.pi:
            lon_new += 2 * np.pi
        lat, lon, h, v = lat_new, lon_new, h_new, v_new
        q = q_new / np.linalg.norm(q_new)
        previous = (th, vel, t)
        out_lat[k], out_lon[k], out_h[k] = lat, lon, h
        out_v[k], out_q[k] = v, q
    return out_lat, out_lon, out_h, out_v, out_q
