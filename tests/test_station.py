"""tinygeo.station (Station, tendency_code), the sea-level additions it uses
(highsite.isobaric_height, highsite.standard_surface_pa, sealevel.msl_tv) and the one-call dew
point (moisture.dew_point_from_rh), against outside references.

Sources
- [WMO8] WMO-No. 8 (2018), Vol. I, Ch. 3 (reduction of pressure to sea
  level: hypsometric, fictitious column Tv + 0.0065 K/gpm H/2) and Annex 4.B
  (Magnus forms, enhancement factor); from memory.
- [WMO306] WMO-No. 306 Manual on Codes, code table 0200, characteristic of
  pressure tendency (definitions from memory).
- [USSA76] U.S. Standard Atmosphere 1976: Table 2 constants, eq. 33a (a
  constant-lapse layer), the standard's own pressure-height relation (from
  memory).
- [ICAO] the altimeter-setting closed form QNH = P0 ((p/P0)^n + L0 E/T0)^(1/n)
  (ICAO Doc 7488 layer 0; from memory).
- The ideal gas law rho = p/(Rd T) and the hydrostatic equation dp = -rho g
  dz: a barometer lifted z metres reads rho g z less (about 12 Pa/m).
- Kahan (1965), compensated summation; IEEE 754 binary32 (tests/floatemu.py).
- mpmath evaluates every formula at 40 digits (tests/vectors/gen_station.py
  holds the ref_* functions, shared with the vector files).
"""
import ast
import math
import os
import random
import struct
import sys

import mpmath as mp
import pytest
from hypothesis import given, settings, strategies as st

from conftest import (MICROPYTHON, ROOT, VECTORS, require_micropython, require_wasm32,
                      run_script, run_wasm32)

sys.path.insert(0, str(VECTORS))
import gen_station as G  # noqa: E402
import runsta  # noqa: E402
import runvec  # noqa: E402

import tinygeo  # noqa: E402
from tinygeo import highsite, moisture, sealevel, station as S  # noqa: E402
from tinygeo.errors import CheckpointError, ModelRangeError, RangeError, ReadingError  # noqa: E402
from tinygeo.station import Station, tendency_code, FL_GAP, FL_TAKEOVER, EV_RESTART  # noqa: E402

STATION_FILES = sorted((VECTORS / "station").glob("*.txt"))


# ============================================================== dew point from RH
def test_dew_point_from_rh_vectors_are_mpmath_findroot():
    # every dew_point_from_rh line of tests/vectors/moisture.txt is recomputed:
    # findroot on the published forward Magnus form (not the closed inverse)
    n = 0
    for lineno, func, args, expected, kind, tol, source in runvec.load(
            str(VECTORS / "moisture.txt")):
        if func != "dew_point_from_rh":
            continue
        t, rh, ice = args
        ref = G.ref_td(t, rh, bool(ice))
        assert abs(float(ref) - expected) <= 1e-15 * expected, (lineno, ref, expected)
        got = tinygeo.dew_point_from_rh(t, rh, ice)
        assert abs(got - float(ref)) <= tol, (lineno, got, ref)
        n += 1
    assert n >= 8


@settings(max_examples=300)
@given(st.floats(200.0, 330.0), st.floats(0.5, 103.0), st.booleans(), st.floats(50000.0, 105000.0))
def test_dew_point_from_rh_agrees_with_the_two_step_dew_point(t, rh, ice, p):
    # the enhancement factor cancels: dew_point(vapour_pressure(t, p, rh)) at
    # any pressure gives the same (to rounding; measured under 6e-14 K)
    one = tinygeo.dew_point_from_rh(t, rh, ice)
    two = tinygeo.dew_point(tinygeo.vapour_pressure(t, p, rh, ice), p, ice)
    assert abs(one - two) <= 1e-11


def test_dew_point_from_rh_at_saturation_and_errors():
    # rh = 100 %: the dew point is the temperature (definition)
    for t in (250.0, 273.15, 300.0):
        assert tinygeo.dew_point_from_rh(t, 100.0) == pytest.approx(t, abs=1e-12)
    for bad in (0.0, -1.0, 0):
        with pytest.raises(RangeError) as e:
            tinygeo.dew_point_from_rh(290.0, bad)
        assert "rh_pct=" in str(e.value) and "dry air" in str(e.value)
    with pytest.raises(RangeError):
        tinygeo.dew_point_from_rh(290.0, 104.0)
    with pytest.raises(RangeError) as e:
        tinygeo.dew_point_from_rh(17.0, 50.0)
    assert "Celsius" in str(e.value)
    with pytest.raises(ModelRangeError):
        tinygeo.dew_point_from_rh(160.0, 1e-30)


# the one input rule (tests/test_input_rule.py) for the new public functions
NEW_CALLS = [
    ("dew_point_from_rh", (290.0, 50.0), ("ice",)),
    ("isobaric_height", (83800.0, 281.15, 1600.0, 85000.0), ("ice",)),
    ("standard_surface_pa", (1600.0,), ()),
]


@pytest.mark.parametrize("name,args,keywords", NEW_CALLS, ids=[c[0] for c in NEW_CALLS])
def test_new_functions_follow_the_input_rule(name, args, keywords):
    import numpy
    f = getattr(tinygeo, name)
    f(*args)
    f(*[numpy.float32(a) for a in args])
    for i in range(len(args)):
        for bad in ["45", "4_5", b"45", True, None, 1j, [1.0], 10 ** 400, float("nan")]:
            a = list(args)
            a[i] = bad
            with pytest.raises(RangeError) as e:
                f(*a)
            assert "=" in str(e.value), (name, i, bad)
    for kw in keywords:
        assert f(*args, **{kw: 1}) == f(*args, **{kw: True})
        with pytest.raises(RangeError):
            f(*args, **{kw: "False"})


# ============================================================== sea-level additions
@settings(max_examples=200)
@given(st.floats(80000.0, 105000.0), st.floats(240.0, 315.0), st.floats(-100.0, 2500.0),
       st.one_of(st.none(), st.floats(0.0, 100.0)), st.floats(-90.0, 90.0))
def test_msl_kernel_is_sea_level_pressure_bit_for_bit(p, t, h, rh, lat):
    # Station calls the kernel with the Tv and gph it computed once; the
    # public function must give the very same double
    from tinygeo.potential import geopotential_height
    tv = t if rh is None else tinygeo.virtual_temperature(t, p, rh)
    assert sealevel.msl_tv(p, tv, geopotential_height(h, lat)) == \
        tinygeo.sea_level_pressure(p, t, h, rh, lat)


@pytest.mark.parametrize("p,t,h,iso,rh", [
    (83800.0, 281.15, 1600.0, 85000.0, None),
    (83800.0, 281.15, 1600.0, 85000.0, 70.0),
    (91000.0, 290.0, 900.0, 85000.0, 40.0),     # the surface above the station
    (74000.0, 268.0, 2600.0, 70000.0, None),
    (61000.0, 258.0, 4100.0, 50000.0, 90.0),
    (101000.0, 300.0, 10.0, 100000.0, 80.0),
])
def test_isobaric_height_vs_mpmath(p, t, h, iso, rh):
    # [USSA76] eq. 33a solved for the height, Tv by [WMO8]/Wallace & Hobbs,
    # gph by the closed normal potential (gen_station.ref_*); measured < 3e-12 gpm
    got = tinygeo.isobaric_height(p, t, h, iso, rh, 47.0)
    ref = G.ref_iso(p, G.ref_tv(t, p, rh), G.ref_gph(h, 47.0), iso)
    assert abs(got - float(ref)) <= 1e-9, (got, ref)


@pytest.mark.parametrize("h", [800.0, 1457.3, 1500.0, 2300.0, 3000.0, 4500.0])
def test_isobaric_height_in_the_standard_atmosphere(h):
    # a dry station at standard height H with the standard's p and T: the
    # column IS the standard's layer 0 (lapse 0.0065 K/gpm), so the surface's
    # height is the standard's own: H(p) = (T0/L)(1 - (p/P0)^(Rd L/g0)) [USSA76]
    p = G.P0 * (1 - G.L0 * h / G.T0) ** (G.G0 / (G.RD * G.L0))
    t = G.T0 - G.L0 * h
    iso = highsite.standard_surface_pa(h) or 85000.0
    ref = G.T0 / G.L0 * (1 - (mp.mpf(iso) / G.P0) ** (G.RD * G.L0 / G.G0))
    got = tinygeo.isobaric_height(float(p), float(t), h, iso)    # height_m taken as gpm
    assert abs(got - float(ref)) <= 1e-9, (got, ref)      # measured < 5e-12 gpm
    # USSA76 tables (from memory): 850 hPa at 1457 gpm, 700 hPa at 3012 gpm,
    # 500 hPa at 5574 gpm
    printed = {85000.0: 1457.0, 70000.0: 3012.0, 50000.0: 5574.0}[iso]
    assert abs(got - printed) < 1.0


def test_standard_surface_rule():
    # regional practice under WMO-No. 306 FM 12 group 4a3hhh (from memory)
    f = tinygeo.standard_surface_pa
    assert [f(h) for h in (-400.0, 0.0, 799.9)] == [None] * 3
    assert [f(h) for h in (800.0, 2299.0, 2300.0, 3699.0, 3700.0, 5000.0)] == \
        [85000.0, 85000.0, 70000.0, 70000.0, 50000.0, 50000.0]
    with pytest.raises(RangeError) as e:
        f(6000.0)
    assert "feet" in str(e.value)


# ============================================================== code table 0200
# One 3-hour trace (19 averages, Pa) per code; the definition of the code
# beside it [WMO306]; the shapes are far from the thresholds (5 Pa same,
# 10 Pa steady) so the code names the shape, not the rule's edge.
def _trace(f):
    return [101000.0 + f(x) for x in range(19)]


