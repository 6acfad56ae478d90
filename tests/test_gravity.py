"""tinygeo.gravity: Somigliana and the closed-form normal gravity.

Sources
- [TR8350] NIMA TR8350.2 (2000), Table 3.4: WGS 84 gamma_e, gamma_p.
- [Moritz80] Moritz (1980), Geodetic Reference System 1980: GRS 80 gamma_e, gamma_p.
- mpmath closed form: tests/vectors/gen_gravity.py, |grad W| of the normal
  potential W = U [Heiskanen & Moritz 1967 eq. 2-126, from memory] by numerical
  differentiation at 50 digits, starting from the defining constants only.
"""
import math
import sys

import mpmath as mp
import pytest
from hypothesis import given, settings, strategies as st

from conftest import VECTORS
from tinygeo import gravity as G
from tinygeo.constants import GRS80, WGS84
from tinygeo.errors import RangeError

sys.path.insert(0, str(VECTORS))
import gen_gravity as gen  # noqa: E402

LATS = [0.0, 10.0, 22.5, 30.0, 45.0, 52.5, 60.0, 75.0, 89.0, 90.0]
HEIGHTS = [-1000.0, -500.0, 0.0, 1500.0, 10000.0, 35000.0, 50000.0, 80000.0, 100000.0]

lat_st = st.floats(-90.0, 90.0)
h_st = st.floats(G.HEIGHT_MIN_M, G.HEIGHT_MAX_M)


@pytest.mark.parametrize("ell,lat,expected", [
    (WGS84, 0.0, 9.7803253359),    # TR8350.2 Table 3.4, gamma_e
    (WGS84, 90.0, 9.8321849378),   # TR8350.2 Table 3.4, gamma_p
    (WGS84, -90.0, 9.8321849378),  # TR8350.2 Table 3.4, gamma_p (south pole)
    (GRS80, 0.0, 9.7803267715),    # Moritz (1980), gamma_e
    (GRS80, 90.0, 9.8321863685),   # Moritz (1980), gamma_p
])
def test_published_equator_and_pole(ell, lat, expected):
    # Somigliana reproduces the printed digits; the closed form (from a, b, e2, e'2,
    # GM, omega) agrees to 1e-10 (1 unit of the printed last digit)
    assert abs(G.somigliana_gravity(lat, ell) - expected) <= 1e-10
    assert abs(G.normal_gravity(lat, 0.0, ell) - expected) <= 1e-10


@pytest.mark.parametrize("ell", [WGS84, GRS80], ids=["WGS84", "GRS80"])
def test_closed_form_against_mpmath_gradient(ell):
    # max error over latitudes 0..90 and heights -1000 m..100 km; measured 7e-15 m/s^2
    # (the published a, e2, GM, omega of constants.py; double precision)
    worst = 0.0
    for lat in LATS:
        for h in HEIGHTS:
            ref = gen.gravity(ell.name, lat, h)
            worst = max(worst, abs(G.normal_gravity(lat, h, ell) - float(ref)))
    assert worst < 5e-14, worst


def test_somigliana_against_mpmath_closed_form():
    # Somigliana = |grad W| on the ellipsoid (mpmath closed form); the published
    # gamma_e and k are rounded to 1e-10 m/s^2 and 1e-12..1e-14, so agreement is to
    # 1e-10 m/s^2 (measured 4.4e-12 WGS 84, 3.8e-11 GRS 80)
    for name, ell in (("WGS84", WGS84), ("GRS80", GRS80)):
        for lat in LATS:
            assert abs(G.somigliana_gravity(lat, ell) - float(gen.gravity(name, lat, 0))) < 1e-10


def test_q_series_against_closed_q():
    # the power series of q and q' against their closed forms (mpmath, 50 digits)
    # [HM67 eqs. 2-58 and 2-67, from memory], over x = E/u up to beyond e' at -1000 m
    with mp.workdps(50):
        for x in ("0.001", "0.03", "0.06", "0.0821", "0.083"):
            x = mp.mpf(x)
            assert abs(x ** 3 * G._s_q(float(x * x)) / gen._q(x) - 1) < 1e-15
            assert abs(x ** 2 * G._s_p(float(x * x)) / gen._qp(x) - 1) < 1e-15


def test_free_air_gradient():
    # common practice: the free-air gradient of normal gravity is about
    # -0.3086 mGal/m = -3.086e-6 s^-2 at mid-latitudes
    d = (G.normal_gravity(45.0, 100.0) - G.normal_gravity(45.0, -100.0)) / 200.0
    assert abs(d + 3.086e-6) < 0.003e-6


@settings(max_examples=200, deadline=None)
@given(lat_st, h_st)
def test_symmetric_in_latitude_sign(lat, h):
    assert G.normal_gravity(-lat, h) == G.normal_gravity(lat, h)
    assert G.somigliana_gravity(-lat) == G.somigliana_gravity(lat)


@settings(max_examples=200, deadline=None)
@given(lat_st, h_st, h_st)
def test_decreases_with_height(lat, h1, h2):
    if h1 == h2:
        return
    lo, hi = min(h1, h2), max(h1, h2)
    # the gradient is ~3.1e-6 s^-2, so any height step above 1 mm changes gamma
    if hi - lo > 1e-3:
        assert G.normal_gravity(lat, hi) < G.normal_gravity(lat, lo)


@settings(max_examples=100, deadline=None)
@given(st.floats(0.0, 90.0), st.floats(0.0, 90.0))
def test_increases_towards_the_pole(l1, l2):
    if abs(l1 - l2) > 1e-3:
        lo, hi = min(l1, l2), max(l1, l2)
        assert G.somigliana_gravity(lo) < G.somigliana_gravity(hi)
        assert G.normal_gravity(lo, 20000.0) < G.normal_gravity(hi, 20000.0)


@pytest.mark.parametrize("call,word", [
    (lambda: G.normal_gravity(91.0, 0.0), "lat_deg"),
    (lambda: G.normal_gravity(float("nan"), 0.0), "lat_deg"),
    (lambda: G.normal_gravity(45.0, 150000.0), "height_m"),
    (lambda: G.normal_gravity(45.0, -1500.0), "height_m"),
    (lambda: G.normal_gravity(45.0, float("inf")), "height_m"),
    (lambda: G.normal_gravity(45.0, "high"), "height_m"),
    (lambda: G.somigliana_gravity(-90.5), "lat_deg"),
])
def test_bad_input_raises_range_error(call, word):
    with pytest.raises(RangeError) as ei:
        call()
    assert word in str(ei.value)


def test_height_limits_are_accepted():
    for h in (G.HEIGHT_MIN_M, G.HEIGHT_MAX_M):
        assert math.isfinite(G.normal_gravity(0.0, h))
