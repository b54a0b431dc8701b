"""Jacobians (``jacobian=True``), the error-state model and covariance prediction.

Every Jacobian is checked against central finite differences of the same nonlinear function
through the Python interface (the issue's check: the linearisation is the code's own), with
rotation differences taken by scipy's ``Rotation`` (an independent implementation of the
rotation-vector logarithm); ``Phi`` and ``Q_d`` against scipy's ``expm`` (Van Loan's block
exponential, C. F. Van Loan, IEEE Trans. AC-23, 1978); ``predict_covariance`` against the same
recursion written in numpy with scipy's ``expm``.

Tolerances: central differences with step h leave h^2 |f'''| / 6 truncation and eps |f| / h
rounding; the steps below (1e-6 rad, 1 m, 1e-3 of a unit) keep both below 1e-7 of each
column's scale, which is the bound asserted (the issue's 1e-7 relative).
"""

import numpy as np
import pytest
from scipy.linalg import expm
from scipy.spatial.transform import Rotation

import rotaframe as rf


def central(f, x, h):
    """Columns of the central-difference Jacobian of f at x (x a 1-D array)."""
    x = np.asarray(x, dtype=float)
    cols = []
    for k in range(x.size):
        d = np.zeros_like(x)
        d[k] = h[k] if np.ndim(h) else h
        cols.append((np.asarray(f(x + d)) - np.asarray(f(x - d))) / (2 * d[k]))
    return np.stack(cols, axis=-1)


def close(analytic, numeric, rel=1e-7):
    scale = np.maximum(np.abs(numeric).max(axis=0), 1e-300)
    assert np.all(np.abs(analytic - numeric) <= rel * scale + 1e-12 * np.abs(numeric).max()), (analytic, numeric)


def rotvec_between(c_plus, c_minus):
    """The small-angle rotation (parent side) taking matrix c_minus to c_plus."""
    return Rotation.from_matrix(c_plus @ c_minus.T).as_rotvec()


def test_geodetic_to_ecef_jacobian_matches_central_differences_and_degrees_scale_columns():
    lat, lon, h = 0.71, -1.3, 2500.0
    xyz, j = rf.geodetic_to_ecef(lat, lon, h, jacobian=True)
    np.testing.assert_array_equal(xyz, rf.geodetic_to_ecef(lat, lon, h))
    numeric = central(lambda p: rf.geodetic_to_ecef(*p), [lat, lon, h], [1e-6, 1e-6, 1.0])
    close(j, numeric)
    _, jd = rf.geodetic_to_ecef(np.degrees(lat), np.degrees(lon), h, degrees=True, jacobian=True)
    np.testing.assert_allclose(jd[:, :2], j[:, :2] * np.pi / 180, rtol=1e-12)
    # Batched: (..., 3, 3).
    _, jb = rf.geodetic_to_ecef(np.full((4, 2), lat), lon, h, jacobian=True)
    assert jb.shape == (4, 2, 3, 3)


def test_ecef_to_geodetic_jacobian_is_the_inverse_of_the_forward_one():
    xyz, j = rf.geodetic_to_ecef(-0.4, 2.0, 800.0, jacobian=True)
    lat, lon, h, ji = rf.ecef_to_geodetic(xyz, jacobian=True)
    np.testing.assert_allclose(ji @ j, np.eye(3), atol=1e-9)
    numeric = central(lambda x: np.array(rf.ecef_to_geodetic(x)), xyz, 1.0)
    close(ji, numeric, rel=1e-6)


