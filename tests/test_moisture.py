"""Tests of tinygeo.moisture against IAPWS formulations and high-precision
evaluations of the published formulas.

References used here (outside the project):
- IAPWS (1992), Revised Supplementary Release on Saturation Properties of
  Ordinary Water Substance, eq. 1 (Wagner and Pruss 1993 auxiliary equation,
  consistent with IAPWS-95): saturation pressure over water, 273.16..647 K,
  via ``iapws.iapws95.IAPWS95._Vapor_Pressure`` (MPa).
- IAPWS (2011), Revised Release on the Pressure along the Melting and
  Sublimation Curves of Ordinary Water Substance: sublimation pressure over
  ice Ih, 50..273.16 K, via ``iapws._iapws._Sublimation_Pressure`` (MPa).
- Supercooled water, 235..273.16 K: IAPWS-95 (``iapws.iapws95.IAPWS95``,
  liquid extrapolated below the triple point; Wagner and Pruss 2002 state it
  behaves reasonably there) against ice Ih from IAPWS R10-06
  (``iapws._iapws._Ice``) and the 2011 sublimation curve:
  ln(e_w/e_i) = (g_liquid - g_ice)/(Rw T), Rw = 461.51805 J/(kg K)
  (IAPWS-95), both Gibbs energies at 101325 Pa moved to the vapour pressure
  with (v_liquid - v_ice) dp; vapour non-ideality neglected (about 1e-5).
  (``iapws._iapws._Supercooled``, IAPWS G12-15, was not used: its Gibbs
  energy in iapws 1.5.5 is not scaled by R T and disagrees with IAPWS-95 by
  4 kJ/kg at 250 K while its entropy agrees.)
- Below 235 K, where IAPWS has no formulation for supercooled water:
  Murphy, D. M. and Koop, T. (2005), Review of the vapour pressures of ice and
  supercooled water for atmospheric applications, Q. J. R. Meteorol. Soc. 131,
  1539-1565, eq. 10 (coefficients from memory; they are checked here against
  the IAPWS-derived values above, 236..273 K, and IAPWS above 273.16 K).
- mpmath for the exact forms (mixing ratio, virtual temperature).
"""
import math
import os
import subprocess
import sys
import warnings

import mpmath
import pytest
from hypothesis import given, settings, strategies as st

from iapws.iapws95 import IAPWS95
from iapws._iapws import _Sublimation_Pressure, _Ice

from conftest import MICROPYTHON, require_micropython
import mpref
from tinygeo import moisture as m
from tinygeo.constants import EPSILON
from tinygeo.errors import RangeError, ModelRangeError

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "vectors"))
import runvec  # noqa: E402

RW = 461.51805   # J/(kg K), IAPWS-95 specific gas constant of water
DPS = 30         # mpmath working precision, digits: set locally (fixture), never globally


@pytest.fixture(autouse=True)
def _digits():
    # every test of this module computes its mpmath references at DPS digits
    with mpmath.workdps(DPS):
        yield


# --- references ------------------------------------------------------------------

def iapws_water_above_triple(t_k):
    return IAPWS95._Vapor_Pressure(t_k) * 1e6


def iapws_ice(t_k):
    return _Sublimation_Pressure(t_k) * 1e6


def iapws_supercooled(t_k, p_mpa=0.101325):
    with warnings.catch_warnings():
        # IAPWS95 warns "Using extrapolated values", _Ice "Metastable ice in liquid region"
        warnings.simplefilter("ignore")
        liq = IAPWS95(T=t_k, P=p_mpa)
        ice = _Ice(t_k, p_mpa)
    e_i = iapws_ice(t_k)
    dg = (liq.g - ice["g"]) * 1e3 - (1.0 / liq.rho - 1.0 / ice["rho"]) * (p_mpa * 1e6 - e_i)
    return e_i * math.exp(dg / (RW * t_k))


def murphy_koop_water(t_k):
    t = t_k
    return math.exp(54.842763 - 6763.22 / t - 4.210 * math.log(t) + 0.000367 * t
                    + math.tanh(0.0415 * (t - 218.8))
                    * (53.878 - 1331.22 / t - 9.44523 * math.log(t) + 0.014025 * t))


