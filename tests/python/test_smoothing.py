"""Post-processing from Python: `run(..., smooth=True)`, `AidedResult.at` and the timing of
fixes between IMU samples, on the invented delivery van of test_aided.py. The smoother's
statistics (NEES band, the 60 s outage over seeded runs, the batch least-squares agreement) are
checked in Rust (tests/tests/aided_smoother.rs); here the references are the simulation's truth
and the filter's own solution."""

import math
import pathlib
import pickle
import sys

import numpy as np
import pytest
import rotaframe as rf

from test_aided import H0, LAT0, LON0, RATE, p0_for, tactical, van_run


def metres(lat, lon):
    m, n = rf.radii_of_curvature(LAT0)
    return lat * (m + H0), lon * (n + H0) * math.cos(LAT0)


@pytest.fixture(scope="module")
def smoothed_van():
    nav, ts, dtheta, dv, sets, truth = van_run(seconds=240, outage=(120.0, 180.0))
    result = nav.run(ts, dtheta, dv, sets, smooth=True)
    return result, ts, dtheta, dv, sets, truth


def test_smoothed_result_has_the_filtered_fields_and_never_a_larger_sigma(smoothed_van):
    result, ts, *_ = smoothed_van
    s = result.smoothed
    assert isinstance(s, rf.AidedResult) and s.smoothed is None
    for name in ["t", "lat", "lon", "h", "v_ned", "attitude", "sigma", "imu_errors", "epochs", "covariance"]:
        assert getattr(s, name).shape == getattr(result, name).shape, name
    np.testing.assert_array_equal(s.t, result.t)
    np.testing.assert_array_equal(s.epochs, result.epochs)
    assert s.innovations[0].kind == "position"
    # σ_smoothed ≤ σ_filtered at every step and state, to 1e-4 relative (rounding only: the
    # smoothed covariance is P − PΛP with Λ positive semi-definite).
    assert np.all(s.sigma <= result.sigma * (1 + 1e-4))
    # After the last measurement nothing is learnt: the two agree at the end (to rounding).
    np.testing.assert_allclose(s.sigma[-1], result.sigma[-1], rtol=1e-9)
    assert s.lat[-1] == pytest.approx(result.lat[-1], abs=1e-15)
    # The smoothed epoch covariances are symmetric, with the smoothed σ on their diagonal.
    assert np.allclose(s.covariance, np.transpose(s.covariance, (0, 2, 1)))
    k = np.searchsorted(ts, s.epochs[10])
    np.testing.assert_allclose(np.sqrt(np.diag(s.covariance[10])), s.sigma[k], rtol=1e-9)


def test_smoother_bridges_the_outage_within_three_sigma(smoothed_van):
    result, ts, _, _, _, truth = smoothed_van
    t, lat, lon, h, v_ned = truth
    mid = int(150 * RATE)
    errors = {}
    for name, sol in [("filtered", result), ("smoothed", result.smoothed)]:
        north, east = metres(sol.lat - lat, sol.lon - lon)
        sn, se = metres(sol.sigma[:, 0], sol.sigma[:, 1])
        errors[name] = (math.hypot(north[mid], east[mid]), math.hypot(sn[mid], se[mid]))
        # 3σ per axis at every second (a consistent solution: 99.7 %; allow a few correlated).
        seconds = np.arange(0, len(ts), int(RATE))
        inside = (np.abs(north[seconds]) <= 3 * sn[seconds]) & (np.abs(east[seconds]) <= 3 * se[seconds])
        assert inside.mean() >= 0.95, name
    (fe, fs), (se_, ss) = errors["filtered"], errors["smoothed"]
    assert se_ <= 3 * ss
    assert ss < 0.5 * fs  # the smoother's σ mid-outage is well below the filter's