CODE_CASES = [
    (0, "increasing, then decreasing; same or higher than 3 h ago",
     lambda x: 12.5 * x if x <= 12 else 150.0 - 15.0 * (x - 12)),
    (0, "increasing, then decreasing; the same as 3 h ago",
     lambda x: 20.0 * x if x <= 9 else 180.0 - 20.0 * (x - 9)),
    (1, "increasing, then steady; higher", lambda x: 200.0 * x / 9 if x <= 9 else 200.0),
    (1, "increasing, then increasing more slowly; higher",
     lambda x: 30.0 * x if x <= 9 else 270.0 + 5.0 * (x - 9)),
    (2, "increasing (steadily); higher", lambda x: 20.0 * x),
    (2, "increasing (unsteadily); higher", lambda x: 20.0 * x + 6.0 * math.sin(2.0 * x)),
    (3, "steady, then increasing; higher", lambda x: 0.0 if x <= 9 else 25.0 * (x - 9)),
    (3, "decreasing, then increasing; higher",
     lambda x: -10.0 * x if x <= 6 else -60.0 + 20.0 * (x - 6)),
    (3, "increasing, then increasing more rapidly; higher",
     lambda x: 5.0 * x if x <= 9 else 45.0 + 30.0 * (x - 9)),
    (4, "steady; same as 3 h ago", lambda x: 2.0 * math.sin(x)),
    (5, "decreasing, then increasing; lower",
     lambda x: -20.0 * x if x <= 9 else -180.0 + 140.0 * (x - 9) / 9),
    (5, "decreasing, then increasing; the same as 3 h ago",
     lambda x: -20.0 * x if x <= 9 else -180.0 + 20.0 * (x - 9)),
    (6, "decreasing, then steady; lower", lambda x: -200.0 * x / 9 if x <= 9 else -200.0),
    (6, "decreasing, then decreasing more slowly; lower",
     lambda x: -30.0 * x if x <= 9 else -270.0 - 5.0 * (x - 9)),
    (7, "decreasing (steadily); lower", lambda x: -20.0 * x),
    (7, "decreasing (unsteadily); lower", lambda x: -20.0 * x + 6.0 * math.sin(2.0 * x)),
    (8, "steady, then decreasing; lower", lambda x: 0.0 if x <= 9 else -25.0 * (x - 9)),
    (8, "increasing, then decreasing; lower",
     lambda x: 10.0 * x if x <= 6 else 60.0 - 20.0 * (x - 6)),
    (8, "decreasing, then decreasing more rapidly; lower",
     lambda x: -5.0 * x if x <= 9 else -45.0 - 30.0 * (x - 9)),
]


@pytest.mark.parametrize("code,definition,shape", CODE_CASES,
                         ids=["%d %s" % (c[0], c[1]) for c in CODE_CASES])
def test_code_table_0200_one_trace_per_definition(code, definition, shape):
    # [WMO306] code table 0200: `definition`
    assert tendency_code(_trace(shape)) == code


def test_code_table_0200_needs_ends_and_a_middle():
    nan = float("nan")
    tr = _trace(lambda x: -20.0 * x)
    assert tendency_code(tr[:2]) is None
    assert tendency_code([nan] + tr[1:]) is None
    assert tendency_code(tr[:-1] + [nan]) is None
    assert tendency_code([tr[0]] + [nan] * 17 + [tr[-1]]) is None
    # a missing middle: the nearest average present stands in
    gap = list(tr)
    gap[9] = nan
    assert tendency_code(gap) == 7
    # hourly averages: 4 points over 3 hours (average_s = 3600)
    assert tendency_code([101000.0, 101100.0, 101200.0, 101300.0]) == 2


# ============================================================== station: settings
def test_settings_are_checked():
    Station(3.5, 54.2)
    for kw, bad in (("average_s", 700), ("average_s", 30), ("average_s", 600.5),
                    ("average_s", 7200), ("min_readings", 0), ("min_readings", True),
                    ("stuck_readings", 1), ("stuck_readings", 2.0), ("max_p_step_pa", -1),
                    ("guard_m", 50), ("steady_pa", "10"), ("max_gap_s", 20000),
                    ("mean12", "yes"), ("iso_p_pa", 30000.0), ("ice", None)):
        with pytest.raises(RangeError) as e:
            Station(3.5, 54.2, **{kw: bad})
        assert kw + "=" in str(e.value)
    for h in (6000.0, "3.5", True):
        with pytest.raises(RangeError):
            Station(h, 54.2)
    with pytest.raises(RangeError):
        Station(3.5, 95.0)
    for avg in (60, 120, 300, 600, 900, 1800, 3600, 600.0):
        assert Station(3.5, 54.2, avg)._n == 86400 // int(avg) + 1


def test_none_disables_checks():
    s = Station(3.5, 54.2, max_p_step_pa=None, max_t_step_k=None, max_rh_step_pct=None,
                guard_m=None, stuck_readings=None)
    s.feed(100000.0, 280.0, 50.0, 0)
    s.feed(101000.0, 290.0, 90.0, 1)         # steps of 10 hPa, 10 K, 40 % in 1 s
    s.feed(45000.0, 290.0, 90.0, 2)          # a pressure altitude 6 km off: no guard
    assert s.count == 3 and s.rejected == 0


# ============================================================== station: rejections
def _state(s):
    # every attribute and the ring(s), for "exactly as it was"
    # except the recovery memory a rejected reading is meant to leave (the
    # run of contradicting readings, see "Recovery" in tinygeo.station; its
    # effect is tested by the recovery tests below)
    d = dict(vars(s))
    d.pop("rejected")
    for k in ("_run", "_rn_time", "_rn_p", "_rn_t", "_rn_rh", "_rn_ts", "_rn_tsrh"):
        d.pop(k)
    d["_ring_p"] = list(s._ring_p)
    d["_ring_t"] = None if s._ring_t is None else list(s._ring_t)
    return d


def _same(a, b):
    if set(a) != set(b):
        return False
    for k in a:
        x, y = a[k], b[k]
        if isinstance(x, list) and isinstance(y, list):
            if len(x) != len(y) or any(not (u == v or (u != u and v != v)) for u, v in zip(x, y)):
                return False
        elif isinstance(x, float) and isinstance(y, float):
            if not (x == y or (x != x and y != y)):
                return False
        elif x != y or type(x) is not type(y):
            return False
    return True


BAD = [  # (p, t, rh, time offset from the latest stamp or None, reason) -- constructed
    (1005.2, 285.0, 80.0, 1, "pressure"),            # hPa passed as Pa
    (100.52, 285.0, 80.0, 1, "pressure"),            # kPa
    (150000.0, 285.0, 80.0, 1, "pressure"),          # out of range
    (60000.0, 285.0, 80.0, 1, "pressure"),           # 4 km of pressure altitude off a 3.5 m buoy
    ("nan", 285.0, 80.0, 1, "number"),
    (float("inf"), 285.0, 80.0, 1, "number"),
    ("100500", 285.0, 80.0, 1, "number"),            # text
    (True, 285.0, 80.0, 1, "number"),
    (10 ** 400, 285.0, 80.0, 1, "number"),
    (None, 285.0, 80.0, 1, "number"),
    ("spike", 285.0, 80.0, 1, "pressure"),           # +400 Pa in 1 s (filled in below)
    (0.0, 12.0, 80.0, 1, "temperature"),             # Celsius
    (0.0, "spike", 80.0, 1, "temperature"),          # +6 K in 1 s
    (0.0, 285.0, 0.8, 1, "humidity"),                # a 0..1 fraction: a 79 % step
    (0.0, 285.0, 110.0, 1, "humidity"),
    (0.0, 285.0, float("nan"), 1, "number"),
    (0.0, 285.0, 80.0, -5000, "time"),               # time goes back beyond the clock step
    (0.0, 285.0, 80.0, 5000, "time"),                # a stamp ahead beyond the clock step
    (0.0, 285.0, 80.0, None, "time"),                # no time
    (0.0, 285.0, 80.0, "x", "number"),               # a time that is not a number
    (0.0, 285.0, 80.0, float("nan"), "number"),
]


def _clean_stream(n=5000, seed=3):
    rng = random.Random(seed)
    out = []
    for i in range(n):
        p = 100500.0 - 0.02 * i + 15.0 * math.sin(2 * math.pi * i / 7.7) + rng.gauss(0, 1)
        t = 285.0 + 0.3 * math.sin(i / 300.0) + rng.gauss(0, 0.02)
        rh = 80.0 + 2.0 * math.sin(i / 500.0) + rng.gauss(0, 0.2)
        out.append((p, t, rh, i))
    return out


def _bad_reading(good, bad):
    p, t, rh, dt, reason = bad
    gp, gt, grh, gts = good
    if p == 0.0:
        p = gp
    elif p == "spike":
        p = gp + 400.0
    elif p == "nan":
        p = float("nan")
    if t == "spike":
        t = gt + 6.0
    if rh == 80.0:
        rh = grh
    ts = None if dt is None else (dt if isinstance(dt, (str, float)) else gts + dt)
    return p, t, rh, ts, reason


def test_each_rejection_leaves_the_station_exactly_as_it_was():
    s = Station(3.5, 54.2, 300)
    stream = _clean_stream(2000)
    k = 0
    for i, r in enumerate(stream):
        s.feed(*r)
        if i % 97 == 50:
            # the next good reading's values, spoiled one way
            nxt = stream[i + 1]
            p, t, rh, ts, reason = _bad_reading((nxt[0], nxt[1], nxt[2], r[3]), BAD[k % len(BAD)])
            if isinstance(ts, int):
                ts = r[3] + (ts - r[3])
            before = _state(s)
            rej = s.rejected
            with pytest.raises(ReadingError) as e:
                s.feed(p, t, rh, ts)
            assert e.value.reason == reason, (BAD[k % len(BAD)], str(e.value))
            assert s.rejected == rej + 1
            assert _same(before, _state(s)), BAD[k % len(BAD)]
            k += 1
    assert k >= len(BAD)