def ref_water(t_k):
    if t_k >= 273.16:
        return iapws_water_above_triple(t_k)
    if t_k >= 235.0:
        return iapws_supercooled(t_k)
    return murphy_koop_water(t_k)


def grid(a, b, step):
    n = int(round((b - a) / step))
    return [a + (b - a) * k / n for k in range(n + 1)]


def max_rel(f, ref, temps):
    return max(abs(f(t) / ref(t) - 1.0) for t in temps)


def es_w(t):
    return m.saturation_vapour_pressure(t)


def es_i(t):
    return m.saturation_vapour_pressure(t, ice=True)


# --- the references agree with each other (guards the from-memory coefficients) ---

def test_murphy_koop_matches_iapws():
    # Murphy & Koop (2005) eq. 10 vs IAPWS-95-derived supercooled values: measured 0.17 % max
    # (at 235 K; MK's own fit used other supercooled data, so this is agreement, not identity).
    assert max_rel(murphy_koop_water, iapws_supercooled, grid(235.0, 273.0, 1.0)) < 0.0018
    # ... and vs the IAPWS 1992 equation above the triple point (MK's stated range ends at 332 K)
    assert max_rel(murphy_koop_water, iapws_water_above_triple, grid(273.16, 332.0, 1.0)) < 0.0003


def test_iapws_triple_point():
    # IAPWS 2011: sublimation pressure 611.657 Pa at the triple point 273.16 K (from memory).
    # measured (CPython, x86-64, iapws 1.5.5): 0 (the sublimation curve starts there),
    # 1.1e-7 (the 1992 saturation equation), 1.5e-8 (the supercooled construction;
    # was 2e-5)
    assert iapws_ice(273.16) == pytest.approx(611.657, rel=1e-14)
    assert iapws_water_above_triple(273.16) == pytest.approx(611.657, rel=1e-6)
    assert iapws_supercooled(273.16) == pytest.approx(611.657, rel=5e-8)


# --- Magnus vs IAPWS: recommended ranges (measured bounds, see moisture docstring) ---------

def test_water_recommended_range():
    # WMO-No. 8: -45..60 degC. Measured max relative error 0.741 % (at -45 degC, vs
    # Murphy & Koop); 0.709 % (at 235 K) where an IAPWS reference exists (235..333.15 K).
    assert max_rel(es_w, ref_water, grid(228.15, 333.15, 0.5)) < 0.0075
    assert max_rel(es_w, ref_water, grid(235.0, 333.15, 0.5)) < 0.0072
    # 0..60 degC against the IAPWS 1992 equation: measured 0.313 % (Magnus low, at 28 degC).
    assert max_rel(es_w, ref_water, grid(273.16, 333.15, 0.5)) < 0.0032


def test_ice_recommended_range():
    # WMO-No. 8: -65..0 degC. Measured max relative error 0.195 % (at -65 degC).
    assert max_rel(es_i, iapws_ice, grid(208.15, 273.15, 0.25)) < 0.0020


# --- extrapolated ranges (accepted, documented, measured) -------------------------------------

def test_water_extrapolated():
    # 60 degC .. 350 K: measured 0.957 % at 350 K.
    assert max_rel(es_w, ref_water, grid(333.15, 350.0, 0.25)) < 0.010
    # -90 .. -45 degC (upper-air soundings, WMO: RH w.r.t. water at all temperatures):
    # measured 2.78 % (at 201.8 K) against Murphy & Koop (2005).
    assert max_rel(es_w, ref_water, grid(183.15, 228.15, 0.25)) < 0.028
    # 150 K .. -90 degC: 9.9 % at -100 degC, grows to 45.4 % at 150 K (e_w < 1e-5 Pa there).
    assert abs(es_w(173.15) / ref_water(173.15) - 1.0) < 0.10
    err150 = abs(es_w(150.0) / ref_water(150.0) - 1.0)
    assert 0.40 < err150 < 0.46
    assert max_rel(es_w, ref_water, grid(150.0, 183.15, 0.5)) < 0.46


def test_ice_extrapolated():
    # -90 .. -65 degC: measured 1.59 %; 150 K: 7.8 %.
    assert max_rel(es_i, iapws_ice, grid(183.15, 208.15, 0.25)) < 0.016
    assert max_rel(es_i, iapws_ice, grid(150.0, 183.15, 0.5)) < 0.079