def test_at_gives_rows_at_imu_times_and_steps_between_them_to_two_percent_of_sigma(smoothed_van):
    result, ts, dtheta, dv, sets, truth = smoothed_van
    s = result.smoothed
    k = np.array([5, 1234, 13000, 20000])
    exact = result.at(ts[k])
    np.testing.assert_array_equal(exact.lat, s.lat[k])
    np.testing.assert_array_equal(exact.sigma, s.sigma[k])
    # Half-way between IMU times: the truth there from the same invented track at twice the
    # rate (test_aided.van_track), so the neighbours' errors can be interpolated.
    from test_aided import van_track

    t2, lat2, lon2, h2, att2, v2 = van_track(240, rate=2 * RATE)
    mids = 2 * k + 1
    tau = t2[mids]
    assert np.allclose(tau, 0.5 * (ts[k] + ts[k + 1]), atol=1e-9)
    half = result.at(tau)
    north, east = metres(half.lat - lat2[mids], half.lon - lon2[mids])
    t, lat, lon, h, v_ned = truth
    n0, e0 = metres(s.lat[k] - lat[k], s.lon[k] - lon[k])
    n1, e1 = metres(s.lat[k + 1] - lat[k + 1], s.lon[k + 1] - lon[k + 1])
    sn, se = metres(half.sigma[:, 0], half.sigma[:, 1])
    # The issue's bound: the error between IMU times is the neighbours' error interpolated,
    # to 2 % of σ.
    assert np.all(np.abs(north - 0.5 * (n0 + n1)) <= 0.02 * sn)
    assert np.all(np.abs(east - 0.5 * (e0 + e1)) <= 0.02 * se)
    dv_err = half.v_ned - v2[mids]
    dv0, dv1 = s.v_ned[k] - v_ned[k], s.v_ned[k + 1] - v_ned[k + 1]
    assert np.all(np.abs(dv_err - 0.5 * (dv0 + dv1)) <= 0.02 * half.sigma[:, 3:6])
    np.testing.assert_allclose(half.sigma, 0.5 * (s.sigma[k] + s.sigma[k + 1]), rtol=1e-12)
    assert half.attitude.shape == (4, 4) and half.imu_errors.shape == (4, 6)


def test_at_on_a_filtered_result_gives_the_solution_after_the_update_at_a_fix_time():
    nav, ts, dtheta, dv, sets, truth = van_run(seconds=20, outage=(1e9, 1e9))
    result = nav.run(ts, dtheta, dv, sets)
    assert result.smoothed is None
    k = int(7 * RATE)  # a fix at an IMU time: the row is the post-update one
    np.testing.assert_array_equal(result.at([ts[k]]).lat, result.lat[[k]])
    # The filtered σ between IMU times is the one of the state stepped from.
    mid = result.at([0.5 * (ts[k] + ts[k + 1])])
    np.testing.assert_array_equal(mid.sigma[0], result.sigma[k])


def test_at_refuses_times_outside_the_run_by_name():
    nav, ts, dtheta, dv, sets, _ = van_run(seconds=5, outage=(1e9, 1e9))
    result = nav.run(ts, dtheta, dv, sets, smooth=True)
    with pytest.raises(rf.OutOfRangeError, match=r"`times`.*5\.5"):
        result.at([1.0, 5.5])
    with pytest.raises(rf.OutOfRangeError, match="`times`"):
        result.at([-0.001])
    with pytest.raises(rf.NonFiniteError, match="`times`"):
        result.at([np.nan])


def test_smoothing_is_refused_without_a_covariance_step_per_increment():
    start = rf.Strapdown(LAT0, LON0, H0, [0, 0, 0], [1, 0, 0, 0])
    nav = rf.AidedNavigator(start, tactical(), p0_for(), propagate_every=10)
    with pytest.raises(rf.RotaframeError, match="`smooth`"):
        nav.run([0.0, 0.01], [[0, 0, 0]], [[0, 0, -0.0981]], [], smooth=True)
    assert nav.time is None


