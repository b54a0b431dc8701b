"""rf.propagate and rf.Drag against outside references: scipy's DOP853 integrating the same
equations with a right-hand side written here from the textbook formulas, the classical
eastward deflection of a dropped body, the quadratic-drag fall law, and the errors."""

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import rotaframe as rf

OMEGA = 7.292115e-5  # WGS 84 rotation rate, rad/s (NIMA TR8350.2, table 3.1)
GM = 3.986004418e14  # WGS 84 GM, m³/s² (NIMA TR8350.2, table 3.1)


def site_graph(lat_deg, axes="ned"):
    g = rf.FrameGraph("inertial")
    g.add_earth("ecef", "inertial")
    g.add_site("pad", "ecef", lat_deg, 0.0, 0.0, degrees=True, axes=axes)
    return g


def rotating_rhs(r_site, c_ecef_from_ned):
    """The equations of motion in a site's NED frame on the uniformly rotating Earth, written
    out independently: a = Cᵀ g(R₀ + C r) − 2 Ω×v − Ω×(Ω×(R₀ + C r)) mapped to NED (the site
    origin's own acceleration and the centrifugal term combine to Ω×(Ω×x) at the body;
    Goldstein, Classical Mechanics, 3rd ed., §4.10), point-mass gravitation."""
    omega_ecef = np.array([0.0, 0.0, OMEGA])

    def rhs(_t, y):
        r, v = y[:3], y[3:]
        x = r_site + c_ecef_from_ned @ r
        grav = -GM * x / np.linalg.norm(x) ** 3
        w = c_ecef_from_ned.T @ omega_ecef
        a = c_ecef_from_ned.T @ (grav - np.cross(omega_ecef, np.cross(omega_ecef, x))) - 2.0 * np.cross(w, v)
        return np.concatenate([v, a])

    return rhs


def ned_to_ecef(lat, lon):
    """C_n^e for geodetic latitude and longitude (radians); common practice (Groves,
    Principles of GNSS, Inertial, and Multisensor Integrated Navigation Systems, eq. 2.150)."""
    sl, cl, so, co = math.sin(lat), math.cos(lat), math.sin(lon), math.cos(lon)
    return np.array([[-sl * co, -so, -cl * co], [-sl * so, co, -cl * so], [cl, 0.0, -sl]])


def test_a_flight_in_a_site_frame_matches_scipy_dop853_on_the_textbook_equations():
    # A 60 s ballistic flight seen from a site's NED frame: rotaframe's run against scipy's
    # DOP853 at rtol 1e-12 on the equations written out above. Both integrate the same ODE to
    # ~1e-10 relative, so the end states agree to 1e-8 m on a ~10 km flight (dominated by the
    # two integrations' own errors).
    g = site_graph(40.0)
    r0, v0 = np.array([0.0, 0.0, -100.0]), np.array([150.0, 80.0, -250.0])
    ours = rf.propagate((g, "pad"), (0.0, 60.0), r0, v0, gravity="point", rtol=1e-12, atol=1e-12)
    site = rf.geodetic_to_ecef(math.radians(40.0), 0.0, 0.0)
    rhs = rotating_rhs(np.asarray(site), ned_to_ecef(math.radians(40.0), 0.0))
    ref = solve_ivp(rhs, (0.0, 60.0), np.concatenate([r0, v0]), method="DOP853", rtol=1e-13, atol=1e-12)
    assert ref.success
    assert np.allclose(ours.position[-1], ref.y[:3, -1], rtol=0, atol=1e-6)
    assert np.allclose(ours.velocity[-1], ref.y[3:, -1], rtol=0, atol=1e-8)
    # The dense output between steps agrees with scipy's own dense solution (7th-order
    # interpolants on both sides: 1e-6 m).
    dense = solve_ivp(rhs, (0.0, 60.0), np.concatenate([r0, v0]), method="DOP853", rtol=1e-13, atol=1e-12, dense_output=True)
    t = np.linspace(0.0, 60.0, 37)
    p, v = ours.sample(t)
    assert p.shape == (37, 3) and v.shape == (37, 3)
    assert np.allclose(p, dense.sol(t)[:3].T, rtol=0, atol=1e-6)