def test_published_values():
    # WMO-No. 8 Annex 4.B: 6.112 hPa at 0 degC by construction of both Magnus forms.
    assert m.saturation_vapour_pressure(273.15) == 611.2
    assert m.saturation_vapour_pressure(273.15, ice=True) == 611.2
    # IAPWS triple point 611.657 Pa (from memory; also iapws): Magnus water 611.643 Pa.
    assert m.saturation_vapour_pressure(273.16) == pytest.approx(611.657, rel=3e-5)
    # ice=True above 0 degC is the water form (no ice there)
    assert m.saturation_vapour_pressure(280.0, ice=True) == m.saturation_vapour_pressure(280.0)


def test_saturation_monotonic_and_continuous_switch():
    prev = 0.0
    for t in grid(150.0, 350.0, 0.5):
        e = m.saturation_vapour_pressure(t, ice=True)
        assert e > prev
        prev = e
    a = m.saturation_vapour_pressure(273.15 - 1e-9, ice=True)
    b = m.saturation_vapour_pressure(273.15 + 1e-9, ice=True)
    assert a == pytest.approx(b, rel=1e-9)


# --- enhancement factor -----------------------------------------------------------------------

def test_enhancement_factor():
    # WMO-No. 8 formula evaluated in hPa with mpmath (tests/mpref.py): measured 0
    # (CPython, x86-64); 1e-15 is about 4 ulps (was 1e-14)
    for p_hpa in (1100.0, 1013.25, 850.0, 500.0, 100.0, 50.0):
        f_ref = mpref.f_wmo(p_hpa * 100.0)
        assert m.enhancement_factor(p_hpa * 100.0) == pytest.approx(float(f_ref), rel=1e-15)
    # Buck (1981), J. Appl. Meteorol. 20, 1527-1532: f = 1.0007 + 3.46e-6 p (p in hPa),
    # from memory; an independent fit, agrees within 0.06 % over 500..1100 hPa.
    for p_hpa in (500.0, 700.0, 1013.25, 1100.0):
        assert m.enhancement_factor(p_hpa * 100.0) == pytest.approx(1.0007 + 3.46e-6 * p_hpa, abs=6e-4)
    # f = 1 at and below the root of the fit (42.666 hPa), continuous there, never below 1
    # F_ONE_PA is the root of 1.0016 + 3.15e-6 p - 0.074/p = 1 (mpmath) rounded to
    # 0.1 mPa: measured 1.1e-5 Pa off, half a unit of its last digit is 5e-5 Pa (was 1e-3)
    c, b, a = mpmath.mpf("0.074"), mpmath.mpf("0.0016"), mpmath.mpf("3.15e-6")
    root = (-b + mpmath.sqrt(b ** 2 + 4 * a * c)) / (2 * a) * 100
    assert m.F_ONE_PA == pytest.approx(float(root), abs=5e-5)
    assert m.enhancement_factor(m.F_ONE_PA * (1 + 1e-9)) == pytest.approx(1.0, abs=1e-11)
    for p in (0.1, 1.0, 100.0, 1000.0, 4266.0):
        assert m.enhancement_factor(p) == 1.0
    prev = 1.0
    for p in grid(4300.0, 120000.0, 100.0):
        f = m.enhancement_factor(p)
        assert f >= prev
        prev = f


def test_vapour_pressure_includes_enhancement():
    # e = rh/100 f(p) e_s(T), WMO-No. 8 Annex 4.B (Magnus over water or ice, f(p)),
    # in mpmath (tests/mpref.py). Measured 1.6e-15 (water) and 2.2e-15 (ice) relative
    # (CPython, x86-64): t_k - 273.15 carries half an ulp of 290 K into the exponent
    t, p = 290.0, 95000.0
    assert m.vapour_pressure(t, p, 100.0) == pytest.approx(float(mpref.vapour_pressure(t, p, 100.0)), rel=4e-15)
    assert m.vapour_pressure(t, p, 37.0) == pytest.approx(float(mpref.vapour_pressure(t, p, 37.0)), rel=4e-15)
    assert m.vapour_pressure(t, p, 0.0) == 0.0
    # rh slightly negative (sensor noise accepted by check_rh) is not clamped
    assert m.vapour_pressure(t, p, -1.0) < 0.0
    # w.r.t. ice below 0 degC when asked
    assert m.vapour_pressure(250.0, p, 100.0, ice=True) == pytest.approx(
        float(mpref.vapour_pressure(250.0, p, 100.0, ice=True)), rel=4e-15)


