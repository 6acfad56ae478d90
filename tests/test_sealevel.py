"""tinygeo.sealevel against mpmath integrations and closed forms of the
published definitions.

Sources
- [WMO8] WMO-No. 8 (2018), Vol. I, Chapter 3 (reduction of pressure; from
  memory): hypsometric reduction through a fictitious column of mean
  temperature T_station + 0.0065 K/gpm * H/2. Annex 4.B (Magnus form over
  water e_w = 611.2 exp(17.62 t/(243.12 + t)) Pa, enhancement factor
  f = 1.0016 + 3.15e-6 p - 0.074/p with p in hPa; from memory).
- Virtual temperature Tv = T / (1 - (e/p)(1 - eps)), eps = 0.621981
  (Wallace and Hobbs 2006, eq. 3.16, from memory).
- [ICAO7488]/[USSA76] layer 0: P = P0 (1 - L0 H/T0)^(g0/(Rd L0)); the QNH that
  makes a standard altimeter read the elevation E is then
  QNH = P0 ((p/P0)^n + L0 E/T0)^(1/n), n = Rd L0/g0 (the altimeter-setting
  closed form, from memory; checked against USSA76 eq. 33a and its inverse in
  mpmath by test_altimeter_closed_forms_follow_from_ussa76).
"""
import math

import mpmath as mp
import pytest

from conftest import check_vector_matches_reference, check_vector_through_module
from hypothesis import assume, given, settings, strategies as st

import mpref
from mpref import ref_h, ref_p
from tinygeo import potential, sealevel as L, standard
from tinygeo.errors import ModelRangeError, RangeError

DPS = 40   # mpmath working precision, digits: set locally (with/decorator/fixture), never globally
dps40 = mp.workdps(DPS)


@pytest.fixture(autouse=True)
def _digits():
    # every test of this module computes its mpmath references at DPS digits
    with mp.workdps(DPS):
        yield


with mp.workdps(DPS):
    G0 = mp.mpf("9.80665")
    RD = mp.mpf("8.31432") / mp.mpf("0.0289644")   # [USSA76] Table 2: R*/M0
    A = mp.mpf("0.0065")                            # K/gpm
    P0 = mp.mpf(101325)
    T0 = mp.mpf("288.15")
    EPS = mp.mpf("0.621981")


@dps40
def ref_tv(t_k, p_pa, rh_pct):
    """Virtual temperature from the [WMO8] Magnus form and enhancement factor, mpmath."""
    t = mp.mpf(t_k)
    tc = t - mp.mpf("273.15")
    ph = mp.mpf(p_pa) / 100
    f = mp.mpf("1.0016") + mp.mpf("3.15e-6") * ph - mp.mpf("0.074") / ph
    e = mp.mpf(rh_pct) / 100 * f * mp.mpf("611.2") * mp.exp(mp.mpf("17.62") * tc / (mp.mpf("243.12") + tc))
    return t / (1 - e / mp.mpf(p_pa) * (1 - EPS))


@dps40
def ref_msl_ode(p_pa, tv_station, h_gpm):
    """Integrate the hydrostatic equation dp/dz = -g0 p / (Rd Tv_mean) with mpmath's
    Taylor-series ODE solver from the barometer (z = H) down to z = 0, through the
    column of the stated rule Tv_mean = Tv_station + 0.0065 H/2 ([WMO8])."""
    h = mp.mpf(h_gpm)
    tv_mean = mp.mpf(tv_station) + A * h / 2
    # s in [0, 1] runs from the barometer (z = H) to sea level (z = 0): z = H (1 - s)
    sol = mp.odefun(lambda s, p: G0 * h * p / (RD * tv_mean), 0, mp.mpf(p_pa))
    return sol(1)


