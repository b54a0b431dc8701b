"""The shared cross-language vectors (tests/vectors/shared_cases.txt), written from the Rust
core: the Python package must give the same numbers to the last bit."""

import os

import numpy as np
import pytest

import rotaframe as rf
from conftest import VECTORS


def load():
    cases = []
    for line in (VECTORS / "shared_cases.txt").read_text().splitlines():
        if line.startswith("#") or not line.strip():
            continue
        name, inputs, outputs = (part.strip() for part in line.split("|"))
        cases.append((name, np.array(inputs.split(), float), np.array(outputs.split(), float)))
    return cases


def motion(x):
    return rf.FrameMotion(
        rotation=x[0:4], position=x[4:7], velocity=x[7:10], acceleration=x[10:13], angular_velocity=x[13:16], angular_acceleration=x[16:19]
    )


def numbers(m):
    return np.concatenate([m.rotation, m.position, m.velocity, m.acceleration, m.angular_velocity, m.angular_acceleration])


def evaluate(name, x):
    if name == "map_point":
        return np.concatenate(motion(x[:19]).map_point(x[19:22], x[22:25], x[25:28]))
    if name == "compose":
        return numbers(motion(x[:19]).then(motion(x[19:38])))
    if name == "inverse":
        return numbers(motion(x[:19]).inverse())
    if name == "apparent_acceleration":
        t = rf.apparent_acceleration(x[0:3], x[9:12], x[12:15], angular_acceleration=x[3:6], origin_acceleration=x[6:9])
        return np.concatenate([t.translational, t.coriolis, t.centrifugal, t.euler, t.total])
    if name == "geodetic_to_ecef":
        return rf.geodetic_to_ecef(*x)
    if name in ("ecef_to_geodetic", "euler_from_quat", "radii_of_curvature"):
        return np.array(getattr(rf, name)(x if len(x) != 1 else x[0]))
    if name == "normal_gravity":
        return np.array([rf.normal_gravity(x[0], x[1])])
    if name in ("gravitation_ecef", "gravity_ecef", "quat_from_euler"):
        return getattr(rf, name)(x) if name != "quat_from_euler" else rf.quat_from_euler(*x)
    if name == "earth_rate_ned":
        return rf.earth_rate_ned(x[0])
    if name == "transport_rate_ned":
        return rf.transport_rate_ned(x[0], x[1], x[2:5])
    if name == "eotvos_correction":
        return np.array([rf.eotvos_correction(x[0], x[2:5], x[1])])
    if name == "coriolis_parameter":
        return np.array([rf.coriolis_parameter(x[0])])
    if name == "earth_rotation_angle":
        return np.array([rf.earth_rotation_angle(x[0], x[1])])
    if name == "ned_from_ecef":
        return rf.ned_from_ecef(x[0], x[1]).ravel()
    if name == "local_level_motion":
        return numbers(rf.local_level_motion(x[0], x[1], x[2], x[3:6], x[6:9]))
    if name == "ideal_imu":
        body = rf.FrameMotion(
            rotation=x[0:4], position=x[4:7], velocity=x[7:10], acceleration=x[10:13],
            angular_velocity=x[13:16], angular_acceleration=x[16:19], parent="eci",
        )
        return np.concatenate(rf.ideal_imu(body))
    if name in ("strapdown_ned", "strapdown_ecef"):
        ins = rf.Strapdown(x[0], x[1], x[2], x[3:6], x[6:10], frame=name.removeprefix("strapdown_"))
        steps = x[10:].reshape(-1, 7)
        ins.run(steps[:, 0:3], steps[:, 3:6], steps[:, 6])
        return np.concatenate([[ins.lat, ins.lon, ins.h], ins.v_ned, ins.attitude])
    if name == "graph_chain":
        g = rf.FrameGraph("inertial")
        g.add_earth("ecef", "inertial", angle_at_epoch=x[0])
        g.add_site("pad", "ecef", x[1], x[2], x[3])
        g.add_spin("table", "pad", axis=x[4:7], rate=x[7], angle_at_zero=x[8], angular_acceleration=x[9])
        g.add_fixed("sensor", "table", rotation=x[10:14], position=x[14:17])
        g.add_fixed("camera", "pad", rotation=x[17:21], position=x[21:24])
        return np.concatenate([numbers(g.motion("inertial", "sensor", x[24])), numbers(g.motion("camera", "sensor", x[24]))])
    raise AssertionError(f"unknown shared function {name}")


CASES = load()


def test_file_covers_every_shared_function():
    assert len(CASES) >= 100
    assert len({c[0] for c in CASES}) == 23


@pytest.mark.parametrize("name,inputs,outputs", CASES, ids=[f"{c[0]}-{i}" for i, c in enumerate(CASES)])
def test_python_reproduces_the_shared_vector_exactly(name, inputs, outputs):
    np.testing.assert_array_equal(np.asarray(evaluate(name, inputs), float).ravel(), outputs)


def test_the_expected_cpu_code_path_runs():
    # The emulated-CPU runs of scripts/test set ROTAFRAME_EXPECT_FAST_KERNELS (0 on a CPU
    # without AVX2 and FMA, 1 with them); the vectors above must pass on both paths.
    active = rf.fast_kernels_active()
    assert isinstance(active, bool)
    expected = os.environ.get("ROTAFRAME_EXPECT_FAST_KERNELS")
    if expected is not None:
        assert active == (expected == "1")