# --- dew point ----------------------------------------------------------------------------------

def test_dew_point_vs_iapws():
    # Dew point from e' = f(p) e_w(Td) with e_w from IAPWS, solved by mpmath; the Magnus
    # inverse differs by the Magnus error / (d ln e/dT): measured 0.069 K max over
    # -40..60 degC (at 235 K).
    worst = 0.0
    for td_ref in grid(233.15, 333.15, 2.0):
        p = 100000.0
        e = float(mpref.f_wmo(p)) * ref_water(td_ref)      # WMO f(p) in mpmath
        worst = max(worst, abs(m.dew_point(e, p) - td_ref))
    assert worst < 0.13, worst


def test_frost_point_vs_iapws():
    # measured: 0.087 K at -90 degC (extrapolated), 0.03 K in -65..0 degC
    worst = worst_in = 0.0
    for tf_ref in grid(183.15, 273.15, 1.0):
        p = 50000.0
        e = float(mpref.f_wmo(p)) * iapws_ice(tf_ref)      # WMO f(p) in mpmath
        err = abs(m.dew_point(e, p, ice=True) - tf_ref)
        worst = max(worst, err)
        if tf_ref >= 208.15:
            worst_in = max(worst_in, err)
    assert worst < 0.09, worst
    assert worst_in < 0.03, worst_in


@settings(max_examples=300, deadline=None)
@given(st.floats(min_value=150.0, max_value=345.0), st.floats(min_value=40000.0, max_value=110000.0),
       st.booleans())
def test_dew_point_round_trip(td, p, ice):
    # a consistency check (round trip); measured 5.7e-14 K over 5e4 random inputs
    # (CPython, x86-64: 1 ulp of 345 K); 3e-13 K is about 5 ulps (was 1e-9)
    e = m.vapour_pressure_from_dew_point(td, p, ice)
    assert m.dew_point(e, p, ice) == pytest.approx(td, abs=3e-13)


@settings(max_examples=300, deadline=None)
@given(st.floats(min_value=200.0, max_value=320.0), st.floats(min_value=1.0, max_value=100.0))
def test_dew_point_below_temperature(t, rh):
    p = 90000.0
    e = m.vapour_pressure(t, p, rh)
    td = m.dew_point(e, p)
    # a consistency check; at saturation measured 2.8e-14 K apart (CPython, x86-64):
    # 3e-13 K is about 5 ulps of 320 K (was 1e-9)
    assert td <= t + 3e-13
    if rh == 100.0:
        assert td == pytest.approx(t, abs=3e-13)


# --- mixing ratio, specific humidity, virtual temperature ------------------------------------------

def test_mixing_ratio_and_specific_humidity_vs_mpmath():
    eps = mpmath.mpf(EPSILON)
    for e, p in ((1171.8, 101325.0), (10.0, 30000.0), (4000.0, 80000.0), (0.0, 50000.0)):
        w = eps * e / (p - mpmath.mpf(e))                     # WMO-No. 8 Annex 4.B
        q = w / (1 + w)
        assert m.mixing_ratio(e, p) == pytest.approx(float(w), rel=1e-15, abs=0.0)
        assert m.specific_humidity(e, p) == pytest.approx(float(q), rel=1e-15, abs=0.0)