def test_local_level_jacobian_is_the_rotation_of_the_axes_per_radian():
    lat, lon = 0.6, 0.25
    c, j = rf.ned_from_ecef(lat, lon, jacobian=True)
    h = 1e-6
    for k, (dl, dn) in enumerate([(h, 0.0), (0.0, h)]):
        plus = rf.ned_from_ecef(lat + dl, lon + dn).T  # C_n^e
        minus = rf.ned_from_ecef(lat - dl, lon - dn).T
        np.testing.assert_allclose(j[:, k], rotvec_between(plus, minus) / (2 * h), atol=1e-8)
    _, j_enu = rf.enu_from_ecef(lat, lon, jacobian=True)
    np.testing.assert_allclose(j_enu, j, atol=1e-15)
    with pytest.raises(rf.NonFiniteError, match="lat"):
        rf.ned_from_ecef(np.nan, 0.0, jacobian=True)


def test_gravity_jacobians_match_central_differences():
    g, j = rf.normal_gravity(0.8, 1200.0, jacobian=True)
    numeric = central(lambda p: rf.normal_gravity(p[0], p[1]), [0.8, 1200.0], [1e-5, 10.0])
    close(j, numeric, rel=1e-6)
    # The free-air gradient, about -3.086e-6 s^-2 (common practice).
    assert abs(j[1] + 3.086e-6) < 2e-8
    x = np.array([4.1e6, -1.2e6, 4.7e6])
    for f in (rf.gravitation_ecef, rf.gravity_ecef):
        value, jg = f(x, jacobian=True)
        np.testing.assert_array_equal(value, f(x))
        close(jg, central(f, x, 10.0), rel=1e-6)
        np.testing.assert_allclose(jg, jg.T, atol=1e-18)  # a gradient of a potential


def test_euler_and_rotation_vector_jacobians_against_scipy_rotation_differences():
    angles = np.array([0.3, -0.2, 1.1])
    q, j = rf.quat_from_euler(*angles, jacobian=True)
    h = 1e-6
    cols = []
    for k in range(3):
        d = np.zeros(3)
        d[k] = h
        plus, minus = rf.quat_to_matrix(rf.quat_from_euler(*(angles + d))), rf.quat_to_matrix(rf.quat_from_euler(*(angles - d)))
        cols.append(rotvec_between(plus, minus) / (2 * h))
    np.testing.assert_allclose(j, np.stack(cols, axis=-1), atol=1e-8)
    *_, ji = rf.euler_from_quat(q, jacobian=True)
    np.testing.assert_allclose(ji @ j, np.eye(3), atol=1e-12)
    with pytest.raises(rf.RotaframeError, match="gimbal lock"):
        rf.euler_from_quat(rf.quat_from_euler(0.1, np.pi / 2, 0.2), jacobian=True)
    v = np.array([0.4, -1.0, 0.7])
    qv, jl = rf.quat_from_rotvec(v, jacobian=True)
    cols = []
    for k in range(3):
        d = np.zeros(3)
        d[k] = h
        cols.append(rotvec_between(rf.quat_to_matrix(rf.quat_from_rotvec(v + d)), rf.quat_to_matrix(rf.quat_from_rotvec(v - d))) / (2 * h))
    np.testing.assert_allclose(jl, np.stack(cols, axis=-1), atol=1e-8)
    _, jinv = rf.quat_to_rotvec(qv, jacobian=True)
    np.testing.assert_allclose(jinv @ jl, np.eye(3), atol=1e-12)


def test_apparent_acceleration_jacobians_match_central_differences():
    w, r, v = np.array([1e-3, -2e-3, 7e-4]), np.array([120.0, -40.0, 9.0]), np.array([3.0, 1.0, -2.0])
    al, a0 = np.array([1e-5, 0.0, 2e-5]), np.array([0.1, 0.2, -0.3])
    args = dict(angular_velocity=w, position=r, velocity=v, angular_acceleration=al, origin_acceleration=a0)
    terms, jac = rf.apparent_acceleration(**args, jacobian=True)
    np.testing.assert_array_equal(terms.total, rf.apparent_acceleration(**args).total)
    for name, step in [("position", 1e-2), ("velocity", 1e-3), ("angular_velocity", 1e-6), ("angular_acceleration", 1e-6), ("origin_acceleration", 1e-3)]:

        def total(x, name=name):
            return rf.apparent_acceleration(**{**args, name: x}).total

        close(jac[name], central(total, args[name], step), rel=1e-6)


