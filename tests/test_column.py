"""Tests of tinygeo.column.Column: heights against an mpmath hydrostatic
reference and the U.S. Standard Atmosphere 1976, events, uncertainty, GPS,
bad readings (property test) and checkpoints.

Sources of the expected values are named beside each check.
"""
import math
import random
import struct

import mpmath as mp
import pytest
from hypothesis import given, settings, strategies as st, HealthCheck

from tinygeo import standard
from tinygeo.constants import RD, G0
from tinygeo.column import (Column, CHECKPOINT_BYTES, MANDATORY_PA, EV_LEVEL, EV_TROPOPAUSE,
                            EV_BURST, EV_LANDED, EV_LAUNCH, FL_DRY, FL_HELD_MIXING, FL_NO_TIME,
                            FL_DESCENT, FL_SAME_P, PH_WAIT, PH_ASCENT, PH_DESCENT, PH_LANDED,
                            _ST_F, _ST_I)
from tinygeo._column_rare import _crc_soft
from tinygeo import column as column_mod
from tinygeo.errors import ReadingError, CheckpointError, TinygeoError
import mpref
from conftest import VECTORS
import sys
sys.path.insert(0, str(VECTORS))
import gen_gravity as gen  # noqa: E402

# ---------------------------------------------------------------- helpers

NAN = float("nan")


def snapshot(col, skip=("rejected",)):
    """Every state variable and derived output of a column, as a tuple of
    (name, value) with floats as their IEEE bit patterns (nan == nan)."""
    out = []
    for n in _ST_F + ("sigma_m", "sigma_random_m", "sigma_bias_m"):
        out.append((n, struct.pack("<d", getattr(col, n))))
    for n in _ST_I:
        if n not in skip:
            out.append((n, getattr(col, n)))
    return tuple(out)


def std_profile(h):
    """Synthetic sounding (invented for the tests): the U.S. Standard
    Atmosphere 1976 temperature at geopotential height h with two smooth
    perturbations, and a humidity wave between 25 and 95 %."""
    t = standard.standard_temperature(h) + 3.0 * math.sin(h / 1700.0) + 1.5 * math.cos(h / 4100.0)
    rh = 60.0 + 35.0 * math.sin(h / 2300.0)
    return t, rh


def ascent(step_gph=5.0, top=35000.0, start=0.0):
    """Pressures of the standard atmosphere every step_gph up to top."""
    n = int(round((top - start) / step_gph))
    return [standard.standard_pressure(start + step_gph * i) for i in range(n + 1)]


# ------------------------------------------------- mpmath hydrostatic reference
# dZ = (Rd/g0) Tv d ln p (hypsometric equation, Wallace and Hobbs 2006 eq. 3.29;
# Rd = R*/M0 and g0 of U.S. Standard Atmosphere 1976 Table 2), integrated with
# mpmath Gauss-Legendre quadrature at 20 digits; Tv from WMO-No. 8 Annex 4.B
# (Magnus over water, enhancement factor) and Tv = T/(1 - (1 - eps) e/p)
# (Wallace and Hobbs 2006 eq. 3.16), all evaluated in mpmath here, not with
# tinygeo.moisture.

with mp.workdps(20):   # the reference's precision, set locally
    MP_RD = mp.mpf("8.31432") / mp.mpf("0.0289644")
    MP_G0 = mp.mpf("9.80665")
    MP_EPS = mp.mpf("0.621981")


def _t_rh_of_p(p):
    h = standard.pressure_altitude(float(p))
    return std_profile(h)


def _tv_mp(p):
    t, rh = _t_rh_of_p(p)
    t = mp.mpf(t)
    rh = mp.mpf(rh)
    tc = t - mp.mpf("273.15")
    es = mp.mpf("611.2") * mp.exp(mp.mpf("17.62") * tc / (mp.mpf("243.12") + tc))
    if p > mp.mpf("4266.6096"):
        f = mp.mpf("1.0016") + mp.mpf("3.15e-8") * p - mp.mpf("7.4") / p
    else:
        f = mp.mpf(1)
    e = rh / 100 * f * es
    return t / (1 - (1 - MP_EPS) * e / p)


def test_heights_match_mpmath_hydrostatic_reference():
    # 0-35 km at 5 m/s, one reading per second (7000 readings): the column's
    # heights agree with the exact integral (tolerance and goal at the assert).
    ps = ascent(5.0, 35000.0)
    col = Column(45.0)
    gph = []
    for i, p in enumerate(ps):
        t, rh = _t_rh_of_p(p)
        col.feed(p, t, rh, float(i))
        gph.append(col.gph_m)
    kinks = [standard.standard_pressure(h) for h in (11000.0, 20000.0, 32000.0)] + [4266.6096]
    z = mp.mpf(0)
    worst = 0.0
    step = 500
    with mp.workdps(20):
        for k in range(0, len(ps) - 1, step):
            a, b = ps[k], ps[min(k + step, len(ps) - 1)]
            pts = [mp.log(a)] + [mp.log(x) for x in kinks if b < x < a] + [mp.log(b)]
            z += MP_RD / MP_G0 * mp.quad(lambda x: _tv_mp(mp.exp(x)), pts[::-1],
                                         method="gauss-legendre")
            worst = max(worst, abs(float(z) - gph[min(k + step, len(ps) - 1)]))
    assert float(z) > 35000.0
    # measured 2.5e-5 m (CPython, x86-64: the column's trapezoid in ln p on 5 gpm
    # steps); goal 0.1 m (issue 3 target)
    assert worst < 3e-5, worst