def test_virtual_temperature_exact_form():
    eps = mpmath.mpf(EPSILON)
    worst_lin_e = worst_lin_w = 0.0
    for t, p, rh in ((303.15, 100000.0, 100.0), (293.15, 101325.0, 50.0), (250.0, 50000.0, 80.0),
                     (310.0, 95000.0, 90.0), (200.0, 10000.0, 100.0)):
        # e and Tv = T/(1 - (e/p)(1 - eps)) (Wallace & Hobbs eq. 3.16) with e of WMO-No. 8
        # Annex 4.B, all in mpmath (tests/mpref.py). Measured at most 2.2e-16 relative
        # (1 ulp; CPython, x86-64) for all three forms below: 1e-15 is about 4 ulps
        x = mpref.vapour_pressure(t, p, rh) / p
        tv_ref = mpref.tv_rh(t, p, rh)
        got = m.virtual_temperature(t, p, rh)
        assert got == pytest.approx(float(tv_ref), rel=1e-15)
        e = m.vapour_pressure(t, p, rh)       # an input below (its own check is above)
        w = m.mixing_ratio(e, p)
        assert m.virtual_temperature_from_mixing_ratio(t, w) == pytest.approx(float(tv_ref), rel=1e-15)
        q = m.specific_humidity(e, p)
        # T (1 + q (1 - eps)/eps) is the same exact form (algebraic identity)
        assert t * (1 + q * (1 - EPSILON) / EPSILON) == pytest.approx(float(tv_ref), rel=1e-15)
        # linearised forms: low by ~T (1-eps)^2 x^2 (e/p form); high by ~T (c w^2 + (0.61 - c) w)
        # with c = (1-eps)/eps = 0.6078 (0.61 w form)
        d_e = float(tv_ref - t * (1 + (1 - eps) * x))
        d_w = float(t * (1 + 0.61 * w) - tv_ref)
        c = (1 - eps) / eps
        assert d_e == pytest.approx(float(t * (1 - eps) ** 2 * x * x), rel=0.1)
        assert d_w == pytest.approx(float(t * (c * w * w + (0.61 - c) * w)), rel=0.1)
        worst_lin_e = max(worst_lin_e, d_e)
        worst_lin_w = max(worst_lin_w, d_w)
    # the hot humid case (36.85 degC, 90 %, e/p = 0.059) shows why the exact form matters:
    # measured 0.158 K (e/p form) and 0.304 K (0.61 w form)
    assert 0.15 < worst_lin_e < 0.17 and 0.29 < worst_lin_w < 0.32, (worst_lin_e, worst_lin_w)


def test_virtual_temperature_dry_is_t():
    assert m.virtual_temperature(250.0, 50000.0, 0.0) == 250.0
    assert m.virtual_temperature_from_mixing_ratio(250.0, 0.0) == 250.0


# --- errors -------------------------------------------------------------------------------------------

def test_error_messages():
    with pytest.raises(RangeError, match="t_k=21.5 outside 150..350 K; Celsius passed"):
        m.virtual_temperature(21.5, 101325.0, 50.0)
    with pytest.raises(RangeError, match="Celsius passed"):
        m.saturation_vapour_pressure(-10.0)
    # 1013 "Pa" at 20 degC: saturation exceeds the pressure -> the hPa hint
    with pytest.raises(RangeError, match="p_pa=1013 Pa; hPa or mbar passed"):
        m.virtual_temperature(293.15, 1013.0, 80.0)
    with pytest.raises(RangeError, match="hPa or mbar passed"):
        m.vapour_pressure_from_dew_point(293.15, 1013.25)
    # genuine boiling at a plausible pascal pressure
    with pytest.raises(RangeError, match="water would boil"):
        m.vapour_pressure(340.0, 20000.0, 100.0)
    with pytest.raises(RangeError, match="water would boil"):
        m.mixing_ratio(30000.0, 20000.0)
    with pytest.raises(RangeError, match="relative humidity is in percent"):
        m.vapour_pressure(290.0, 90000.0, 150.0)
    with pytest.raises(RangeError, match="dry air has no dew point"):
        m.dew_point(0.0, 90000.0)
    with pytest.raises(RangeError, match="negative"):
        m.specific_humidity(-1.0, 90000.0)
    with pytest.raises(ModelRangeError, match="outside 150..350 K"):
        m.dew_point(1e-7, 90000.0)
    with pytest.raises(RangeError, match="g/kg passed"):
        m.virtual_temperature_from_mixing_ratio(290.0, 7.0)
    with pytest.raises(RangeError, match="not finite"):
        m.enhancement_factor(float("inf"))
    with pytest.raises(RangeError, match="pressure must be positive"):
        m.enhancement_factor(0.0)
    with pytest.raises(RangeError, match="check the unit"):
        m.vapour_pressure(290.0, 1013250.0, 50.0)


# --- shared vectors (module functions until the lead exports them) ------------------------------------

VEC = os.path.join(HERE, "vectors", "moisture.txt")


