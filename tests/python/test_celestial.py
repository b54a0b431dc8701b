"""The IERS celestial-to-terrestrial transformation (GCRS → ITRS) from Python, against pyerfa, the
IAU SOFA-derived reference library (IERS Conventions 2010, ch. 5, CIO based): the CIP coordinates
X, Y from the series (``xy06``) and the CIO locator s (``s06``), the TIO locator s′ (``sp00``), the Earth Rotation Angle
(``era00``) and the whole matrix (``c2ixys``, ``pom00``, ``c2tcio``, with dX, dY added to X and
Y only, as the issue of the transformation defines) over thousands of random dates from 1900 to
2100; and the angular velocity of ``earth_motion_iers`` against central differences of its own
rotation."""

from pathlib import Path

import astropy_iers_data
import erfa
import numpy as np
import pytest
import rotaframe as rf

ARCSEC = np.pi / 648000.0
DATA = Path(astropy_iers_data.__file__).parent / "data"
pytestmark = pytest.mark.filterwarnings("ignore:.*dubious year:erfa.ErfaWarning")


def random_dates(n, seed):
    """TT dates (two parts) from 1900 to 2100 and UT1 dates some seconds to a minute before."""
    rng = np.random.default_rng(seed)
    day = np.floor(rng.uniform(2415020.5, 2488070.5, n)) + 0.5
    fraction = rng.uniform(0.0, 1.0, n)
    ut1_fraction = fraction - rng.uniform(-5.0, 70.0, n) / 86400.0
    return day, fraction, ut1_fraction, rng


def test_cip_coordinates_and_tio_locator_match_the_reference():
    day, fraction, _, _ = random_dates(3000, 1)
    x, y, s = rf.cip_coordinates(day, fraction)
    # The series (tables 5.2a, 5.2b, 5.2d; not xys06a, which goes through the full
    # precession-nutation matrix and differs from the series by about 1e-11 rad).
    rx, ry = erfa.xy06(day, fraction)
    rs = erfa.s06(day, fraction, rx, ry)
    # X and Y are up to 0.01 rad from the series' thousands of terms; 1e-14 rad (2 nas) allows
    # for the different order of summation and the recurrence for the sines.
    assert np.max(np.abs(x - rx)) < 1e-14
    assert np.max(np.abs(y - ry)) < 1e-14
    # s is below 1e-7 rad: 1e-16 rad.
    assert np.max(np.abs(s - rs)) < 1e-16
    np.testing.assert_allclose(rf.tio_locator(day, fraction), erfa.sp00(day, fraction), rtol=1e-13, atol=1e-22)
    # The Earth Rotation Angle (IERS Conventions 2010, eq. 5.15): 1e-12 rad allows for the
    # rounding of an angle of up to 2π taken from a two-part date.
    era = rf.earth_rotation_angle(day, fraction)
    assert np.max(np.abs(np.angle(np.exp(1j * (era - erfa.era00(day, fraction)))))) < 1e-12


def test_the_gcrs_to_itrs_matrix_matches_the_reference_within_2_microarcseconds():
    day, fraction, ut1_fraction, rng = random_dates(3000, 2)
    xp, yp = rng.uniform(-0.6, 0.6, (2, day.size)) * ARCSEC
    dx, dy = rng.uniform(-0.5, 0.5, (2, day.size)) * ARCSEC * 1e-3
    ours = rf.celestial_to_terrestrial(day, fraction, day, ut1_fraction, xp, yp, dx=dx, dy=dy)
    x, y = erfa.xy06(day, fraction)
    s = erfa.s06(day, fraction, x, y)
    rc2i = erfa.c2ixys(x + dx, y + dy, s)
    ref = erfa.c2tcio(rc2i, erfa.era00(day, ut1_fraction), erfa.pom00(xp, yp, erfa.sp00(day, fraction)))
    assert ours.shape == (day.size, 3, 3)
    # 1e-11 rad, about 2 µas (the bound).
    assert np.max(np.abs(ours - ref)) < 1e-11
    # Without offsets, dx = dy = None means zero.
    plain = rf.celestial_to_terrestrial(day[:5], fraction[:5], day[:5], ut1_fraction[:5], xp[:5], yp[:5])
    x, y = erfa.xy06(day[:5], fraction[:5])
    ref = erfa.c2tcio(erfa.c2ixys(x, y, erfa.s06(day[:5], fraction[:5], x, y)), erfa.era00(day[:5], ut1_fraction[:5]),
                      erfa.pom00(xp[:5], yp[:5], erfa.sp00(day[:5], fraction[:5])))
    assert np.max(np.abs(plain - ref)) < 1e-11
    with pytest.raises(rf.OutOfRangeError, match="`xp`"):
        rf.celestial_to_terrestrial(2451545.0, 0.0, 2451545.0, 0.0, 1e-3, 0.0)
    with pytest.raises(rf.OutOfRangeError, match="`jd_tt`"):
        rf.celestial_to_terrestrial(2451545.0 + 400000.0, 0.0, 2451545.0, 0.0, 0.0, 0.0)


