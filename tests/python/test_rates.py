"""IMU rate logs to increments from Python (rf.increments_from_rates): increments against the
exact integrals of an analytic signal (calculus) on jittered tags, the measured order, and the
named errors for gaps and bad tags."""

import numpy as np
import pytest
import rotaframe as rf


def signal(t):
    return np.stack([np.sin(3 * t), np.cos(2 * t), np.exp(0.5 * t)], axis=1)


def exact(a, b):
    def p(t):
        return np.stack([-np.cos(3 * t) / 3, np.sin(2 * t) / 2, 2 * np.exp(0.5 * t)], axis=1)

    return p(b) - p(a)


def worst_error(h, seed=0):
    rng = np.random.default_rng(seed)
    t = np.arange(0.0, 2.0, h) + rng.uniform(-0.2 * h, 0.2 * h, int(np.ceil(2.0 / h)))
    t.sort()
    x = signal(t)
    dtheta, dv = rf.increments_from_rates(t, angular_rate=x, specific_force=2 * x)
    assert dtheta.shape == dv.shape == (len(t) - 1, 3)
    np.testing.assert_allclose(dv, 2 * dtheta, rtol=1e-15)
    return np.abs(dtheta - exact(t[:-1], t[1:]))[1:-1].max()


def test_increments_match_exact_integrals_to_fifth_order_on_jittered_tags():
    coarse, fine = worst_error(0.02), worst_error(0.01)
    assert fine < 1e-9  # h⁵ max|x⁗| (81 for sin 3t) times the rule's constant, about 1/100
    assert coarse / fine > 16  # a fourth-order rule: 32 per halving, less a jitter allowance


def test_gaps_and_bad_tags_are_refused_by_name():
    t = np.array([0.0, 0.01, 0.5, 0.51])
    x = np.zeros((4, 3))
    with pytest.raises(rf.RotaframeError, match="from 0.01 s to 0.5 s"):
        rf.increments_from_rates(t, x, x, max_gap=0.1)
    dtheta, _ = rf.increments_from_rates(t, x, x)  # any gap without max_gap
    assert dtheta.shape == (3, 3)
    with pytest.raises(rf.RotaframeError, match="`t`"):
        rf.increments_from_rates([0.0, 0.01, 0.01, 0.02], x, x)
    with pytest.raises(rf.RotaframeError, match="`t`"):
        rf.increments_from_rates([0.0, 0.02, 0.01, 0.03], x, x)
    with pytest.raises(rf.ShapeError, match="`angular_rate`"):
        rf.increments_from_rates(t, x[:3], x)
    bad = x.copy()
    bad[2, 1] = np.nan
    with pytest.raises(rf.NonFiniteError, match="`specific_force`"):
        rf.increments_from_rates(t, x, bad)
