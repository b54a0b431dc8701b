"""Published values checked through the Python package (source beside each)."""

import math

import numpy as np
import pytest

import rotaframe as rf
from conftest import VECTORS


def test_wgs84_and_grs80_constants():
    # NIMA TR8350.2, 3rd ed., Tables 3.1 and 3.4.
    w = rf.WGS84
    assert (w.a, 1 / w.f, w.gm, w.omega) == (6378137.0, 298.257223563, 3.986004418e14, 7.292115e-5)
    assert (w.gamma_equator, w.gamma_pole) == (9.7803253359, 9.8321849378)
    assert w.b == pytest.approx(6356752.3142, abs=5e-5)
    assert w.e2 == pytest.approx(6.69437999014e-3, abs=5e-15)
    # Moritz, "Geodetic Reference System 1980" (J. Geodesy 74, 2000).
    g = rf.GRS80
    assert (g.gm, g.j2, g.gamma_equator, g.gamma_pole) == (3.986005e14, 1.08263e-3, 9.7803267715, 9.8321863685)


def test_custom_model_derives_published_normal_gravity():
    # A level ellipsoid from its four defining constants reproduces TR8350.2's γe and γp.
    m = rf.EarthModel(a=6378137.0, f=1 / 298.257223563, gm=3.986004418e14, omega=7.292115e-5)
    assert m.gamma_equator == pytest.approx(9.7803253359, rel=1e-10)
    assert m.gamma_pole == pytest.approx(9.8321849378, rel=1e-10)


def test_somigliana_and_height_formula():
    # TR8350.2 Table 3.4 (equator, pole); 45°: 9.8061977694 and 45°, 1000 m: 9.8031129436
    # (computed from TR8350.2, shared reference table).
    g = rf.normal_gravity(np.array([0.0, 45.0, 90.0]), degrees=True)
    np.testing.assert_allclose(g, [9.7803253359, 9.8061977694, 9.8321849378], rtol=0, atol=1e-10)
    assert rf.normal_gravity(45.0, 1000.0, degrees=True) == pytest.approx(9.8031129436, abs=1e-10)


def test_era_at_j2000():
    # IERS Conventions 2010, eq. 5.15.
    assert rf.earth_rotation_angle(2451545.0) == pytest.approx(2 * math.pi * 0.7790572732640, abs=1e-15)


def test_radii_at_45_degrees():
    # Computed from the WGS 84 formulas (shared table).
    m, n = rf.radii_of_curvature(45.0, degrees=True)
    assert m == pytest.approx(6367381.8156, abs=1e-4)
    assert n == pytest.approx(6388838.2901, abs=1e-4)


def test_iogp_worked_example():
    # IOGP 373-7-2, method 9602.
    lat = 53 + 48 / 60 + 33.820 / 3600
    lon = 2 + 7 / 60 + 46.380 / 3600
    xyz = rf.geodetic_to_ecef(lat, lon, 73.0, degrees=True)
    np.testing.assert_allclose(xyz, [3771793.968, 140253.342, 5124304.349], rtol=0, atol=5e-4)


def test_eotvos_and_coriolis_parameter():
    # About 7.5 mGal per knot eastward at the equator (common practice; SEG Wiki: 7.503 V +
    # 0.004154 V²); Coriolis parameter ≈ 1.03e-4 1/s at 45° (common practice).
    knot = 1852 / 3600
    assert rf.eotvos_correction(0.0, [0, knot, 0]) * 1e5 == pytest.approx(7.503 + 0.004154, abs=0.002)
    assert rf.coriolis_parameter(45.0, degrees=True) == pytest.approx(1.0312608e-4, rel=1e-7)


def test_centripetal_acceleration_at_the_equator():
    # ω²a = 0.0339157 m/s² (computed from TR8350.2 constants), about 0.34 % of g.
    a = rf.centripetal_acceleration_ecef([6378137.0, 0, 0])
    assert a[0] == pytest.approx(-0.0339157, rel=2e-6)


def test_inverse_geodesy_matches_50_digit_mpmath_reference():
    # tests/vectors/geodetic_wgs84.csv: mpmath at 50 digits (scripts/gen_geodetic_vectors.py).
    data = np.loadtxt(VECTORS / "geodetic_wgs84.csv", delimiter=",", comments="#", skiprows=3)
    lat, lon, h = rf.ecef_to_geodetic(data[:, [3, 5, 7]])
    r = 6.4e6 + data[:, 13]
    dlon = np.remainder(lon - data[:, 11] + np.pi, 2 * np.pi) - np.pi
    errors = np.stack([((lat - data[:, 9]) - data[:, 10]) * r, (dlon - data[:, 12]) * r * np.cos(data[:, 9]), (h - data[:, 13]) - data[:, 14]], -1)
    near = np.abs(data[:, 2]) <= 1e4
    assert np.abs(errors[near]).max() <= 1e-9
    assert np.abs(errors[~near]).max() <= 1e-8