def iers_inputs(tt, eop):
    """UT1 and the pole at a TT date from the table, as earth_motion_iers takes them."""
    utc = rf.convert_time(*tt, "tt", "utc")
    ut1 = rf.convert_time(*utc, "utc", "ut1", eop=eop)
    at = eop.at(*utc)
    return ut1, at


def test_earth_motion_iers_turns_at_the_rate_of_its_own_rotation():
    eop = rf.EarthOrientation.from_iers(DATA / "finals2000A.all")
    tt = (2460310.5, 0.3710)  # 2024-01-02, inside the table
    motion = rf.earth_motion_iers(*tt, eop)
    assert (motion.parent, motion.child) == ("gcrs", "itrs")
    ut1, at = iers_inputs(tt, eop)
    matrix = rf.celestial_to_terrestrial(*tt, *ut1, at.xp, at.yp, dx=at.dx, dy=at.dy)
    # The rotation maps ITRS coordinates to GCRS coordinates: the matrix's transpose (1e-15:
    # the jets and the plain evaluation round alike but for the quaternion's round trip).
    assert np.max(np.abs(motion.rotation_matrix - matrix.T)) < 1e-14

    def rotation(seconds):
        date = (tt[0], tt[1] + seconds / 86400.0)
        ut1, at = iers_inputs(date, eop)
        return rf.celestial_to_terrestrial(*date, *ut1, at.xp, at.yp, dx=at.dx, dy=at.dy).T

    def rate(h):
        derivative = (rotation(h) - rotation(-h)) / (2 * h)
        w = derivative @ rotation(0.0).T
        return np.array([w[2, 1] - w[1, 2], w[0, 2] - w[2, 0], w[1, 0] - w[0, 1]]) / 2

    # Central differences over ±10 min, extrapolated twice (Richardson: the h² and h⁴ terms of
    # the rotation at Ω = 7.3e-5 rad/s go; the h⁶ term is below 1e-16 rad/s).
    a, b, c = rate(600.0), rate(300.0), rate(150.0)
    ab, bc = (4 * b - a) / 3, (4 * c - b) / 3
    numeric = (16 * bc - ab) / 15
    assert np.max(np.abs(motion.angular_velocity - numeric)) < 1e-15
    # It differs from the ERA-only rate along the CIP by the precession-nutation rate, which is
    # perpendicular to the CIP (the CIO does not rotate about it): 50″ a year of precession
    # (7.7e-12 rad/s) times sin 23.4°, about 3e-12 rad/s, with the nutation's faster terms and the
    # excess length of day (each about 1e-12 rad/s; IERS Conventions 2010 ch. 5, magnitudes
    # from memory).
    x, y, _ = rf.cip_coordinates(*tt)
    x, y = x + at.dx, y + at.dy
    cip = np.array([x, y, np.sqrt(1.0 - x * x - y * y)])  # the CIP in GCRS
    era_only = 7.292115146706979e-5 * cip
    difference = np.linalg.norm(motion.angular_velocity - era_only)
    print(f"ω − ERA rate along the CIP: {difference:.3e} rad/s")
    assert 1e-12 < difference < 3e-11


def test_earth_motion_iers_broadcasts_and_refuses_dates_outside_the_table():
    eop = rf.EarthOrientation.from_iers(DATA / "finals2000A.all")
    days = 2460310.5 + np.arange(4)
    motions = rf.earth_motion_iers(days, 0.25, eop, threads=2)
    single = rf.earth_motion_iers(days[2], 0.25, eop)
    assert np.array_equal(motions.angular_velocity[2], single.angular_velocity)
    with pytest.raises(rf.OutOfRangeError, match="`jd`"):
        rf.earth_motion_iers(2441000.5, 0.0, eop)


def test_a_graph_edge_with_the_full_model_matches_earth_motion_iers_and_pickles():
    import pickle

    eop = rf.EarthOrientation.from_iers(DATA / "finals2000A.all")
    epoch = (2460310.5, 0.25)
    g = rf.FrameGraph("gcrs", inertial=True)
    g.add_earth("itrs", "gcrs", eop=eop, epoch_jd_tt=epoch)
    t = np.array([0.0, 600.0, 86400.0])
    from_graph = g.motion("gcrs", "itrs", t)
    direct = rf.earth_motion_iers(epoch[0], epoch[1] + t / 86400.0, eop)
    assert np.array_equal(from_graph.angular_velocity, direct.angular_velocity)
    again = pickle.loads(pickle.dumps(g))
    assert np.array_equal(again.motion("gcrs", "itrs", t).rotation, from_graph.rotation)
    with pytest.raises(rf.RotaframeError, match="epoch_jd_tt"):
        g.add_earth("other", "gcrs", eop=eop)