def test_frame_motion_jacobians_match_central_differences_of_map_point():
    m = rf.FrameMotion(
        rotation=rf.quat_from_euler(0.3, 0.1, -0.2),
        position=[10.0, -3.0, 2.0],
        velocity=[1.0, 2.0, 0.5],
        angular_velocity=[0.01, -0.02, 0.03],
        angular_acceleration=[1e-3, 0.0, -2e-3],
    )
    r, v, a = np.array([2.0, 1.0, -0.5]), np.array([0.1, 0.0, 0.3]), np.array([0.0, 0.02, 0.0])
    p, vel, acc, jp, jm = m.map_point(r, v, a, jacobian=True)
    assert jp.shape == (9, 9) and jm.shape == (9, 18)

    def state(x):
        return np.concatenate(m.map_point(x[:3], x[3:6], x[6:]))

    close(jp, central(state, np.concatenate([r, v, a]), 1e-3), rel=1e-6)
    # The motion's position columns (parts 3..5) are the identity on the mapped position.
    np.testing.assert_array_equal(jm[:3, 3:6], np.eye(3))
    composed, j1, j2 = m.then(m.inverse(), jacobian=True)
    assert composed.isclose(rf.FrameMotion()) and j1.shape == (18, 18) and j2.shape == (18, 18)
    inv, ji = m.inverse(jacobian=True)
    assert inv.isclose(m.inverse()) and ji.shape == (18, 18)


def strapdown():
    return rf.Strapdown(0.69, 0.12, 300.0, [30.0, -5.0, 0.5], rf.quat_from_euler(0.4, 0.02, -0.01), vertical="aided", height_time_constant=90.0)


def imu():
    return rf.ImuErrors(
        gyro_arw_deg_per_sqrt_h=0.05,
        gyro_markov_sigma=[1e-6] * 3,
        gyro_markov_time=[600.0] * 3,
        accel_vrw_mps_per_sqrt_h=0.03,
        accel_markov_sigma=[5e-4] * 3,
        accel_markov_time=[300.0] * 3,
    )


def van_loan(f, g, q, dt):
    """Phi and Q_d from scipy's expm of Van Loan's block matrix."""
    n = f.shape[0]
    block = np.zeros((2 * n, 2 * n))
    block[:n, :n] = -f
    block[:n, n:] = g @ np.diag(q) @ g.T
    block[n:, n:] = f.T
    e = expm(block * dt)
    phi = e[n:, n:].T
    return phi, phi @ e[:n, n:]


def psd(errors):
    """The 12 densities of imu(): N_a^2, N_g^2, 2 sigma^2 / tau."""
    na, ng = 0.03 / 60.0, np.radians(0.05) / 60.0
    return np.array([na**2] * 3 + [ng**2] * 3 + [2 * 5e-4**2 / 300.0] * 3 + [2 * 1e-6**2 / 600.0] * 3)


@pytest.mark.parametrize("states", [15, 21])
def test_discrete_error_model_matches_scipy_expm_van_loan(states):
    s = strapdown()
    f, g = s.error_model([0.3, -0.1, -9.7], [1e-3, 2e-3, -5e-4], states=states, imu_errors=imu())
    assert f.shape == (states, states) and g.shape == (states, 12)
    assert f[9, 9] == pytest.approx(-1 / 300.0) and f[12, 12] == pytest.approx(-1 / 600.0)
    for dt in (0.01, 5.0):
        phi, qd = rf.discrete_error_model(f, g, imu(), dt)
        phi_ref, qd_ref = van_loan(f, g, psd(imu()), dt)
        # expm's Pade approximant is accurate to ~1e-13 relative of the largest entry.
        np.testing.assert_allclose(phi, phi_ref, atol=1e-12 * np.abs(phi_ref).max())
        np.testing.assert_allclose(qd, qd_ref, atol=1e-11 * np.abs(qd_ref).max())
        phi2, qd2 = rf.discrete_error_model(f, g, psd(imu()), dt)
        np.testing.assert_allclose(qd2, qd, rtol=1e-12, atol=0)


