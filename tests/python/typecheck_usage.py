"""A script an analyst might write, type-checked with `mypy --strict` against the stubs."""

import numpy as np
from numpy.typing import NDArray

import rotaframe as rf


def budget(lat_deg: float, lon_deg: float, h: float) -> NDArray[np.float64]:
    xyz: NDArray[np.float64] = rf.geodetic_to_ecef(lat_deg, lon_deg, h, degrees=True)
    earth = rf.earth_motion(np.array([0.0, 60.0]))
    ned = rf.local_level_motion(lat_deg, lon_deg, h, [10.0, 0.0, 0.0], degrees=True)
    chain: rf.FrameMotion = earth.then(ned)
    terms: rf.ApparentAcceleration = rf.apparent_acceleration(chain.angular_velocity_in_child, np.zeros(3))
    lat, lon, height = rf.ecef_to_geodetic(xyz)
    _ = (lat, lon, height, rf.normal_gravity(0.3), rf.WGS84.gamma_equator)
    return terms.total


def navigate(dtheta: NDArray[np.float64], dv: NDArray[np.float64]) -> float:
    def parked(t: NDArray[np.float64]) -> rf.FrameMotion:
        return rf.earth_motion(t).then(rf.local_level_motion(0.8, 0.1, 50.0))

    rate, force = rf.ideal_imu(parked(np.zeros(1)), gravity="j2")
    inc_theta, inc_v, inc_dt = rf.imu_increments(parked, np.linspace(0.0, 1.0, 101))
    ins = rf.Strapdown(0.8, 0.1, 50.0, [0.0, 0.0, 0.0], [1.0, 0.0, 0.0, 0.0], frame="ecef", vertical="hold")
    history: rf.StrapdownHistory = ins.run(dtheta, dv, 0.01, height_reference=50.0)
    ins.step(inc_theta[0], inc_v[0], float(inc_dt[0]))
    errors = rf.ImuErrors(gyro_arw_deg_per_sqrt_h=0.1, seed=3)
    noisy_theta, noisy_v = errors.apply(inc_theta, inc_v, inc_dt)
    _ = (rate, force, noisy_theta, noisy_v, history.lat, ins.v_ned, ins.attitude)
    return ins.h


def graph_query(t: NDArray[np.float64]) -> float:
    g = rf.FrameGraph("inertial", inertial=True)
    g.add_earth("ecef", "inertial", angle_at_epoch=0.0)
    g.add_site("site", "ecef", 47.0, 8.0, 400.0, degrees=True, axes="enu")
    g.add_spin("table", "site", axis=[0.0, 0.0, 1.0], rate=2.0)
    g.add_fixed("imu", "table", position=[0.1, 0.0, 0.0])
    g.add_function("probe", "imu", lambda times: rf.FrameMotion(position=[0.0, 0.0, 0.05]))
    m: rf.FrameMotion = g.motion("inertial", "imu", t)
    p, v, a = g.map_point("imu", "site", t, [0.0, 0.0, 0.0])
    terms: rf.ApparentAcceleration = g.apparent_acceleration("imu", t, [0.0, 0.0, 0.0], [0.0, 0.0, 0.0])
    names: list[str] = g.frames + g.path("imu", "site")
    again = rf.FrameGraph.from_toml(g.to_toml())
    _ = (m, p, v, a, terms, names, again.parent_of("imu"), again.kind_of("probe"))
    return float(np.sum(terms.total))


