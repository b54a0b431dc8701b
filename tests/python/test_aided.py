"""Aided navigation from Python: the pinned API (align_stationary, AidedNavigator, the
measurement sets, run), a simulated delivery van with a GNSS outage, pickling, continuation,
gating and bad input. The filter's statistics are checked in Rust
(tests/tests/aided_consistency.rs); here the reference values are the truth of the simulation
and the chi-square quantile of scipy.stats.chi2 for the gate."""

import math
import pickle

import numpy as np
import pytest
import rotaframe as rf
from scipy.stats import chi2

LAT0, LON0, H0 = math.radians(52.37), math.radians(4.90), 12.0
RATE = 100.0


def van_track(seconds, rate=RATE):
    """An invented delivery van: 10 m/s on a level road, weaving gently (heading ±0.4 rad over
    two minutes). Samples of geodetic position and attitude at `rate`, the NED velocity."""
    t = np.arange(0.0, seconds + 0.5 / rate, 1.0 / rate)
    heading = 0.4 * np.sin(2 * np.pi * t / 120.0) + 0.2
    speed = 10.0
    vn, ve = speed * np.cos(heading), speed * np.sin(heading)
    north = np.concatenate([[0.0], np.cumsum(0.5 * (vn[1:] + vn[:-1]) / rate)])
    east = np.concatenate([[0.0], np.cumsum(0.5 * (ve[1:] + ve[:-1]) / rate)])
    m, n = rf.radii_of_curvature(LAT0)
    lat = LAT0 + north / (m + H0)
    lon = LON0 + east / ((n + H0) * math.cos(LAT0))
    h = np.full_like(t, H0)
    attitude = rf.quat_from_euler(heading, np.zeros_like(t), np.zeros_like(t))
    v_ned = np.stack([vn, ve, np.zeros_like(t)], axis=1)
    return t, lat, lon, h, attitude, v_ned


def tactical():
    return rf.ImuErrors(
        gyro_arw_deg_per_sqrt_h=0.1,
        gyro_markov_sigma=np.radians(1.0) / 3600,
        accel_vrw_mps_per_sqrt_h=0.05,
        accel_markov_sigma=5e-3,
        accel_markov_time=600.0,
        seed=4,
    )


def p0_for(states=15):
    sigma = [3 / 6.4e6, 3 / 6.4e6 / math.cos(LAT0), 3, 0.1, 0.1, 0.1, 1e-3, 1e-3, 5e-3]
    sigma += [5e-3] * 3 + [np.radians(1.0) / 3600] * 3 + [1e-4] * (states - 15)
    return np.diag(np.square(sigma))


def van_run(seconds=240, outage=(120.0, 170.0), seed=7):
    t, lat, lon, h, att, v_ned = van_track(seconds)
    dtheta, dv, dt = rf.imu_increments_from_samples(t, lat, lon, h, att)
    dtheta, dv = tactical().apply(dtheta, dv, dt)
    ts = t
    rng = np.random.default_rng(seed)
    fix = (np.arange(len(t)) % int(RATE) == 0) & ((t < outage[0]) | (t > outage[1]))
    fix[0] = False
    m, n = rf.radii_of_curvature(LAT0)
    noise = rng.normal(0.0, [1.5, 1.5, 3.0], (fix.sum(), 3))
    positions = rf.PositionFixes(
        t[fix],
        lat[fix] + noise[:, 0] / (m + H0),
        lon[fix] + noise[:, 1] / ((n + H0) * math.cos(LAT0)),
        h[fix] - noise[:, 2],
        [1.5, 1.5, 3.0],
    )
    velocities = rf.VelocityFixes(t[fix], v_ned[fix] + rng.normal(0.0, 0.05, (fix.sum(), 3)), [0.05, 0.05, 0.05])
    start = rf.Strapdown(lat[0], lon[0], h[0], v_ned[0], att[0])
    nav = rf.AidedNavigator(start, tactical(), p0_for())
    return nav, ts, dtheta, dv, [positions, velocities], (t, lat, lon, h, v_ned)


