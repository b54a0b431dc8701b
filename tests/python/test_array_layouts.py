"""Every public array function accepts any float64 array numpy itself can read: unaligned
views into a byte buffer, strided (non-contiguous) views, byte-swapped arrays and read-only
arrays give the same bits as a plain C-contiguous array, never a panic. `out=` arrays that
cannot be written in place (unaligned, or over an input's memory through a second buffer
object) are refused with a named error and nothing is written."""

import numpy as np
import pytest

import rotaframe as rf

N = 7
RNG = np.random.default_rng(11)
LAT = RNG.uniform(-1.2, 1.2, N)
LON = RNG.uniform(-3.0, 3.0, N)
H = RNG.uniform(-100.0, 9000.0, N)
XYZ = rf.geodetic_to_ecef(LAT, LON, H)
V = RNG.normal(0.0, 20.0, (N, 3))
Q = rf.quat_from_euler(RNG.uniform(-3, 3, N), RNG.uniform(-1.4, 1.4, N), RNG.uniform(-3, 3, N))
M = rf.quat_to_matrix(Q)
ROTVEC = RNG.normal(0.0, 0.5, (N, 3))
W = RNG.normal(0.0, 0.1, (N, 3))

# (name, function, arguments): every module-level function whose arguments are arrays.
CASES = [
    ("geodetic_to_ecef", rf.geodetic_to_ecef, (LAT, LON, H)),
    ("ecef_to_geodetic", rf.ecef_to_geodetic, (XYZ,)),
    ("ned_from_ecef", rf.ned_from_ecef, (LAT, LON)),
    ("enu_from_ecef", rf.enu_from_ecef, (LAT, LON)),
    ("radii_of_curvature", rf.radii_of_curvature, (LAT,)),
    ("normal_gravity", rf.normal_gravity, (LAT, H)),
    ("schuler_period", rf.schuler_period, (LAT, H)),
    ("gravity_ned", rf.gravity_ned, (LAT, H)),
    ("gravitation_ecef", rf.gravitation_ecef, (XYZ,)),
    ("gravity_ecef", rf.gravity_ecef, (XYZ,)),
    ("centripetal_acceleration_ecef", rf.centripetal_acceleration_ecef, (XYZ,)),
    ("earth_rate_ned", rf.earth_rate_ned, (LAT,)),
    ("transport_rate_ned", rf.transport_rate_ned, (LAT, H, V)),
    ("coriolis_ned", rf.coriolis_ned, (LAT, H, V)),
    ("coriolis_parameter", rf.coriolis_parameter, (LAT,)),
    ("earth_rotation_angle", rf.earth_rotation_angle, (2451545.0 + H,)),
    ("quat_from_euler", rf.quat_from_euler, (LON, LAT, LON)),
    ("euler_from_quat", rf.euler_from_quat, (Q,)),
    ("quat_to_matrix", rf.quat_to_matrix, (Q,)),
    ("matrix_to_quat", rf.matrix_to_quat, (M,)),
    ("quat_multiply", rf.quat_multiply, (Q, Q[::-1].copy())),
    ("quat_inverse", rf.quat_inverse, (Q,)),
    ("quat_rotate", rf.quat_rotate, (Q, V)),
    ("quat_from_rotvec", rf.quat_from_rotvec, (ROTVEC,)),
    ("quat_to_rotvec", rf.quat_to_rotvec, (Q,)),
    ("apparent_acceleration", lambda w, r, v: rf.apparent_acceleration(w, r, v).total, (W, XYZ, V)),
    ("map_point", lambda r, v: rf.earth_motion(H).map_point(r, v), (XYZ, V)),
]


def unaligned(a):
    """A float64 view of `a`'s values at an odd byte offset in a byte buffer (legal numpy)."""
    buffer = bytearray(a.nbytes + 1)
    view = np.frombuffer(buffer, dtype=np.float64, count=a.size, offset=1).reshape(a.shape)
    view[...] = a
    assert not view.flags.aligned
    return view


def strided(a):
    """A non-contiguous view holding `a`'s values."""
    wide = np.zeros(a.shape[:-1] + (2 * a.shape[-1],)) if a.ndim else np.zeros(2)
    view = wide[..., ::2] if a.ndim else wide[::2][0]
    view[...] = a
    return view


def swapped(a):
    """`a`'s values in the other byte order."""
    return a.astype(a.dtype.newbyteorder())


def read_only(a):
    b = a.copy()
    b.flags.writeable = False
    return b


LAYOUTS = [unaligned, strided, swapped, read_only]


def as_tuple(result):
    return result if isinstance(result, tuple) else (result,)


@pytest.mark.parametrize("layout", LAYOUTS, ids=lambda f: f.__name__)
@pytest.mark.parametrize("name, function, args", CASES, ids=[c[0] for c in CASES])
def test_array_functions_give_the_same_bits_for_every_readable_layout(layout, name, function, args):
    plain = as_tuple(function(*args))
    for k in range(len(args)):
        changed = list(args)
        changed[k] = layout(np.asarray(args[k], dtype=np.float64))
        got = as_tuple(function(*changed))
        for a, b in zip(got, plain):
            assert np.asarray(a).tobytes() == np.asarray(b).tobytes(), f"{name}, argument {k} as {layout.__name__}"


def test_an_unaligned_out_array_is_refused_naming_out_and_left_untouched():
    out = unaligned(np.full((N, 3), -1.0))
    with pytest.raises(rf.RotaframeError, match="`out` must be aligned"):
        rf.geodetic_to_ecef(LAT, LON, H, out=out)
    assert np.all(out == -1.0)


def test_an_out_array_over_an_input_through_a_second_buffer_object_is_refused():
    # Two numpy arrays over one memory block with no common base object: rust-numpy's borrow
    # tracking cannot see the overlap; the address check does.
    block = bytearray(N * 3 * 8)
    xyz = np.frombuffer(memoryview(block), dtype=np.float64).reshape(N, 3)
    xyz[...] = XYZ
    out = np.frombuffer(memoryview(block), dtype=np.float64).reshape(N, 3)
    assert xyz.base is not out.base
    with pytest.raises(rf.RotaframeError, match="`out` overlaps an input"):
        rf.gravity_ecef(xyz, out=out)
    assert xyz.tobytes() == XYZ.tobytes()
    # Two outputs over one block are refused too.
    lat, lon, h = (np.empty(N) for _ in range(3))
    with pytest.raises(rf.RotaframeError, match="overlaps another output"):
        rf.ecef_to_geodetic(XYZ, out=(lat, lat[::1], h))
    # Disjoint outputs in one block are fine.
    block2 = np.empty(3 * N)
    rf.ecef_to_geodetic(XYZ, out=(block2[:N], block2[N : 2 * N], block2[2 * N :]))
    assert block2[:N].tobytes() == rf.ecef_to_geodetic(XYZ)[0].tobytes()