def test_interleaved_bad_readings_give_bit_identical_results():
    # the same stream with and without every kind of bad reading in between:
    # the same events after every good reading, the same results, bit for bit
    stream = _clean_stream(12000)
    a = Station(3.5, 54.2, 600)
    b = Station(3.5, 54.2, 600)
    names = ("p_pa", "t_k", "rh_pct", "dew_point_k", "mslp_pa", "qnh_pa", "tendency_3h_pa",
             "tendency_code", "change_24h_pa", "flags", "time_s", "gap_s", "average_readings",
             "count", "averages", "missing")
    k = 0
    for i, r in enumerate(stream):
        ea = a.feed(*r)
        if i % 13 == 7 and i + 1 < len(stream):
            p, t, rh, ts, reason = _bad_reading(stream[i + 1], BAD[k % len(BAD)])
            if isinstance(ts, int):
                ts = r[3] + (ts - stream[i + 1][3])
            eb = b.feed(*r)
            with pytest.raises(ReadingError):
                b.feed(p, t, rh, ts)
            k += 1
        else:
            eb = b.feed(*r)
        assert ea == eb
        for n in names:
            x, y = getattr(a, n), getattr(b, n)
            assert x == y or (x != x and y != y), (i, n, x, y)
    assert b.rejected == k > 800 and a.rejected == 0 and a.averages == 19
    assert a._ring_p.tobytes() == b._ring_p.tobytes()      # the ring, bit for bit


def test_messages_name_the_argument_and_the_fix():
    s = Station(3.5, 54.2)
    s.feed(100500.0, 285.0, 80.0, 99)
    s.feed(100500.0, 285.0, 80.0, 100)
    cases = [((1005.0, 285.0, 80.0, 101), "hPa or mbar passed"),
             ((100500.0, 12.0, 80.0, 101), "Celsius"),
             ((100500.0, 285.0, 0.5, 101), "rh_pct=0.5 steps"),
             ((100500.0, 285.0, 80.0, 100 - 2401), "clock set back"),
             ((100500.0, 285.0, 80.0, 100 + 2401), "2401 s after the latest accepted "
              "reading's 100, beyond the clock step of 2400 s (max_gap_s + average_s) and "
              "twice the latest spacing (1 s)"),
             ((100500.0, 285.0, 80.0, None), "time_s is required"),
             ((101200.0, 285.0, 80.0, 101), "p_pa=101200.0 steps +700 Pa in 1 s"),
             ((70000.0, 285.0, 80.0, 101), "pressure altitude"),
             ((100500.0, 285.0, 80.0, 10 ** 400), "time_s=1000000"),
             ((100500.0, 285.0, 80.0, -2 ** 62), "within +-2**62")]
    for args, text in cases:
        with pytest.raises(ReadingError) as e:
            s.feed(*args)
        assert text in str(e.value), str(e.value)


def _steady(s, n, t0=0, p0=100000.0):
    for i in range(n):
        s.feed(p0 + 0.01 * i, 285.0 + 0.001 * i, 80.0 + 0.001 * i, t0 + i)


def _go_on(s, i0, n, shift):
    # readings i0 .. i0 + n - 1 of _steady's series, stamped i + shift
    for i in range(i0, i0 + n):
        s.feed(100000.0 + 0.01 * i, 285.0 + 0.001 * i, 80.0 + 0.001 * i, i + shift)


def test_a_genuine_jump_is_followed_and_a_spike_is_not():
    # a 400 Pa step at 1 Hz (beyond 50 Pa + 1 Pa/s): the first two readings
    # are refused, the third agrees with them and takes over (takeover_readings
    # 3, constructed); FL_TAKEOVER on the average that holds it
    s = Station(3.5, 54.2, 600)
    _steady(s, 100)
    for i in (100, 101):
        with pytest.raises(ReadingError) as e:
            s.feed(100400.0 + 0.01 * i, 285.0 + 0.001 * i, 80.0 + 0.001 * i, i)
        assert e.value.reason == "pressure"
    assert s.feed(100402.0, 285.1, 80.1, 102) == 0
    assert (s.count, s.rejected) == (101, 2)
    for i in range(103, 601):
        s.feed(100400.0 + 0.01 * i, 285.0 + 0.001 * i, 80.0 + 0.001 * i, i)
    assert s.flags & FL_TAKEOVER and s.average_readings == 598
    # the next average has no jump
    for i in range(601, 1201):
        s.feed(100400.0 + 0.01 * i, 285.0 + 0.001 * i, 80.0 + 0.001 * i, i)
    assert not s.flags & FL_TAKEOVER


def test_the_takeover_flag_goes_on_the_average_the_jump_goes_into():
    # the third reading of a jump is the first of a new average (600 s):
    # the average that closes before it holds none of the jump (constructed)
    s = Station(3.5, 54.2, 600)
    _steady(s, 598)
    for i in (598, 599):
        with pytest.raises(ReadingError):
            s.feed(100400.0, 285.1, 80.1, i)
    assert s.feed(100400.0, 285.1, 80.1, 600) & S.EV_AVERAGE
    assert not s.flags & FL_TAKEOVER and s.average_readings == 598
    for i in range(601, 1201):
        s.feed(100400.0, 285.1 + 0.001 * (i - 600), 80.1, i)
    assert s.flags & FL_TAKEOVER and s.average_readings == 600


@pytest.mark.parametrize("spikes", [1, 2])
def test_spikes_fewer_than_takeover_readings_change_nothing(spikes):
    # one or two spikes (each reading agreeing with the one before it, so a
    # run) and then a good reading: the station goes on as if they had never
    # come, bit for bit (constructed)
    a = Station(3.5, 54.2, 600)
    b = Station(3.5, 54.2, 600)
    _steady(a, 300)
    _steady(b, 300)
    for k in range(spikes):
        with pytest.raises(ReadingError):
            a.feed(100900.0, 285.3, 80.3, 300 + k)
    for i in range(300 + spikes, 1300):
        r = (100000.0 + 0.01 * i, 285.0 + 0.001 * i, 80.0 + 0.001 * i, i)
        assert a.feed(*r) == b.feed(*r)
    assert a.to_bytes() != b.to_bytes()      # rejected differs
    assert (a.p_pa, a.t_k, a.rh_pct, a.count, a.flags) == \
        (b.p_pa, b.t_k, b.rh_pct, b.count, b.flags)
    assert a.rejected == spikes


def test_spikes_that_disagree_with_each_other_never_take_over():
    # wild readings, each far from the one before: no run ever reaches three,
    # however many there are (constructed)
    s = Station(3.5, 54.2, 600)
    _steady(s, 50)
    for k in range(200):
        with pytest.raises(ReadingError):
            s.feed(100000.0 + (600.0 if k % 2 else -600.0), 285.0, 80.0, 50 + k)
    assert s.rejected == 200 and s.count == 50
    s.feed(100000.6, 285.05, 80.05, 250)
    assert s.count == 51


def test_a_bad_first_reading_does_not_lock_the_station():
    # the first reading is a spike (accepted: nothing to check it against);
    # the good readings after it contradict it, and the third restarts the
    # station from the good ones (constructed)
    s = Station(3.5, 54.2, 600)
    assert s.feed(100700.0, 285.0, 80.0, 0) == 0
    for i in (1, 2):
        with pytest.raises(ReadingError):
            s.feed(100000.0, 285.0, 80.0, i)
    assert s.feed(100000.0, 285.0, 80.0, 3) == EV_RESTART
    _steady(s, 597, 4)
    assert s.averages == 1 and s.average_readings == 597
    # the mean of 100000.0 and 100000.0 + 0.01 i, i = 0..595 (596 readings);
    # float sums: measured within 2e-11 Pa
    assert abs(s.p_pa - (100000.0 + 0.01 * sum(range(596)) / 597)) < 1e-9
    assert (s.count, s.rejected) == (599, 2)


def test_a_clock_set_back_restarts_after_takeover_readings():
    # a station that ran an hour, then its clock is set back a day: the third
    # reading restarts it; the averages and tendency start afresh (constructed)
    events = []
    s = Station(3.5, 54.2, 600, on_event=lambda st, bits: events.append(bits))
    _steady(s, 3600)
    base = 3600 - 86400
    for k in range(2):
        with pytest.raises(ReadingError) as e:
            s.feed(100000.0, 285.0, 80.0, base + k)
        assert e.value.reason == "time"
    assert s.feed(100000.0, 285.0, 80.0, base + 2) == EV_RESTART
    assert events[-1] == EV_RESTART
    # the averages start afresh; their count goes on (5 completed before)
    assert s.averages == 5 and s.missing == 0 and s.p_pa != s.p_pa
    assert s.count == 3601 and s.rejected == 2
    # it goes on, on the new clock
    _steady(s, 1200, base + 3)
    assert s.averages == 7


def test_a_small_clock_step_back_is_held_and_keeps_the_history():
    # a clock corrected back 20 minutes after 4 hours (within the clock step
    # max_gap_s + average_s = 2400 s): the readings are taken at the latest
    # stamp until the clock passes it (FL_CLOCK_HELD); nothing rejected, the
    # averages, tendency and 24 h ring go on (constructed)
    s = Station(3.5, 54.2, 600)
    _steady(s, 4 * 3600)
    t3 = s.tendency_3h_pa
    assert t3 == t3 and s.averages == 23
    _go_on(s, 4 * 3600, 3000, -1200)
    assert s.rejected == 0 and s.count == 4 * 3600 + 3000
    held = s.flags
    assert s.averages >= 25 and s.tendency_3h_pa == s.tendency_3h_pa
    # the average the held readings went into carries the flag, later ones not
    seen = []
    s2 = Station(3.5, 54.2, 600, on_event=lambda st, bits: seen.append(st.flags))
    _steady(s2, 4 * 3600)
    _go_on(s2, 4 * 3600, 3000, -1200)
    assert any(f & S.FL_CLOCK_HELD for f in seen) and not seen[-1] & S.FL_CLOCK_HELD
    assert held == seen[-1]


