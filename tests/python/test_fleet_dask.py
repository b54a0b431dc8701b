"""The fleet campaign on a real dask.distributed LocalCluster (worker processes) equals a serial
run, and every rotaframe object that crosses a process boundary pickles.

The reference is the serial run of the same example code in this process: the property is
that distributing the work changes nothing (the same bits), and that the objects shipped
between processes (error models, steppers, frame motions, frame graphs) arrive whole.
"""

import importlib.util
import json
import os
import pathlib
import pickle
import sys

import numpy as np
import pytest

import rotaframe as rf

EXAMPLE = pathlib.Path(__file__).resolve().parents[2] / "examples" / "python" / "fleet_campaign.py"


def _load_example():
    spec = importlib.util.spec_from_file_location("fleet_campaign", EXAMPLE)
    module = importlib.util.module_from_spec(spec)
    sys.modules["fleet_campaign"] = module  # importable by name in this process (cloudpickle needs it)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def client():
    distributed = pytest.importorskip("distributed")
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    with distributed.Client(cluster) as c:
        yield c
    cluster.close()


def _state(stepper):
    return (stepper.lat, stepper.lon, stepper.h, stepper.elapsed, tuple(stepper.v_ned), tuple(stepper.attitude))


def test_the_campaign_on_two_worker_processes_equals_a_serial_run(client):
    import cloudpickle

    example = _load_example()
    # The example is loaded from a path the workers cannot import: ship its code by value.
    cloudpickle.register_pickle_by_value(example)
    worker_pids = set(client.run(os.getpid).values())
    assert len(worker_pids) == 2 and os.getpid() not in worker_pids  # real processes
    vehicles, minutes, rate = 4, 2.0, 100.0
    seen = []
    distributed_results = example.run_dask(client, vehicles, minutes, rate, progress=lambda d, t: seen.append(d))
    serial = example.run_serial(vehicles, minutes, rate)
    assert seen == [1, 2, 3, 4]
    assert [r["vehicle"] for r in distributed_results] == list(range(vehicles))
    for a, b in zip(distributed_results, serial):
        for key in ("samples", "increment_checksum", "own_rms", "coriolis_rms", "centrifugal_mean", "drift_end", "drift_max"):
            assert a[key] == b[key], key  # exact: the same code on the same CPU
        for x, y in zip(a["drift_curve"], b["drift_curve"]):
            assert x.tobytes() == y.tobytes()
        assert _state(a["stepper"]) == _state(b["stepper"])
    # The numbers are the campaign's, not zeros: a tug's own accelerations dwarf the
    # Coriolis term (≈ 2 Ω v ≈ 1e-3 m/s² at 5 m/s), and the free-inertial error grows.
    assert all(r["own_rms"] > 50 * r["coriolis_rms"] > 0 for r in serial)
    assert all(r["drift_max"] > 1.0 for r in serial)


def test_imu_errors_pickle_and_continue_the_same_random_stream():
    errors = rf.ImuErrors(seed=42, gyro_arw_deg_per_sqrt_h=0.2, accel_bias=[0.01, 0.0, -0.02], gyro_markov_sigma=1e-5, gyro_markov_time=30.0)
    dth, dv = np.zeros((500, 3)), np.tile([0.0, 0.0, -0.098], (500, 1))
    errors.apply(dth, dv, 0.01)  # advance the stream and the Markov states
    copy = pickle.loads(pickle.dumps(errors))
    assert copy.seed == 42
    for a, b in zip(copy.markov_states, errors.markov_states):
        assert a.tobytes() == b.tobytes()
    for a, b in zip(copy.apply(dth, dv, 0.01), errors.apply(dth, dv, 0.01)):
        assert a.tobytes() == b.tobytes()


def test_imu_errors_saved_stream_is_its_four_state_words_and_older_json_pickles_still_load():
    errors = rf.ImuErrors(seed=7, gyro_arw_deg_per_sqrt_h=0.1)
    dth, dv = np.zeros((50, 3)), np.tile([0.0, 0.0, -0.098], (50, 1))
    rebuild, args = errors.__reduce__()
    words = args[2]
    assert len(words) == 4 and all(isinstance(w, int) and 0 <= w < 2**64 for w in words)
    # The text form that pickles of earlier versions hold (the generator's serde JSON).
    legacy = rebuild(args[0], args[1], json.dumps({"s": list(words)}), *args[3:])
    for a, b in zip(legacy.apply(dth, dv, 0.01), rebuild(*args).apply(dth, dv, 0.01)):
        assert a.tobytes() == b.tobytes()
    # The one state a seeded stream never reaches is refused, naming the stream.
    with pytest.raises(rf.RotaframeError, match="stream"):
        rebuild(args[0], args[1], [0, 0, 0, 0], *args[3:])
    with pytest.raises(rf.RotaframeError, match="stream"):
        rebuild(args[0], args[1], [1, 2, 3], *args[3:])


def test_steppers_motions_graphs_and_error_models_pickle_whole():
    ins = rf.Strapdown(0.9, 0.2, 30.0, [3.0, -1.0, 0.0], rf.quat_from_euler(0.4, 0.01, -0.02))
    ins.run(np.tile([1e-6, 0.0, 2e-5], (200, 1)), np.tile([0.01, 0.0, -0.098], (200, 1)), 0.01)
    copy = pickle.loads(pickle.dumps(ins))
    assert _state(copy) == _state(ins)
    step = (np.array([1e-6, 2e-6, 3e-6]), np.array([0.0, 0.001, -0.098]), 0.01)
    copy.step(*step)
    ins.step(*step)
    assert _state(copy) == _state(ins)

    motion = rf.FrameMotion(rotation=np.array([0.9, 0.1, 0.2, 0.3]) / np.linalg.norm([0.9, 0.1, 0.2, 0.3]), position=[1.0, 2.0, 3.0], angular_velocity=[0.0, 0.0, 0.1], parent="a", child="b")
    motion = motion.then(rf.FrameMotion(position=[0.0, 0.5, 0.0], parent="b", child="c"))
    assert pickle.loads(pickle.dumps(motion)).isclose(motion, rtol=0.0, atol=0.0)

    graph = rf.FrameGraph("eci")
    graph.add_earth("ecef", "eci")
    graph.add_site("yard", "ecef", 0.93, 0.17, 8.0)
    graph.add_fixed("imu", "yard", position=[0.8, 0.0, -1.2])
    again = pickle.loads(pickle.dumps(graph))
    t = np.linspace(0.0, 100.0, 5)
    assert again.motion("eci", "imu", t).isclose(graph.motion("eci", "imu", t), rtol=0.0, atol=0.0)

    f, g = ins.error_model([0.0, 0.0, -9.8], [0.0, 0.0, 1e-4], states=15)
    for a in (f, g):
        assert pickle.loads(pickle.dumps(a)).tobytes() == a.tobytes()