CASES = [  # (p_pa, t_k, height_m): invented stations and buoys
    (100820.0, 291.15, 4.0),
    (101500.0, 300.15, 12.5),
    (99000.0, 263.15, 35.0),
    (95000.0, 283.15, 480.0),
    (89000.0, 275.15, 1100.0),
    (70000.0, 265.15, 3000.0),
    (54000.0, 250.15, 5000.0),
    (106500.0, 305.15, -430.0),
    (101325.0, 288.15, 0.0),
]


@pytest.mark.parametrize("p,t,h", CASES)
def test_dry_vs_mpmath_ode(p, t, h):
    got = L.sea_level_pressure(p, t, h)
    ref = ref_msl_ode(p, t, h)
    # measured 8.3e-17 (CPython, x86-64); 5e-16 is about 4 ulps (was 2e-15)
    assert abs(got / ref - 1) < 5e-16, (got, ref)


@pytest.mark.parametrize("p,t,h", CASES)
@pytest.mark.parametrize("rh", [0.0, 45.0, 100.0])
def test_humid_vs_mpmath_ode(p, t, h, rh):
    got = L.sea_level_pressure(p, t, h, rh_pct=rh)
    ref = ref_msl_ode(p, ref_tv(t, p, rh), h)
    # measured 1.3e-16 (CPython, x86-64); 1e-15 is about 9 ulps (was 1e-14)
    assert abs(got / ref - 1) < 1e-15, (got, ref)


def test_humidity_effect_size():
    # moist air is lighter: a warmer virtual column, a smaller reduction. At 1100 m,
    # 30 degC, saturated, Tv - T is about 5.6 K (e_w(30 degC) = 4.24 kPa, WMO-No. 8
    # Annex 4.B Magnus form; Tv - T = T (e/p)(1 - eps)/(1 - (e/p)(1 - eps)), Wallace &
    # Hobbs 2006 eq. 3.16, from memory), so the reduction term, proportional to
    # 1/Tv_mean, shrinks by about 5.6/300 = 1.9 %
    p, t, h = 89000.0, 303.15, 1100.0
    dry = L.sea_level_pressure(p, t, h) - p
    wet = L.sea_level_pressure(p, t, h, rh_pct=100.0) - p
    # to first order wet/dry = 1 - (Tv - T)/T_mean (Tv from WMO-No. 8 and eq. 3.16 in
    # mpmath, tests/mpref.py); measured 7.7e-4 off it (the second-order term; CPython,
    # x86-64), was the range 0.97..0.99
    first_order = 1 - (mpref.tv_rh(t, p, 100.0) - t) / (t + A * h / 2)
    assert abs(wet / dry - float(first_order)) < 1e-3, wet / dry


def test_rule_vs_linear_column():
    # How far the half-way rule is from a column whose temperature really falls
    # linearly at 0.0065 K/gpm (exact integral with mpmath.quad). The arithmetic mean
    # over-estimates the harmonic mean the integral needs by (aH/Tm)^2/12 of itself, so
    # p0 is low by about p0 ln(p0/p) (aH/Tm)^2/12 (a series expansion, stated in the
    # module docstring): ~0.5 Pa at 1000 m, ~80 Pa at 5000 m in a cold column.
    assert abs(L.sea_level_pressure(100820.0, 291.15, 4.0) - 100820.0 * mp.exp(
        G0 / RD * mp.quad(lambda z: 1 / (mp.mpf("291.15") + A * (4 - z)), [0, 4]))) < 5e-8
    # (at 4 m: measured 3.1e-8 Pa, CPython, x86-64; was 1e-6 Pa)
    for p, t, h in [(89000.0, 275.15, 1100.0), (95000.0, 283.15, 480.0), (54000.0, 250.15, 5000.0)]:
        hh = mp.mpf(h)
        integral = mp.quad(lambda z: 1 / (mp.mpf(t) + A * (hh - z)), [0, hh])
        exact = mp.mpf(p) * mp.exp(G0 / RD * integral)
        got = L.sea_level_pressure(p, t, h)
        tm = mp.mpf(t) + A * hh / 2
        estimate = exact * mp.log(exact / p) * (A * hh / tm) ** 2 / 12
        # measured at most 6.0e-4 off the estimate (at 5000 m; CPython, x86-64), was 10 %
        assert abs((exact - got) / estimate - 1) < 1e-3, (h, exact - got, estimate)