def test_a_stamp_far_ahead_is_refused_and_the_next_good_reading_clears_it():
    # one stamp an hour ahead (beyond the 2400 s clock step): refused; the
    # readings after it agree with the station and go on; the history is kept
    # (the attack that wiped 24 h: constructed)
    a = Station(3.5, 54.2, 600)
    b = Station(3.5, 54.2, 600)
    _steady(a, 5 * 3600)
    _steady(b, 5 * 3600)
    with pytest.raises(ReadingError) as e:
        a.feed(100180.0, 286.8, 98.0, 5 * 3600 + 3600)
    assert e.value.reason == "time" and "beyond the clock step" in str(e.value)
    for i in range(5 * 3600, 6 * 3600):
        r = (100000.0 + 0.01 * i, 285.0 + 0.001 * i, 80.0 + 0.001 * i, i)
        assert a.feed(*r) == b.feed(*r)
    assert a.tendency_3h_pa == b.tendency_3h_pa and a.tendency_3h_pa == a.tendency_3h_pa
    assert a.averages == b.averages == 35


def test_after_a_long_outage_the_third_reading_goes_on_with_a_gap():
    # 3 hours without readings (beyond the 2400 s clock step): two readings
    # refused, the third goes on; the missing averages are a gap, no restart
    s = Station(3.5, 54.2, 600)
    _steady(s, 3600)
    for i in (3600, 3601):
        with pytest.raises(ReadingError):
            s.feed(100000.0 + 0.01 * i, 285.0 + 0.001 * i, 80.0 + 0.001 * i, i + 3 * 3600)
    _go_on(s, 3602, 1, 3 * 3600)
    assert s.averages == 6 and s.count == 3601
    _go_on(s, 3603, 600, 3 * 3600)
    assert s.flags & S.FL_GAP and s.missing == 18 and s.averages == 7


def test_time_stamps_beyond_2_62_are_refused_int_or_float():
    s = Station(3.5, 54.2, 600)
    _steady(s, 10)
    for bad in (2 ** 62, -2 ** 62, 1e308, -1e308, 4.7e18):
        with pytest.raises(ReadingError) as e:
            s.feed(100000.1, 285.0, 80.0, bad)
        assert e.value.reason == "number" and "2**62" in str(e.value)
    assert s.count == 10


@pytest.mark.parametrize("n", [2, 5])
def test_takeover_readings_is_a_setting(n):
    s = Station(3.5, 54.2, 600, takeover_readings=n)
    _steady(s, 100)
    for i in range(n - 1):
        with pytest.raises(ReadingError):
            s.feed(100400.0, 285.1, 80.1, 100 + i)
    s.feed(100400.0, 285.1, 80.1, 100 + n - 1)
    assert s.count == 101
    for bad in (1, 101, 2.0, True, "3"):
        with pytest.raises(RangeError):
            Station(3.5, 54.2, 600, takeover_readings=bad)


def test_a_run_in_progress_survives_a_checkpoint():
    # the run is part of the checkpoint: restored after two jump readings,
    # the third takes over as it would have (constructed)
    s = Station(3.5, 54.2, 600)
    _steady(s, 100)
    for i in (100, 101):
        with pytest.raises(ReadingError):
            s.feed(100400.0, 285.1, 80.1, i)
    r = Station.from_bytes(s.to_bytes())
    assert r.feed(100400.0, 285.1, 80.1, 102) == s.feed(100400.0, 285.1, 80.1, 102)
    assert r.count == s.count == 101 and r.to_bytes() == s.to_bytes()


# ============================================================== heave
HEAVE = [  # (amplitude m, period s): an invented sea state, 2.6 m significant height
    (0.6, 6.1), (0.45, 7.4), (0.35, 9.3), (0.2, 11.8), (0.12, 14.5)]


@pytest.mark.parametrize("seed", range(6))
def test_heave_averaged_out_on_a_synthetic_wave_record(seed):
    # a 1 Hz barometer on a buoy: the pressure at its mean height falls
    # linearly; the waves (random phases) lift it by z(t) and it reads
    # rho g0 z less (rho = p/(Rd T), ideal gas; hydrostatic). Each 600 s
    # average must be the true mean within the sinusoids' sampling residual
    # (Dirichlet kernel bound, gen_station.heave_residual_bound), while
    # single readings are off by up to tens of Pa.
    rng = random.Random(seed)
    phases = [rng.uniform(0, 2 * math.pi) for _ in HEAVE]
    rd = float(G.RD)
    g0 = float(G.G0)
    s = Station(3.5, 54.2, 600, min_readings=300)
    true = []
    worst_raw = 0.0
    for i in range(3601):
        p_true = 100800.0 - 0.03 * i
        t = 283.0 + 0.2 * math.sin(i / 200.0)
        z = sum(a * math.sin(2 * math.pi * i / per + ph) for (a, per), ph in zip(HEAVE, phases))
        p = p_true - p_true / (rd * t) * g0 * z
        worst_raw = max(worst_raw, abs(p - p_true))
        true.append(p_true)
        if s.feed(p, t, 75.0 + math.sin(i / 100.0), i) & S.EV_AVERAGE:
            truth = G.mean(true[i - 600:i])
            bound = G.heave_residual_bound([1.25 * g0 * a for a, _ in HEAVE],
                                           [per for _, per in HEAVE], 600)
            assert abs(s.p_pa - float(truth)) <= float(bound) + 1e-9, (i, s.p_pa, truth, bound)
    assert worst_raw > 15.0        # the waves do move the single readings
    assert s.averages == 6
    # rho g0 near the sea: 12 Pa per metre, as the issue says (ideal gas, g0)
    assert 11.5 < 100800.0 / (rd * 283.0) * g0 < 12.5


# ============================================================== results vs references
def _humid_day(s, hours, step=60, seed=5, t0=0):
    # a day of invented weather at the station's height (its standard pressure)
    rng = random.Random(seed)
    base = tinygeo.standard_pressure(s.height_m)
    for i in range(int(hours * 3600 / step) + 1):
        ts = t0 + i * step
        p = base - 300.0 * math.sin(2 * math.pi * ts / 86400.0) + rng.gauss(0, 2)
        t = 290.0 + 4.0 * math.sin(2 * math.pi * (ts - 30000) / 86400.0) + rng.gauss(0, 0.05)
        rh = 70.0 - 15.0 * math.sin(2 * math.pi * (ts - 30000) / 86400.0) + rng.gauss(0, 0.5)
        s.feed(p, t, rh, ts)


def test_results_are_the_public_functions_of_the_averages():
    # Station calls kernels; the results must be bit-identical to the checked
    # public functions applied to its averages (the same formulas)
    for h, lat, ice in ((3.5, 54.2, False), (420.0, 47.3, True), (1600.0, 46.5, False)):
        s = Station(h, lat, 600, ice=ice)
        _humid_day(s, 4)
        assert s.mslp_pa == tinygeo.sea_level_pressure(s.p_pa, s.t_k, h, s.rh_pct, lat, ice)
        assert s.qnh_pa == tinygeo.qnh(s.p_pa, h)
        assert s.dew_point_k == tinygeo.dew_point_from_rh(s.t_k, s.rh_pct, ice)
        if h >= 800.0:
            assert s.iso_gph_m == tinygeo.isobaric_height(s.p_pa, s.t_k, h, 85000.0, s.rh_pct,
                                                          lat, ice)
        else:
            assert s.iso_p_pa is None and s.iso_gph_m != s.iso_gph_m


def test_results_vs_mpmath():
    # [WMO8] reduction, [ICAO] QNH, Magnus dew point by mpmath on the averages
    s = Station(3.5, 54.2, 600)
    _humid_day(s, 5)
    gph = G.ref_gph(3.5, 54.2)
    tv = G.ref_tv(s.t_k, s.p_pa, s.rh_pct)
    assert abs(s.mslp_pa - float(G.ref_msl(s.p_pa, tv, gph))) <= 1e-8    # measured 0
    assert abs(s.qnh_pa - float(G.ref_qnh(s.p_pa, 3.5))) <= 1e-8
    assert abs(s.dew_point_k - float(G.ref_td(s.t_k, s.rh_pct))) <= 1e-10


def test_tendency_and_24h_change_of_a_linear_trend():
    # the pressure falls exactly 0.02 Pa/s: every 3-hour change is -216 Pa and
    # every 24-hour change -1728 Pa (constructed); the averages are exact means
    s = Station(3.5, 54.2, 600, stuck_readings=None)
    seen = 0
    for i in range(0, 25 * 3600 + 60, 60):
        if s.feed(100000.0 - 0.02 * i, 285.0, 80.0, i) & S.EV_AVERAGE:
            # the first average 3 h after the first one ends at 3 h + 600 s
            if s.time_s >= 3 * 3600 + 600:
                assert s.tendency_3h_pa == pytest.approx(-216.0, abs=1e-8)
                assert s.tendency_code == 7    # [WMO306] decreasing steadily; lower
                seen += 1
            else:
                assert s.tendency_3h_pa != s.tendency_3h_pa and s.tendency_code is None
            if s.time_s >= 24 * 3600 + 600:
                assert s.change_24h_pa == pytest.approx(-1728.0, abs=1e-8)
            else:
                assert s.change_24h_pa != s.change_24h_pa
    assert seen == 22 * 6 and s.flags == 0


