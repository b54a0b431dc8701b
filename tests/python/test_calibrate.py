"""IMU calibration and Allan deviation from Python.

References: the library's own forward model (ideal_imu and ImuErrors, verified against
published values elsewhere) for the round trips; scipy.stats (Student's t, chi-square) for the
statistics; a direct numpy implementation of the overlapping Allan variance definition (IEEE
Std 952-1997, annex C) for the estimator; numpy's FFT to synthesise flicker (1/f) rate noise
with the IEEE 952 bias-instability PSD B²/(2πf). No published Allan dataset is available from
the package registries we use, so the Allan checks are synthetic.
"""

import pickle

import numpy as np
import pytest
import scipy.stats

import rotaframe as rf

LAT, H = 51.3, 95.0  # an invented laboratory

EULER_12 = np.array(  # yaw, pitch, roll (deg): each axis up and down, and six tilted positions
    [
        [0, 0, 0], [0, 0, 180], [0, 0, 90], [0, 0, -90], [0, 90, 0], [0, -90, 0],
        [30, 0, 45], [120, 45, 0], [200, 30, -45], [290, -20, 135], [10, 60, 60], [75, -50, -120],
    ],
    dtype=float,
)


def ideal_static(euler_deg):
    """Ideal (rate, specific force) of a body held at each attitude at the site."""
    q = rf.quat_from_euler(euler_deg[:, 0], euler_deg[:, 1], euler_deg[:, 2], degrees=True)
    chain = rf.earth_motion(0.0).then(rf.local_level_motion(LAT, 0.3, H, degrees=True)).then(rf.FrameMotion(rotation=q))
    return rf.ideal_imu(chain)


def measured(errors, rate, force, seconds, dt=0.01):
    """Mean corrupted rate and specific force over `seconds` at each position."""
    steps = int(round(seconds / dt))
    means_w, means_f = [], []
    for w, f in zip(rate, force):
        dtheta, dv = errors.apply(np.tile(w * dt, (steps, 1)), np.tile(f * dt, (steps, 1)), dt)
        means_w.append(dtheta.sum(axis=0) / (steps * dt))
        means_f.append(dv.sum(axis=0) / (steps * dt))
    return np.array(means_w), np.array(means_f)


def truth(bias, scale, misalignment):
    off = [misalignment[i, j] for i in range(3) for j in range(3) if i != j]
    return np.r_[bias, scale, off]


def test_accelerometer_round_trip_recovers_every_parameter():
    rng = np.random.default_rng(3)
    rate, force = ideal_static(EULER_12)
    for _ in range(5):
        bias, scale = rng.uniform(-0.05, 0.05, 3), rng.uniform(-2e-3, 2e-3, 3)
        mis = rng.uniform(-2e-3, 2e-3, (3, 3))
        np.fill_diagonal(mis, 0.0)
        errors = rf.ImuErrors(accel_bias=bias, accel_scale_factor=scale, accel_misalignment=mis)
        _, f = measured(errors, rate, force, 0.5)
        cal = rf.calibrate_accelerometers(EULER_12, f, lat=LAT, h=H, degrees=True)
        # The 1e-9 (the forward model and the site reference agree to ~1e-13 m/s²).
        np.testing.assert_allclose(cal.parameters, truth(bias, scale, mis), rtol=0, atol=1e-9)
        assert cal.misalignment.shape == (3, 3) and np.all(np.diag(cal.misalignment) == 0)
        assert cal.covariance.shape == (12, 12)
        assert cal.residuals.shape == (12, 3)
        assert cal.parameter_names[6] == "misalignment_xy"
        # Quaternions give the same result as Euler angles.
        q = rf.quat_from_euler(EULER_12[:, 0], EULER_12[:, 1], EULER_12[:, 2], degrees=True)
        cal_q = rf.calibrate_accelerometers(q, f, lat=LAT, h=H, degrees=True)
        np.testing.assert_allclose(cal_q.parameters, cal.parameters, rtol=0, atol=1e-15)