def test_standard_atmosphere_station():
    # a dry station in the standard atmosphere reduces to 101325 Pa, to the rule's
    # small error (the standard's column is exactly linear; see test_rule_vs_linear_column)
    # measured (CPython, x86-64): 0, 5.1e-7, 5.1e-4, 0.065, 0.53 Pa (the rule's error
    # grows as H^3); was 1e-9, 1e-4, 1e-3, 0.1, 0.6 Pa
    for h, tol in ((0.0, 1.5e-11), (10.0, 1e-6), (100.0, 1e-3), (500.0, 0.1), (1000.0, 0.6)):
        p = standard.standard_pressure(h)
        t = standard.standard_temperature(h)
        assert abs(L.sea_level_pressure(p, t, h) - 101325.0) < tol


def test_buoy_common_practice():
    # "about 0.12 hPa per metre near sea level" (common practice): a buoy barometer
    # 10 m above the sea adds about 1.2 hPa
    add = L.sea_level_pressure(101000.0, 288.15, 10.0) - 101000.0
    assert 118.0 < add < 123.0


def test_latitude_uses_geopotential_height():
    # a consistency check (the latitude form equals the gph form, bit for bit),
    # not an accuracy reference; the bound below is the documented one
    p, t, h = 95000.0, 283.15, 480.0
    for lat in (0.0, 45.0, 90.0):
        gph = potential.geopotential_height(h, lat)
        assert L.sea_level_pressure(p, t, h, lat_deg=lat) == L.sea_level_pressure(p, t, gph)
    # and the documented bound: at most 0.3 % of the correction, 3.5 Pa per 100 m
    plain = L.sea_level_pressure(p, t, h)
    for lat in (0.0, 90.0):
        d = abs(L.sea_level_pressure(p, t, h, lat_deg=lat) - plain)
        assert 0.002 * (plain - p) < d <= 0.003 * (plain - p)
        assert d <= 3.5 * h / 100.0


# --- QFE ---------------------------------------------------------------------
@pytest.mark.parametrize("p,dh,t", [(96530.0, 12.0, 278.15), (101200.0, -3.0, 300.0),
                                    (70000.0, 200.0, 250.0), (100000.0, 0.0, 288.15)])
def test_qfe_vs_mpmath(p, dh, t):
    ref = mp.mpf(p) * mp.exp(G0 * mp.mpf(dh) / (RD * mp.mpf(t)))
    assert abs(L.qfe(p, dh, t) / ref - 1) < 2e-16     # measured 9.9e-17 (CPython, x86-64)


def test_qfe_humid_and_practice():
    ref = mp.mpf(96530.0) * mp.exp(G0 * 12 / (RD * ref_tv(278.15, 96530.0, 70.0)))
    # measured 4.3e-17 (CPython, x86-64); 3e-16 is about 3 ulps (was 1e-15)
    assert abs(L.qfe(96530.0, 12.0, 278.15, rh_pct=70.0) / ref - 1) < 3e-16
    # ~8.3 m per hPa near sea level (common practice): 8.3 m below -> +1 hPa
    assert 99.0 < L.qfe(101325.0, 8.3, 288.15) - 101325.0 < 101.0


# --- QNH and the altimeter -----------------------------------------------------------
@dps40
def ref_qnh(p, e):
    n = RD * A / G0
    return P0 * ((mp.mpf(p) / P0) ** n + A * mp.mpf(e) / T0) ** (1 / n)