def test_van_solution_lies_within_three_sigma_and_the_outage_grows_then_recovers():
    nav, ts, dtheta, dv, sets, truth = van_run()
    result = nav.run(ts, dtheta, dv, sets)
    t, lat, lon, h, v_ned = truth
    n_steps = len(ts)
    assert result.lat.shape == (n_steps,) and result.v_ned.shape == (n_steps, 3) and result.attitude.shape == (n_steps, 4)
    assert result.sigma.shape == (n_steps, 15) and result.imu_errors.shape == (n_steps, 6)
    m, _ = rf.radii_of_curvature(LAT0)
    north_error = (result.lat - lat) * (m + H0)
    north_sigma = result.sigma[:, 0] * (m + H0)
    seconds = np.arange(0, n_steps, int(RATE))
    inside = np.abs(north_error[seconds]) <= 3 * north_sigma[seconds]
    # 3σ holds for 99.7 % of a consistent filter's epochs; allow a few of 241 correlated ones.
    assert inside.mean() >= 0.95
    k_before, k_end = int(119 * RATE), int(170 * RATE)
    assert north_sigma[k_end] > 3 * north_sigma[k_before]  # the σ grows in the outage
    assert north_sigma[-1] < 0.5 * north_sigma[k_end]  # and shrinks when the fixes return
    # Epochs: one per second with fixes, each with the full covariance.
    assert result.covariance.shape == (len(result.epochs), 15, 15)
    assert np.allclose(result.covariance, np.transpose(result.covariance, (0, 2, 1)))
    log = result.innovations[0]
    assert log.kind == "position" and log.innovation.shape == (len(sets[0]), 3)
    assert log.accepted.dtype == np.bool_ and log.accepted.mean() > 0.98
    assert result.smoothed is None


def test_gate_threshold_is_the_scipy_chi_square_quantile():
    # A fix whose NIS sits just inside and one just outside the 0.99 quantile of χ²(1)
    # (scipy.stats.chi2.ppf): a height fix with the prior σ known exactly at the start.
    start = rf.Strapdown(LAT0, LON0, H0, [0, 0, 0], [1, 0, 0, 0])
    p0 = p0_for()
    p0[2, 2] = 4.0  # height σ 2 m; fix σ 1 m: S = 5 m²
    q = chi2.ppf(0.99, 1)
    for scale, accepted in [(0.999, True), (1.001, False)]:
        nav = rf.AidedNavigator(start, rf.ImuErrors(), p0, gate=0.99)
        jump = math.sqrt(q * 5.0) * scale
        fixes = rf.HeightFixes([0.0], [H0 + jump], 1.0)
        result = nav.run([0.0, 0.01], [[0, 0, 0]], [[0, 0, -0.0981]], [fixes])
        assert bool(result.innovations[0].accepted[0]) is accepted
        assert result.innovations[0].nis[0] == pytest.approx(jump**2 / 5.0, rel=1e-9)


def test_a_fifty_metre_jump_is_rejected_and_does_not_move_the_solution():
    nav, ts, dtheta, dv, sets, truth = van_run(seconds=60, outage=(1e9, 1e9))
    t, lat, lon, h, v_ned = truth
    positions = sets[0]
    bad_lat = lat[np.isin(t, positions.t)] + 0.0
    m, _ = rf.radii_of_curvature(LAT0)
    bad_lat[30] += 50.0 / (m + H0)
    jumped = rf.PositionFixes(positions.t, bad_lat, lon[np.isin(t, positions.t)], h[np.isin(t, positions.t)], [1.5, 1.5, 3.0])
    result = nav.run(ts, dtheta, dv, [jumped])
    log = result.innovations[0]
    assert not log.accepted[30] and log.accepted[29] and log.accepted[31]
    assert log.innovation[30, 0] == pytest.approx(50.0, abs=3.0)