def test_time_stamps_any_origin_and_big_ints():
    # averages are aligned to the clock: an epoch stamp (int, beyond 2**30) and
    # the same day in seconds since midnight give the same averages; times of
    # the averages are exact ints on the clock's 10-minute marks
    epoch = 1760000400 - 1760000400 % 86400            # a midnight, seconds since 1970
    a = Station(3.5, 54.2, 600)
    b = Station(3.5, 54.2, 600)
    c = Station(3.5, 54.2, 600)
    for i in range(125, 4 * 3600, 7):
        p = 100500.0 + 5.0 * math.sin(i / 90.0)
        t = 285.0 + 0.2 * math.sin(i / 70.0)
        ea = a.feed(p, t, None, epoch + i)
        eb = b.feed(p, t, None, i)
        ec = c.feed(p, t, None, float(i))
        assert ea == eb == ec
    assert a.time_s == epoch + 14400 - 600 and isinstance(a.time_s, int)
    assert b.time_s == 14400 - 600 and c.time_s == 13800.0
    assert a.p_pa == b.p_pa == c.p_pa and a.tendency_3h_pa == b.tendency_3h_pa


def test_gap_and_stuck_flags_and_events():
    s = Station(3.5, 54.2, 600, stuck_readings=30)
    got = []
    for i in range(0, 6 * 3600, 10):
        if 7200 <= i < 9000:
            continue                       # 30 min without readings: 3 averages missing
        p = 100500.0 + 0.01 * i + 3 * math.sin(i / 40.0)
        if 12000 <= i < 13800:
            p = 100620.0                   # the barometer sticks for 30 min
        bits = s.feed(p, 285.0 + 0.1 * math.sin(i / 50.0), 80.0 + math.sin(i / 60.0), i)
        if bits:
            got.append((s.time_s, bits, s.flags))
    d = {tm: (bits, fl) for tm, bits, fl in got}
    # constructed: the average ending at 9600 follows 3 missing ones
    assert d[9600] == (S.EV_AVERAGE | S.EV_FLAGS | S.EV_GAP, S.FL_GAP)
    assert s.missing == 3
    # the stuck run reaches 30 readings 300 s after it began (12000..12290 in
    # the average 12000..12600): that average loses the run, as do the next two
    assert d[12000][1] == 0
    for end in (12600, 13200, 13800):
        assert d[end][1] & S.FL_STUCK_P
    assert not d[14400][1] & S.FL_STUCK_P


def test_min_readings_and_few_flag():
    s = Station(3.5, 54.2, 600, min_readings=5)
    for i in (0, 100, 200, 300, 400, 500):      # 6 readings: enough
        s.feed(100000.0 + i * 0.01, 285.0 + i * 1e-4, None if i else 80.0, i)
    assert s.feed(100010.0, 285.0, 80.0, 600) & S.EV_AVERAGE
    assert s.p_pa == pytest.approx(100002.5, abs=1e-9)
    assert s.rh_pct != s.rh_pct and s.flags & S.FL_FEW      # one humidity of 5 needed
    assert s.dew_point_k != s.dew_point_k


def test_mean12_flag_and_effect():
    # a mountain station with a daily cycle: the 12-hour mean temperature
    # method changes the reduction by the temperature difference's effect
    a = Station(1600.0, 46.5, 3600, mean12=True)
    b = Station(1600.0, 46.5, 3600)
    _humid_day(a, 14, step=600)
    _humid_day(b, 14, step=600)
    assert not a.flags & S.FL_NO_T12 and a.p_pa == b.p_pa and a.mslp_pa != b.mslp_pa
    assert a._ring_t is not None and b._ring_t is None


# ============================================================== checkpoints
def _feed_list(s, rows):
    out = []
    for r in rows:
        try:
            out.append(s.feed(*r))
        except ReadingError as e:
            out.append(e.reason)
    return out


def _results(s):
    return (s.p_pa, s.t_k, s.rh_pct, s.mslp_pa, s.qnh_pa, s.tendency_3h_pa, s.tendency_code,
            s.change_24h_pa, s.flags, s.time_s, s.count, s.rejected, s.averages, s.missing,
            s.dew_point_k, s.iso_gph_m)


@pytest.mark.parametrize("kw,t0", [({}, 0), ({}, 1760000000), ({"mean12": True}, 1760000000),
                                   ({"average_s": 3600, "stuck_readings": None}, 12.5),
                                   ({"iso_p_pa": 92500.0, "max_t_step_k": None}, -86400)])
def test_checkpoint_continues_bit_identically(kw, t0):
    rows = []
    rng = random.Random(9)
    for i in range(0, 30 * 3600, 60):
        rows.append((100500.0 + 200 * math.sin(i / 20000.0) + rng.gauss(0, 3),
                     285.0 + rng.gauss(0, 0.1), 80.0 + rng.gauss(0, 1), t0 + i))
    a = Station(3.5, 54.2, **kw)
    _feed_list(a, rows[:1000])
    blob = a.to_bytes()
    b = Station.from_bytes(blob)
    assert b.to_bytes() == blob
    ra = _feed_list(a, rows[1000:])
    rb = _feed_list(b, rows[1000:])
    assert ra == rb
    assert _results(a) == _results(b) or all(
        x == y or (x != x and y != y) for x, y in zip(_results(a), _results(b)))
    assert type(a.time_s) is type(b.time_s)


def test_checkpoint_of_a_fresh_station_and_refusals():
    s = Station(3.5, 54.2)
    assert Station.from_bytes(s.to_bytes()).count == 0
    for i in range(0, 7200, 30):
        s.feed(100500.0 + i * 0.001, 285.0 + i * 1e-5, 80.0, i)
    blob = s.to_bytes()
    for bad in (b"", blob[:-1], blob + b"\0", b"TGCK" + blob[4:], "text", None, 42):
        with pytest.raises(CheckpointError):
            Station.from_bytes(bad)
    # every single-bit flip in the header and a sample of the body is caught (CRC-32)
    rng = random.Random(1)
    for pos in list(range(0, 11)) + rng.sample(range(11, len(blob)), 200):
        b = bytearray(blob)
        b[pos] ^= 1 << rng.randrange(8)
        with pytest.raises(CheckpointError):
            Station.from_bytes(bytes(b))
    # a well-formed blob holding impossible values (re-framed with a good CRC)
    from tinygeo import checkpoint as C
    nf = (len(blob) - C.HEAD_LEN - C.CRC_LEN - 4 * (len(S._CFG_I) + len(S._ST_I))) // 8
    f, ints = C.unpack(blob, S._MAGIC, S._VERSION, nf, len(S._CFG_I) + len(S._ST_I), "station")
    for i, v in ((0, 9000.0), (2, 700.0), (len(S._CFG_F), float("inf")),
                 (len(S._CFG_F), 20000.0)):
        g = list(f)
        g[i] = v
        with pytest.raises(CheckpointError):
            Station.from_bytes(C.pack(S._MAGIC, S._VERSION, g, ints))
    g = list(f)
    g[-1] = 5.0                                              # an average of 5 Pa in the ring
    with pytest.raises(CheckpointError):
        Station.from_bytes(C.pack(S._MAGIC, S._VERSION, g, ints))
    g = list(f)
    with pytest.raises(CheckpointError):                     # a ring of the wrong length
        Station.from_bytes(C.pack(S._MAGIC, S._VERSION, g[:-1], ints))
    k = len(S._CFG_I) + S._ST_I.index("flags")
    j = list(ints)
    j[k] = 4096
    with pytest.raises(CheckpointError):
        Station.from_bytes(C.pack(S._MAGIC, S._VERSION, f, j))
    # a recovery run without the stamp of its latest reading (feed would
    # subtract None from the next stamp): refused (constructed)
    j = list(ints)
    j[len(S._CFG_I) + S._ST_I.index("_run")] = 2
    with pytest.raises(CheckpointError, match="inconsistent clock"):
        Station.from_bytes(C.pack(S._MAGIC, S._VERSION, f, j))


# ============================================================== O(1) memory
def test_memory_is_fixed_after_the_first_day():
    # nothing grows: the same attributes, the same ring lengths, and no net
    # allocation over a second day of readings (tracemalloc, CPython)
    import tracemalloc
    s = Station(3.5, 54.2, 600)
    _humid_day(s, 25, step=30)
    keys = set(vars(s))
    n = len(s._ring_p)
    tracemalloc.start()
    snap = tracemalloc.take_snapshot()
    _humid_day(s, 24, step=30, t0=25 * 3600 + 30)
    grown = sum(st.size_diff for st in tracemalloc.take_snapshot().compare_to(snap, "filename")
                if st.traceback[0].filename.endswith("station.py"))
    tracemalloc.stop()
    assert set(vars(s)) == keys and len(s._ring_p) == n == 145
    assert grown < 2000, grown       # a few float attributes that changed identity


# ============================================================== import rule
CORE = {"errors", "constants", "gravity", "potential", "moisture", "layers", "standard",
        "sealevel", "highsite", "checkpoint"}
"""The modules the station may import: the formula modules (highsite
included, though bench/size.py counts it outside the core), and the
checkpoint frame; not the column, the record format or the host tools."""