@pytest.mark.parametrize("p,e", [(96200.0, 430.0), (101325.0, 0.0), (100900.0, 5.0),
                                 (61000.0, 4411.0), (106000.0, -378.0), (84500.0, 1655.0)])
def test_qnh_vs_closed_form(p, e):
    # measured 1.1e-16 (CPython, x86-64); 5e-16 is about 4 ulps (was 5e-15)
    assert abs(L.qnh(p, e) / ref_qnh(p, e) - 1) < 5e-16


def test_altimeter_closed_forms_follow_from_ussa76():
    # the layer-0 closed forms of ref_qnh and _ref_indicated (typed from memory)
    # against the standard's own equations in mpmath (tests/mpref.py): an altimeter
    # set to q reads H_std(p) - H_std(q), so QNH = P_std(H_std(p) - E) (USSA76 eq. 33a
    # and its inverse by root finding); they agree to the 40-digit working precision
    for p, e in [(96200.0, 430.0), (101325.0, 0.0), (61000.0, 4411.0), (106000.0, -378.0)]:
        assert abs(ref_qnh(p, e) / ref_p(ref_h(p) - e) - 1) < mp.mpf("1e-38")   # measured 5.7e-41
    for p, q in ((96200.0, 101257.4), (70000.0, 99800.0), (100000.0, 103000.0)):
        assert abs(_ref_indicated(p, q) - (ref_h(p) - ref_h(q))) < mp.mpf("1e-34")   # measured 5.6e-37 m


def test_qnh_of_standard_atmosphere_is_p0():
    # in the standard atmosphere, the QNH of every aerodrome is 1013.25 hPa (definition)
    for e in (-378.0, 0.0, 430.0, 1655.0, 4411.0):
        # the station pressure from USSA76 eq. 33a in mpmath (tests/mpref.py); measured
        # 1.1e-16 (CPython, x86-64), 1e-15 is about 9 ulps (was 1e-14)
        assert L.qnh(float(ref_p(e)), e) == pytest.approx(101325.0, rel=1e-15)


@settings(max_examples=300, deadline=None)
@given(st.floats(min_value=40000.0, max_value=115000.0), st.floats(min_value=-500.0, max_value=5000.0))
def test_altimeter_set_to_qnh_reads_elevation(p, e):
    h = standard.pressure_altitude(p) - e
    assume(h >= standard.BOTTOM_GPH_M)
    q = standard.standard_pressure(h)
    assume(L.QNH_MIN_PA <= q <= L.QNH_MAX_PA)
    # a consistency check (round trip); measured 1.8e-12 m over 5e4 random inputs
    # (CPython, x86-64: 2 ulps at 5 km), was 1e-8 m
    assert abs(L.indicated_altitude(p, L.qnh(p, e)) - e) < 5e-12


def test_indicated_altitude():
    # with the standard setting the altimeter shows pressure altitude [ICAO7488]:
    # USSA76 eq. 33a/33b solved for H in mpmath (tests/mpref.py); measured 3.6e-12 m
    # (CPython, x86-64; 1 ulp at 31 km), 1.5e-11 m is about 4 ulps there
    for p in (101325.0, 90000.0, 50000.0, 20000.0, 1000.0):
        assert L.indicated_altitude(p, 101325.0) == pytest.approx(float(ref_h(p)), abs=1.5e-11)
    # a setting 1 hPa higher raises the reading by ~8.3 m near sea level (common practice: ~27-30 ft/hPa)
    d = L.indicated_altitude(100000.0, 101425.0) - L.indicated_altitude(100000.0, 101325.0)
    assert abs(d - 8.3) < 0.05      # half a unit of the 8.3 quoted (measured 8.32)
    # against the closed form of layer 0: reading = (T0/L0)((q/P0)^n - (p/P0)^n)
    n = RD * A / G0
    for p, q in ((96200.0, 101257.4), (70000.0, 99800.0), (100000.0, 103000.0)):
        ref = T0 / A * ((mp.mpf(q) / P0) ** n - (mp.mpf(p) / P0) ** n)
        # measured 4.7e-13 m (CPython, x86-64; 1 ulp at 2.9 km), was 1e-9 m
        assert abs(L.indicated_altitude(p, q) - ref) < 2e-12