def test_dry_standard_atmosphere_reproduces_table_4_layer_bases():
    # U.S. Standard Atmosphere 1976, Table 4 (from memory): pressures printed at
    # the layer bases 11, 20, 32 and 47 km geopotential. Fed the dry standard
    # profile every 5 gpm plus readings at exactly the printed pressures,
    # the column puts them at the tabulated geopotential heights.
    table = {22632.06: 11000.0, 5474.889: 20000.0, 868.0187: 32000.0, 110.9063: 47000.0}
    readings = [(standard.standard_pressure(5.0 * i), standard.standard_temperature(5.0 * i))
                for i in range(0, 9601)]
    for p, h in table.items():
        readings.append((p, standard.standard_temperature(h)))
    readings.sort(key=lambda r: -r[0])
    col = Column(45.0, dry_fallback=True)
    got = {}
    for p, t in readings:
        col.feed(p, t)
        assert col.flags & FL_DRY
        if p in table:
            got[p] = col.gph_m
    for p, h in table.items():
        # the printed (from memory) pressure agrees with USSA76 eq. 33a/33b in mpmath
        # (tests/mpref.py) to half a unit of its last digit: a second, computed check
        half = 0.5 * 10.0 ** -len(repr(p).split(".")[1])
        assert abs(mpref.ref_p(h) - p) <= half, (p, h)
        # half a unit of the last printed digit of p as height, dH = (Rd T/g0) dP/P
        # (1.4, 0.58, 0.39, 3.6 mm), plus the column's integration error (measured
        # 2e-5 m against mpmath at these pressures); measured 1.1 mm at 11 km
        # (CPython, x86-64), was 20 mm everywhere
        allow = float(mpref.RD * mpref.ref_t(h) / mpref.G0) * half / p + 3e-5
        assert abs(got[p] - h) < allow, (p, got[p], h, allow)


def test_about_8_3_m_per_hpa_near_sea_level():
    # common practice: about 8.3 m per hPa near sea level at 15 degC
    col = Column(45.0)
    col.feed(101325.0, 288.15)
    col.feed(101225.0, 288.15)
    assert abs(col.gph_m - 8.3) < 0.05


def test_first_reading_sits_at_start_height_and_anchor_step():
    col = Column(47.0, start_height_m=512.0)
    col.feed(95000.0, 285.0, 40.0)
    # measured 0 (CPython, x86-64); goal: the column docstring's 1e-9 m
    assert abs(col.height_m - 512.0) < 1e-9
    # (U0 - W)/g0 of the closed-form normal potential in mpmath (tests/vectors/gen_gravity.py):
    # measured 0; 5e-13 m is about 4 ulps of 509 gpm
    z0 = gen.gph("WGS84", 47.0, 512.0)
    assert abs(col.gph_m - float(z0)) < 5e-13
    # anchored: start height belongs to anchor_p_pa; the first reading is one
    # isothermal hypsometric step away (Wallace & Hobbs 2006 eq. 3.29 with Tv
    # constant, Tv of the reading from WMO-No. 8 Annex 4.B and eq. 3.16, all
    # in mpmath: tests/mpref.py); measured 0, 5e-13 m is about 4 ulps
    col = Column(47.0, start_height_m=512.0, anchor_p_pa=95000.0)
    col.feed(94900.0, 285.0, 40.0)
    expect = z0 + mpref.thickness_iso(95000.0, 94900.0, mpref.tv_rh(285.0, 94900.0, 40.0))
    assert abs(col.gph_m - float(expect)) < 5e-13
    # 100 Pa near 950 hPa is about 8.4 m: ~8.3 m per hPa near sea level, a
    # little more at 950 hPa (common practice; hypsometric equation)
    assert 8.0 < col.height_m - 512.0 < 9.0


def test_height_m_follows_geometric_height_of_gph():
    # height_m is the height whose exact geopotential height is gph_m: (U0 - W)/g0
    # of the closed-form normal potential at height_m, in mpmath
    # (tests/vectors/gen_gravity.py), against gph_m, every 4th reading to 40 km
    col = Column(60.0, start_height_m=100.0)
    worst = 0.0
    for i, p in enumerate(ascent(25.0, 40000.0, 0.0)):
        t, rh = std_profile(25.0 * i)
        col.feed(p, t, rh)
        if i % 4 == 0:
            worst = max(worst, abs(float(gen.gph("WGS84", 60.0, col.height_m)) - col.gph_m))
    # measured 3.2e-5 gpm (CPython, x86-64: the quadratic node interpolation);
    # goal: the column docstring's 3 mm
    assert worst < 5e-5, worst


def test_descent_integrates_down_and_repeat_adds_nothing():
    ps = ascent(50.0, 5000.0)
    col = Column(10.0)
    for p in ps:
        col.feed(p, 270.0)
    top = col.gph_m
    col.feed(ps[-1], 268.0)   # within max_t_step_k of 270 K (untimed, same pressure)
    assert col.gph_m == top and col.flags & FL_SAME_P
    col.feed(ps[-1], 270.0)
    # the same readings backwards: layer_thickness is exactly antisymmetric, so
    # the compensated sum comes back to the start within rounding
    for p in reversed(ps[:-1]):
        col.feed(p, 270.0)
        assert col.flags & FL_DESCENT
    # the start is the ellipsoid, gph 0 by definition (U = U0): measured 0 (CPython,
    # x86-64); 4e-12 m is a few ulps of the 5 km top the sum passed through
    assert abs(col.gph_m) < 4e-12


def test_missing_humidity_holds_mixing_ratio_or_assumes_dry():
    col = Column(45.0)
    col.feed(100000.0, 300.0, 80.0, 0.0)
    col.feed(99900.0, 300.0, None, 1.0)
    assert col.flags & FL_HELD_MIXING and not col.flags & FL_DRY
    # Tv from the held mixing ratio: r = eps e/(p - e), e of WMO-No. 8 Annex 4.B at
    # the first reading, Tv = T (1 + r/eps)/(1 + r), in mpmath (tests/mpref.py);
    # measured 0 (CPython, x86-64), 2.3e-13 K is 4 ulps of 300 K
    w = mpref.mixing_ratio(mpref.vapour_pressure(300.0, 100000.0, 80.0), 100000.0)
    assert abs(col.tv_k - float(mpref.tv_w(300.0, w))) < 2.3e-13
    assert col.rh_pct != col.rh_pct
    col = Column(45.0, dry_fallback=True)
    col.feed(100000.0, 300.0, 80.0, 0.0)
    col.feed(99900.0, 300.0, None, 1.0)
    assert col.flags & FL_DRY and col.tv_k == 300.0
    col = Column(45.0)   # no humidity yet: dry
    col.feed(100000.0, 300.0)
    assert col.flags & FL_DRY and col.flags & FL_NO_TIME and col.rate_m_s != col.rate_m_s