def test_a_python_callable_frame_gives_the_graph_frames_answer():
    # The same site frame as a Python callable (hand-chained with `then`): the same result to
    # rounding carried through the integration (1e-9 m).
    g = site_graph(-20.0)
    site = rf.local_level_motion(math.radians(-20.0), 0.0, 0.0)
    frame = lambda t: rf.earth_motion(t).then(site)  # noqa: E731
    r0, v0 = np.array([10.0, 0.0, -2000.0]), np.array([0.0, 40.0, 0.0])
    a = rf.propagate((g, "pad"), (0.0, 20.0), r0, v0)
    b = rf.propagate(frame, (0.0, 20.0), r0, v0)
    assert np.allclose(a.position[-1], b.position[-1], rtol=0, atol=1e-9)


def test_a_dropped_body_lands_east_by_a_third_of_omega_g_t_cubed_cos_latitude():
    # (1/3) Ω g t³ cos φ (Gauss 1803, Laplace; Kibble and Berkshire, Classical Mechanics, 5th
    # ed., §5.4), to 1 %; the budget's Coriolis part carries it and points east.
    for height in (100.0, 1000.0):
        g = rf.FrameGraph("inertial")
        g.add_earth("ecef", "inertial")
        g.add_site("pad", "ecef", 45.0, 0.0, height, degrees=True)
        out = rf.propagate((g, "pad"), (0.0, 100.0), [0.0, 0.0, 0.0], [0.0, 0.0, 0.0], gravity="j2", stop_height=0.0, budget=True)
        t = out.event_time
        gee = 2.0 * height / t**2
        expected = OMEGA * gee * t**3 * math.cos(math.radians(45.0)) / 3.0
        assert out.position[-1][1] == pytest.approx(expected, rel=0.01)
        ned = out.budget.north_east_down
        assert ned.shape == (4, 3)
        assert ned[1][1] == pytest.approx(expected, rel=0.01)


def test_an_enu_site_reports_its_budget_north_east_down():
    # The same fall from an ENU site: its Coriolis displacement is east in ENU (x) and, in the
    # north/east/down view, in the second column (common practice: ENU ↔ NED swaps x, y and
    # negates z).
    g = site_graph(45.0, axes="enu")
    out = rf.propagate((g, "pad"), (0.0, 10.0), [0.0, 0.0, 500.0], [0.0, 0.0, 0.0], gravity="j2", budget=True)
    enu = out.budget.coriolis
    ned = out.budget.north_east_down[1]
    assert enu[0] > 0.0
    assert np.allclose(ned, [enu[1], enu[0], -enu[2]], rtol=0, atol=1e-15)
    with pytest.raises(rf.RotaframeError, match="north/east/down"):
        _ = rf.propagate(lambda t: rf.earth_motion(t), (0.0, 1.0), [7e6, 0, 0], [0, 0, 0], budget=True).budget.north_east_down


def test_the_budget_agrees_with_runs_without_each_term():
    # The check, from Python: first-order Coriolis displacement against (full −
    # without Coriolis) to 1 %.
    g = site_graph(60.0)
    args = ((g, "pad"), (0.0, 40.0), [0.0, 0.0, -20_000.0], [300.0, 0.0, 0.0])
    full = rf.propagate(*args, gravity="j2", budget=True)
    without = rf.propagate(*args, gravity="j2", apparent=["translational", "centrifugal", "euler"])
    difference = full.position[-1] - without.position[-1]
    assert np.linalg.norm(full.budget.coriolis - difference) < 0.01 * np.linalg.norm(difference)
    assert np.allclose(full.budget.total, full.budget.translational + full.budget.coriolis + full.budget.centrifugal + full.budget.euler)


