"""Bounded resources: one worker pool per process whatever `threads=` values are asked for,
`threads` above its stated maximum refused, and plot helpers whose cost follows their data
(with named errors for bad arguments)."""

import os

import numpy as np
import pytest

import rotaframe as rf


def os_threads():
    return len(os.listdir("/proc/self/task"))


@pytest.mark.skipif(not os.path.isdir("/proc/self/task"), reason="counts threads through /proc (Linux)")
def test_many_distinct_thread_counts_share_one_pool_of_at_most_one_thread_per_core():
    lat = np.linspace(-1.0, 1.0, 40_000)  # large enough to be split across threads
    expected = rf.normal_gravity(lat, 100.0)
    before = os_threads()
    for threads in range(2, 42):
        got = rf.normal_gravity(lat, 100.0, threads=threads)
        assert got.tobytes() == expected.tobytes()  # the same bits whatever the count
    cores = os.cpu_count() or 1
    # One pool of at most `cores` threads (the pools of other tests may already exist: at most
    # one more pool's worth is alive at a time, the old one ends when replaced).
    assert os_threads() - before <= cores, (before, os_threads(), cores)


def test_threads_above_the_stated_maximum_are_refused_naming_threads():
    with pytest.raises(rf.OutOfRangeError, match="`threads` = 257 is outside \\[0, 256\\]"):
        rf.normal_gravity(0.5, 0.0, threads=257)
    rf.normal_gravity(np.zeros(10), 0.0, threads=256)  # the maximum itself is accepted


def test_drift_plot_of_a_run_far_longer_than_its_samples_returns_promptly():
    pytest.importorskip("matplotlib")
    import matplotlib

    matplotlib.use("Agg")
    from rotaframe.plot import drift_plot

    t = np.array([0.0, 1e15])  # 3e7 years in two samples: at most two Schuler marks drawn
    zeros = np.zeros((2, 3))
    fig = drift_plot(t, zeros, zeros, lat=45.0, degrees=True)
    lines = [line for line in fig.axes[0].lines if line.get_linestyle() == ":"]
    assert len(lines) <= 2
    import matplotlib.pyplot as plt

    plt.close(fig)


@pytest.mark.parametrize(
    "call, error, name",
    [
        (lambda p: p.drift_plot(np.array([0.0, np.inf]), np.zeros((2, 3)), np.zeros((2, 3))), rf.NonFiniteError, "`t`"),
        (lambda p: p.drift_plot([[0.0, 1.0]], np.zeros((2, 3)), np.zeros((2, 3))), rf.ShapeError, "`t`"),
        (lambda p: p.drift_plot([1.0, 0.0], np.zeros((2, 3)), np.zeros((2, 3))), rf.RotaframeError, "`t`"),
        (lambda p: p.drift_plot([0.0, 1.0], "north", np.zeros((2, 3))), rf.InputTypeError, "`position_error`"),
        (lambda p: p.drift_plot([0.0, 1.0], np.zeros((2, 3)), np.zeros((2, 2))), rf.ShapeError, "`velocity_error`"),
        (lambda p: p.drift_plot([0.0, 1.0], np.zeros((2, 3)), np.zeros((2, 3)), position_sigma=np.zeros(3)), rf.ShapeError, "`position_sigma`"),
        (lambda p: p.drift_plot([0.0, 1.0], np.zeros((2, 3)), np.zeros((2, 3)), lat=float("nan")), rf.NonFiniteError, "`lat`"),
        (lambda p: p.budget_plot([0.0, 1.0], object()), rf.InputTypeError, "`terms`"),
        (lambda p: p.budget_plot([0.0, 1.0], rf.apparent_acceleration([0, 0, 1e-4], np.zeros((2, 3))), time_unit="day"), rf.RotaframeError, "`time_unit`"),
        (lambda p: p.budget_plot(None, rf.apparent_acceleration([0, 0, 1e-4], np.zeros((2, 3)))), rf.RotaframeError, "`t`"),
    ],
)
def test_plot_helpers_refuse_bad_arguments_naming_them(call, error, name):
    pytest.importorskip("matplotlib")
    import matplotlib

    matplotlib.use("Agg")
    import rotaframe.plot as p

    with pytest.raises(error, match=name):
        call(p)


def test_a_broadcast_too_large_for_memory_raises_memory_error_not_a_panic():
    # (10⁶, 1) against (1, 10⁶) quaternions broadcast to 4·10¹² values (32 TB): numpy's
    # MemoryError, as numpy itself would raise, never a Rust panic or an abort.
    a = np.tile([1.0, 0.0, 0.0, 0.0], (10**6, 1, 1))
    b = np.tile([1.0, 0.0, 0.0, 0.0], (1, 10**6, 1))
    with pytest.raises(MemoryError):
        rf.quat_multiply(a, b)
    with pytest.raises(MemoryError):
        rf.normal_gravity(np.zeros((10**6, 1)), np.zeros((1, 10**6)))