def test_rate():
    col = Column(45.0)
    ps = ascent(5.0, 1000.0)
    for i, p in enumerate(ps):
        col.feed(p, 280.0, 50.0, 2.0 * i)
    # the last step's height difference over 2 s: the hypsometric integral of
    # Tv(p) (280 K, 50 %, WMO-No. 8 and eq. 3.16) from the first reading, mpmath
    # quadrature, heights of these gph from the closed-form normal potential
    # (tests/vectors/gen_gravity.py); measured 9.0e-8 m/s off (CPython, x86-64), was
    # the range 2.4..2.6 m/s
    with mp.workdps(30):
        def gph(p):
            return mpref.RD / mpref.G0 * mp.quad(lambda s: mpref.tv_rh(280.0, mp.exp(s), 50.0),
                                                 [mp.log(p), mp.log(ps[0])])
        ref = (gen._inverse("WGS84", 45.0, gph(ps[-1])) - gen._inverse("WGS84", 45.0, gph(ps[-2]))) / 2
    assert abs(col.rate_m_s - float(ref)) < 2e-7, (col.rate_m_s, float(ref))
    h = col.height_m
    col.feed(col.p_pa, 280.0, 50.0, 2.0 * (len(ps) - 1))   # exact duplicate: accepted
    assert col.height_m == h


# ------------------------------------------------------------------ events

def test_each_mandatory_level_crossed_exactly_once_on_a_clean_ascent():
    # U.S. Standard Atmosphere 1976: the level heights equal the standard's
    # pressure altitudes when the column is fed the standard profile
    seen = []
    col = Column(45.0, on_event=lambda c, b: seen.append((b, c.level_p_pa, c.level_gph_m)))
    for i, p in enumerate(ascent(5.0, 35000.0)):
        h = 5.0 * i
        col.feed(p, standard.standard_temperature(h), None, float(i))
    lv = [(p, g) for b, p, g in seen if b & EV_LEVEL]
    assert [p for p, g in lv] == list(MANDATORY_PA)
    for p, g in lv:
        # USSA76 eq. 33a/33b solved for H, mpmath (tests/mpref.py): measured 7.5e-5 m
        # (CPython, x86-64: interpolation in ln p between 5 gpm readings); was 0.01 m
        assert abs(g - float(mpref.ref_h(p))) < 1e-4, (p, g)
    # launch came first, the tropopause of the standard atmosphere is its 11 km
    # layer base (Table 4: lapse rate 6.5 K/km below, 0 above): measured 1.6e-5 gpm
    assert seen[0][0] == EV_LAUNCH
    assert col.tropopause_gph_m == pytest.approx(11000.0, abs=3e-5)
    # the reading there: USSA76 eq. 33a at 11 km in mpmath (tests/mpref.py), measured 0
    assert col.tropopause_p_pa == pytest.approx(float(mpref.PB[1]), rel=1e-15)


def test_levels_sparse_data_and_descent():
    calls = []
    col = Column(45.0, on_event=lambda c, b: calls.append((b, c.level_p_pa)))
    col.feed(101000.0, 288.0, None, 0.0)
    col.feed(80000.0, 275.0, None, 400.0)      # crosses 1000, 925, 850 hPa at once
    assert calls == [(EV_LEVEL, 100000.0), (EV_LEVEL, 92500.0), (EV_LEVEL | EV_LAUNCH, 85000.0)]
    assert col.level_p_pa == 85000.0
    col.feed(60000.0, 265.0, None, 800.0)       # 700 hPa
    # a dip back below 700 hPa and up again does not report it twice
    col.feed(75000.0, 270.0, None, 900.0)
    col.feed(65000.0, 268.0, None, 1000.0)
    assert [p for b, p in calls if b & EV_LEVEL] == [100000.0, 92500.0, 85000.0, 70000.0]


def test_first_reading_exactly_at_a_level_and_high_start():
    col = Column(45.0)
    assert col.feed(100000.0, 288.0) == EV_LEVEL
    assert col.level_gph_m == col.gph_m
    col = Column(45.0, start_height_m=3000.0)   # starts above 850 hPa
    col.feed(70500.0, 270.0)
    col.feed(69000.0, 269.0)
    assert col.level_p_pa == 70000.0


def flight(seed, noise_pa=1.0, dt=1.0, top=30000.0, up=5.0):
    """An invented balloon flight: ascent at `up` m/s to `top` gpm, burst, fall
    starting at 40 m/s and slowing with the denser air, then 10 minutes on the
    ground; standard-atmosphere pressure with Gaussian noise."""
    rnd = random.Random(seed)
    rows = []
    t = 0.0
    h = 0.0
    while h < top:
        rows.append((t, h))
        t += dt
        h += up * dt
    apex_t = t - dt
    while h > 0.0:
        v = 5.0 + 35.0 * h / top
        h = max(0.0, h - v * dt)
        t += dt
        rows.append((t, h))
    flight.touchdown_t = t
    for k in range(int(600 / dt)):
        t += dt
        rows.append((t, 0.0))
    out = []
    for t, h in rows:
        p = standard.standard_pressure(h) + rnd.gauss(0.0, noise_pa)
        out.append((p, standard.standard_temperature(h) + rnd.gauss(0.0, 0.1), None, t))
    return out, apex_t


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_burst_within_a_few_readings_of_the_true_maximum_and_landing(seed):
    rows, apex_t = flight(seed)
    col = Column(45.0)
    events = []
    for p, t, rh, ts in rows:
        b = col.feed(p, t, rh, ts)
        if b:
            events.append((b, ts))
    kinds = [b & (EV_BURST | EV_LANDED | EV_LAUNCH) for b, ts in events]
    assert [k for k in kinds if k] == [EV_LAUNCH, EV_BURST, EV_LANDED]
    assert abs(col.burst_time_s - apex_t) <= 3.0, (col.burst_time_s, apex_t)
    # height noise of one reading at the top: dz = (Rd/g0) T dp/p (hypsometric
    # equation) with the flight's 1 Pa pressure noise, about 5.5 m at 30 km; the
    # peak is the lower of two consecutive readings, so it may sit one reading's
    # rise (5 m) below the apex, plus noise (3 sigma)
    sigma_h = RD / G0 * standard.standard_temperature(30000.0) / standard.standard_pressure(30000.0)
    assert abs(col.burst_gph_m - 30000.0) < 5.0 + 3.0 * sigma_h, (col.burst_gph_m, sigma_h)
    burst_at = [ts for b, ts in events if b & EV_BURST][0]
    assert burst_at - apex_t <= 5.0          # confirmed within a few readings
    landed_at = [ts for b, ts in events if b & EV_LANDED][0]
    assert col.phase == PH_LANDED
    # landing_s = 60 s of steady pressure after touchdown (+ the last metres)
    assert flight.touchdown_t + 60.0 - 5.0 <= landed_at <= flight.touchdown_t + 60.0 + 10.0