def test_navigators_and_results_pickle_and_a_second_run_continues_the_first():
    nav, ts, dtheta, dv, sets, _ = van_run(seconds=40, outage=(1e9, 1e9))
    whole = pickle.loads(pickle.dumps(nav)).run(ts, dtheta, dv, sets)
    half = 2000
    first = nav.run(ts[: half + 1], dtheta[:half], dv[:half], [s for s in sets_until(sets, ts[half])])
    copy = pickle.loads(pickle.dumps(nav))
    assert copy.time == nav.time == ts[half]
    second = copy.run(ts[half:], dtheta[half:], dv[half:], [s for s in sets_after(sets, ts[half])])
    assert second.lat[-1] == pytest.approx(whole.lat[-1], abs=1e-12)
    np.testing.assert_allclose(second.sigma[-1], whole.sigma[-1], rtol=1e-9)
    again = pickle.loads(pickle.dumps(first))
    np.testing.assert_array_equal(again.lat, first.lat)
    assert again.innovations[0].kind == "position"
    assert isinstance(pickle.loads(pickle.dumps(sets[0])), rf.PositionFixes)


def sets_until(sets, end):
    return [rebuild(s, s.t <= end) for s in sets]


def sets_after(sets, start):
    return [rebuild(s, s.t > start) for s in sets]


def rebuild(s, keep):
    kind, args = s.__reduce__()[1][0], s.__reduce__()[1]
    width = len(args[2]) // max(len(args[1]), 1)
    records = np.asarray(args[2]).reshape(-1, width)[keep].ravel().tolist()
    return rf._native._measurement_set_from_parts(kind, np.asarray(args[1])[keep].tolist(), records)


def test_bad_input_is_refused_by_name_and_leaves_the_navigator_unchanged():
    nav, ts, dtheta, dv, sets, _ = van_run(seconds=5, outage=(1e9, 1e9))
    bad_t = ts.copy()
    bad_t[3], bad_t[4] = bad_t[4], bad_t[3]
    with pytest.raises(rf.RotaframeError, match="`t`"):
        nav.run(bad_t, dtheta, dv, sets)
    nan_t = ts.copy()
    nan_t[2] = np.nan
    with pytest.raises(rf.NonFiniteError, match="`t`"):
        nav.run(nan_t, dtheta, dv, sets)
    early = rf.ZeroVelocity([-1.0], 0.01)
    with pytest.raises(rf.OutOfRangeError, match="`measurements`"):
        nav.run(ts, dtheta, dv, [early])
    assert nav.time is None  # nothing ran
    with pytest.raises(rf.RotaframeError, match="`t`"):
        rf.ZeroVelocity([1.0, 1.0], 0.01)  # duplicate times
    with pytest.raises(rf.NotPositiveError, match="`sigma`"):
        rf.HeightFixes([1.0], [10.0], -1.0)
    start = rf.Strapdown(LAT0, LON0, H0, [0, 0, 0], [1, 0, 0, 0])
    p0 = p0_for()
    p0[0, 1] = p0[1, 0] = 10 * math.sqrt(p0[0, 0] * p0[1, 1])
    with pytest.raises(rf.RotaframeError, match="`p0`"):
        rf.AidedNavigator(start, tactical(), p0)
    with pytest.raises(rf.ShapeError, match="`p0`"):
        rf.AidedNavigator(start, tactical(), np.eye(14))
    with pytest.raises(rf.ShapeError, match="`dv`"):
        nav.run(ts, dtheta, dv[:-1], sets)


def stationary(seconds, attitude, imu, seed):
    t = np.arange(0.0, seconds + 0.005, 0.01)
    lat, lon, h = np.full_like(t, LAT0), np.full_like(t, LON0), np.full_like(t, H0)
    att = np.tile(attitude, (len(t), 1))
    dtheta, dv, dt = rf.imu_increments_from_samples(t, lat, lon, h, att)
    return imu.apply(dtheta, dv, dt) + (dt,)