def test_smoothed_results_pickle_and_still_step_between_imu_times():
    nav, ts, dtheta, dv, sets, _ = van_run(seconds=10, outage=(1e9, 1e9))
    result = nav.run(ts, dtheta, dv, sets, smooth=True)
    again = pickle.loads(pickle.dumps(result))
    np.testing.assert_array_equal(again.smoothed.sigma, result.smoothed.sigma)
    tau = [0.005, 3.333, 9.9951]
    np.testing.assert_array_equal(again.at(tau).lat, result.at(tau).lat)


def fine_van(seconds):
    """The invented van's track at 1 kHz, for the antenna truth at arbitrary fix times."""
    from test_aided import van_track

    return van_track(seconds, rate=1000.0)


def timing_run(rate, seconds=60):
    """Ideal IMU increments of the van at `rate` and 1 Hz position fixes at k + 0.0042 s
    (between IMU samples at both 100 and 97 Hz), the same fixes for every rate."""
    from test_aided import van_track

    t, lat, lon, h, att, v_ned = van_track(seconds, rate=rate)
    dtheta, dv, _ = rf.imu_increments_from_samples(t, lat, lon, h, att)
    tf, latf, lonf, hf, _, _ = fine_van(seconds)
    fix_t = np.arange(1, seconds - 1) + 0.0042
    rng = np.random.default_rng(11)
    m, n = rf.radii_of_curvature(LAT0)
    noise = rng.normal(0.0, [1.5, 1.5, 3.0], (len(fix_t), 3))
    fixes = rf.PositionFixes(
        fix_t,
        np.interp(fix_t, tf, latf) + noise[:, 0] / (m + H0),
        np.interp(fix_t, tf, lonf) + noise[:, 1] / ((n + H0) * math.cos(LAT0)),
        np.interp(fix_t, tf, hf) - noise[:, 2],
        [1.5, 1.5, 3.0],
    )
    start = rf.Strapdown(lat[0], lon[0], h[0], v_ned[0], att[0])
    nav = rf.AidedNavigator(start, tactical(), p0_for())
    return t, nav.run(t, dtheta, dv, [fixes], smooth=True), fix_t


def test_fixes_between_imu_samples_give_the_same_solution_at_100_and_97_hz():
    t100, a, fix_t = timing_run(100.0)
    t97, b, _ = timing_run(97.0)
    # Innovations: the same fixes, applied at their own times.
    la, lb = a.innovations[0], b.innovations[0]
    assert la.accepted.all() and lb.accepted.all()
    assert np.all(np.abs(la.innovation - lb.innovation) <= 0.02 * la.std)
    np.testing.assert_allclose(la.std, lb.std, rtol=0.02)
    # The filtered solution at the common IMU times (whole seconds).
    seconds = np.arange(0, 60)
    ia, ib = seconds * 100, seconds * 97
    assert np.allclose(t100[ia], t97[ib], atol=1e-9)
    for sol_a, sol_b in [(a, b)]:
        north, east = metres(sol_a.lat[ia] - sol_b.lat[ib], sol_a.lon[ia] - sol_b.lon[ib])
        sn, se = metres(sol_a.sigma[ia, 0], sol_a.sigma[ia, 1])
        assert np.all(np.abs(north) <= 0.02 * sn) and np.all(np.abs(east) <= 0.02 * se)
        assert np.all(np.abs(sol_a.v_ned[ia] - sol_b.v_ned[ib]) <= 0.02 * sol_a.sigma[ia, 3:6])
        np.testing.assert_allclose(sol_a.sigma[ia, :9], sol_b.sigma[ib, :9], rtol=0.02)
    # The smoothed solution at the fix times.
    sa, sb = a.at(fix_t), b.at(fix_t)
    north, east = metres(sa.lat - sb.lat, sa.lon - sb.lon)
    sn, se = metres(sa.sigma[:, 0], sa.sigma[:, 1])
    assert np.all(np.abs(north) <= 0.02 * sn) and np.all(np.abs(east) <= 0.02 * se)
    assert np.all(np.abs(sa.v_ned - sb.v_ned) <= 0.02 * sa.sigma[:, 3:6])


