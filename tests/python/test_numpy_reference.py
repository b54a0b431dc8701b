"""Every function against an independent numpy implementation written here.

The reference implementations are the textbook formulas (named beside each); tolerances are
rounding bounds for the formula at hand, or, for the geodetic inverse, the accuracy of the
simpler textbook iteration used as reference.
"""

import numpy as np
import pytest

import rotaframe as rf
from conftest import cross, matvec, quat_matrix, random_quaternions

# WGS 84 defining constants and normal gravity (NIMA TR8350.2, Tables 3.1 and 3.4).
A = 6378137.0
F = 1 / 298.257223563
E2 = F * (2 - F)
GM = 3.986004418e14
OMEGA = 7.292115e-5
GAMMA_E = 9.7803253359
K_SOMIGLIANA = 0.00193185265241
M_RATIO = 0.00344978650684


def np_geodetic_to_ecef(lat, lon, h):
    # TR8350.2 eq. 4-14.
    n = A / np.sqrt(1 - E2 * np.sin(lat) ** 2)
    return np.stack([(n + h) * np.cos(lat) * np.cos(lon), (n + h) * np.cos(lat) * np.sin(lon), (n * (1 - E2) + h) * np.sin(lat)], axis=-1)


def np_ecef_to_geodetic(xyz):
    # Fixed-point iteration on tan φ = z / (p (1 − e² N/(N + h))) (common practice), run to
    # convergence; accurate to well under a micrometre.
    x, y, z = xyz[..., 0], xyz[..., 1], xyz[..., 2]
    p = np.hypot(x, y)
    lat = np.arctan2(z, p * (1 - E2))
    for _ in range(10):
        n = A / np.sqrt(1 - E2 * np.sin(lat) ** 2)
        h = p / np.cos(lat) - n
        lat = np.arctan2(z, p * (1 - E2 * n / (n + h)))
    n = A / np.sqrt(1 - E2 * np.sin(lat) ** 2)
    return lat, np.arctan2(y, x), p / np.cos(lat) - n


def np_ned(lat, lon):
    sl, cl, so, co = np.sin(lat), np.cos(lat), np.sin(lon), np.cos(lon)
    return np.stack(
        [np.stack([-sl * co, -sl * so, cl], -1), np.stack([-so, co, np.zeros_like(so)], -1), np.stack([-cl * co, -cl * so, -sl], -1)], -2
    )


def test_geodetic_to_ecef_matches_textbook_formula(rng):
    lat = rng.uniform(-np.pi / 2, np.pi / 2, 2000)
    lon = rng.uniform(-np.pi, np.pi, 2000)
    h = rng.uniform(-1e4, 1e5, 2000)
    # The textbook formula in f64 rounds to a few nm; 1e-8 m is its error bound.
    np.testing.assert_allclose(rf.geodetic_to_ecef(lat, lon, h), np_geodetic_to_ecef(lat, lon, h), rtol=0, atol=1e-8)
    deg = rf.geodetic_to_ecef(np.degrees(lat), np.degrees(lon), h, degrees=True)
    np.testing.assert_allclose(deg, np_geodetic_to_ecef(lat, lon, h), rtol=0, atol=1e-8)


def test_ecef_to_geodetic_matches_converged_iteration(rng):
    xyz = np_geodetic_to_ecef(rng.uniform(-1.5, 1.5, 2000), rng.uniform(-3.1, 3.1, 2000), rng.uniform(-1e4, 1e6, 2000))
    lat, lon, h = rf.ecef_to_geodetic(xyz)
    rlat, rlon, rh = np_ecef_to_geodetic(xyz)
    # The numpy iteration's h = p/cos φ − N loses digits near the poles (points kept to
    # |φ| < 86°): agreement to 1e-12 rad and 1e-6 m checks the formula, not the last digits.
    np.testing.assert_allclose(lat, rlat, rtol=0, atol=1e-12)
    np.testing.assert_allclose(lon, rlon, rtol=0, atol=1e-15)
    np.testing.assert_allclose(h, rh, rtol=0, atol=1e-6)


def test_local_level_rotations_match_written_out_matrices(rng):
    lat, lon = rng.uniform(-1.57, 1.57, 500), rng.uniform(-7, 7, 500)
    np.testing.assert_allclose(rf.ned_from_ecef(lat, lon), np_ned(lat, lon), rtol=0, atol=1e-15)
    enu = np_ned(lat, lon)[..., [1, 0, 2], :] * np.array([1, 1, -1])[:, None]
    np.testing.assert_allclose(rf.enu_from_ecef(lat, lon), enu, rtol=0, atol=1e-15)


