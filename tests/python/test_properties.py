"""Invariance properties with hypothesis: results stay the same under changes of frame."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

import rotaframe as rf

finite = st.floats(-1.0, 1.0, allow_nan=False, allow_infinity=False)
vectors = arrays(np.float64, (3,), elements=finite)


@st.composite
def motions(draw):
    q = draw(arrays(np.float64, (4,), elements=finite).filter(lambda q: np.linalg.norm(q) > 0.1))
    return rf.FrameMotion(
        rotation=q / np.linalg.norm(q),
        position=draw(vectors) * 1e3,
        velocity=draw(vectors) * 1e2,
        acceleration=draw(vectors) * 10,
        angular_velocity=draw(vectors) * 3,
        angular_acceleration=draw(vectors),
    )


def scale(*motions_):
    # Rounding scale of a chain: magnitudes multiply through the cross products.
    s = 1.0
    for m in motions_:
        s *= 1 + np.abs(m.position).sum() + np.abs(m.velocity).sum() + np.abs(m.angular_velocity).sum() ** 2
    return s


SETTINGS = settings(max_examples=300, deadline=None)
# Tolerance: 1e-12 of the chain's scale, the same rounding bound as the Rust property tests.
TOL = 1e-12


@SETTINGS
@given(motions())
def test_motion_then_inverse_is_identity(m):
    ident = m.then(m.inverse())
    s = scale(m)
    assert np.minimum(np.abs(ident.rotation - [1, 0, 0, 0]), np.abs(ident.rotation + [1, 0, 0, 0])).max() < 1e-14
    for part in (ident.position, ident.velocity, ident.acceleration, ident.angular_velocity, ident.angular_acceleration):
        assert np.abs(part).max() <= TOL * s


@SETTINGS
@given(motions(), motions(), motions())
def test_composition_is_associative(a, b, c):
    left, right = a.then(b).then(c), a.then(b.then(c))
    assert left.isclose(right, rtol=0, atol=TOL * scale(a, b, c))


@SETTINGS
@given(motions(), vectors, vectors, vectors)
def test_newtons_law_holds_in_the_moving_frame(m, r, v, a):
    # m: frame B relative to an inertial frame. The point's acceleration seen in B equals its
    # inertial acceleration rotated into B plus the apparent terms.
    r, v = r * 10, v * 3
    _, _, a_inertial = m.map_point(r, v, a)
    terms = rf.apparent_acceleration(
        m.angular_velocity_in_child, r, v, angular_acceleration=m.angular_acceleration_in_child,
        origin_acceleration=m.inverse().map_vector(m.acceleration),
    )
    seen = m.inverse().map_vector(a_inertial) + terms.total
    assert np.abs(seen - a).max() <= TOL * scale(m) * (1 + np.abs(r).sum() + np.abs(v).sum())


@SETTINGS
@given(motions(), motions(), vectors)
def test_mapping_through_a_chain_equals_step_by_step(a, b, r):
    direct = a.then(b).map_point(r * 10)
    step = a.map_point(*b.map_point(r * 10))
    for d, s in zip(direct, step):
        assert np.abs(d - s).max() <= TOL * scale(a, b) * (1 + 10 * np.abs(r).sum())


@SETTINGS
@given(st.floats(-89.9, 89.9), st.floats(-180, 180), st.floats(-1e4, 1e4))
def test_geodetic_round_trip_within_a_nanometre(lat, lon, h):
    back = rf.ecef_to_geodetic(rf.geodetic_to_ecef(lat, lon, h, degrees=True), degrees=True)
    assert abs(np.radians(back[0] - lat)) * 6.4e6 <= 1e-9 + 2e-15 * 6.4e6  # degree conversion adds an ulp
    assert abs(back[2] - h) <= 1e-9