def import_violations(src):
    """What a module's source imports beyond the core modules and
    math/struct/array/binascii, or takes private (_name) from them."""
    bad = []
    for node in ast.walk(ast.parse(src)):
        if isinstance(node, ast.Import):
            bad += [a.name for a in node.names if a.name not in ("math", "struct", "array",
                                                                  "binascii")]
        elif isinstance(node, ast.ImportFrom):
            if node.level == 0:
                if node.module not in ("math", "struct", "array", "binascii"):
                    bad.append(node.module)
            elif node.level == 1 and node.module is None:
                bad += ["." + a.name for a in node.names if a.name not in CORE]
            elif node.level != 1 or node.module not in CORE:
                bad.append("." * node.level + str(node.module))
            else:
                bad += ["%s.%s" % (node.module, a.name) for a in node.names
                        if a.name.startswith("_")]
        elif isinstance(node, ast.Attribute) and isinstance(node.value, ast.Name):
            if node.value.id in CORE | {"math"} and node.attr.startswith("_"):
                bad.append("%s.%s" % (node.value.id, node.attr))
    return bad


def test_station_imports_only_core_modules_and_no_private_names():
    assert import_violations((ROOT / "tinygeo" / "station.py").read_text()) == []


def test_the_import_rule_check_can_fail():
    # controls: each of these must be caught
    for src, what in (("from .column import Column\n", ".column"),
                      ("from .moisture import _ex\n", "moisture._ex"),
                      ("import os\n", "os"),
                      ("from . import moisture\nx = moisture._f(1.0)\n", "moisture._f"),
                      ("from .host import table\n", ".host"),
                      ("from . import column\n", ".column")):
        assert what in import_violations(src), src


# ============================================================== float32 emulation
@pytest.mark.parametrize("mode,budget,naive_min", [("f32", 0.0045, 0.01), ("r30t", 0.03, 1.0),
                                                   ("r30f", 0.03, 0.2)])
def test_averages_on_float32_and_30_bit_floats(mode, budget, naive_min):
    # 600 readings of about 100 000 Pa with 20 Pa of heave, emulated float32 /
    # 30-bit (tests/floatemu.py), against the exact mean of the same rounded
    # readings (mpmath). Measured over 20 seeds when written (largest error):
    # station f32 0.0039 Pa (half a float32 step at 1e5 Pa, 0.0078: the final
    # rounding of the mean), r30t 0.025, r30f 0.027 Pa (under one 30-bit step,
    # 0.031); the naive running sum of the pressures 0.041 (f32), 4.2 (r30t,
    # truncation always downwards) and 1.06 Pa (r30f).
    import floatemu
    R = floatemu.rounder(mode)
    emu = floatemu.load_module(mode, "tinygeo.station")
    worst = worst_naive = 0.0
    for seed in range(6):
        s = emu.Station(3.5, 54.2, 600, stuck_readings=None)
        naive = 0.0
        rows = []
        for i in range(1201):
            p = R(100000.0 + 37 * seed - 0.02 * i + 20 * math.sin(2 * math.pi * i / 7.3 + seed))
            s.feed(p, R(288.0 + 0.1 * math.sin(i / 50)), R(80.0 + math.sin(i / 40)), i)
            if 600 <= i < 1200:
                naive = R(naive + p)
                rows.append(p)
        exact = float(mp.fsum(rows) / 600)
        worst = max(worst, abs(s.p_pa - exact))
        worst_naive = max(worst_naive, abs(R(naive / 600) - exact))
    assert 0 < worst <= budget, worst
    assert worst_naive > naive_min, worst_naive     # what the deviation sums avoid


def test_float32_results_within_the_core_budgets():
    # mslp, qnh and dew point of an emulated float32 station vs float64 on the
    # same rounded readings: within tests/test_float32_core.py's budgets of
    # sea_level_pressure (0.015 Pa), qnh (0.015 Pa), dew_point (5e-5 K), plus
    # the float32 rounding of the averages (measured 0.007 Pa, 0.004 Pa, 1.2e-6 K)
    import floatemu
    R = floatemu.rounder("f32")
    emu = floatemu.load_module("f32", "tinygeo.station")
    a = emu.Station(3.5, 54.2, 600)
    b = Station(3.5, 54.2, 600)
    rng = random.Random(2)
    for i in range(0, 4 * 3600):
        r = (R(100800.0 - 0.02 * i + 15 * math.sin(i / 1.3) + rng.gauss(0, 1)),
             R(288.0 + 0.2 * math.sin(i / 400.0) + rng.gauss(0, 0.02)),
             R(80.0 + 2 * math.sin(i / 500.0) + rng.gauss(0, 0.2)), i)
        a.feed(*r)
        b.feed(*r)
    assert abs(a.mslp_pa - b.mslp_pa) <= 0.02
    assert abs(a.qnh_pa - b.qnh_pa) <= 0.02
    assert abs(a.dew_point_k - b.dew_point_k) <= 6e-5
    assert abs(a.tendency_3h_pa - b.tendency_3h_pa) <= 0.01
    assert a.tendency_code == b.tendency_code


# ============================================================== shared vectors
def test_station_vector_files_are_current():
    assert G.main(["--check"]) == 0, "run: python tests/vectors/gen_station.py"


@pytest.mark.parametrize("path", STATION_FILES, ids=lambda p: p.name)
def test_station_vectors_cpython(path):
    checks, fails = runsta.run_file(str(path))
    assert checks >= 10 and not fails, "\n".join(fails)


def test_station_vectors_micropython():
    require_micropython()
    rel = [p.relative_to(ROOT) for p in STATION_FILES]
    out = run_script(MICROPYTHON, [VECTORS.relative_to(ROOT) / "runsta.py"] + rel)
    cp = run_script(sys.executable, [VECTORS.relative_to(ROOT) / "runsta.py"] + rel)
    assert out.split()[-1] == "0" and out == cp, out


def test_station_vectors_wasm32():
    require_wasm32()
    out = run_wasm32(VECTORS / "runsta.py", ["/v/station/" + p.name for p in STATION_FILES],
                     copies=[(VECTORS, "/v")])
    assert out.strip().endswith("failed 0"), out
    n = sum(runsta.run_file(str(p))[0] for p in STATION_FILES)
    assert ("checks %d " % n) in out


# ============================================================== the bundled buoy day
EXAMPLES = ROOT / "examples"
BUOY = ROOT / "ports" / "micropython" / "buoy.py"
BUOY_LOG = EXAMPLES / "buoy_day.csv"


def _load_path(path, name):
    import importlib.util
    spec = importlib.util.spec_from_file_location(name, str(path))
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


make_buoy_day = _load_path(EXAMPLES / "make_buoy_day.py", "tinygeo_make_buoy_day")


def test_bundled_buoy_day_is_current():
    assert make_buoy_day.main(["--check"]) == 0, "run: python examples/make_buoy_day.py"


def _log_rows():
    for line in BUOY_LOG.read_text().splitlines():
        if line.startswith("#") or line.startswith("time"):
            continue
        ts, p, t, rh = line.split(",")
        yield int(ts), float(p) * 100.0, float(t) + 273.15, float(rh)


def test_station_on_the_bundled_day_against_its_truth():
    # the scenario's own sea-level pressure (make_buoy_day.mslp_pa, no tinygeo)
    # at the middle of each burst: the station's sea-level pressure of every
    # average with a pressure lies within what a 60 s burst leaves: the heave
    # residual (Dirichlet bound of the scenario's six sinusoids at that sea
    # state, rho g0 <= 12.3 Pa/m), 3 sigma of the gust noise over 60 readings,
    # and 0.5 Pa of 0.01 hPa quantisation (measured: at most 0.60 of that sum;
    # largest error 2.4 Pa at 13:30 in 4.5 m waves)
    s = Station(3.5, 54.2)
    worst = 0.0
    norm = math.sqrt(sum(a * a for _, a, _ in make_buoy_day.WAVES) / 2.0)
    reports = {}
    for ts, p, t, rh in _log_rows():
        try:
            bits = s.feed(p, t, rh, ts)
        except ReadingError as e:
            reports.setdefault("rejected", []).append((ts, e.reason))
            continue
        if bits & S.EV_AVERAGE:
            reports[s.time_s] = (s.tendency_code, s.flags)
            if s.p_pa == s.p_pa:
                tm = s.time_s - 600 + 509.5
                hs = make_buoy_day.hs_m(tm)
                bound = G.heave_residual_bound(
                    [12.3 * hs / 4 * a / norm for _, a, _ in make_buoy_day.WAVES],
                    [per for per, _, _ in make_buoy_day.WAVES], 60)
                bound = float(bound) + 3 * (1.0 + 1.2 * hs) / math.sqrt(60) + 0.5
                worst = max(worst, abs(s.mslp_pa - make_buoy_day.mslp_pa(tm)) / bound)
    assert worst < 0.75, worst
    # the faults of the scenario, as constructed in make_buoy_day.py
    assert reports["rejected"] == [(19100, "pressure"), (45485, "pressure"), (61724, "temperature"),
                                   (78510, "pressure"), (80890, "humidity")]
    for end in range(9 * 3600 + 600, 10 * 3600 + 600, 600):     # the stuck hour
        assert reports[end][1] & S.FL_STUCK_P
    assert reports[19 * 3600 + 3000][1] & S.FL_GAP and s.missing == 1
    assert (s.count, s.rejected, s.averages) == (8575, 5, 142)
    # characteristics from the truth's shape: the scenario's pressure falls
    # until its minimum (found here from make_buoy_day.mslp_pa) and rises after
    t_min = min(range(12 * 3600, 17 * 3600, 10), key=make_buoy_day.mslp_pa)
    assert 14 * 3600 < t_min < 15 * 3600
    assert reports[6 * 3600][0] == 7     # [WMO306] decreasing steadily (3:00-6:00)
    assert reports[16 * 3600][0] == 5    # decreasing, then increasing; lower (13:00-16:00)
    assert reports[17 * 3600][0] == 3    # decreasing, then increasing; higher (14:00-17:00)
    assert reports[20 * 3600][0] == 2    # increasing (17:00-20:00)


def _buoy(exe, workdir, *args):
    return run_script(exe, [BUOY, "--log", BUOY_LOG, "--checkpoint", workdir / "b.ckpt"]
                      + list(args), cwd=workdir)


