"""Every bad-input class: a clear exception naming the argument and the first bad element,
a subclass of RotaframeError (and of ValueError); nothing crashes."""

import numpy as np
import pytest

import rotaframe as rf


def test_exception_hierarchy():
    for cls in (rf.NonFiniteError, rf.OutOfRangeError, rf.NotUnitQuaternionError, rf.ShapeError, rf.FrameMismatchError,
                rf.NearPoleError, rf.NearEarthCentreError, rf.ZeroNormError, rf.NotRotationMatrixError, rf.NotPositiveError):
        assert issubclass(cls, rf.RotaframeError) and issubclass(cls, ValueError)
    assert issubclass(rf.NearPoleError, rf.OutOfRangeError)


def test_wrong_trailing_dimension_names_the_argument():
    with pytest.raises(rf.ShapeError, match=r"`position` must have trailing shape \(3,\), got shape \(5, 2\)"):
        rf.apparent_acceleration([0, 0, 1], np.zeros((5, 2)))
    with pytest.raises(rf.ShapeError, match="`q`"):
        rf.quat_to_matrix(np.zeros((2, 3)))
    with pytest.raises(rf.ShapeError, match="`rotation`"):
        rf.FrameMotion(rotation=np.zeros((2, 5)))


def test_shapes_that_do_not_broadcast():
    with pytest.raises(rf.ShapeError, match=r"do not broadcast: `angular_velocity` \(4,\), `position` \(5,\)"):
        rf.apparent_acceleration(np.zeros((4, 3)), np.zeros((5, 3)))
    m = rf.earth_motion(np.arange(3.0))
    with pytest.raises(rf.ShapeError):
        m.map_point(np.zeros((4, 3)))
    with pytest.raises(rf.ShapeError):
        m.then(rf.FrameMotion(position=np.zeros((4, 3))))


@pytest.mark.parametrize("bad", [np.nan, np.inf, -np.inf])
def test_non_finite_input_names_argument_and_index(bad):
    r = np.zeros((6, 3))
    r[4, 1] = bad
    with pytest.raises(rf.NonFiniteError, match=r"`position` must be finite.*index \(4,\) of `position`"):
        rf.apparent_acceleration([0, 0, 1], r)
    xyz = np.full((2, 3, 3), 7e6)
    xyz[1, 2, 0] = bad
    with pytest.raises(rf.NonFiniteError, match=r"`xyz`.*index \(1, 2\) of `xyz`"):
        rf.ecef_to_geodetic(xyz)
    with pytest.raises(rf.NonFiniteError, match="`velocity`"):
        rf.FrameMotion(velocity=[0, bad, 0])
    with pytest.raises(rf.NonFiniteError, match="`lon`"):
        rf.geodetic_to_ecef(0.0, [0.0, bad], 0.0)


def test_latitude_beyond_90_degrees():
    with pytest.raises(rf.OutOfRangeError, match=r"`lat` = 91 is outside \[-90, 90\].*index \(2,\) of `lat`"):
        rf.geodetic_to_ecef([0, 10, 91], 0, 0, degrees=True)
    with pytest.raises(rf.OutOfRangeError, match="`lat` = -1.6 is outside"):
        rf.normal_gravity(-1.6)
    with pytest.raises(rf.OutOfRangeError, match="`lat` = 100 is outside"):
        rf.radii_of_curvature([0.0, 100.0], degrees=True)
    with pytest.raises(rf.OutOfRangeError):
        rf.ned_from_ecef(2.0, 0.0)


def test_quaternion_far_from_unit_and_zero():
    with pytest.raises(rf.NotUnitQuaternionError, match=r"`q` must be a unit quaternion \(norm 2"):
        rf.quat_to_matrix([2.0, 0, 0, 0])
    with pytest.raises(rf.NotUnitQuaternionError, match="`rotation`.*index \\(1,\\)"):
        rf.FrameMotion(rotation=[[1, 0, 0, 0], [0.9, 0, 0, 0]])
    with pytest.raises(rf.ZeroNormError, match="`q` has zero norm"):
        rf.euler_from_quat([0.0, 0, 0, 0])
    # Within 1e-6 of unit norm: accepted and renormalised.
    rf.quat_to_matrix([1 + 5e-7, 0, 0, 0])


def test_not_a_rotation_matrix():
    with pytest.raises(rf.NotRotationMatrixError, match="`m`"):
        rf.matrix_to_quat(np.diag([1.0, 1.0, -1.0]))


def test_frame_label_mismatch():
    a = rf.FrameMotion(parent="eci", child="ecef")
    b = rf.FrameMotion(parent="ned", child="body")
    with pytest.raises(rf.FrameMismatchError, match='"ecef".*"ned"'):
        a.then(b)
    # Unlabelled motions chain with anything.
    assert a.then(rf.FrameMotion()).child is None


def test_near_pole_and_near_centre():
    with pytest.raises(rf.NearPoleError, match="`lat`"):
        rf.transport_rate_ned(np.pi / 2, 0.0, [1.0, 1.0, 0.0])
    with pytest.raises(rf.NearPoleError):
        rf.local_level_motion(90.0, 0.0, 0.0, degrees=True)
    with pytest.raises(rf.NearEarthCentreError, match="`xyz`"):
        rf.ecef_to_geodetic([1000.0, 0, 0])


def test_bad_model_and_bad_types():
    with pytest.raises(rf.NotPositiveError, match="`gm`"):
        rf.EarthModel(a=6378137.0, f=0.003, gm=-1.0, omega=7e-5)
    with pytest.raises(rf.RotaframeError, match="together"):
        rf.EarthModel(a=6378137.0, f=0.003, gm=4e14, omega=7e-5, gamma_equator=9.78)
    with pytest.raises(TypeError, match="`position`"):
        rf.apparent_acceleration([0, 0, 1], "north")


def test_nothing_is_half_written_and_the_interpreter_survives():
    # A failing batch returns no partial output and later calls work normally.
    r = np.zeros((1000, 3))
    r[-1] = np.nan
    with pytest.raises(rf.NonFiniteError):
        rf.apparent_acceleration([0, 0, 1], r)
    assert rf.apparent_acceleration([0, 0, 1], r[:-1]).total.shape == (999, 3)