# --- errors --------------------------------------------------------------------------
def test_errors():
    with pytest.raises(RangeError, match=r"p_pa=1008.2 outside 40000..115000 Pa; hPa or mbar passed\? multiply by 100"):
        L.sea_level_pressure(1008.2, 291.15, 4.0)
    with pytest.raises(RangeError, match=r"t_k=18.0 outside 180..340 K; Celsius passed\? add 273.15"):
        L.sea_level_pressure(100820.0, 18.0, 4.0)
    with pytest.raises(RangeError, match=r"height_m=15000.0 outside -500..5000 m; .*feet passed\? multiply by 0.3048"):
        L.sea_level_pressure(100820.0, 291.15, 15000.0)
    with pytest.raises(RangeError, match=r"height_m=-900.0 outside -500..5000 m"):
        L.sea_level_pressure(100820.0, 291.15, -900.0)
    with pytest.raises(RangeError, match=r"rh_pct=150.0 outside"):
        L.sea_level_pressure(100820.0, 291.15, 4.0, rh_pct=150.0)
    with pytest.raises(RangeError, match=r"lat_deg=95.0 outside"):
        L.sea_level_pressure(100820.0, 291.15, 4.0, lat_deg=95.0)
    with pytest.raises(ModelRangeError, match=r"p_pa=110000.0 at elevation_m=4000.0 gives a QNH outside 85000..110000 Pa"):
        L.qnh(110000.0, 4000.0)
    with pytest.raises(RangeError, match=r"elevation_m=nan is not finite|elevation_m=nan"):
        L.qnh(100000.0, float("nan"))
    with pytest.raises(RangeError, match=r"barometer_above_field_m=500.0 outside -200..200 m"):
        L.qfe(96530.0, 500.0, 278.15)
    with pytest.raises(RangeError, match=r"qnh_pa=1013.25 outside 85000..110000 Pa; hPa or mbar passed"):
        L.indicated_altitude(90000.0, 1013.25)
    with pytest.raises(ModelRangeError, match=r"p_pa=0.1 outside 0.3733836..177761.5 Pa, the standard atmosphere"):
        L.indicated_altitude(0.1, 101325.0)
    assert issubclass(ModelRangeError, ValueError) and issubclass(RangeError, ValueError)


# --- shared vectors (tests/vectors/sealevel.txt) -----------------------------------
# Run here through the module functions (the package-level names are wired by the
# lead in tinygeo/__init__.py; tests/test_vectors.py runs the same file through them).
import pathlib  # noqa: E402
import sys  # noqa: E402

VECTOR_FILE = pathlib.Path(__file__).resolve().parent / "vectors" / "sealevel.txt"
sys.path.insert(0, str(VECTOR_FILE.parent))
import runvec  # noqa: E402

VECTOR_CASES = runvec.load(str(VECTOR_FILE))
VECTOR_FUNCS = {"sea_level_pressure": L.sea_level_pressure, "qfe": L.qfe, "qnh": L.qnh,
                "indicated_altitude": L.indicated_altitude}


@dps40
def _ref_qfe(p, dh, t):
    return mp.mpf(p) * mp.exp(G0 * mp.mpf(dh) / (RD * mp.mpf(t)))


@dps40
def _ref_indicated(p, q):
    n = RD * A / G0
    return T0 / A * ((mp.mpf(q) / P0) ** n - (mp.mpf(p) / P0) ** n)


VECTOR_REFS = {"sea_level_pressure": ref_msl_ode, "qfe": _ref_qfe, "qnh": ref_qnh,
               "indicated_altitude": _ref_indicated}