def test_built_in_drag_matches_a_python_force_and_the_tanh_fall_law():
    # The built-in Drag (no Python called) equals the same drag written as a Python callable
    # (to rounding through the run), and a fall with constant density and no rotation follows
    # v = v_t tanh(g t / v_t), v_t = √(2βg/ρ) (Taylor, Classical Mechanics, §2.4; from memory),
    # using the point-mass field of a body far out so g is nearly uniform: 1e-4 relative
    # (g varies by 2 h / R over the fall).
    beta, rho = 20.0, 1.225
    drag = rf.Drag(beta, density=rho)
    g = site_graph(10.0)
    by_hand = lambda t, r, v: -rho * np.linalg.norm(v) * v / (2 * beta)  # noqa: E731
    a = rf.propagate((g, "pad"), (0.0, 15.0), [0, 0, -3000.0], [20.0, 0, 0], force=drag)
    b = rf.propagate((g, "pad"), (0.0, 15.0), [0, 0, -3000.0], [20.0, 0, 0], force=by_hand)
    assert np.allclose(a.position[-1], b.position[-1], rtol=0, atol=1e-9)
    gee = GM / 7.0e6**2
    inertial = lambda t: rf.FrameMotion()  # noqa: E731
    fall = rf.propagate(inertial, (0.0, 12.0), [7.0e6, 0, 0], [0, 0, 0], force=drag)
    terminal = math.sqrt(2 * beta * gee / rho)
    speed = -fall.velocity[:, 0]
    expected = terminal * np.tanh(gee * fall.t / terminal)
    assert np.allclose(speed, expected, rtol=1e-4, atol=1e-9)
    assert rf.Drag(2.0, density=1.0, scale_height=8000.0, up=[0, 0, -1]).acceleration([0, 0, -8000.0], [1.0, 0, 0])[0] == pytest.approx(-0.25 / math.e)


def test_stop_fn_ends_the_run_at_its_zero_crossing():
    # A body thrown up in the inertial frame, stopped at the top of its arc (vertical velocity
    # zero), located to 1e-9 s: the stop time is v0 / g to the field's variation over the arc.
    inertial = lambda t: rf.FrameMotion()  # noqa: E731
    out = rf.propagate(inertial, (0.0, 100.0), [7.0e6, 0, 0], [30.0, 0, 0], stop_fn=lambda t, r, v: v[0])
    assert out.event_time == pytest.approx(30.0 / (GM / 7.0e6**2), rel=1e-4)
    assert abs(out.velocity[-1][0]) < 1e-7
    assert out.t[-1] == out.event_time


def test_errors_name_what_is_wrong_and_callback_exceptions_pass_through():
    inertial = lambda t: rf.FrameMotion()  # noqa: E731
    start = ([7e6, 0, 0], [0, 0, 0])
    with pytest.raises(rf.RotaframeError, match="max_steps"):
        rf.propagate(inertial, (0.0, 1e5), *start, max_steps=3)
    with pytest.raises(rf.NonFiniteError, match="force"):
        rf.propagate(inertial, (0.0, 1.0), *start, force=lambda t, r, v: [math.nan, 0, 0])
    with pytest.raises(rf.NotPositiveError, match="t_span"):
        rf.propagate(inertial, (1.0, 1.0), *start)
    with pytest.raises(ZeroDivisionError):
        rf.propagate(inertial, (0.0, 1.0), *start, force=lambda t, r, v: 1 / 0)
    with pytest.raises(rf.InputTypeError, match="force"):
        rf.propagate(inertial, (0.0, 1.0), *start, force="drag")
    with pytest.raises(rf.InputTypeError, match="frame_motion"):
        rf.propagate(42, (0.0, 1.0), *start)
    with pytest.raises(rf.RotaframeError, match="stop_height"):
        rf.propagate(inertial, (0.0, 1.0), *start, stop_height=0.0)
    with pytest.raises(rf.FrameGraphError, match="did you mean"):
        rf.propagate((site_graph(0.0), "pda"), (0.0, 1.0), *start)
    with pytest.raises(rf.OutOfRangeError, match="rtol"):
        rf.propagate(inertial, (0.0, 1.0), *start, rtol=0.0)
    with pytest.raises(rf.InputTypeError, match="gravity"):
        rf.propagate(inertial, (0.0, 1.0), *start, gravity=3)
    with pytest.raises(rf.OutOfRangeError, match="ballistic_coefficient"):
        rf.Drag(-1.0)
    out = rf.propagate(inertial, (0.0, 2.0), *start)
    with pytest.raises(rf.OutOfRangeError, match="t"):
        out.sample(3.0)