def brute_tropopause(g, t, p, pmax=50000.0):
    """WMO lapse-rate tropopause by brute force over the whole recorded profile
    (WMO 1957 definition as worded in the column docstring): returns
    (index of the tropopause reading, index of the reading that confirms it)."""
    env = []
    top = -float("inf")
    for i in range(len(g)):
        if g[i] > top:
            env.append(i)
            top = g[i]
    th = [t[i] + 0.002 * g[i] for i in range(len(g))]
    for a, i in enumerate(env):
        if p[i] > pmax:
            continue
        lim = g[i] + 2000.0
        ok = True
        confirm = None
        for b in range(a + 1, len(env)):
            j = env[b]
            if g[j] > lim:
                if b == a + 1 and th[j] < th[i]:
                    ok = False
                confirm = j
                break
            if th[j] < th[i]:
                ok = False
                break
        if ok and confirm is not None:
            return i, confirm
    return None, None


def random_profile(rnd, sparse=False):
    """Invented soundings: standard temperature with random inversions,
    warm/cold bubbles and noise; dense (10-40 gpm steps, with dips) or sparse
    (0.5-3 km steps)."""
    waves = [(rnd.uniform(-6, 6), rnd.uniform(300, 4000), rnd.uniform(0, 6.3)) for _ in range(3)]
    h = 0.0
    rows = []
    while h < 30000.0:
        t = standard.standard_temperature(h) + sum(a * math.sin(h / L + ph) for a, L, ph in waves)
        t += rnd.gauss(0.0, 0.3)
        rows.append((standard.standard_pressure(max(h, 0.0)), t))
        if sparse:
            h += rnd.uniform(500.0, 3000.0)
        else:
            h += rnd.uniform(-15.0, 40.0)
    return rows


@pytest.mark.parametrize("sparse", [False, True])
def test_tropopause_equals_brute_force_wmo_definition(sparse):
    rnd = random.Random(1957 + sparse)
    found = 0
    for trial in range(40 if sparse else 12):
        rows = random_profile(rnd, sparse)
        col = Column(30.0, burst_drop_m=1e5)    # the random walk must not read as a burst
        g, t, p = [], [], []
        fired = []
        for k, (pp, tt) in enumerate(rows):
            b = col.feed(pp, tt)
            g.append(col.gph_m)
            t.append(tt)
            p.append(pp)
            if b & EV_TROPOPAUSE:
                fired.append(k)
        i, j = brute_tropopause(g, t, p)
        if i is None:
            assert fired == [] and col.tropopause_gph_m != col.tropopause_gph_m
        else:
            found += 1
            assert fired == [j]
            assert col.tropopause_gph_m == g[i] and col.tropopause_t_k == t[i]
            assert col.tropopause_p_pa == p[i]
    assert found >= 3


# ------------------------------------------------------------- uncertainty

def _run(readings, **kw):
    col = Column(45.0, **kw)
    for p, t, rh in readings:
        col.feed(p, t, rh)
    return col


ZERO_SIGMA = dict(sigma_p_pa=0.0, sigma_t_k=0.0, sigma_rh_pct=0.0, bias_p_pa=0.0, bias_t_k=0.0,
                  bias_rh_pct=0.0)
SHIFT = (lambda r, d: (r[0] + d, r[1], r[2]), lambda r, d: (r[0], r[1] + d, r[2]),
         lambda r, d: (r[0], r[1], r[2] + d))


def _sounding(step, top, humid):
    rows = []
    for p in ascent(step, top):
        t, rh = std_profile(standard.pressure_altitude(p))
        rows.append((p, t, rh if humid else None))
    return rows


@pytest.mark.parametrize("humid", [False, True])
def test_systematic_sigma_matches_finite_differences(humid):
    # first-order propagation (GUM, JCGM 100:2008, eq. 13 with correlation 1,
    # from memory): the systematic sigma of each input equals the height change
    # when that input is shifted by its sigma at every reading (numerical
    # derivative). Dry: exact to 0.2 %. Humid: the column takes dTv/dT = 1 and
    # dTv/dRH = (Tv - T)/RH (module docstring), within 3 % here.
    base = _sounding(50.0, 31000.0, humid)
    g0 = _run(base, **ZERO_SIGMA).gph_m
    names = ("bias_p_pa", "bias_t_k", "bias_rh_pct") if humid else ("bias_p_pa", "bias_t_k")
    for k, name in enumerate(names):
        kw = dict(ZERO_SIGMA)
        kw[name] = 1.0
        sig = _run(base, **kw).sigma_bias_m
        d = 1e-3
        num = (_run([SHIFT[k](r, d) for r in base], **ZERO_SIGMA).gph_m - g0) / d
        # measured (CPython, x86-64): dry 5.0e-7 (p) and 1.1e-11 (T); humid 8.5e-4 (p),
        # 1.7 % (T) and 0.24 % (rh); was 0.2 % and 3 %
        tol = {(False, 0): 1e-6, (False, 1): 1e-10, (True, 0): 1.2e-3, (True, 1): 0.02,
               (True, 2): 3e-3}[humid, k]
        assert sig == pytest.approx(abs(num), rel=tol), (name, sig, num)