@pytest.mark.parametrize("case", VECTOR_CASES, ids=lambda c: "%s:%d" % (c[1], c[0]))
def test_vector_through_module(case):
    check_vector_through_module(case, VECTOR_FUNCS)


@pytest.mark.parametrize("case", VECTOR_CASES, ids=lambda c: "%s:%d" % (c[1], c[0]))
def test_vector_matches_reference(case):
    check_vector_matches_reference(case, VECTOR_REFS)


@dps40
def write_vectors():
    """Rewrite tests/vectors/sealevel.txt from the mpmath references above
    (run: python tests/test_sealevel.py)."""
    out = []
    w = out.append
    w("# Shared vectors: pressure reduced to sea level, QFE, QNH, altimeter (format: tests/vectors/runvec.py).")
    w("# Units: Pa, K, m. Expected values are mpmath evaluations (40 digits) of the published forms:")
    w("#  sea_level_pressure p t h : dry; hydrostatic equation integrated (mpmath odefun) through a column of")
    w("#    mean temperature t + 0.0065 h/2 (WMO-No. 8 Vol. I Ch. 3 rule, from memory), g0 = 9.80665,")
    w("#    Rd = R*/M0 of USSA76 Table 2")
    w("#  qfe p dh t : p exp(g0 dh / (Rd t)) (WMO-No. 8 Vol. I Ch. 3, from memory)")
    w("#  qnh p e : P0 ((p/P0)^n + L0 e/T0)^(1/n), n = Rd L0/g0 (ICAO standard atmosphere layer 0, from memory)")
    w("#  indicated_altitude p q : (T0/L0) ((q/P0)^n - (p/P0)^n) (ICAO standard atmosphere layer 0)")
    w("# The stations and buoys are invented scenarios. tests/test_sealevel.py recomputes every line.")
    w("# Tolerances, measured on CPython, MicroPython (64 and 32 bit) and the C port: 1e-15 relative")
    w("# (measured at most 1.4e-16) and 4 ulps of the indicated altitude (measured at most 1 ulp).")
    w("")
    for p, t, h in CASES:
        w("sea_level_pressure %r %r %r = %s rel 1e-15  # mpmath, WMO-No. 8 half-way rule, dry" % (p, t, h, repr(float(ref_msl_ode(p, t, h)))))
    for p, dh, t in [(96530.0, 12.0, 278.15), (101200.0, -3.0, 300.0), (70000.0, 200.0, 250.0)]:
        ref = _ref_qfe(p, dh, t)
        w("qfe %r %r %r = %s rel 1e-15  # mpmath, hypsometric step" % (p, dh, t, repr(float(ref))))
    for p, e in [(96200.0, 430.0), (101325.0, 0.0), (100900.0, 5.0), (61000.0, 4411.0), (106000.0, -378.0), (84500.0, 1655.0)]:
        w("qnh %r %r = %s rel 1e-15  # mpmath, ICAO altimeter-setting closed form" % (p, e, repr(float(ref_qnh(p, e)))))
    for p, q in ((96200.0, 101257.4), (70000.0, 99800.0), (100000.0, 103000.0), (101325.0, 101325.0)):
        ref = _ref_indicated(p, q)
        tol = 4 * math.ulp(max(abs(float(ref)), 1.0))
        w("indicated_altitude %r %r = %s abs %.1e  # mpmath, ICAO layer-0 closed form" % (p, q, repr(float(ref)), tol * 1.05))
    w("")
    w("# common practice: about 0.12 hPa per metre of barometer height near sea level (a rule of thumb:")
    w("# its two digits allow 5 Pa over 10 m; 3 Pa is asked, 0.2 Pa measured)")
    w("sea_level_pressure 101000.0 288.15 10.0 = 101120.0 abs 3.0  # common practice (about 0.12 hPa per metre)")
    VECTOR_FILE.write_text("\n".join(out) + "\n")


if __name__ == "__main__":
    write_vectors()
