"""The newer modules keep the promise of the older ones: finite input in range gives finite
output, anything else a rotaframe error naming the argument (graph, propagation, drag, noise
terms, calibration pickles). Each case was a silent non-finite result, a wrong name or an
unbounded resource before."""

import pickle

import numpy as np
import pytest

import rotaframe as rf

from test_calibrate import EULER_12, H, LAT, ideal_static


def test_drag_acceleration_refuses_non_finite_positions_and_overflowing_results():
    constant = rf.Drag(100.0)
    with pytest.raises(rf.NonFiniteError, match="`position`"):
        constant.acceleration([np.nan, 0.0, 0.0], [10.0, 0.0, 0.0])  # ignored before: ρ constant
    thin_air = rf.Drag(100.0, density=1.2, scale_height=8000.0, up=[0.0, 0.0, 1.0])
    with pytest.raises(rf.OutOfRangeError, match="`drag`"):
        thin_air.acceleration([0.0, 0.0, -1e7], [10.0, 0.0, 0.0])  # exp(1250) overflows
    a = constant.acceleration([0.0, 0.0, 0.0], [10.0, 0.0, 0.0])
    assert a[0] == pytest.approx(-1.225 * 100.0 / 200.0)  # −ρ v²/(2β), common practice


def test_noise_terms_deviation_refuses_non_positive_and_non_finite_tau():
    rng = np.random.default_rng(5)
    taus, adev, _, _ = rf.allan_deviation(rng.normal(0.0, 1e-3, 20_000), 0.01)
    terms = rf.fit_noise_terms(taus, adev)
    for bad, error in [(0.0, rf.NotPositiveError), (-1.0, rf.NotPositiveError), (np.nan, rf.NonFiniteError), (np.inf, rf.NonFiniteError)]:
        with pytest.raises(error, match="`tau`"):
            terms.deviation(bad)
    assert np.all(np.isfinite(terms.deviation(np.array([0.01, 1.0, 100.0]))))


def test_a_tampered_calibration_pickle_is_refused():
    rate, force = ideal_static(EULER_12)
    cal = rf.calibrate_accelerometers(EULER_12, force, lat=LAT, h=H, degrees=True, noise=1e-4)
    rebuild, args = cal.__reduce__()
    assert pickle.loads(pickle.dumps(cal)).bias.tobytes() == cal.bias.tobytes()
    numbers = list(args[1])
    for k, value in [(0, np.nan), (7, np.inf), (6, 0.5), (15, -1.0)]:  # bias, misalignment, its diagonal, a variance
        tampered = list(numbers)
        tampered[k] = value
        with pytest.raises(rf.RotaframeError, match="calibration"):
            rebuild(args[0], tampered, *args[2:])
    residuals = list(args[4])
    residuals[0] = np.nan
    with pytest.raises(rf.NonFiniteError, match="calibration"):
        rebuild(args[0], numbers, args[2], args[3], residuals, args[5])


def test_frame_graph_root_names_are_checked_like_every_frame_name():
    with pytest.raises(rf.FrameGraphError, match="must be non-empty"):
        rf.FrameGraph("")
    with pytest.raises(rf.FrameGraphError, match="root"):
        rf.FrameGraph.from_toml('root = "a\\tb"\n')
    rf.FrameGraph("eci")


def test_propagation_errors_name_the_argument_at_fault():
    from test_propagate import site_graph

    g = site_graph(-20.0)
    r0, v0 = np.array([0.0, 0.0, -100.0]), np.zeros(3)
    with pytest.raises(rf.NonFiniteError, match="`stop_height`"):
        rf.propagate((g, "pad"), (0.0, 5.0), r0, v0, stop_height=float("nan"))
    with pytest.raises(rf.NonFiniteError, match="`stop_fn`"):
        rf.propagate((g, "pad"), (0.0, 5.0), r0, v0, stop_fn=lambda t, r, v: float("nan"))
    with pytest.raises(rf.RotaframeError, match="`max_step`.*resolution"):
        rf.propagate((g, "pad"), (1e9, 1e9 + 5.0), r0, v0, max_step=1e-9)
    with pytest.raises(rf.RotaframeError, match="`t_span`.*resolution"):
        rf.propagate((g, "pad"), (1e9, 1e9 + 1e-7), r0, v0)


def test_samples_closer_than_the_minimum_interval_are_refused_naming_time():
    t = np.array([0.0, 1e-100, 1.0, 2.0])
    lat, lon, h = np.full(4, 0.8), np.full(4, 0.1), np.zeros(4)
    q = np.tile([1.0, 0.0, 0.0, 0.0], (4, 1))
    with pytest.raises(rf.RotaframeError, match="at least 1e-9 s"):
        rf.motion_from_samples(t, lat, lon, h, q, [0.5])


def test_a_confidence_within_rounding_of_one_is_refused_naming_confidence():
    record = np.random.default_rng(2).normal(0.0, 1e-3, 5000)
    with pytest.raises(rf.OutOfRangeError, match="`confidence`"):
        # The largest float below 1: (1 + c)/2 rounds to exactly 1.
        rf.allan_deviation(record, 0.01, confidence=float(np.nextafter(1.0, 0.0)))


def test_every_array_function_names_one_of_its_own_parameters_when_refusing_nan():
    # The sweep the hardening review asked for: NaN in each argument of each module-level
    # array function; the error must name (in backquotes) a parameter of that function.
    import inspect
    import re

    from test_array_layouts import CASES

    checked = 0
    for name, _, args in CASES:
        function = getattr(rf, name, None)
        if function is None:  # a method, covered by its class's own tests
            continue
        parameters = set(inspect.signature(function).parameters)
        for k in range(len(args)):
            bad = list(args)
            bad[k] = np.full(np.shape(args[k]), np.nan)
            with pytest.raises(rf.RotaframeError) as raised:
                function(*bad)
            named = set(re.findall(r"`([A-Za-z_][A-Za-z_0-9]*)`", str(raised.value)))
            assert named & parameters, f"{name}: {raised.value} names none of {sorted(parameters)}"
            checked += 1
    assert checked >= 40