@pytest.mark.parametrize("states", [15, 21])
def test_second_order_discretisation_is_the_three_term_series_and_close_to_expm(states):
    # method="second_order" is I + F dt + F² dt²/2 and Q_c dt + (F Q_c + Q_c Fᵀ) dt²/2, written
    # here in numpy (rounding: 1e-15 of the largest entry); against scipy's expm it misses the
    # terms of order (‖F dt‖∞)³, bounded by n³ eⁿ / 6 for Φ and ‖Q_c‖ dt (2n)² e²ⁿ / 6 for Q_d
    # (the tail of the exponential series; common practice).
    s = strapdown()
    f, g = s.error_model([0.3, -0.1, -9.7], [1e-3, 2e-3, -5e-4], states=states, imu_errors=imu())
    dt = 0.01
    phi2, qd2 = rf.discrete_error_model(f, g, imu(), dt, method="second_order")
    qc = g @ np.diag(psd(imu())) @ g.T
    np.testing.assert_allclose(phi2, np.eye(states) + f * dt + f @ f * dt**2 / 2, rtol=0, atol=1e-15)
    np.testing.assert_allclose(qd2, qc * dt + (f @ qc + qc @ f.T) * dt**2 / 2, rtol=0, atol=1e-15 * np.abs(qc).max() * dt)
    assert np.array_equal(qd2, qd2.T)
    phi_ref, qd_ref = van_loan(f, g, psd(imu()), dt)
    n = np.abs(f * dt).sum(axis=1).max()
    assert np.abs(phi2 - phi_ref).max() <= n**3 * np.exp(n) / 6
    assert np.abs(qd2 - qd_ref).max() <= np.abs(qc).sum(axis=1).max() * dt * (2 * n) ** 2 * np.exp(2 * n) / 6
    with pytest.raises(rf.RotaframeError, match="method"):
        rf.discrete_error_model(f, g, imu(), dt, method="first_order")


def test_predict_covariance_equals_the_numpy_recursion_along_the_run():
    s0 = strapdown()
    n, dt = 300, 0.01
    rng = np.random.default_rng(5)
    dtheta = rng.normal(0, 1e-4, (n, 3))
    dv = np.tile([0.0, 0.0, -9.79 * dt], (n, 1)) + rng.normal(0, 1e-3, (n, 3))
    heights = np.full(n, 300.0)
    runner = s0.copy()
    history = runner.run(dtheta, dv, dt, height_reference=heights)
    p0 = np.diag([1e-12, 1e-12, 4.0, 0.01, 0.01, 0.01, 1e-6, 1e-6, 1e-5] + [2.5e-7] * 3 + [1e-12] * 3)
    t, p = rf.predict_covariance(history, imu(), p0, every=100)
    assert t.shape == (3,) and p.shape == (3, 15, 15)
    np.testing.assert_allclose(t, [1.0, 2.0, 3.0], rtol=1e-12)
    # The recursion in numpy: F, G at the state before each step, expm, P <- Phi P Phi^T + Q_d.
    stepper, cov = s0.copy(), p0.copy()
    q = psd(imu())
    for k in range(n):
        stepper.set_height_reference(heights[k])
        f, g = stepper.error_model(dv[k] / dt, dtheta[k] / dt, imu_errors=imu())
        phi, qd = van_loan(f, g, q, dt)
        cov = phi @ cov @ phi.T + qd
        stepper.step(dtheta[k], dv[k], dt)
    scale = np.sqrt(np.outer(np.diag(cov), np.diag(cov)))
    assert np.all(np.abs(p[-1] - cov) <= 1e-9 * scale)