def test_radii_of_curvature_match_formulas(rng):
    lat = rng.uniform(-np.pi / 2, np.pi / 2, 500)
    w2 = 1 - E2 * np.sin(lat) ** 2
    m, n = rf.radii_of_curvature(lat)
    np.testing.assert_allclose(m, A * (1 - E2) / w2**1.5, rtol=1e-15)
    np.testing.assert_allclose(n, A / np.sqrt(w2), rtol=1e-15)


def test_normal_gravity_matches_tr8350_formulas(rng):
    lat, h = rng.uniform(-np.pi / 2, np.pi / 2, 500), rng.uniform(-500, 2e4, 500)
    s2 = np.sin(lat) ** 2
    gamma0 = GAMMA_E * (1 + K_SOMIGLIANA * s2) / np.sqrt(1 - E2 * s2)  # TR8350.2 eq. 4-1
    gamma = gamma0 * (1 - 2 / A * (1 + F + M_RATIO - 2 * F * s2) * h + 3 / A**2 * h**2)  # eq. 4-3
    np.testing.assert_allclose(rf.normal_gravity(lat, h), gamma, rtol=1e-14)
    g = rf.gravity_ned(lat, h)
    np.testing.assert_allclose(g[..., 2], gamma, rtol=1e-14)
    assert np.all(g[..., :2] == 0)


def test_schuler_period_is_two_pi_root_r_over_g_of_tr8350_formulas(rng):
    # T = 2π √((√(M N) + h) / γ(φ, h)) (Schuler 1923; shared reference table), with M, N and γ
    # from the TR8350.2 formulas written out in numpy here. rtol 1e-14: a handful of operations
    # on values each within 1e-15 (radii) and 1e-14 (gravity, above) of these.
    lat, h = rng.uniform(-np.pi / 2, np.pi / 2, 500), rng.uniform(-500, 2e4, 500)
    s2 = np.sin(lat) ** 2
    w2 = 1 - E2 * s2
    m, n = A * (1 - E2) / w2**1.5, A / np.sqrt(w2)
    gamma = GAMMA_E * (1 + K_SOMIGLIANA * s2) / np.sqrt(w2) * (1 - 2 / A * (1 + F + M_RATIO - 2 * F * s2) * h + 3 / A**2 * h**2)
    np.testing.assert_allclose(rf.schuler_period(lat, h), 2 * np.pi * np.sqrt((np.sqrt(m * n) + h) / gamma), rtol=1e-14)
    # 84.5 min at 45° on the ellipsoid (5067.3 s from the shared table's M, N and γ(45°)).
    assert rf.schuler_period(45.0, degrees=True) == pytest.approx(5067.284, abs=1e-3)


def test_j2_gravity_matches_formula(rng):
    xyz = np_geodetic_to_ecef(rng.uniform(-1.5, 1.5, 500), rng.uniform(-3, 3, 500), rng.uniform(0, 4e7, 500))
    j2 = rf.WGS84.j2
    r2 = np.sum(xyz**2, axis=-1)
    r = np.sqrt(r2)
    k = 1.5 * j2 * A**2 / r2
    z2 = 5 * xyz[:, 2] ** 2 / r2
    factor = np.stack([1 + k * (1 - z2), 1 + k * (1 - z2), 1 + k * (3 - z2)], -1)
    gravitation = -GM / (r2 * r)[:, None] * xyz * factor  # Groves 2013, ch. 2
    np.testing.assert_allclose(rf.gravitation_ecef(xyz), gravitation, rtol=1e-13)
    centrifugal = OMEGA**2 * xyz * np.array([1, 1, 0])
    np.testing.assert_allclose(rf.gravity_ecef(xyz), gravitation + centrifugal, rtol=1e-13, atol=1e-18)
    np.testing.assert_allclose(rf.centripetal_acceleration_ecef(xyz), -centrifugal, rtol=1e-14, atol=1e-20)