def test_smoother_matches_a_textbook_rts_pass_written_in_numpy():
    # The benchmark's reference (benches/python/bench_aided.py): the closed-loop filter per step
    # in numpy and the classical Rauch–Tung–Striebel pass, C_k = P⁺_k Φ_kᵀ (P⁻_{k+1})⁻¹, with
    # numpy.linalg (H. E. Rauch, F. Tung and C. T. Striebel, AIAA J. 3, 1965). Our adjoint form
    # must give the same smoothed σ and states: σ to 1e-5 relative (the second-order covariance
    # step and ΦPΦᵀ differ at O(T³) per step; 7e-7 measured), states to 1e-5 of their σ (1e-7
    # measured).
    sys.path.insert(0, str(pathlib.Path(__file__).resolve().parents[2] / "benches" / "python"))
    import bench_aided

    t, dtheta, dv, fixes = bench_aided.scenario(30.0)
    ours = bench_aided.rotaframe_run(t, dtheta, dv, fixes, smooth=True).smoothed
    _, sigma, states = bench_aided.numpy_run(t, dtheta, dv, fixes, smooth=True)
    np.testing.assert_allclose(ours.sigma, sigma, rtol=1e-5)
    north, east = metres(ours.lat - states[:, 0], ours.lon - states[:, 1])
    sn, se = metres(ours.sigma[:, 0], ours.sigma[:, 1])
    assert np.all(np.abs(north) <= 1e-5 * sn) and np.all(np.abs(east) <= 1e-5 * se)
    assert np.all(np.abs(ours.h - states[:, 2]) <= 1e-5 * ours.sigma[:, 2])
    assert np.all(np.abs(ours.v_ned - states[:, 3:6]) <= 1e-5 * ours.sigma[:, 3:6])


def test_at_on_a_result_that_does_not_hang_together_raises_a_named_error():
    nav, ts, dtheta, dv, sets, _ = van_run(seconds=3, outage=(1e9, 1e9))
    result = nav.run(ts, dtheta, dv, sets)
    cls, args = result.__reduce__()
    # A hand-made result (the constructor is public) with a short `lat`: refused by name.
    broken = cls(*args[:1], args[1][:-1], *args[2:])
    with pytest.raises(rf.ShapeError, match="`lat`"):
        broken.at([1.0])
    source, run = args[12], args[13]
    short_log = cls(*args[:12], (source[0], source[1], dtheta[:-1], dv, source[4]), run)
    with pytest.raises(rf.ShapeError, match="`dtheta`"):
        short_log.at([1.0])
    bare = cls(*args[:11])
    with pytest.raises(ValueError, match="IMU log"):
        bare.at([1.0])


def test_the_21_state_model_smooths_with_its_scale_factors():
    nav, ts, dtheta, dv, sets, _ = van_run(seconds=60, outage=(20.0, 40.0))
    nav21 = rf.AidedNavigator(nav.strapdown, tactical(), p0_for(21), states=21)
    result = nav21.run(ts, dtheta, dv, sets, smooth=True)
    s = result.smoothed
    assert s.sigma.shape == (len(ts), 21) and s.imu_errors.shape == (len(ts), 12)
    # As for 15 states: never above the filter's σ (1e-4 relative, rounding), equal at the end.
    assert np.all(s.sigma <= result.sigma * (1 + 1e-4))
    np.testing.assert_allclose(s.sigma[-1], result.sigma[-1], rtol=1e-9)
    # Mid-outage the smoother knows more than the filter did.
    k = int(30 * RATE)
    assert s.sigma[k, 0] < 0.5 * result.sigma[k, 0]
    assert result.at([10.005, 30.0]).sigma.shape == (2, 21)
