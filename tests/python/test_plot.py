"""rotaframe.plot renders with the Agg backend, and the figures hold what they claim.

The checks read the figures back (axes labels, the number and kind of artists, data limits,
the positions of the Schuler markers), so a plot that silently drops a term or mislabels a
unit fails. The Schuler period is checked against the published 84.4 min (Titterton and
Weston, Strapdown Inertial Navigation Technology, 2nd ed., 2004, ch. 12: ω_s = √(g/R)).
"""

import sys

import matplotlib

matplotlib.use("Agg")

import matplotlib.collections  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402

import rotaframe as rf  # noqa: E402


def test_importing_rotaframe_does_not_import_matplotlib_or_the_plot_module():
    import subprocess

    code = "import sys, rotaframe; print('matplotlib' in sys.modules, 'rotaframe.plot' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    assert out == ["False", "False"]
    code = "import sys, rotaframe.plot; print('matplotlib' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    assert out == ["False"]


def test_schuler_period_is_the_published_84_minutes():
    from rotaframe.plot import schuler_period

    # 84.4 min (Titterton and Weston ch. 12); R and g vary with latitude by ~0.3 %, so
    # 0.3 min covers every latitude from the equator to 60°.
    for lat in (0.0, 30.0, 45.0, 60.0):
        assert schuler_period(lat, degrees=True) / 60.0 == pytest.approx(84.4, abs=0.3)


def _budget_terms():
    # A turntable 2 m from the axis spinning up at 0.05 rad/s² while a bead runs outwards.
    t = np.linspace(0.0, 20.0, 201)
    w = np.zeros((t.size, 3))
    w[:, 2] = 0.05 * t
    r = np.zeros((t.size, 3))
    r[:, 0] = 2.0 + 0.1 * t
    v = np.zeros((t.size, 3))
    v[:, 0] = 0.1
    alpha = np.zeros((t.size, 3))
    alpha[:, 2] = 0.05
    a0 = np.zeros((t.size, 3))
    a0[:, 1] = 0.3
    return t, rf.apparent_acceleration(w, r, v, angular_acceleration=alpha, origin_acceleration=a0)


def test_budget_plot_stacks_the_four_terms_under_the_total():
    from rotaframe.plot import budget_plot

    t, terms = _budget_terms()
    fig = budget_plot(t, terms)
    (ax,) = fig.axes
    bands = [c for c in ax.collections if isinstance(c, matplotlib.collections.PolyCollection)]
    assert len(bands) == 4  # translational, Coriolis, centrifugal, Euler
    assert [line.get_label() for line in ax.get_lines()] == ["|total|"]
    assert ax.get_xlabel() == "time (s)"
    assert ax.get_ylabel() == "apparent acceleration magnitude (m/s²)"
    legend = [text.get_text() for text in ax.get_legend().get_texts()]
    assert legend == ["translational", "Coriolis", "centrifugal", "Euler", "|total|"]
    # The top of the stack is the sum of the magnitudes: the y data limit reaches it.
    stack_top = sum(np.linalg.norm(getattr(terms, n), axis=1) for n in ("translational", "coriolis", "centrifugal", "euler"))
    assert ax.dataLim.y1 == pytest.approx(stack_top.max(), rel=1e-12)
    assert (ax.dataLim.x0, ax.dataLim.x1) == (0.0, 20.0)
    # The total line holds |total| exactly.
    np.testing.assert_allclose(ax.get_lines()[0].get_ydata(), np.linalg.norm(terms.total, axis=1), rtol=0, atol=0)
    fig.canvas.draw()  # renders without error on Agg


def test_budget_plot_refuses_terms_that_do_not_match_the_times():
    from rotaframe.plot import budget_plot

    t, terms = _budget_terms()
    with pytest.raises(ValueError, match="one"):
        budget_plot(t[:-1], terms)


def test_drift_plot_marks_each_schuler_period_within_the_run():
    from rotaframe.plot import drift_plot, schuler_period

    t = np.arange(0.0, 3 * 3600.0, 10.0)
    ws = 2 * np.pi / schuler_period(45.0, degrees=True)
    # The classical stationary response to a 1 mg north accelerometer bias (2bR/g peak).
    b = 9.8e-3
    north = b / ws**2 * (1 - np.cos(ws * t))
    pos = np.stack([north, 0 * t, 0 * t], axis=1)
    vel = np.stack([b / ws * np.sin(ws * t), 0 * t, 0 * t], axis=1)
    fig = drift_plot(t, pos, vel, position_sigma=np.abs(pos) * 1.1, velocity_sigma=np.abs(vel) * 1.1, lat=45.0, degrees=True)
    top, bottom = fig.axes
    assert top.get_ylabel() == "position error (m)" and bottom.get_ylabel() == "velocity error (m/s)"
    assert bottom.get_xlabel() == "time (min)"
    period = schuler_period(45.0, degrees=True) / 60.0
    for ax in (top, bottom):
        markers = [line for line in ax.get_lines() if line.get_linestyle() == ":"]
        assert [m.get_xdata()[0] for m in markers] == pytest.approx([period, 2 * period])  # 180 min run: two periods
        curves = [line.get_label() for line in ax.get_lines() if line.get_linestyle() != ":"]
        assert len(curves) == 3  # horizontal, vertical and the predicted 1σ
    # The data limits hold the peak 2b/ω_s² (the curve's maximum, times 1.1 for the σ line).
    assert top.dataLim.y1 == pytest.approx(1.1 * north.max(), rel=1e-9)
    assert north.max() == pytest.approx(2 * b / ws**2, rel=1e-3)
    assert "Schuler period" in top.texts[0].get_text()
    fig.canvas.draw()


def test_drift_plot_refuses_errors_of_the_wrong_shape():
    from rotaframe.plot import drift_plot

    with pytest.raises(ValueError, match="position_error"):
        drift_plot(np.arange(5.0), np.zeros((4, 3)), np.zeros((5, 3)))