def test_rates_coriolis_and_eotvos_match_formulas(rng):
    lat, h = rng.uniform(-1.5, 1.5, 500), rng.uniform(0, 1e4, 500)
    v = rng.uniform(-250, 250, (500, 3))
    m, n = A * (1 - E2) / (1 - E2 * np.sin(lat) ** 2) ** 1.5, A / np.sqrt(1 - E2 * np.sin(lat) ** 2)
    w_ie = OMEGA * np.stack([np.cos(lat), np.zeros_like(lat), -np.sin(lat)], -1)
    rho = np.stack([v[:, 1] / (n + h), -v[:, 0] / (m + h), -v[:, 1] * np.tan(lat) / (n + h)], -1)
    np.testing.assert_allclose(rf.earth_rate_ned(lat), w_ie, rtol=1e-15, atol=1e-21)
    np.testing.assert_allclose(rf.transport_rate_ned(lat, h, v), rho, rtol=1e-13, atol=1e-20)
    cor = -cross(2 * w_ie + rho, v)
    np.testing.assert_allclose(rf.coriolis_ned(lat, h, v), cor, rtol=1e-12, atol=1e-18)
    eot = 2 * OMEGA * v[:, 1] * np.cos(lat) + v[:, 1] ** 2 / (n + h) + v[:, 0] ** 2 / (m + h)
    np.testing.assert_allclose(rf.eotvos_correction(lat, v, h), eot, rtol=1e-12, atol=1e-18)
    np.testing.assert_allclose(rf.coriolis_parameter(lat), 2 * OMEGA * np.sin(lat), rtol=1e-15)


def test_earth_rotation_angle_matches_iers_formula(rng):
    jd = 2451545.0 + np.round(rng.uniform(-2e4, 2e4, 200))
    frac = rng.uniform(0, 1, 200)
    tu = (jd - 2451545.0) + frac
    # IERS Conventions 2010 eq. 5.15 with whole days removed.
    theta = 2 * np.pi * np.mod(0.7790572732640 + 0.00273781191135448 * tu + np.mod(jd, 1) + frac, 1.0)
    np.testing.assert_allclose(rf.earth_rotation_angle(jd, frac), theta, rtol=0, atol=1e-12)


def test_apparent_acceleration_matches_cross_products(rng):
    w, al, a0 = rng.normal(size=(1000, 3)), rng.normal(size=(1000, 3)), rng.normal(size=(1000, 3))
    r, v = rng.normal(size=(1000, 3)) * 10, rng.normal(size=(1000, 3))
    t = rf.apparent_acceleration(w, r, v, angular_acceleration=al, origin_acceleration=a0)
    np.testing.assert_allclose(t.translational, -a0, rtol=0, atol=0)
    np.testing.assert_allclose(t.coriolis, -2 * cross(w, v), rtol=1e-14, atol=1e-14)
    np.testing.assert_allclose(t.centrifugal, -cross(w, cross(w, r)), rtol=1e-13, atol=1e-13)
    np.testing.assert_allclose(t.euler, -cross(al, r), rtol=1e-14, atol=1e-14)
    np.testing.assert_allclose(t.total, t.translational + t.coriolis + t.centrifugal + t.euler, rtol=1e-14, atol=1e-13)


def random_motion(rng, n):
    parts = dict(
        rotation=random_quaternions(rng, n),
        position=rng.normal(size=(n, 3)) * 100,
        velocity=rng.normal(size=(n, 3)) * 10,
        acceleration=rng.normal(size=(n, 3)),
        angular_velocity=rng.normal(size=(n, 3)),
        angular_acceleration=rng.normal(size=(n, 3)) * 0.1,
    )
    return rf.FrameMotion(**parts), parts


def test_map_point_matches_transport_theorem(rng):
    motion, p = random_motion(rng, 1000)
    r, v, a = rng.normal(size=(1000, 3)) * 5, rng.normal(size=(1000, 3)), rng.normal(size=(1000, 3))
    rot = quat_matrix(p["rotation"])
    rr, rv, ra = matvec(rot, r), matvec(rot, v), matvec(rot, a)
    w, al = p["angular_velocity"], p["angular_acceleration"]
    want_r = p["position"] + rr
    want_v = p["velocity"] + rv + cross(w, rr)
    want_a = p["acceleration"] + ra + 2 * cross(w, rv) + cross(al, rr) + cross(w, cross(w, rr))
    got = motion.map_point(r, v, a)
    for g, want in zip(got, (want_r, want_v, want_a)):
        np.testing.assert_allclose(g, want, rtol=1e-12, atol=1e-11)
    np.testing.assert_allclose(motion.map_vector(v), rv, rtol=1e-13, atol=1e-14)
    np.testing.assert_allclose(motion.rotation_matrix, rot, rtol=0, atol=1e-15)
    np.testing.assert_allclose(motion.angular_velocity_in_child, matvec(np.swapaxes(rot, -1, -2), w), rtol=1e-13, atol=1e-15)