def test_vectors():
    cases = runvec.load(VEC)
    assert len(cases) >= 10
    for lineno, func, args, expected, kind, tol, source in cases:
        got = getattr(m, func)(*args)
        err = abs(got - expected)
        if kind == "rel":
            err /= abs(expected)
        assert err <= tol, (lineno, func, args, got, expected, source)


def _wmo_f(p_pa):
    ph = mpmath.mpf(p_pa) / 100
    if p_pa <= 4266.6096:
        return mpmath.mpf(1)
    return mpmath.mpf("1.0016") + mpmath.mpf("3.15e-6") * ph - mpmath.mpf("0.074") / ph


def _magnus_water(t_k):
    t = mpmath.mpf(t_k) - mpmath.mpf("273.15")
    return mpmath.mpf("611.2") * mpmath.exp(mpmath.mpf("17.62") * t / (mpmath.mpf("243.12") + t))


def test_vectors_not_stale():
    # Lines whose source starts with "IAPWS" are recomputed from the iapws package,
    # lines starting with "mpmath" from the published formulas in mpmath.
    eps = mpmath.mpf(EPSILON)
    n = 0
    for lineno, func, args, expected, kind, tol, source in runvec.load(VEC):
        if source.startswith("IAPWS"):
            if func == "saturation_vapour_pressure":
                t, ice = args
                ref = iapws_ice(t) if (ice and t <= 273.16) else ref_water(t)
                assert ref == pytest.approx(expected, rel=1e-7), (lineno, ref, expected)
            elif func == "dew_point":
                e, p, ice = args
                es = iapws_ice(expected) if ice else ref_water(expected)
                assert float(_wmo_f(p)) * es == pytest.approx(e, rel=1e-8), (lineno, e)
            else:
                raise AssertionError(func)
        elif source.startswith("mpmath"):
            if func == "enhancement_factor":
                ref = _wmo_f(args[0])
            elif func == "mixing_ratio":
                ref = eps * args[0] / (args[1] - mpmath.mpf(args[0]))
            elif func == "specific_humidity":
                w = eps * args[0] / (args[1] - mpmath.mpf(args[0]))
                ref = w / (1 + w)
            elif func == "virtual_temperature_from_mixing_ratio":
                t, w = args
                ref = t * (1 + mpmath.mpf(w) / eps) / (1 + mpmath.mpf(w))
            elif func == "virtual_temperature":
                t, p, rh, ice = args
                assert not ice
                e = mpmath.mpf(rh) / 100 * _wmo_f(p) * _magnus_water(t)
                ref = t / (1 - e / p * (1 - eps))
            else:
                raise AssertionError(func)
            assert float(abs(ref - expected) / abs(ref)) < 1e-15, (lineno, func, float(ref), expected)
        else:
            continue
        n += 1
    assert n >= 25


MP_SNIPPET = """
import sys
sys.path.insert(0, 'tests/vectors')
import tinygeo, runvec
from tinygeo import moisture as M
for k in dir(M):
    if not k.startswith('_'):
        setattr(tinygeo, k, getattr(M, k))
for case in runvec.load('tests/vectors/moisture.txt'):
    got, ok = runvec.run_case(case)
    print(repr(got), ok)
"""


def run_vectors_under(exe):
    # Vectors through runvec with the module functions bound as package names.
    root = os.path.dirname(HERE)
    env = dict(os.environ, MICROPYPATH=root, PYTHONPATH=root)
    p = subprocess.run([exe, "-c", MP_SNIPPET], capture_output=True, text=True, env=env, cwd=root, timeout=60)
    assert p.returncode == 0, p.stdout + p.stderr
    return [line.split() for line in p.stdout.splitlines()]


def test_vectors_under_micropython():
    # skips locally without the runtime, fails in CI (conftest.require_micropython)
    require_micropython()
    mp_rows = run_vectors_under(MICROPYTHON)
    cp_rows = run_vectors_under(sys.executable)
    assert len(mp_rows) == len(cp_rows) >= 10
    for (g1, ok1), (g2, ok2) in zip(mp_rows, cp_rows):
        assert ok1 == ok2 == "True"
        # parity (a consistency check): measured bit-identical; 4 ulps as test_micropython
        assert math.isclose(float(g1), float(g2), rel_tol=4 * 2.0 ** -52, abs_tol=0.0)