def test_align_stationary_levels_gyrocompasses_and_refuses_heading_for_mems_gyros():
    truth = rf.quat_from_euler(math.radians(35.0), math.radians(1.0), math.radians(-2.0))
    navigation_grade = rf.ImuErrors(gyro_arw_deg_per_sqrt_h=0.002, gyro_bias=[1e-8] * 3, accel_bias=[5e-4] * 3)
    dtheta, dv, dt = stationary(300.0, truth, navigation_grade, 1)
    a = rf.align_stationary(dtheta, dv, dt, math.degrees(LAT0), H0, degrees=True, imu=navigation_grade)
    yaw, pitch, roll = rf.euler_from_quat(a.attitude)
    t_yaw, t_pitch, t_roll = rf.euler_from_quat(truth)
    assert abs(roll - t_roll) <= 3 * a.sigma[0] and abs(pitch - t_pitch) <= 3 * a.sigma[1]
    assert abs(yaw - t_yaw) <= 3 * a.sigma[2] and a.sigma[2] < math.radians(1.0)
    mems = rf.ImuErrors(gyro_arw_deg_per_sqrt_h=0.3, gyro_bias=[np.radians(10 / 3600)] * 3, accel_vrw_mps_per_sqrt_h=0.1)
    dtheta, dv, dt = stationary(60.0, truth, mems, 2)
    with pytest.raises(rf.UnobservableError, match="heading"):
        rf.align_stationary(dtheta, dv, dt, LAT0, H0, imu=mems)
    given = rf.align_stationary(dtheta, dv, dt, math.degrees(LAT0), H0, degrees=True, imu=mems, heading=(35.0, 2.0))
    assert given.sigma[2] == pytest.approx(math.radians(2.0))
    assert rf.euler_from_quat(given.attitude)[0] == pytest.approx(math.radians(35.0), abs=1e-12)
    bare = rf.align_stationary(dtheta, dv, dt, LAT0, H0, imu=mems, heading=0.6)
    assert bare.sigma[2] == 0.0
    heading, sigma = rf.heading_from_course([0.0, -5.0, 0.0], 0.1, degrees=True)
    assert heading == pytest.approx(-90.0) and sigma == pytest.approx(math.degrees(0.02))


def test_strapdown_set_state_keeps_time_and_memory():
    s = rf.Strapdown(LAT0, LON0, H0, [1, 0, 0], [1, 0, 0, 0])
    s.step([0, 0, 0], [0, 0, -0.0981], 0.01)
    s.set_state(LAT0, LON0, H0 + 1.0, [2, 0, 0], [1, 0, 0, 0])
    assert s.elapsed == pytest.approx(0.01) and s.h == H0 + 1.0 and s.v_ned[0] == 2.0
    with pytest.raises(rf.NotUnitQuaternionError):
        s.set_state(LAT0, LON0, H0, [0, 0, 0], [2, 0, 0, 0])
    assert s.h == H0 + 1.0


def test_aided_plot_draws_error_sigma_and_shaded_outages():
    pytest.importorskip("matplotlib")
    import matplotlib

    matplotlib.use("Agg")
    import rotaframe.plot as plot

    nav, ts, dtheta, dv, sets, truth = van_run(seconds=30, outage=(10.0, 20.0))
    result = nav.run(ts, dtheta, dv, sets)
    t, lat, lon, h, _ = truth
    fig = plot.aided_plot(result, truth=(lat, lon, h), outages=[(10.0, 20.0)])
    top, bottom = fig.axes
    assert len(top.lines) == 2 and len(top.patches) == 1
    m, _ = rf.radii_of_curvature(LAT0)
    sigma_line = top.lines[0].get_ydata()
    assert sigma_line[0] == pytest.approx(math.hypot(result.sigma[0, 0] * (m + H0), result.sigma[0, 1] * (rf.radii_of_curvature(LAT0)[1] + H0) * math.cos(LAT0)), rel=1e-6)
    with pytest.raises(rf.ShapeError, match="truth"):
        plot.aided_plot(result, truth=(lat[:-1], lon, h))