def test_estimated_noise_gives_student_t_errors():
    # Noise estimated from the residuals (12 positions, 4 parameters per axis: 8 degrees of
    # freedom): the errors over the reported σ follow Student's t with 8 degrees of freedom
    # (scipy.stats.t), not the normal distribution. 150 calibrations × 12 parameters; the
    # fractions within 1σ, 2σ, 3σ to ±0.04 (several standard errors of a fraction, allowing for
    # the correlation between a calibration's parameters).
    rng = np.random.default_rng(8)
    rate, force = ideal_static(EULER_12)
    z = []
    for seed in range(150):
        bias, scale = rng.uniform(-0.05, 0.05, 3), rng.uniform(-2e-3, 2e-3, 3)
        mis = rng.uniform(-2e-3, 2e-3, (3, 3))
        np.fill_diagonal(mis, 0.0)
        errors = rf.ImuErrors(accel_bias=bias, accel_scale_factor=scale, accel_misalignment=mis, accel_vrw_mps_per_sqrt_h=0.1, seed=seed)
        _, f = measured(errors, rate, force, 1.0)
        cal = rf.calibrate_accelerometers(EULER_12, f, lat=LAT, h=H, degrees=True)
        assert cal.degrees_of_freedom == 8
        z.extend((cal.parameters - truth(bias, scale, mis)) / cal.standard_deviations)
    z = np.abs(np.array(z))
    for k in (1, 2, 3):
        expected = scipy.stats.t.cdf(k, 8) - scipy.stats.t.cdf(-k, 8)
        assert abs(np.mean(z <= k) - expected) < 0.04, (k, np.mean(z <= k), expected)


def test_level_positions_raise_unobservable_naming_the_parameters():
    euler = np.array([[yaw, 0.0, 0.0] for yaw in (0, 60, 120, 180, 240, 300)])
    _, force = ideal_static(euler)
    with pytest.raises(rf.UnobservableError, match="scale_factor_x") as info:
        rf.calibrate_accelerometers(euler, force, lat=LAT, h=H, degrees=True)
    assert isinstance(info.value, rf.RotaframeError) and "attitude" in str(info.value)
    bias_only = rf.calibrate_accelerometers(euler, force, lat=LAT, h=H, degrees=True, parameters="bias")
    assert bias_only.estimated == ["bias_x", "bias_y", "bias_z"]


def test_bad_input_is_named():
    _, force = ideal_static(EULER_12)
    with pytest.raises(rf.ShapeError, match="attitude"):
        rf.calibrate_accelerometers(EULER_12[:, :2], force, lat=LAT, h=H)
    with pytest.raises(rf.NonFiniteError, match="specific_force"):
        bad = force.copy()
        bad[3, 1] = np.nan
        rf.calibrate_accelerometers(EULER_12, bad, lat=LAT, h=H, degrees=True)
    with pytest.raises(rf.OutOfRangeError, match="lat"):
        rf.calibrate_accelerometers(EULER_12, force, lat=123.0, h=H, degrees=True)
    with pytest.raises(rf.RotaframeError, match="parameters"):
        rf.calibrate_accelerometers(EULER_12, force, lat=LAT, h=H, parameters="everything")


def test_gyro_rate_table_round_trip():
    # Runs about body x, y and z (each pointed down on a table turning about down at ±1 rad/s
    # for 7 s), plus two static positions: every parameter to 1e-9.
    rng = np.random.default_rng(4)
    bias, scale = rng.uniform(-1e-4, 1e-4, 3), rng.uniform(-1e-3, 1e-3, 3)
    mis = rng.uniform(-1e-3, 1e-3, (3, 3))
    np.fill_diagonal(mis, 0.0)
    errors = rf.ImuErrors(gyro_bias=bias, gyro_scale_factor=scale, gyro_misalignment=mis)
    mounts = np.array([[17.0, -90.0, 0.0], [63.0, 0.0, 90.0], [11.0, 0.0, 0.0]])  # x, y, z down
    attitude, rates, table_rate = [], [], []
    t = np.arange(0.0, 7.0 + 1e-9, 0.01)
    for mount in mounts:
        q = rf.quat_from_euler(*mount, degrees=True)
        for spin in (1.0, -1.0):
            def body(times, q=q, spin=spin):
                angle = spin * np.asarray(times)
                table = rf.FrameMotion(
                    rotation=np.stack([np.cos(angle / 2), 0 * angle, 0 * angle, np.sin(angle / 2)], axis=-1),
                    angular_velocity=np.tile([0.0, 0.0, spin], angle.shape + (1,)),
                )
                return rf.earth_motion(times).then(rf.local_level_motion(LAT, 0.3, H, degrees=True)).then(table).then(rf.FrameMotion(rotation=q))
            dtheta, dv, _ = rf.imu_increments(body, t)
            dtheta, _ = errors.apply(dtheta, dv, 0.01)
            attitude.append(q)
            rates.append(dtheta.sum(axis=0) / 7.0)
            table_rate.append(spin)
    w, f = ideal_static(EULER_12[:2])
    w_measured, _ = measured(errors, w, f, 1.0)
    q_static = rf.quat_from_euler(EULER_12[:2, 0], EULER_12[:2, 1], EULER_12[:2, 2], degrees=True)
    cal = rf.calibrate_gyros(
        np.vstack([attitude, q_static]),
        np.vstack([rates, w_measured]),
        lat=LAT,
        h=H,
        degrees=True,
        table_rate=np.r_[np.degrees(table_rate), 0.0, 0.0],
        duration=7.0,
    )
    np.testing.assert_allclose(cal.parameters, truth(bias, scale, mis), rtol=0, atol=1e-9)
    assert cal.sensor == "gyro"