def fall_budget() -> float:
    g = rf.FrameGraph("inertial")
    g.add_earth("ecef", "inertial")
    g.add_site("pad", "ecef", 45.0, 0.0, 0.0, degrees=True)
    drag = rf.Drag(5.0, density=1.2, scale_height=8000.0, up=[0.0, 0.0, -1.0])
    out: rf.Propagation = rf.propagate((g, "pad"), (0.0, 60.0), [0.0, 0.0, -500.0], [0.0, 0.0, 0.0],
                                       gravity="j2", force=drag, stop_height=0.0, budget=True)
    by_callable = rf.propagate(lambda t: rf.earth_motion(t), (0.0, 1.0), [7e6, 0.0, 0.0], [0.0, 0.0, 0.0],
                               force=lambda t, r, v: [0.0, 0.0, 0.0], stop_fn=lambda t, r, v: 1.0)
    budget = out.budget
    assert budget is not None
    ned: NDArray[np.float64] = budget.north_east_down
    p, v = out.sample([1.0, 2.0])
    _ = (by_callable.event_time, p, v, out.steps)
    return float(ned[1][1])


def predicted_drift() -> float:
    xyz, j = rf.geodetic_to_ecef(0.7, 0.1, 100.0, jacobian=True)
    lat, lon, h, ji = rf.ecef_to_geodetic(xyz, jacobian=True)
    q, jq = rf.quat_from_euler(0.1, 0.0, 0.2, jacobian=True)
    terms, jacobians = rf.apparent_acceleration([0.0, 0.0, 1e-4], [1.0, 0.0, 0.0], jacobian=True)
    motion, j1, j2 = rf.earth_motion(1.0).then(rf.earth_motion(1.0).inverse(), jacobian=True)
    s = rf.Strapdown(0.7, 0.1, 100.0, [0.0, 0.0, 0.0], q)
    f, g = s.error_model([0.0, 0.0, -9.8], [0.0, 0.0, 0.0], states=15)
    imu = rf.ImuErrors(gyro_arw_deg_per_sqrt_h=0.1)
    phi, qd = rf.discrete_error_model(f, g, imu, 0.01)
    history = s.run(np.zeros((10, 3)), np.tile([0.0, 0.0, -0.098], (10, 1)), 0.01)
    t, p = rf.predict_covariance(history, imu, np.eye(15) * 1e-12, every=5)
    _ = (lat, lon, h, ji, j, terms.total, jacobians["position"], motion, j1, j2, phi, qd, jq, t)
    return float(p[-1, 0, 0])


def preallocated_and_threaded() -> float:
    xyz = np.empty((4, 3))
    got: NDArray[np.float64] = rf.geodetic_to_ecef(np.zeros(4), np.zeros(4), np.zeros(4), out=xyz, threads=2)
    lat, lon, h = rf.ecef_to_geodetic(got, out=(np.empty(4), np.empty(4), np.empty(4)), threads=0)
    s = rf.Strapdown(0.7, 0.1, 100.0, [0.0, 0.0, 0.0], [1.0, 0.0, 0.0, 0.0])
    seen: list[tuple[int, int]] = []
    histories = rf.run_strapdowns(
        [s], np.zeros((1, 10, 3)), np.zeros((1, 10, 3)), 0.01, threads=2, progress=lambda d, t: seen.append((d, t))
    )
    _ = (lat, lon, histories[0].lat)
    return float(h if isinstance(h, float) else h[0])


def calibration_and_allan() -> float:
    attitude = np.zeros((6, 3))
    force = np.zeros((6, 3))
    cal: rf.Calibration = rf.calibrate_accelerometers(attitude, force, lat=48.0, h=300.0, degrees=True, parameters="bias")
    gyro = rf.calibrate_gyros(attitude, force, lat=48.0, table_rate=[0.0] * 6, duration=10.0, parameters="bias")
    errors: rf.ImuErrors = cal.to_imu_errors(gyro, seed=3)
    dtheta, dv = cal.correct(np.zeros((2, 3)), np.zeros((2, 3)), 0.01, other=gyro)
    taus, adev, lower, upper = rf.allan_deviation(np.zeros(100), 0.01, confidence=0.9)
    terms: rf.NoiseTerms = rf.fit_noise_terms(taus, adev)
    _ = (errors, dtheta, dv, lower, upper, cal.covariance, cal.estimated, terms.arw_deg_per_sqrt_h)
    return float(cal.condition_number)