def test_pressure_offset_at_10_hpa_is_hundreds_of_metres():
    # (Rd Tv/(g0 p)) dp = 29.27 gpm/K * 231 K / 1000 Pa * 50 Pa = 338 m at
    # 10 hPa for a 0.5 hPa offset (common practice: barometric heights are not
    # trustworthy high up), less the start's 8.3 m/hPa * 0.5 hPa and the small
    # terms of the readings in between
    base = _sounding(50.0, 31055.0, False)
    col = _run([r for r in base if r[0] >= 1000.0], **dict(ZERO_SIGMA, bias_p_pa=50.0))
    assert col.p_pa == pytest.approx(1000.0, rel=1e-3)
    assert 300.0 < col.sigma_bias_m < 360.0, col.sigma_bias_m


@pytest.mark.parametrize("humid", [False, True])
def test_random_sigma_matches_finite_differences(humid):
    # GUM eq. 10: sum over readings of (dz/dx_i sigma_x)^2, derivatives by
    # finite differences on a short sounding, reading by reading
    base = _sounding(400.0, 12000.0, humid)
    g0 = _run(base, **ZERO_SIGMA).gph_m
    names = ("sigma_p_pa", "sigma_t_k", "sigma_rh_pct") if humid else ("sigma_p_pa", "sigma_t_k")
    for k, name in enumerate(names):
        var = 0.0
        d = 1e-3
        for i in range(len(base)):
            rows = list(base)
            rows[i] = SHIFT[k](rows[i], d)
            var += ((_run(rows, **ZERO_SIGMA).gph_m - g0) / d) ** 2
        kw = dict(ZERO_SIGMA)
        kw[name] = 1.0
        sig = _run(base, **kw).sigma_random_m
        # measured (CPython, x86-64): dry 2.5e-8 (p) and 1.3e-10 (T); humid 3.2e-6 (p),
        # 2.4 % (T) and 0.39 % (rh); was 0.2 % and 4 %
        tol = {(False, 0): 1e-7, (False, 1): 1e-9, (True, 0): 5e-6, (True, 1): 0.03,
               (True, 2): 5e-3}[humid, k]
        assert sig == pytest.approx(math.sqrt(var), rel=tol), (name, sig)


def test_sigma_defaults_and_parts():
    col = Column(45.0)
    assert col.sigma_m != col.sigma_m
    for p in ascent(100.0, 20000.0):
        col.feed(p, 250.0, 30.0)
    assert col.sigma_m == pytest.approx(math.hypot(col.sigma_random_m, col.sigma_bias_m))
    assert col.sigma_bias_m > col.sigma_random_m > 0.0
    lean = Column(45.0, track_sigma=False)
    lean.feed(100000.0, 280.0)
    assert lean.sigma_m != lean.sigma_m


# ---------------------------------------------------------------------- GPS

def test_gps_difference_and_explicit_reanchor():
    col = Column(45.0, start_height_m=100.0)
    col.feed(100000.0, 285.0, 50.0, 0.0, 130.0)
    # the first reading sits at 100 m to 1e-9 m (column docstring; measured 0), was 1e-6
    assert col.gps_diff_m == pytest.approx(-30.0, abs=1e-9)
    col.feed(99000.0, 284.0, 50.0, 10.0)
    with pytest.raises(TinygeoError):
        col.reanchor_gps()          # the latest reading has no GPS height
    h = col.height_m
    col.feed(98000.0, 283.0, 50.0, 20.0, 250.0)
    diff = col.gps_diff_m
    # consistency checks of the bookkeeping (measured 0; CPython, x86-64); the
    # reanchored height is a Newton solve (column docstring: 1e-9 m), was 1e-6 m
    assert diff == pytest.approx(col.height_m - 250.0, abs=1e-12)
    shift = col.reanchor_gps(sigma_gps_m=8.0)
    assert shift == pytest.approx(-diff, abs=1e-9)
    assert col.height_m == pytest.approx(250.0, abs=1e-9)
    # the uncertainty restarts with sigma_gps_m (reanchor_gps docstring): measured 0, was 1 %
    assert col.sigma_bias_m == pytest.approx(8.0, abs=1e-12)
    col.feed(97000.0, 282.0, 50.0, 30.0)
    # 980 hPa -> 970 hPa: the trapezoid in ln p with Tv at both readings (WMO-No. 8,
    # eq. 3.16; Wallace & Hobbs 2006 eq. 3.29) from the reanchored 250 m, heights from
    # the closed-form normal potential, all mpmath (was the range 80..95 m). Measured
    # (CPython, x86-64): gph 5.7e-14 m off (1 ulp); height 8.7e-6 m off, the quadratic
    # node interpolation of height_m (goal: the column docstring's 3 mm)
    with mp.workdps(30):
        z250 = gen.gph("WGS84", 45.0, 250.0)
        tvm = (mpref.tv_rh(283.0, 98000.0, 50.0) + mpref.tv_rh(282.0, 97000.0, 50.0)) / 2
        z = z250 + mpref.thickness_iso(98000.0, 97000.0, tvm)
        ref = gen._inverse("WGS84", 45.0, z)
    assert abs(col.gph_m - float(z)) < 2.3e-13, (col.gph_m, float(z))
    assert abs(col.height_m - float(ref)) < 1.5e-5, (col.height_m, float(ref))
    assert h < col.height_m


# ------------------------------------------------------------ bad readings