def test_magnitude_fit_keeps_the_gram_matrix_and_bias():
    rng = np.random.default_rng(6)
    euler = np.column_stack([rng.uniform(-180, 180, 20), rng.uniform(-85, 85, 20), rng.uniform(-180, 180, 20)])
    rate, force = ideal_static(euler)
    bias, scale = rng.uniform(-0.05, 0.05, 3), rng.uniform(-2e-3, 2e-3, 3)
    mis = rng.uniform(-2e-3, 2e-3, (3, 3))
    np.fill_diagonal(mis, 0.0)
    _, f = measured(rf.ImuErrors(accel_bias=bias, accel_scale_factor=scale, accel_misalignment=mis), rate, force, 0.5)
    cal = rf.calibrate_accelerometers_by_magnitude(f, lat=LAT, h=H, degrees=True)
    # Only U Uᵀ and the bias are visible through magnitudes (U = I + diag(s) + M).
    u_true = np.eye(3) + np.diag(scale) + mis
    u_fit = np.eye(3) + np.diag(cal.scale_factor) + cal.misalignment
    np.testing.assert_allclose(u_fit @ u_fit.T, u_true @ u_true.T, rtol=0, atol=1e-9)
    np.testing.assert_allclose(cal.bias, bias, rtol=0, atol=1e-9)
    assert cal.residuals.shape == (20,)
    assert np.all(np.triu(cal.misalignment) == 0)


def test_correct_inverts_apply_and_the_result_pickles():
    rng = np.random.default_rng(9)
    _, force = ideal_static(EULER_12)
    errors = rf.ImuErrors(accel_bias=[0.02, -0.01, 0.03], accel_scale_factor=[1e-3, -2e-3, 5e-4])
    _, f = measured(errors, np.zeros_like(force), force, 0.2)
    cal = rf.calibrate_accelerometers(EULER_12, f, lat=LAT, h=H, degrees=True)
    dtheta, dv = rng.normal(0, 0.01, (100, 3)), rng.normal(0, 0.1, (100, 3))
    a, v = cal.to_imu_errors().apply(dtheta, dv, 0.01)
    a2, v2 = cal.correct(a, v, 0.01)
    np.testing.assert_allclose(v2, dv, rtol=0, atol=1e-16)  # a few ulp of 0.1
    np.testing.assert_array_equal(a2, dtheta)  # the gyro triad passes unchanged
    copy = pickle.loads(pickle.dumps(cal))
    np.testing.assert_array_equal(copy.covariance, cal.covariance)
    np.testing.assert_array_equal(copy.residuals, cal.residuals)
    assert copy.estimated == cal.estimated


def allan_reference(y, dt, m):
    """The overlapping Allan deviation straight from its definition (IEEE 952, annex C)."""
    theta = np.concatenate([[0.0], np.cumsum(y) * dt])
    tau = m * dt
    d = theta[2 * m:] - 2 * theta[m:-m] + theta[: -2 * m]
    return np.sqrt(np.sum(d**2) / (2 * tau**2 * d.size))


