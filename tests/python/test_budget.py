"""The error budget by source from Python (`AidedResult.budget`), on the invented delivery van
of test_aided.py. The budget's statistics (each part against an explicit linear map of its
source, Monte Carlo runs with one source at a time against the chi-square band) are checked in
Rust (tests/tests/aided_budget.rs); here the references are the filter's and the smoother's own
covariances: with the gains fixed the covariance recursions are linear in the covariance and
the noise, so the parts add up to the whole (common practice)."""

import math
import pickle

import numpy as np
import pytest
import rotaframe as rf

from test_aided import H0, LAT0, RATE, van_run


@pytest.fixture(scope="module")
def van_budget():
    nav, ts, dtheta, dv, sets, truth = van_run(seconds=200, outage=(100.0, 160.0))
    result = nav.run(ts, dtheta, dv, sets, smooth=True)
    return result, result.budget(states=[0, 1, 2, 8])


def test_budget_names_its_sources_and_has_one_row_per_imu_time(van_budget):
    result, budget = van_budget
    assert isinstance(budget, rf.ErrorBudget)
    assert budget.states == (0, 1, 2, 8)
    assert budget.sources == (
        "initial position",
        "initial velocity",
        "initial attitude",
        "initial accelerometer bias",
        "initial gyro bias",
        "velocity random walk",
        "angle random walk",
        "accelerometer Gauss–Markov bias",
        "gyro Gauss–Markov bias",
        "position measurements (set 0)",
        "velocity measurements (set 1)",
    )
    n = len(result.t)
    assert budget.filtered.shape == (n, 11, 4) and budget.smoothed.shape == (n, 11, 4)
    assert budget.filtered_total.shape == (n, 4) and budget.smoothed_total.shape == (n, 4)
    np.testing.assert_array_equal(budget.t, result.t)


def test_parts_add_up_to_the_filtered_and_smoothed_variances(van_budget):
    result, budget = van_budget
    states = list(budget.states)
    filtered = result.sigma[:, states] ** 2
    np.testing.assert_array_equal(budget.filtered_total, filtered)
    # The same linear recursions as the filter's, source by source: equal to rounding
    # (relative 1e-12 is a few hundred ulps over 20,000 steps).
    np.testing.assert_allclose(budget.filtered.sum(axis=1), filtered, rtol=1e-12)
    # The smoothed parts add up to the smoothed total, to rounding relative to the filtered
    # variance the smoother starts from (where the smoother removes 99.9 % of the variance the
    # quadratic forms lose three digits relative to the smoothed total itself).
    assert np.all(np.abs(budget.smoothed.sum(axis=1) - budget.smoothed_total) <= 1e-12 * filtered)
    # The total against the smoother's own P − PΛP: equal to the filter's second-order step
    # (a few parts in 10⁶ at 100 Hz, more where the smoothed variance is far below the filter's).
    smoothed = result.smoothed.sigma[:, states] ** 2
    np.testing.assert_allclose(budget.smoothed_total, smoothed, rtol=1e-3)


def test_the_fixes_share_falls_through_the_outage_and_the_imu_takes_over(van_budget):
    result, budget = van_budget
    horizontal = budget.filtered[:, :, 0:2].sum(axis=2)  # rad², latitude + longitude
    share = horizontal / horizontal.sum(axis=1, keepdims=True)
    before, late = int(99 * RATE), int(159 * RATE)
    fixes = [9, 10]
    imu = [2, 4, 6, 8]  # initial attitude, initial gyro bias, angle random walk, gyro Gauss–Markov
    # Before the outage the position is the fixes' (with 1.5 m fixes); 60 s into it the
    # attitude and gyro errors, which the fixes no longer check, dominate its growth.
    assert share[before, fixes].sum() > 0.5
    assert share[late, imu].sum() > share[before, imu].sum()
    assert share[late, fixes].sum() < share[before, fixes].sum()
    # Every part of a positive source is a variance (up to the step's truncation, 1e-8).
    assert np.all(budget.filtered >= -1e-8 * budget.filtered_total[:, None, :])


def test_a_filtered_run_gets_a_filtered_budget_and_results_pickle_with_it():
    nav, ts, dtheta, dv, sets, _ = van_run(seconds=20, outage=(1e9, 1e9))
    result = nav.run(ts, dtheta, dv, sets)
    budget = result.budget(states=[3])
    assert budget.smoothed is None and budget.smoothed_total is None
    np.testing.assert_allclose(budget.filtered.sum(axis=1)[:, 0], result.sigma[:, 3] ** 2, rtol=1e-12)
    again = pickle.loads(pickle.dumps(result)).budget(states=[3])
    np.testing.assert_array_equal(again.filtered, budget.filtered)
    copy = pickle.loads(pickle.dumps(budget))
    assert copy.sources == budget.sources
    np.testing.assert_array_equal(copy.filtered, budget.filtered)
    # The run is redone from a copy of the navigator at its start: the navigator that ran is
    # untouched by a budget.
    assert nav.time == pytest.approx(ts[-1])


def test_bad_states_and_results_without_a_run_are_refused_by_name():
    nav, ts, dtheta, dv, sets, _ = van_run(seconds=3, outage=(1e9, 1e9))
    result = nav.run(ts, dtheta, dv, sets, smooth=True)
    with pytest.raises(rf.OutOfRangeError, match="`states`"):
        result.budget(states=[0, 15])
    with pytest.raises(rf.OutOfRangeError, match="`states`"):
        result.budget(states=[-1])
    with pytest.raises(TypeError, match="`states`"):
        result.budget(states="lat")
    with pytest.raises(rf.ShapeError, match="`states`"):
        result.budget(states=[])
    with pytest.raises(ValueError, match="no run to redo"):
        result.smoothed.budget()
    made = rf.AidedResult(*[getattr(result, f) for f in ["t", "lat", "lon", "h", "v_ned", "attitude", "sigma", "imu_errors", "epochs", "covariance", "innovations"]])
    with pytest.raises(ValueError, match="no run to redo"):
        made.budget()
    # All the states by default.
    assert result.budget().states == tuple(range(15))


def test_error_budget_plot_draws_the_sources_of_the_horizontal_position(van_budget, tmp_path):
    matplotlib = pytest.importorskip("matplotlib")
    matplotlib.use("Agg")
    from rotaframe.plot import error_budget_plot

    result, budget = van_budget
    m, n = rf.radii_of_curvature(LAT0)
    scale = [m + H0, (n + H0) * math.cos(LAT0), 0.0, 0.0]
    fig = error_budget_plot(budget, scale=scale, unit="m", outages=[(100.0, 160.0)], top=4)
    upper, lower = fig.axes
    assert upper.get_ylabel() == "1σ (m)" and "smoothed" in upper.get_title()
    labels = [text.get_text() for text in lower.get_legend().get_texts()]
    assert len(labels) == 5 and labels[-1] == "other"
    fig.savefig(tmp_path / "budget.png")
    with pytest.raises(rf.ShapeError, match="`scale`"):
        error_budget_plot(budget, scale=[1.0])