@pytest.fixture(scope="module")
def buoy_runs(tmp_path_factory):
    require_micropython()
    out = {}
    for name, exe in (("cpython", sys.executable), ("micropython", MICROPYTHON)):
        out[name] = _buoy(exe, tmp_path_factory.mktemp("buoy-" + name))
    return out


def test_buoy_logger_same_under_micropython_and_cpython(buoy_runs):
    from test_ports import assert_same_output
    cp, mpy = buoy_runs["cpython"], buoy_runs["micropython"]
    assert_same_output(cp, mpy)
    lines = mpy.strip().splitlines()
    assert lines[0] == "start new log at reading 0"
    assert lines[-1] == "summary accepted 8575 rejected 5 averages 142 missing 1"
    assert sum(1 for x in lines if x.startswith("report ")) == 23        # 01:00 .. 23:00
    assert "report 16:00" in mpy and " a 5 " in [x for x in lines if "report 16:00" in x][0]
    for word in ("rejected pressure", "rejected temperature", "rejected humidity", "qc 09:10"):
        assert word in mpy, word


@pytest.mark.parametrize("first,second", [("micropython", "micropython"), ("cpython", "cpython"),
                                          ("micropython", "cpython")])
def test_buoy_logger_resumes_from_its_checkpoint(tmp_path, buoy_runs, first, second):
    exe = {"micropython": MICROPYTHON, "cpython": sys.executable}
    a = _buoy(exe[first], tmp_path, "--stop-after", "4000")
    assert "stopped after 4000 readings" in a and "summary" not in a
    b = _buoy(exe[second], tmp_path)
    head = b.split("\n", 1)[0]
    ck = str(tmp_path / "b.ckpt")
    assert head.startswith("resuming from %s." % ck) and " at reading 3961, " in head, head
    rest = b.strip().splitlines()[1:]
    full = buoy_runs[second].strip().splitlines()
    assert rest == full[len(full) - len(rest):]      # the same lines as the uninterrupted run