def test_then_and_inverse_match_composition_formulas(rng):
    m1, p1 = random_motion(rng, 500)
    m2, p2 = random_motion(rng, 500)
    r1 = quat_matrix(p1["rotation"])
    p2r, v2r, a2r, w2r, al2r = (matvec(r1, p2[k]) for k in ("position", "velocity", "acceleration", "angular_velocity", "angular_acceleration"))
    w1 = p1["angular_velocity"]
    c = m1.then(m2)
    np.testing.assert_allclose(c.rotation_matrix, np.einsum("...ij,...jk->...ik", r1, quat_matrix(p2["rotation"])), atol=1e-14)
    np.testing.assert_allclose(c.position, p1["position"] + p2r, rtol=1e-13, atol=1e-11)
    np.testing.assert_allclose(c.velocity, p1["velocity"] + v2r + cross(w1, p2r), rtol=1e-12, atol=1e-11)
    want_a = p1["acceleration"] + a2r + 2 * cross(w1, v2r) + cross(p1["angular_acceleration"], p2r) + cross(w1, cross(w1, p2r))
    np.testing.assert_allclose(c.acceleration, want_a, rtol=1e-12, atol=1e-10)
    np.testing.assert_allclose(c.angular_velocity, w1 + w2r, rtol=1e-13, atol=1e-14)
    np.testing.assert_allclose(c.angular_acceleration, p1["angular_acceleration"] + al2r + cross(w1, w2r), rtol=1e-13, atol=1e-14)
    inv = m1.inverse()
    rt = np.swapaxes(r1, -1, -2)
    w, p0, v0, a0, al = w1, p1["position"], p1["velocity"], p1["acceleration"], p1["angular_acceleration"]
    np.testing.assert_allclose(inv.position, -matvec(rt, p0), rtol=1e-13, atol=1e-11)
    np.testing.assert_allclose(inv.velocity, matvec(rt, cross(w, p0) - v0), rtol=1e-12, atol=1e-11)
    want = matvec(rt, -a0 + 2 * cross(w, v0) + cross(al, p0) - cross(w, cross(w, p0)))
    np.testing.assert_allclose(inv.acceleration, want, rtol=1e-12, atol=1e-10)
    np.testing.assert_allclose(inv.angular_velocity, -matvec(rt, w), rtol=1e-13, atol=1e-15)


def test_earth_and_local_level_motions_match_rotation_formulas(rng):
    t = rng.uniform(0, 86400, 100)
    e = rf.earth_motion(t, angle_at_epoch=0.3)
    ang = 0.3 + OMEGA * t
    rz = np.zeros((100, 3, 3))
    rz[:, 0, 0], rz[:, 0, 1], rz[:, 1, 0], rz[:, 1, 1], rz[:, 2, 2] = np.cos(ang), -np.sin(ang), np.sin(ang), np.cos(ang), 1
    np.testing.assert_allclose(e.rotation_matrix, rz, atol=1e-12)
    np.testing.assert_allclose(e.angular_velocity, np.broadcast_to([0, 0, OMEGA], (100, 3)), rtol=0, atol=0)
    lat, lon, h = rng.uniform(-1.4, 1.4, 100), rng.uniform(-3, 3, 100), rng.uniform(0, 1e4, 100)
    v = rng.uniform(-100, 100, (100, 3))
    ll = rf.local_level_motion(lat, lon, h, v)
    c = np_ned(lat, lon)
    np.testing.assert_allclose(ll.rotation_matrix, np.swapaxes(c, -1, -2), atol=1e-15)
    np.testing.assert_allclose(ll.position, np_geodetic_to_ecef(lat, lon, h), rtol=0, atol=1e-8)
    np.testing.assert_allclose(ll.velocity, matvec(np.swapaxes(c, -1, -2), v), rtol=1e-14, atol=1e-12)
    np.testing.assert_allclose(ll.angular_velocity_in_child, rf.transport_rate_ned(lat, h, v), rtol=1e-12, atol=1e-20)
    assert (ll.parent, ll.child, e.parent, e.child) == ("ecef", "ned", "eci", "ecef")


@pytest.mark.parametrize("n", [1, 7, 64])
def test_batch_results_equal_one_by_one_results(rng, n):
    # The batch loop and single calls run the same core code: results agree exactly.
    w, r = rng.normal(size=(n, 3)), rng.normal(size=(n, 3))
    batch = rf.apparent_acceleration(w, r).total
    for i in range(n):
        np.testing.assert_array_equal(rf.apparent_acceleration(w[i], r[i]).total, batch[i])
    lat = rng.uniform(-1.5, 1.5, n)
    batch = rf.geodetic_to_ecef(lat, 0.2, 10.0)
    for i in range(n):
        np.testing.assert_array_equal(rf.geodetic_to_ecef(lat[i], 0.2, 10.0), batch[i])