def test_initial_covariances_that_are_no_covariance_are_refused_naming_p0():
    s = strapdown()
    history = s.copy().run(np.zeros((20, 3)), np.tile([0.0, 0.0, -0.0979], (20, 1)), 0.01)
    negative = np.eye(15)
    negative[3, 3] = -1e-6  # a negative variance
    correlated = np.eye(15)
    correlated[0, 1] = correlated[1, 0] = 1.5  # a correlation of 1.5
    indefinite = np.eye(15)
    # Three states pairwise correlated at -0.9: every correlation is below 1 but the matrix
    # has the eigenvalue 1 - 2(0.9) = -0.8 (its rows sum negative along (1, 1, 1)).
    for i, j in [(0, 1), (0, 2), (1, 2)]:
        indefinite[i, j] = indefinite[j, i] = -0.9
    huge = np.eye(15) * 1e120
    for p0, message in [(negative, "negative variance"), (correlated, "correlation above 1"), (indefinite, "positive semidefinite"), (huge, "P0")]:
        with pytest.raises(rf.RotaframeError, match=message) as raised:
            rf.predict_covariance(history, imu(), p0)
        assert "`P0`" in str(raised.value)
    # A zero-variance state with zero covariances, and a correlation of exactly 1, are fine.
    fine = np.eye(15)
    fine[5, 5] = 0.0
    fine[0, 1] = fine[1, 0] = 1.0
    rf.predict_covariance(history, imu(), fine)


def test_overflowing_discrete_forms_and_out_of_range_error_model_inputs_are_refused():
    s = strapdown()
    with pytest.raises(rf.RotaframeError, match="`F`.*overflows"):
        rf.discrete_error_model(np.eye(15) * 1e300, np.zeros((15, 12)), np.zeros(12), 100.0)
    with pytest.raises(rf.RotaframeError, match="`noise`.*overflows"):
        rf.discrete_error_model(np.zeros((15, 15)), np.ones((15, 12)) * 1e200, np.ones(12) * 1e200, 1.0)
    with pytest.raises(rf.OutOfRangeError, match="specific_force"):
        s.error_model([1e13, 0.0, 0.0], [0.0, 0.0, 0.0])
    with pytest.raises(rf.OutOfRangeError, match="angular_rate"):
        s.error_model([0.0, 0.0, -9.8], [0.0, 2e6, 0.0])


def test_predict_covariance_refuses_changed_inputs_and_bad_covariances():
    s = strapdown()
    dtheta, dv = np.zeros((50, 3)), np.tile([0.0, 0.0, -0.0979], (50, 1))
    history = s.copy().run(dtheta, dv, 0.01)
    with pytest.raises(rf.ShapeError, match="P0"):
        rf.predict_covariance(history, imu(), np.eye(14))
    asymmetric = np.eye(15)
    asymmetric[0, 1] = 1.0
    with pytest.raises(rf.RotaframeError, match="symmetric"):
        rf.predict_covariance(history, imu(), asymmetric)
    with pytest.raises(rf.RotaframeError, match="every"):
        rf.predict_covariance(history, imu(), np.eye(15), every=0)
    dv[10, 0] += 1.0  # the history's inputs changed after the run
    with pytest.raises(rf.RotaframeError, match="changed"):
        rf.predict_covariance(history, imu(), np.eye(15) * 1e-12)
    with pytest.raises(rf.RotaframeError, match="states"):
        s.error_model([0, 0, -9.8], [0, 0, 0], states=17)
    with pytest.raises(rf.ShapeError, match="G"):
        rf.discrete_error_model(np.zeros((15, 15)), np.zeros((15, 11)), np.zeros(12), 0.01)
    with pytest.raises(rf.RotaframeError, match="noise"):
        rf.discrete_error_model(np.zeros((15, 15)), np.zeros((15, 12)), -np.ones(12), 0.01)