def test_buoy_slots_torn_or_altered_fall_back(tmp_path):
    buoy = _load_path(BUOY, "tinygeo_buoy_example")
    st = Station(3.5, 54.2)
    rows = list(_log_rows())
    slots = buoy.Slots(str(tmp_path / "s.ckpt"))
    for r in rows[:300]:
        st.feed(r[1], r[2], r[3], r[0])
    slots.save(300, st)
    for r in rows[300:600]:
        st.feed(r[1], r[2], r[3], r[0])
    slots.save(600, st)
    assert buoy.Slots(slots.path).load()[0] == 600
    newest = tmp_path / "s.ckpt.1"
    data = newest.read_bytes()
    # torn: the newest slot cut short -> the older one
    newest.write_bytes(data[:len(data) // 2])
    assert buoy.Slots(slots.path).load()[0] == 300
    # the header altered (its index), the blob intact: the slot CRC covers it
    import struct
    newest.write_bytes(data[:4] + struct.pack("<I", 900) + data[8:])
    assert buoy.Slots(slots.path).load()[0] == 300
    newest.write_bytes(data)
    got = buoy.Slots(slots.path).load()
    assert got[0] == 600 and got[1].to_bytes() == st.to_bytes()


def test_buoy_logger_on_the_32_bit_runtime(tmp_path, buoy_runs):
    require_wasm32()
    from test_ports import assert_same_output
    (tmp_path / "w").mkdir()
    out = run_wasm32(BUOY, ["--log", "/ex/buoy_day.csv", "--checkpoint", "/work/b.ckpt"],
                     copies=[(BUOY.parent, "/app"), (EXAMPLES, "/ex"), (tmp_path / "w", "/work")],
                     cwd="/app")
    assert_same_output(buoy_runs["cpython"], out)


def test_buoy_logger_restarts_after_a_clock_set_back(tmp_path):
    # the first 1 000 readings of the day, then the clock set back to 480 s:
    # two 'time' rejections, then the third reading in a row restarts the
    # station (takeover_readings 3, EV_RESTART) and it goes on (constructed)
    lines = BUOY_LOG.read_text().splitlines()
    head = [x for x in lines if x.startswith("#") or x.startswith("time")]
    data = [x for x in lines if x[0].isdigit()]
    moved = []
    for i, x in enumerate(data[1000:1300]):
        w = x.split(",")
        moved.append(",".join([str(480 + i)] + w[1:]))
    log = tmp_path / "reset.csv"
    log.write_text("\n".join(head + data[:1000] + moved) + "\n")
    out = run_script(sys.executable, [BUOY, "--log", log, "--checkpoint", tmp_path / "r.ckpt"],
                     cwd=tmp_path)
    assert out.count("rejected time") == 2
    assert "#1002 restart at time_s 482:" in out
    # the new station: readings at 482..779 s (count goes on: 1 000 + 298),
    # the average 0..600 s completes at 600 s; the count of averages goes on
    # too: the first 1 000 readings (one minute at 1 Hz every 10 minutes)
    # completed 16, the 17th was open at the restart and is dropped
    assert out.strip().splitlines()[-1] == \
        "summary accepted 1298 rejected 2 averages 17 missing 0"


def test_buoy_slot_write_failure_is_retried(tmp_path, capsys):
    buoy = _load_path(BUOY, "tinygeo_buoy_example2")
    slots = buoy.Slots(str(tmp_path / "no-such-dir" / "s.ckpt"))
    st = Station(3.5, 54.2)
    slots.save(1, st)
    assert slots.failures == 1 and slots.next == 0
    assert "retried at the next one" in capsys.readouterr().out
    (tmp_path / "no-such-dir").mkdir()
    slots.save(2, st)
    assert slots.failures == 1 and slots.next == 1 and slots.load()[0] == 2


def test_readme_quotes_the_logger_as_it_prints(buoy_runs):
    # the README's "Stations and buoys" section shows lines of the buoy
    # logger's output: each must be printed exactly so by the logger
    # (MicroPython run)
    doc = (ROOT / "README.md").read_text()
    doc = doc[doc.index("## Stations and buoys"):]
    start = doc.index("```\nreport ")
    block = doc[start + 4:doc.index("```", start + 4)].strip().splitlines()
    out = buoy_runs["micropython"].splitlines()
    assert len(block) >= 10
    for line in block:
        assert line in out, line


def test_buoy_logger_typechecks_against_micropython_stubs():
    # only names MicroPython has (the stubs of tests/test_typecheck.py)
    import subprocess
    stubs = ROOT / ".typings" / "mp" / "math.pyi"
    if not stubs.exists():
        from conftest import IN_CI
        if IN_CI:
            pytest.fail("MicroPython stubs missing in .typings/mp; .ci/run installs them")
        pytest.skip("MicroPython stubs not installed")
    p = subprocess.run([sys.executable, "-m", "mypy", "--config-file",
                        str(ROOT / "mypy-micropython.ini"), "--no-incremental", "--cache-dir",
                        os.devnull, str(BUOY)], capture_output=True, text=True, cwd=str(ROOT),
                       timeout=300)
    assert p.returncode == 0, p.stdout + p.stderr


def _fuzz_values(name, v):
    if isinstance(v, int) and not isinstance(v, bool):
        return (0, -1, 2 ** 31 - 1, -2 ** 31)
    return (0.0, -0.0, 1e300, -1e300, float("nan"), 5e-324)


@pytest.mark.parametrize("mean12", [False, True])
def test_crafted_checkpoints_are_refused_or_harmless(mean12):
    # every saved field set to extreme values in a blob with a valid CRC (as a
    # hostile or buggy writer could make): from_bytes refuses it
    # (CheckpointError), or the station then takes 200 readings and
    # checkpoints again with only ReadingError rejections (constructed; the
    # attack found math domain errors and struct errors here)
    base = Station(3.5, 54.2, 600, mean12=mean12)
    _steady(base, 2000)
    names = list(S._ST_F) + list(S._TS_F) + list(S._ST_I)
    refused = survived = 0
    for name in names:
        for v in _fuzz_values(name, getattr(base, name)):
            st = Station.from_bytes(base.to_bytes())
            setattr(st, name, v)
            try:
                blob = st.to_bytes()
            except (struct.error, OverflowError, TypeError, ValueError):
                continue     # not a value a blob can hold
            try:
                r = Station.from_bytes(blob)
            except CheckpointError:
                refused += 1
                continue
            for i in range(2000, 2200):
                try:
                    r.feed(100000.0 + 0.01 * i, 285.0 + 0.001 * i, 80.0 + 0.001 * i, i)
                except ReadingError:
                    pass
            r.to_bytes()
            for a in ("p_pa", "mslp_pa", "tendency_3h_pa", "t_k", "dew_point_k"):
                x = getattr(r, a)
                assert x != x or abs(x) < 1e6, (name, v, a, x)
            survived += 1
    assert refused > 50 and survived > 50


def test_far_stamps_never_break_a_checkpoint():
    # the checkpoint keeps the average's number and gap_s as int32s (the
    # frame of tinygeo.checkpoint): a run far ahead goes on with gap_s
    # stopping at COUNT_MAX; a run beyond COUNT_MAX averages restarts the
    # station; stamps beyond 2**62 are refused; every blob round-trips
    # (constructed; before, to_bytes raised struct.error after a reading
    # 2**31 s on, and two float stamps 2e308 apart raised ValueError)
    s = Station(3.5, 54.2, 600)
    for k in range(10):          # more readings than a run: a run far ahead goes on
        s.feed(100500.0 + k, 285.0, 80.0, 600 + k)
    for k in range(3):
        try:
            s.feed(100500.0, 285.0, 80.0, 600 + 2 ** 31 + k)
        except ReadingError as e:
            assert k < 2 and e.reason == "time"
    s.feed(100500.0, 285.0, 80.0, 600 + 2 ** 31 + 600)    # completes the far average
    assert s.count == 12 and s.gap_s == S.COUNT_MAX and s.flags & FL_GAP
    blob = s.to_bytes()
    assert Station.from_bytes(blob).to_bytes() == blob
    far = 600 + 2 ** 31 + 600 * S.COUNT_MAX
    bits = 0
    for k in range(3):
        try:
            bits = s.feed(100500.0, 285.0, 80.0, far + k)
        except ReadingError as e:
            assert k < 2 and e.reason == "time"
    assert bits & EV_RESTART and s.averages == 2 and s.count == 13
    blob = s.to_bytes()
    assert Station.from_bytes(blob).to_bytes() == blob
    f = Station(3.5, 54.2, 600)
    f.feed(100500.0, 285.0, 80.0, -1e18)
    with pytest.raises(ReadingError) as e:
        f.feed(100500.0, 285.0, 80.0, 1e308)
    assert e.value.reason == "number" and "2**62" in str(e.value)


def test_a_stuck_clock_is_refused_before_anything_changes():
    # 2**30 readings in one average (reached here by setting the count, as a
    # checkpoint may hold it): the next reading in that average is refused as
    # 'time' and leaves the station, its recovery run included, as it was
    s = Station(3.5, 54.2, 600)
    _steady(s, 100)
    with pytest.raises(ReadingError):
        s.feed(100400.0, 285.1, 80.1, 100)        # a jump: the run holds one reading
    s._nslot = S.COUNT_MAX
    before = dict(vars(s))
    before["_ring_p"] = list(s._ring_p)
    with pytest.raises(ReadingError) as e:
        s.feed(100400.0, 285.1, 80.1, 101)
    assert e.value.reason == "time" and "clock stuck" in str(e.value)
    after = dict(vars(s))
    after["_ring_p"] = list(s._ring_p)
    before.pop("rejected"), after.pop("rejected")
    assert all(before[k] == after[k] or (before[k] != before[k] and after[k] != after[k])
               for k in before if not isinstance(before[k], list)) and s._run == 1


@pytest.mark.parametrize("every_s, kw", [(3600, {}), (2700, {}), (7200, {"average_s": 3600}),
                                         (90, {"average_s": 60, "max_gap_s": 0})])
def test_sparse_readings_never_lock_the_station(every_s, kw):
    # readings further apart than the clock step (max_gap_s + average_s) from
    # the start: the spacing is the station's own, so they are all accepted
    # (constructed; they were refused for good before)
    s = Station(3.5, 54.2, **kw)
    for i in range(30):
        s.feed(100000.0 + 5 * math.sin(i), 285.0 + 0.1 * math.sin(i), 80.0, 1000 + every_s * i)
    assert (s.count, s.rejected) == (30, 0) and s.averages == 29


def test_a_longer_gap_in_sparse_readings_is_bridged_after_takeover_readings():
    # hourly readings, then 5 hours without: the first two after the gap
    # (more than twice the spacing and beyond the clock step) are refused, the
    # third goes on at the hourly spacing (constructed)
    s = Station(3.5, 54.2)
    for i in range(10):
        s.feed(100000.0 + i, 285.0, 80.0, 3600 * i)
    for i in (14, 15):
        with pytest.raises(ReadingError) as e:
            s.feed(100000.0 + i, 285.0, 80.0, 3600 * i)
        assert e.value.reason == "time" and "twice the latest spacing (3600 s)" in str(e.value)
    for i in range(16, 30):
        s.feed(100000.0 + i, 285.0, 80.0, 3600 * i)
    assert (s.count, s.rejected) == (24, 2)


def test_every_state_a_station_reaches_is_restorable():
    # states the checks accept at their edges (attack cases): a barometer
    # drifting 2 Pa/s for 3 h 20 min (tendency beyond -20 000 Pa), 339.9 K at
    # 103 % (dew point above 340 K), a station without a guard fed a pressure
    # 2 km off (sea-level pressure far out, FL_MSLP_ODD): each blob restores
    # (constructed; wiggles keep the stuck test quiet)
    def w(i):
        return 0.01 * (i % 7)
    a = Station(3.5, 54.2)
    for i in range(12000):
        a.feed(110000.0 - 2.0 * i, 285.0 + w(i), 80.0 + w(i), i)
    assert a.tendency_3h_pa < -20000
    b = Station(3.5, 54.2)
    for i in range(700):
        b.feed(100000.0 + w(i), 339.9 - w(i), 103.0 - w(i), i)
    assert b.dew_point_k > 340
    c = Station(3.5, 54.2, guard_m=None)
    for i in range(700):
        c.feed(78000.0 + w(i), 285.0 + w(i), 80.0 + w(i), i)
    assert c.mslp_pa < 80000 and c.flags & S.FL_MSLP_ODD
    for st in (a, b, c):
        blob = st.to_bytes()
        assert Station.from_bytes(blob).to_bytes() == blob


def test_a_frozen_sensor_driver_shows_as_stuck_averages_not_a_gap():
    # the driver repeats its last reading for 4 hours: each average completes
    # (EV_AVERAGE) with nan values and FL_STUCK_P | FL_STUCK_T | FL_STUCK_RH,
    # and no gap is reported after it (constructed)
    s = Station(3.5, 54.2, 600)
    _steady(s, 3600)
    seen = []
    for i in range(3600, 3600 + 4 * 3600):
        bits = s.feed(100036.0, 288.6, 83.6, i)
        if bits & S.EV_AVERAGE:
            seen.append((s.flags, s.p_pa))
    stuck = S.FL_STUCK_P | S.FL_STUCK_T | S.FL_STUCK_RH
    assert len(seen) == 24 and all(f & stuck == stuck and p != p for f, p in seen[1:])
    _go_on(s, 3600, 1200, 4 * 3600)
    assert not s.flags & S.FL_GAP and s.missing == 0 and s.p_pa == s.p_pa


def test_a_stopped_clock_is_flagged():
    # 10 Hz readings on a 1 s clock (10 per stamp: not flagged), then the
    # clock stops for 500 readings: the average that holds them says so
    # (FL_CLOCK_STUCK: stuck_readings, 60, or more in a row with one stamp)
    # (constructed)
    s = Station(3.5, 54.2, 600)
    for i in range(13000):
        s.feed(100000.0 + 0.01 * (i % 50), 285.0 + 0.001 * (i % 30), 80.0 + 0.01 * (i % 9), i // 10)
    assert s.averages == 2 and not s.flags & S.FL_CLOCK_STUCK
    for i in range(500):
        s.feed(100000.0 + 0.01 * (i % 50), 285.0 + 0.001 * (i % 30), 80.0 + 0.01 * (i % 9), 1300)
    s.feed(100000.0, 285.0, 80.0, 1801)
    assert s.averages == 3 and s.flags & S.FL_CLOCK_STUCK
    assert s.average_readings == 1000 + 500          # 1200..1299 s at 10 Hz, then 500 stuck at 1300


def test_a_height_in_feet_flags_the_sea_level_pressure():
    # a station 610 m up configured as 2000 (feet): inside the 2000 m guard,
    # but its sea-level pressure, about 1190 hPa, lies beyond any observed
    # (FL_MSLP_ODD); the right height gives a plausible one (constructed)
    p610 = 94400.0     # a pressure about right at 610 m (USSA76, from memory: 94.3 kPa)
    for h, odd in ((2000.0, True), (610.0, False)):
        s = Station(h, 47.0)
        for i in range(700):
            s.feed(p610 + 0.1 * (i % 5), 285.0 + 0.01 * (i % 3), 70.0 + 0.1 * (i % 4), i)
        assert bool(s.flags & S.FL_MSLP_ODD) == odd, (h, s.mslp_pa)


def test_unit_hints_name_kpa_inhg_and_fahrenheit():
    from tinygeo.errors import pressure_hint, temperature_hint
    assert "kPa passed? multiply by 1000" in pressure_hint(101.325)
    assert "inHg passed? multiply by 3386.39" in pressure_hint(29.92)
    assert "hPa or mbar passed? multiply by 100" in pressure_hint(1013.25)
    assert "Fahrenheit" in temperature_hint(53.6)


def test_fog_at_100_percent_is_not_a_stuck_humidity():
    # saturated air holds the humidity at 100.0 for two hours: the averages
    # keep their humidity and dew point (constructed); 99.0 held as long is
    # stuck
    for rh, stuck in ((100.0, False), (99.0, True)):
        s = Station(3.5, 54.2, 600)
        for i in range(7200):
            s.feed(100000.0 + 0.01 * (i % 50), 285.0 + 0.001 * (i % 30), rh, i)
        assert bool(s.flags & S.FL_STUCK_RH) == stuck and (s.rh_pct == rh) != stuck


def test_a_humidity_that_underflows_leaves_no_half_average():
    # rh_pct 5e-324 % is in range for a reading (the sensor margin -3..103 %),
    # but rh/100 underflows to 0: dew_point_from_rh refuses it as a dew point
    # below the model (ModelRangeError, not a bare 'math domain error'), and
    # the station completes its averages with a nan dew point instead of
    # raising half-way through an average (constructed)
    with pytest.raises(tinygeo.errors.ModelRangeError, match="rh_pct=5e-324"):
        tinygeo.dew_point_from_rh(283.15, 5e-324)
    s = Station(3.5, 54.2, average_s=60.0, stuck_readings=None)
    for i in range(200):
        s.feed(100000.0 + 0.01 * (i % 7), 285.0 + 0.001 * (i % 5), 5e-324, i)
    assert s.averages == 3 and s.rejected == 0 and s.rh_pct == 5e-324
    assert s.dew_point_k != s.dew_point_k and s.mslp_pa == s.mslp_pa