def test_allan_deviation_matches_the_definition_and_chi_square_bounds():
    rng = np.random.default_rng(1)
    y = rng.normal(0.3, 1.0, (5000, 2))
    taus, adev, lower, upper = rf.allan_deviation(y, 0.01, confidence=0.9)
    assert adev.shape == (len(taus), 2)
    for i, tau in enumerate(taus):
        m = int(round(tau / 0.01))
        for c in range(2):
            # Rounding of sums of 5000 terms (the definition's direct cumulative sum keeps the
            # mean, which costs it a few digits): 1e-10 relative.
            assert adev[i, c] == pytest.approx(allan_reference(y[:, c], 0.01, m), rel=1e-10)
    # White noise dominates: the bounds are the chi-square interval with the white-FM degrees
    # of freedom (Howe, Allan and Barnes 1981), from scipy.stats.chi2.
    n, m = 5001, 4
    edf = (3 * (n - 1) / (2 * m) - 2 * (n - 2) / n) * 4 * m * m / (4 * m * m + 5)
    i = list(np.round(taus / 0.01).astype(int)).index(m)
    assert lower[i, 0] == pytest.approx(adev[i, 0] * np.sqrt(edf / scipy.stats.chi2.ppf(0.95, edf)), rel=1e-10)
    assert upper[i, 0] == pytest.approx(adev[i, 0] * np.sqrt(edf / scipy.stats.chi2.ppf(0.05, edf)), rel=1e-10)
    with pytest.raises(rf.OutOfRangeError, match="taus"):
        rf.allan_deviation(y, 0.01, taus=[100.0])


def flicker(n, dt, b, rng):
    """Rate noise with the two-sided PSD B²/(2π f) (IEEE 952 bias instability), by shaping
    white noise in the frequency domain: E|X_k|² = N S(f_k)/dt for the DFT X of the record."""
    f = np.fft.rfftfreq(n, dt)
    amplitude = np.zeros_like(f)
    amplitude[1:] = np.sqrt(n * b * b / (2 * np.pi * f[1:]) / dt)
    x = amplitude * (rng.normal(size=f.size) + 1j * rng.normal(size=f.size)) / np.sqrt(2)
    x[-1] = amplitude[-1] * rng.normal()  # the Nyquist term is real
    return np.fft.irfft(x, n)


def test_fit_recovers_white_noise_bias_instability_and_rate_random_walk_within_five_percent():
    # White noise dominates below about 2 s, the flat bias instability from there to about
    # 130 s, the rate random walk above (4.2 M samples at 10 Hz, about five days). A random
    # walk's long-τ estimates rest on few independent wiggles, so one record can miss its K by
    # ~10 %: over four records the median of each term is within 5 % and every one within 12 %.
    dt, n = 0.1, 1 << 22
    white, b, k = 2e-5, 2e-5, 2e-6  # rad/√s, rad/s, rad/s/√s
    ratios = []
    for seed in range(4):
        rng = np.random.default_rng(20 + seed)
        rate = white / np.sqrt(dt) * rng.normal(size=n) + flicker(n, dt, b, rng) + np.cumsum(k * np.sqrt(dt) * rng.normal(size=n))
        taus, adev, lower, upper = rf.allan_deviation(rate, dt)
        fit = rf.fit_noise_terms(taus, adev)
        ratios.append([fit.white_noise / white, fit.bias_instability / b, fit.rate_random_walk / k])
    ratios = np.array(ratios)
    assert np.all(np.abs(np.median(ratios, axis=0) - 1) < 0.05), ratios
    assert np.all(np.abs(ratios - 1) < 0.12), ratios
    # Trade units: deg/√h = rad/√s · (180/π) · 60; deg/h = rad/s · (180/π) · 3600.
    assert fit.arw_deg_per_sqrt_h == pytest.approx(fit.white_noise * np.degrees(1) * 60, rel=1e-12)
    assert fit.bias_instability_deg_per_h == pytest.approx(fit.bias_instability * np.degrees(1) * 3600, rel=1e-12)
    np.testing.assert_allclose(fit.deviation(taus), np.sqrt(fit.white_noise**2 / taus + (0.6642824746 * fit.bias_instability) ** 2 + fit.rate_random_walk**2 * taus / 3), rtol=1e-9)