def test_bad_readings_raise_with_reason_and_hint():
    col = Column(45.0)
    col.feed(100000.0, 288.0, 50.0, 0.0)
    cases = [
        ((float("nan"), 288.0), "number", "p_pa"),
        ((100000.0, float("inf")), "number", "t_k"),
        (("1000", 288.0), "number", "p_pa"),
        ((True, 288.0), "number", "p_pa"),
        ((0.0, 288.0), "pressure", "positive"),
        ((1013.25e2 * 2, 288.0), "pressure", "120000"),
        ((100000.0, 21.5), "temperature", "Celsius"),
        ((100000.0, 288.0, 150.0), "humidity", "percent"),
        ((100000.0, 288.0, 50.0, -1.0), "time", "decrease"),
        ((50000.0, 288.0, 50.0, 1.0), "rate", "max_rate_m_s"),
        ((99000.0, 288.0, 50.0, 0.0), "time", "increase"),
        ((100000.0, 288.0, 50.0, 1.0, 2e5), "gps", "geoid_undulation_m"),
    ]
    for n, (args, reason, word) in enumerate(cases):
        before = snapshot(col)
        with pytest.raises(ReadingError) as e:
            col.feed(*args)
        assert e.value.reason == reason
        assert word in str(e.value), str(e.value)
        assert isinstance(e.value, ValueError)
        assert snapshot(col) == before and col.rejected == n + 1


def _good_stream():
    rnd = random.Random(7)
    rows = []
    h = 0.0
    ts = 0.0
    while h < 12000.0:
        t, rh = std_profile(h)
        rh = None if rnd.random() < 0.2 else rh
        gps = h + rnd.gauss(0, 5) if rnd.random() < 0.3 else None
        tm = None if rnd.random() < 0.1 else ts
        rows.append((standard.standard_pressure(h) + rnd.gauss(0, 2.0), t, rh, tm, gps))
        ts += 10.0
        h += 50.0
    for k in range(30):                      # burst and a quick fall
        h -= 400.0
        ts += 10.0
        rows.append((standard.standard_pressure(max(h, 0.0)), 280.0, None, ts, None))
    return rows


GOOD = _good_stream()


def _bad_for(kind, prev):
    p, t, rh, tm, gps = prev
    tlast = tm if tm is not None else 0.0
    return {
        "nan_p": (NAN, t), "inf_t": (p, float("-inf")), "str_rh": (p, t, "50"),
        "p_zero": (0.0, t), "p_high": (150000.0, t), "celsius": (p, t - 273.15),
        "rh_high": (p, t, 250.0), "rh_neg": (p, t, -20.0), "gps_far": (p, t, None, None, -5000.0),
        "list": ([p], t), "none_p": (None, t),
        "rate": (p * 0.5, t, None, tlast + 0.5),
        # temperature glitches one second after the previous reading (max_t_step_k)
        "spike_up": (p, t + 15.0, rh, None if tm is None else tm + 1.0),
        "spike_down": (p, t - 9.0, None, None if tm is None else tm + 1.0),
    }[kind]


BAD_KINDS = ["nan_p", "inf_t", "str_rh", "p_zero", "p_high", "celsius", "rh_high", "rh_neg",
             "gps_far", "list", "none_p", "rate", "spike_up", "spike_down"]


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.integers(1, len(GOOD) - 1), st.sampled_from(BAD_KINDS)),
                max_size=25))
def test_interleaved_bad_readings_give_bit_identical_results(bad):
    # property (issue 3): a stream with bad readings interleaved gives
    # bit-identical results to the same stream without them; only the
    # rejected counter differs
    events_a, events_b = [], []
    a = Column(45.0, on_event=lambda c, b: events_a.append((b, snapshot(c))))
    b = Column(45.0, on_event=lambda c, b: events_b.append((b, snapshot(c))))
    where = {}
    for i, kind in bad:
        where.setdefault(i, []).append(kind)
    out_a, out_b = [], []
    nbad = 0
    for i, row in enumerate(GOOD):
        for kind in where.get(i, []):
            if kind == "rate" and b.time_s != b.time_s:
                continue
            with pytest.raises(ReadingError):
                b.feed(*_bad_for(kind, GOOD[i - 1]))
            nbad += 1
        out_a.append((a.feed(*row), snapshot(a)))
        out_b.append((b.feed(*row), snapshot(b)))
    assert out_a == out_b
    assert events_a == events_b
    assert b.rejected == nbad and a.rejected == 0
    blob_a, blob_b = bytearray(a.to_bytes()), bytearray(b.to_bytes())
    assert blob_a != blob_b or nbad == 0
    # the blobs differ only by the rejected counter (and the CRC)
    b.rejected = 0
    assert a.to_bytes() == b.to_bytes()


# -------------------------------------------------------------- checkpoints

def test_checkpoint_size_and_round_trip():
    col = Column(45.0, anchor_p_pa=101000.0, ellipsoid=column_mod.GRS80, ice=True,
                 max_rate_m_s=None, burst_readings=5)
    col.feed(100500.0, 288.0, 70.0, 0.0, 10.0)
    blob = col.to_bytes()
    assert isinstance(blob, bytes) and len(blob) == CHECKPOINT_BYTES
    back = Column.from_bytes(blob)
    assert back.to_bytes() == blob
    assert back.ellipsoid is column_mod.GRS80 and back.ice and back.burst_readings == 5
    assert back._max_rate != back._max_rate and back._anchor == 101000.0
    assert snapshot(back, skip=()) == snapshot(col, skip=())
    assert Column.from_bytes(bytearray(blob)).to_bytes() == blob


def test_checkpoint_every_bit_flip_and_truncation_is_detected():
    col = Column(45.0)
    for row in GOOD[:50]:
        col.feed(*row)
    blob = col.to_bytes()
    for i in range(len(blob) * 8):
        bad = bytearray(blob)
        bad[i // 8] ^= 1 << (i % 8)
        with pytest.raises(CheckpointError):
            Column.from_bytes(bytes(bad))
    for n in range(len(blob)):
        with pytest.raises(CheckpointError):
            Column.from_bytes(blob[:n])
    for junk in (blob + b"\0", b"", b"TGCK", bytes(CHECKPOINT_BYTES), "TGCK", None, 12,
                 b"PK\x03\x04" + blob[4:]):
        with pytest.raises(CheckpointError):
            Column.from_bytes(junk)
    # a blob of a future version is refused with a clear message
    future = bytearray(blob)
    future[4] = column_mod._VERSION + 1
    with pytest.raises(CheckpointError, match="version"):
        Column.from_bytes(bytes(future))


def test_software_crc_equals_binascii():
    import binascii
    rnd = random.Random(3)
    for n in (0, 1, 7, 100, CHECKPOINT_BYTES):
        data = bytes(rnd.randrange(256) for _ in range(n))
        assert _crc_soft(data) == binascii.crc32(data) & 0xFFFFFFFF


def test_restore_at_every_position_continues_bit_identically():
    rows, _ = flight(11, noise_pa=1.0, dt=20.0, top=14000.0)
    events = []
    ref = Column(45.0, landing_s=60.0, on_event=lambda c, b: events.append((len(events), b)))
    out_ref = []
    blobs = []
    for row in rows:
        blobs.append(ref.to_bytes())
        out_ref.append((ref.feed(*row), snapshot(ref, skip=())))
    assert ref.phase == PH_LANDED and not ref.tropopause_gph_m != ref.tropopause_gph_m
    for k in range(len(rows)):
        col = Column.from_bytes(blobs[k])
        for j in range(k, len(rows)):
            assert (col.feed(*rows[j]), snapshot(col, skip=())) == out_ref[j], (k, j)
        assert col.to_bytes() == ref.to_bytes()


# ------------------------------------------------------------ constructor

def test_constructor_rejects_bad_settings():
    from tinygeo.errors import RangeError
    with pytest.raises(RangeError):
        Column(95.0)
    with pytest.raises(RangeError):
        Column(45.0, anchor_p_pa=1013.0e3)
    with pytest.raises(RangeError):
        Column(45.0, sigma_t_k=-1.0)
    with pytest.raises(RangeError):
        Column(45.0, burst_readings=0)
    with pytest.raises(RangeError):
        Column(45.0, ellipsoid="WGS72")
    assert Column(45.0).phase == PH_WAIT


reading = st.tuples(
    st.one_of(st.floats(0.05, 130000.0), st.sampled_from([0.1, 120000.0, NAN])),
    st.one_of(st.floats(140.0, 360.0), st.just(350.0)),
    st.one_of(st.none(), st.floats(-5.0, 106.0)),
    st.one_of(st.none(), st.floats(-10.0, 1e5)),
    st.one_of(st.none(), st.floats(-2000.0, 1.2e5)))


@settings(max_examples=100, deadline=None)
@given(st.lists(reading, max_size=40), st.booleans(), st.booleans())
def test_fuzzed_readings_raise_only_reading_errors(rows, anchored, lean):
    # any mix of extreme but well-typed readings: either accepted or rejected
    # with ReadingError (never another exception), and a checkpoint of the
    # result restores to the same state
    col = Column(-33.0, start_height_m=25.0, anchor_p_pa=101000.0 if anchored else None,
                 track_sigma=not lean)
    for row in rows:
        before = snapshot(col)
        try:
            col.feed(*row)
        except ReadingError:
            assert snapshot(col) == before
        else:
            assert col.gph_m == col.gph_m
    assert snapshot(Column.from_bytes(col.to_bytes()), skip=()) == snapshot(col, skip=())


def test_checkpoint_with_valid_crc_but_impossible_state_is_refused():
    import binascii
    col = Column(45.0)
    col.feed(100000.0, 288.0)
    blob = bytearray(col.to_bytes())
    # the phase is the 4th int of the state (layout in tinygeo.column)
    off = len(blob) - 4 - 4 * (len(_ST_I) - 3)
    struct.pack_into("<i", blob, off, 7)
    struct.pack_into("<I", blob, len(blob) - 4, binascii.crc32(bytes(blob[:-4])) & 0xFFFFFFFF)
    with pytest.raises(CheckpointError, match="impossible"):
        Column.from_bytes(bytes(blob))


def test_gps_ellipsoidal_heights_with_geoid_undulation():
    # h_msl = h_ell - N (tinygeo.msl_height; common practice)
    col = Column(47.0, start_height_m=400.0, geoid_undulation_m=47.5)
    col.feed(96000.0, 285.0, 50.0, 0.0, 447.5 + 12.0)
    assert col.gps_m == pytest.approx(412.0)
    assert col.gps_diff_m == pytest.approx(-12.0, abs=1e-6)
    with pytest.raises(ReadingError) as e:
        col.feed(95990.0, 285.0, 50.0, 1.0, 3e5)
    assert e.value.reason == "gps"
    back = Column.from_bytes(col.to_bytes())
    assert back._geoid_n == 47.5
    with pytest.raises(TinygeoError):
        Column(47.0, geoid_undulation_m=400.0)


# -------------------------------------------------------------- temperature steps
# The allowance max_t_step_k + max_t_rate_k_s dt + max_t_gradient_k_m |dz|
# (defaults 3 K, 1 K/s, 0.1 K/m; the column docstring). Strong real inversions
# reach about 10 K per 100 m (0.1 K/m; common practice).

def _climb(col, h0, h1, speed, dt, temp, t0=0.0, rh=None):
    """Feed a climb from h0 to h1 gpm (standard pressures) at speed m/s every
    dt s (dt=None: no time stamps) with temperature temp(h); return the time."""
    n = int(round(abs(h1 - h0) / (speed * (dt or 1.0))))
    ts = t0
    for i in range(1, n + 1):
        h = h0 + (h1 - h0) * i / n
        ts += dt or 0.0
        col.feed(standard.standard_pressure(h), temp(h), rh, ts if dt else None)
    return ts


def test_temperature_spike_is_rejected_and_changes_nothing():
    col = Column(45.0)
    ts = _climb(col, 0.0, 1000.0, 5.0, 2.0, lambda h: 288.0 - 0.0065 * h)
    before = snapshot(col)
    n = col.count
    p = standard.standard_pressure(1010.0)
    for jump in (8.0, -8.0, 25.0, -25.0):
        with pytest.raises(ReadingError) as e:
            col.feed(p, col.t_k + jump, None, ts + 2.0)
        assert e.value.reason == "temperature" and "max_t_step_k" in str(e.value)
        assert snapshot(col) == before
    assert col.rejected == 4
    col.feed(p, 288.0 - 0.0065 * 1010.0, None, ts + 2.0)   # the next good reading is taken
    assert col.count == n + 1
    # the same glitch without time stamps, and the check switched off
    col = Column(45.0)
    _climb(col, 0.0, 500.0, 5.0, None, lambda h: 288.0)
    with pytest.raises(ReadingError):
        col.feed(standard.standard_pressure(505.0), 300.0)
    off = Column(45.0, max_t_step_k=None)
    _climb(off, 0.0, 500.0, 5.0, 2.0, lambda h: 288.0)
    off.feed(standard.standard_pressure(505.0), 313.0, None, 202.0)
    assert off.rejected == 0


@pytest.mark.parametrize("dt", [1.0, 2.0, None])
def test_sharp_real_inversion_at_5_m_s_is_accepted(dt):
    # 10 K warmer over 100 m (0.1 K/m, the strongest real inversions), then the
    # standard lapse rate again; ascent at 5 m/s, 1 or 2 s steps or untimed
    def temp(h):
        if h < 1000.0:
            return 285.0 - 0.0065 * h
        if h < 1100.0:
            return 278.5 + 0.1 * (h - 1000.0)
        return 288.5 - 0.0065 * (h - 1100.0)
    col = Column(45.0)
    _climb(col, 0.0, 3000.0, 5.0, dt, temp, rh=70.0)
    assert col.rejected == 0 and abs(col.t_k - temp(3000.0)) < 1e-9
    # a fast fall (60 m/s) through the same inversion is accepted too
    _climb(col, 3000.0, 500.0, 60.0, dt, temp, t0=1e4, rh=70.0)
    assert col.rejected == 0


def test_column_recovers_after_a_genuine_temperature_step():
    # the sensor reads 10 K colder from t = 100 s on (a real step change):
    # rejected until 3 K + 1 K/s * dt covers it, i.e. for 7 s, then followed
    col = Column(45.0)
    ts = _climb(col, 0.0, 500.0, 5.0, 1.0, lambda h: 288.0)
    p = standard.standard_pressure(500.0)
    first_ok = None
    for k in range(1, 20):
        try:
            col.feed(p, 278.0, None, ts + k)
        except ReadingError as e:
            assert e.reason == "temperature"
            continue
        first_ok = k
        break
    assert first_ok == 7 and col.rejected == 6 and col.t_k == 278.0
    col.feed(p, 278.1, None, ts + 8)        # and then it goes on normally
    assert col.rejected == 6
    # untimed: the allowance grows with the climb instead (0.1 K/m: 70 m)
    col = Column(45.0)
    _climb(col, 0.0, 500.0, 5.0, None, lambda h: 288.0)
    for h in range(505, 600, 5):
        try:
            col.feed(standard.standard_pressure(float(h)), 278.0)
            break
        except ReadingError:
            pass
    assert 565 <= h <= 575 and col.t_k == 278.0


def test_temperature_step_settings_are_checked_and_stored():
    for kw in ({"max_t_step_k": -1.0}, {"max_t_step_k": NAN}, {"max_t_rate_k_s": 101.0},
               {"max_t_gradient_k_m": -0.1}, {"max_t_rate_k_s": None}):
        with pytest.raises(TinygeoError):
            Column(45.0, **kw)
    for kw in ({"max_t_step_k": None}, {"max_t_step_k": 5.0, "max_t_rate_k_s": 0.5,
                                         "max_t_gradient_k_m": 0.05}):
        col = Column(45.0, **kw)
        col.feed(100000.0, 288.0, 50.0, 0.0)
        back = Column.from_bytes(col.to_bytes())
        assert back.to_bytes() == col.to_bytes()
        assert snapshot(back, skip=()) == snapshot(col, skip=())
        if kw["max_t_step_k"] is None:
            assert back._t_step != back._t_step     # stored as nan: off
            back.feed(99990.0, 320.0, None, 1.0)    # a 32 K step is accepted
        else:
            assert (back._t_step, back.max_t_rate_k_s, back.max_t_gradient_k_m) == (5.0, 0.5, 0.05)


def test_one_glitched_reading_is_never_the_peak_no_false_burst():
    """A single pressure dropout on the way up (e.g. a bus error reading a
    too-low pressure) passes every check when there are no time stamps (no
    rate check); it must not become the peak that a false burst is measured
    from (invented ascent through the U.S. Standard Atmosphere 1976)."""
    col = Column(45.0, max_t_step_k=None)
    bits_all = 0
    for i in range(0, 400):
        z = 20.0 * i
        p = standard.standard_pressure(z)
        if i == 200:
            p = standard.standard_pressure(z + 900.0)   # a 900 m upward glitch
        bits_all |= col.feed(p, standard.standard_temperature(z))
    assert not bits_all & EV_BURST and col.phase == PH_ASCENT
    assert col.max_gph_m < 399 * 20.0 + 1.0
    # a real burst is still found, within one reading of the top
    for i in range(399, 380, -1):
        z = 20.0 * i - 200.0
        col.feed(standard.standard_pressure(z), standard.standard_temperature(z))
    assert col.phase == PH_DESCENT
    assert abs(col.burst_gph_m - 399 * 20.0) <= 20.0 + 1e-6


def test_virtual_temperature_out_of_range_is_a_reading_error():
    # hot saturated air: Tv = T/(1 - (e/p)(1 - eps)) (Wallace & Hobbs 2006 eq.
    # 3.16, from memory) is about 396 K at 345 K and 1000 hPa, beyond the 350 K
    # that tinygeo.layer_thickness accepts: rejected as 'temperature', nothing changes
    col = Column(10.0, max_t_step_k=None)        # isolate from the temperature-step check
    col.feed(100000.0, 300.0, 50.0, 0.0)
    before = col.to_bytes()
    with pytest.raises(ReadingError) as e:
        col.feed(99990.0, 345.0, 100.0, 1.0)
    assert e.value.reason == "temperature" and "350 K" in str(e.value)
    assert col.rejected == 1
    col.rejected = 0
    assert col.to_bytes() == before
