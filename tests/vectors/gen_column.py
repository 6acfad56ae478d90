"""Write the column's shared stream vectors, tests/vectors/column/*.txt (format:
tests/vectors/runcol.py), from the truth of tests/streams.py: the U.S.
Standard Atmosphere 1976 (and profiles built from its equations), invented
flights, and a seeded sensor. Every expected number comes from that truth or
from a published definition, never from tinygeo; the tolerances were set
near the errors measured when these files were made (the comment beside each
says what it covers).

    python tests/vectors/gen_column.py            rewrite the files
    python tests/vectors/gen_column.py --check    exit 1 if a file is stale

tests/test_column_vectors.py runs --check's comparison and every file under
CPython, MicroPython (64- and 32-bit) and the C port.
"""
import math
import os
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "column")
sys.path.insert(0, os.path.dirname(HERE))

import streams as S  # noqa: E402

LAT = 45.5425      # the latitude of the standard's sea-level gravity g0 (from memory)
K = S.RD_G0        # Rd/g0, gpm/K


def _num(x):
    if x is None:
        return "-"
    if isinstance(x, int):
        return "%d" % x
    if x != x:
        return "nan"
    return repr(float(x))


class Doc:
    def __init__(self, name, title):
        self.name = name
        self.lines = ["# %s" % line for line in title.strip().split("\n")]
        self.n = -1

    def setting(self, name, value):
        self.lines.append("setting %s %s" % (name, "none" if value is None else
                                              ("true" if value is True else
                                               ("false" if value is False else _num(value)))))

    def reading(self, r):
        self.n += 1
        self.lines.append("reading %s" % " ".join(_num(x) for x in r))

    def expect(self, text, source):
        self.lines.append("expect %s  # %s" % (text, source))

    def text(self):
        return "\n".join(self.lines) + "\n"


def ascent_levels():
    """Noise-free dry ascent through the U.S. Standard Atmosphere 1976."""
    atm = S.StandardAtmosphere()
    d = Doc("ascent_levels", """\
A noise-free ascent through the U.S. Standard Atmosphere 1976 (dry), 0 to
14 000 gpm at 5 gpm/s, one reading every 5 s (25 gpm), after 60 s on the
pad; pressure and temperature are the standard's (eqs. 23, 33a, 33b), so
the column's gph is the standard's own geopotential height up to its
trapezoid rule in ln p. Events come one reading late (confirmed readings).
Source of every expected value: the standard (tests/streams.py
StandardAtmosphere); tolerances: measured integration error and the
interpolation between readings 25 gpm apart.""")
    d.setting("lat_deg", LAT)
    d.setting("sigma_p_pa", 2)
    hs = [0.0] * 13 + [25.0 * k for k in range(1, 561)]
    for k, h in enumerate(hs):
        d.reading((atm.p_pa(h), atm.t_k(h), None, 5 * k, None))
        if h in (5000.0, 11000.0, 14000.0):
            d.expect("value gph_m %r 0.005" % h,
                     "USSA76: the reading's pressure is the standard's at %g gpm; measured "
                     "trapezoid error under 2 mm" % h)
    for p in S.MANDATORY_PA:
        g = atm.gph_of_p(p)
        if g > hs[-1]:
            continue
        k = next(i for i, h in enumerate(hs) if h >= g)
        d.expect("event level%d %d %d" % (int(p / 100 + 0.5), k + 1, k + 1),
                 "USSA76: %g hPa lies at %.1f gpm, crossed by reading %d, confirmed by the next"
                 % (p / 100, g, k))
    d.expect("event launch 14 20", "constructed: the climb starts after reading 12 "
             "(launch_gpm 20 gpm plus the track's lag)")
    # the tropopause: the standard's lapse rate is 6.5 K/km below 11 km and
    # 0 above: the WMO first tropopause is at 11 km; on 100 gpm layers the
    # level found is within one layer of it; the event comes 2 km higher
    d.expect("event tropopause %d %d" % (12 + 13000 // 25, 12 + 13400 // 25),
             "WMO definition on USSA76 (Table 4: 11 km base of the isothermal layer), confirmed "
             "by the first 100 gpm layer more than 2 km above the one that holds 11 km (it closes "
             "a layer later), one reading late")
    d.expect("value tropopause_gph_m 11000.0 100.0",
             "USSA76 Table 4 (11 km layer base); 100 gpm layers (tropopause_layer_gpm)")
    d.expect("value tropopause_p_pa %r 1300.0" % atm.p_pa(11000.0),
             "USSA76 pressure at 11 km (22632 Pa); 100 gpm of layer is about 1.2 hPa there")
    d.expect("no_event burst", "constructed: the stream only climbs")
    d.expect("no_event float", "constructed: the stream only climbs")
    return d


def straddle():
    """A stable layer across 500 hPa: the tropopause is the one above (WMO 'decreases to')."""
    t0 = 288.15

    def t_of_h(h):
        # 6.5 K/km to 4500 gpm, isothermal to 7000, 6.5 K/km to 12000, isothermal above
        if h <= 4500.0:
            return t0 - 0.0065 * h
        if h <= 7000.0:
            return t0 - 0.0065 * 4500.0
        if h <= 12000.0:
            return t0 - 0.0065 * 4500.0 - 0.0065 * (h - 7000.0)
        return t0 - 0.0065 * 9500.0
    atm = S.HumidAtmosphere(t_of_h, lambda h: 0.0, h_top_m=16000.0, name="straddle")
    d = Doc("tropopause_straddle", """\
A constructed dry profile: 6.5 K/km to 4 500 gpm, isothermal to 7 000 gpm
(a stable layer across 500 hPa, at 5 560 gpm), 6.5 K/km again to 12 000 gpm,
isothermal above; pressure by the hydrostatic integral (tests/streams.py
HumidAtmosphere with no humidity). Readings every 5 s, 25 gpm apart, no
noise. By the WMO definition the lapse rate "decreases to" 2 K/km or less at
4 500 and at 12 000 gpm; only levels at or above 500 hPa count, and inside the
isothermal layer it does not decrease to it (it is already 0): the first
tropopause is at 12 000 gpm.""")
    d.setting("lat_deg", LAT)
    d.setting("sigma_p_pa", 2)
    hs = [0.0] * 5 + [25.0 * k for k in range(1, 641)]
    for k, h in enumerate(hs):
        d.reading((atm.p_pa(h), t_of_h(h), None, 5 * k, None))
    d.expect("value tropopause_gph_m 12000.0 100.0",
             "WMO-No. 49 first-tropopause definition on the constructed profile; 100 gpm layers")
    d.expect("event tropopause %d %d" % (4 + 14000 // 25, 4 + 14400 // 25),
             "WMO definition: confirmed by the first 100 gpm layer 2 km above 12 000 gpm, one "
             "reading late")
    return d


def _pad_stream(n, p, t, dt=1):
    return [(p, t, None, k * dt, None) for k in range(n)]


def first_bad():
    atm = S.StandardAtmosphere()
    p0, t0 = atm.p_pa(0.0), atm.t_k(0.0)
    d = Doc("first_bad", """\
A bad first reading (pressure 6 % low, about 500 m too high) on the pad,
then good readings at 1 s: the readings contradict the first one (500 m in
1 and 2 s is beyond max_rate_m_s) and agree with each other; after
takeover_readings (3) of them the column restarts from the first of them,
placed at start_height_m (FL_TAKEOVER). Constructed; U.S. Standard
Atmosphere 1976 surface values.""")
    d.setting("lat_deg", LAT)
    d.setting("start_height_m", 0.0)
    d.reading((p0 * 0.94, t0, None, 0, None))
    d.expect("accept", "constructed: the first reading cannot be judged yet")
    for k in range(1, 40):
        h = 0.0 if k < 20 else 5.0 * (k - 19)
        d.reading((atm.p_pa(h), atm.t_k(h), None, k, None))
        if k in (1, 2):
            d.expect("reject rate", "constructed: 500 m in %d s is beyond 200 m/s" % k)
        if k == 3:
            d.expect("accept", "constructed: the third good reading in a row takes over")
            d.expect("flag FL_TAKEOVER", "constructed")
            d.expect("value gph_m 0.0 0.001", "USSA76: the standard's surface pressure at 0 gpm")
        if k == 39:
            d.expect("value gph_m %r 0.002" % h, "USSA76 pressure at %g gpm" % h)
            d.expect("value count 39 0", "constructed: readings 1..39 (1 and 2 rejected when they came, "
                     "counted when their run was followed)")
    return d


def time_glitch():
    atm = S.StandardAtmosphere()
    d = Doc("time_glitch", """\
One time stamp 1e6 s ahead at reading 30 of an ascent at 5 gpm/s, 1 s
apart: the reading agrees with the one before it (the column cannot know
yet) and is accepted; the next reading's time goes back, so it is rejected
('time'); the one after it also contradicts reading 30 and agrees, like the
rejected one, with reading 29: reading 30 is retracted and the column goes
on from 29 (FL_REPLACED). Heights: the U.S. Standard Atmosphere 1976.""")
    d.setting("lat_deg", LAT)
    for k in range(60):
        h = 5.0 * k
        ts = k + 1000000 if k == 30 else k
        d.reading((atm.p_pa(h), atm.t_k(h), None, ts, None))
        if k == 30:
            d.expect("accept", "constructed")
        if k == 31:
            d.expect("reject time", "constructed: 31 s is before the stamp of reading 30")
        if k == 32:
            d.expect("accept", "constructed")
            d.expect("flag FL_REPLACED", "constructed: reading 30 retracted")
            d.expect("value retracted 1 0", "constructed")
            d.expect("value gph_m %r 0.002" % h, "USSA76 pressure at %g gpm" % h)
            d.expect("value time_s 32.0 0", "constructed: seconds since the first stamp")
        if k == 59:
            d.expect("value rejected 2 0", "constructed: reading 31 rejected, reading 30 retracted")
    return d


def gap_glitch():
    atm = S.StandardAtmosphere()
    d = Doc("gap_glitch", """\
An ascent at 5 gpm/s, 1 s apart, with 60 s of readings missing at 10 000 gpm
and the first reading after the gap 6 % low in pressure (about 500 m high):
within 200 m/s over 61 s, so it is accepted; the next reading contradicts it
(500 m in 1 s) and agrees with the reading before the gap; the one after that
agrees with the reading before the gap too: the glitch is retracted
(FL_REPLACED) and no offset stays. Heights: the U.S. Standard Atmosphere 1976.""")
    d.setting("lat_deg", LAT)
    k = 0
    for i in range(0, 2100):
        h = 5.0 * i
        if 2000 <= i < 2060:
            continue
        p = atm.p_pa(h)
        if i == 2060:
            p *= 0.94
        d.reading((p, atm.t_k(h), None, i, None))
        if i == 2060:
            d.expect("accept", "constructed: 61 s after the last reading, within max_rate_m_s")
        if i == 2061:
            d.expect("reject rate", "constructed: 500 m in 1 s")
        if i == 2062:
            d.expect("accept", "constructed")
            d.expect("flag FL_REPLACED", "constructed: the glitch retracted")
        if i in (2062, 2099):
            d.expect("value gph_m %r 0.06" % h, "USSA76 pressure at %g gpm; the 62 s layer over the "
                     "gap is one trapezoid (measured 0.05 m)" % h)
        k += 1
    return d


def start_guard():
    atm = S.StandardAtmosphere()
    h0 = 420.0
    p, t = atm.p_pa(h0), atm.t_k(h0)
    d = Doc("start_guard", """\
The first reading in hPa (its standard pressure altitude is 30 km, not the
start height): refused with reason 'pressure' by the start guard; the next
reading, in Pa, starts the column. Constructed; U.S. Standard Atmosphere 1976.""")
    d.setting("lat_deg", LAT)
    d.setting("start_height_m", h0)
    d.reading((p / 100.0, t, None, 0, None))
    d.expect("reject pressure", "constructed: %.2f Pa lies 30 km above the start" % (p / 100.0))
    d.reading((p, t, None, 1, None))
    d.expect("accept", "constructed")
    d.expect("value count 1 0", "constructed")
    d.expect("value rejected 1 0", "constructed")
    return d


def _flight_file(name, title, flight, atm, seed, settings, ticks=None, sigma_p=10.0, step=1):
    st = S.make_stream(flight, atm, seed, sigma_p_pa=sigma_p, sigma_t_k=0.2)
    d = Doc(name, title)
    d.setting("lat_deg", LAT)
    for k, v in settings:
        d.setting(k, v)
    n = 0
    index = {}
    for k in range(0, len(st.readings), step):
        p, t, rh, ts, gps = st.readings[k]
        if ticks is not None:
            ts = ticks + int(round(1000 * flight.t_s[k]))
        d.reading((p, t, rh, ts, gps))
        index[k] = n
        n += 1
    return d, st, index


def flight_events():
    atm = S.StandardAtmosphere()
    fl = S.balloon_flight(atm, top_gph_m=6000.0, pad_s=60.0, ground_s=300.0)
    d, st, index = _flight_file("flight_events", """\
An invented flight with sensor noise (seed 7: pressure 10 Pa, temperature
0.2 K a reading, 1 s apart, time in seconds): 60 s on the pad, 5 gpm/s to
6 000 gpm, burst, parachute (5 gpm/s at the ground), 300 s on the ground
(tests/streams.py balloon_flight and make_stream through the U.S. Standard
Atmosphere 1976). The windows come from the truth of the flight and the
requirements on the column: launch within 30 s of the climb's start, burst
within 60 s of the top, landing within 180 s after touchdown, each level
once within 4 (Rd/g0) Tv sigma_p/p + 2 m of its true height.""", fl, atm, 7, ())
    kt = index[fl.index_at_time(fl.launch_time_s)]
    d.expect("event launch %d %d" % (kt, kt + 30), "truth: the climb starts at %g s" % fl.launch_time_s)
    kb = index[fl.index_at_time(fl.top_time_s)]
    d.expect("event burst %d %d" % (kb, kb + 60), "truth: the top at %g s" % fl.top_time_s)
    kl = index[fl.index_at_time(fl.touchdown_time_s)]
    d.expect("event landed %d %d" % (kl, kl + 180), "truth: touchdown at %.1f s" % fl.touchdown_time_s)
    d.expect("no_event float", "constructed: no float in this flight")
    d.expect("no_event tropopause", "constructed: the flight stays below the tropopause")
    return d, st, fl


def float_ms():
    atm = S.StandardAtmosphere()
    fl = S.float_flight(atm, float_gph_m=3000.0, float_s=1200.0, approach_s=60.0, wave_m=10.0,
                        wave_period_s=300.0, pad_s=60.0, ground_s=300.0)
    d, st, index = _flight_file("float_ms", """\
An invented float with sensor noise (seed 11: pressure 2 Pa, temperature
0.2 K a reading, 1 s apart): 60 s on the pad, 5 gpm/s to a float at
3 000 gpm (+-10 gpm wave) for 1 200 s, cut-down, parachute, 300 s on the
ground. Time stamps are integer milliseconds of a tick counter with a large
origin (1.7e12 ms, epoch-like), time_unit_s 0.001: the column subtracts them
as ints. Windows from the truth (tests/streams.py float_flight): the float
reported within float_s (600 s) + 120 s of its start, the cut-down within
60 s, the landing within 180 s after touchdown; the float raises no burst
and no landing.""", fl, atm, 11, (("sigma_p_pa", 2), ("time_unit_s", 0.001)),
        ticks=1700000000000, sigma_p=2.0)
    kf = index[fl.index_at_time(fl.float_start_s)]
    d.expect("event float %d %d" % (kf, kf + 600 + 120), "truth: the float starts at %.0f s"
             % fl.float_start_s)
    kb = index[fl.index_at_time(fl.top_time_s)]
    d.expect("event burst %d %d" % (kb, kb + 60), "truth: the cut-down at %.0f s" % fl.top_time_s)
    kl = index[fl.index_at_time(fl.touchdown_time_s)]
    d.expect("event landed %d %d" % (kl, kl + 180), "truth: touchdown at %.1f s" % fl.touchdown_time_s)
    return d, st, fl


def humidity_held():
    atm = S.warm_humid(h_top_m=8000.0)
    d = Doc("humidity_held", """\
A warm humid ascent (tests/streams.py warm_humid: 30 degC at the ground,
85 % RH to 1 km, 60 % at 5 km) with the humidity lost from 1 000 gpm on, no
noise, 5 s apart. The held mixing ratio of 1 km exceeds saturation as the air
cools, so it is capped (FL_CAPPED). Expected heights: the truth's, with the
tolerance of the unknown humidity: between the heights of dry and of
saturated air above 1 km (the half-width of that envelope, computed from the
truth's pressures and temperatures with the exact virtual temperature,
Wallace and Hobbs 2006 eq. 3.16, WMO-No. 8 Magnus form).""")
    d.setting("lat_deg", LAT)
    d.setting("sigma_p_pa", 2)
    hs = [25.0 * k for k in range(0, 281)]
    dry = sat = 0.0
    for k, h in enumerate(hs):
        p, t = atm.p_pa(h), atm.t_k(h)
        rh = atm.rh_pct(h) if h <= 1000.0 else None
        d.reading((p, t, rh, 5 * k, None))
        if k and h > 1000.0:
            # envelope of dry and saturated air for the layer (trapezoid in ln p)
            p1, t1 = atm.p_pa(hs[k - 1]), atm.t_k(hs[k - 1])
            ln = math.log(p1 / p)
            dry += K * (t1 + t) / 2 * ln - K * (atm.tv_k(hs[k - 1]) + atm.tv_k(h)) / 2 * ln
            sat += K * (S.virtual_temperature_k(t1, 100.0, p1) + S.virtual_temperature_k(t, 100.0, p)) \
                / 2 * ln - K * (atm.tv_k(hs[k - 1]) + atm.tv_k(h)) / 2 * ln
        if h in (2000.0, 4000.0, 7000.0):
            mid = h + (dry + sat) / 2
            half = (sat - dry) / 2 + 0.05
            d.expect("value gph_m %r %r" % (mid, half),
                     "truth at %g gpm; dry..saturated envelope above 1 km (+0.05 m integration)" % h)
            d.expect("flag FL_HELD_MIXING", "constructed: humidity lost above 1 km")
        if h == 4000.0:
            d.expect("flag FL_CAPPED", "WMO-No. 8 Magnus: the 1 km mixing ratio is above saturation "
                     "at %.1f K" % t)
    return d


def gps_nofix():
    atm = S.StandardAtmosphere()
    d = Doc("gps_nofix", """\
GPS heights with a "no fix" spell given as nan: the readings are kept, the
GPS ignored (FL_NO_GPS), gps_m stays the latest fix. Constructed; heights
from the U.S. Standard Atmosphere 1976, GPS = its geometric height
(tests/streams.py geometric_height_m).""")
    d.setting("lat_deg", LAT)
    for k in range(20):
        h = 5.0 * k
        g = float("nan") if 8 <= k < 12 else S.geometric_height_m(h)
        d.reading((atm.p_pa(h), atm.t_k(h), None, k, g))
        if k == 9:
            d.expect("accept", "constructed: a nan GPS is 'no fix'")
            d.expect("flag FL_NO_GPS", "constructed")
            d.expect("value gps_m %r 1e-9" % S.geometric_height_m(35.0), "constructed: the latest fix")
    return d


def spike_back():
    atm = S.StandardAtmosphere()
    d = Doc("spike_back", """\
An ascent at 5 gpm/s, 1 s apart, through 300 hPa (9 164 gpm in the U.S.
Standard Atmosphere 1976), with one reading's pressure 820 Pa high: about
-176 gpm there and +185 gpm back, both within max_rate_m_s, so the rate check
passes it; the next reading agrees with the one before the spike (within the
"there and back" test's T = 30 gpm + 8 sqrt(2) x 2.3 gpm of noise) and the
spike lies beyond T from both, below them: it is retracted (FL_REPLACED) and
no offset stays. Heights: the standard's.""")
    d.setting("lat_deg", LAT)
    d.setting("start_height_m", S.geometric_height_m(9000.0))   # the geometric height of 9000 gpm
    for k in range(40):
        h = 9000.0 + 5.0 * k
        p = atm.p_pa(h) + (820.0 if k == 20 else 0.0)
        d.reading((p, atm.t_k(h), None, k, None))
        if k == 20:
            d.expect("accept", "constructed: -176 gpm in 1 s is within 200 m/s")
        if k == 21:
            d.expect("accept", "constructed")
            d.expect("flag FL_REPLACED", "constructed: reading 20 retracted")
            d.expect("value retracted 1 0", "constructed")
            d.expect("value gph_m %r 0.05" % h, "USSA76 pressure at %g gpm; the start placed by "
                     "USSA76's r0 (eq. 18), the column's gravity is WGS84's: measured 35 mm" % h)
        if k == 39:
            d.expect("value gph_m %r 0.05" % h, "USSA76 pressure at %g gpm; the start placed by "
                     "USSA76's r0 (eq. 18), the column's gravity is WGS84's: measured 35 mm" % h)
            d.expect("value rejected 1 0", "constructed: the retracted reading")
    return d


def first_bad_untimed():
    atm = S.StandardAtmosphere()
    d = Doc("first_bad_untimed", """\
A bad first reading (pressure 6 % low, about 500 m too high) on the pad,
without time stamps (no rate check is possible): the second reading is
accepted on top of it; the third agrees with the second within T (30 gpm +
8 sqrt(2) x 0.8 gpm of noise) and the first lies beyond T from both: the
column restarts from the second reading, placed at start_height_m, and the
first is retracted (FL_REPLACED on the third). Heights: the U.S. Standard
Atmosphere 1976.""")
    d.setting("lat_deg", LAT)
    d.setting("start_height_m", 0.0)
    p0, t0 = atm.p_pa(0.0), atm.t_k(0.0)
    d.reading((p0 * 0.94, t0, None, None, None))
    d.expect("accept", "constructed: the first reading cannot be judged yet")
    for k in range(1, 60):
        h = 0.0 if k < 20 else 5.0 * (k - 19)
        d.reading((atm.p_pa(h), atm.t_k(h), None, None, None))
        if k == 1:
            d.expect("accept", "constructed: no time, no rate check")
        if k == 2:
            d.expect("accept", "constructed")
            d.expect("flag FL_REPLACED", "constructed: the first reading retracted")
            d.expect("value gph_m 0.0 0.001", "USSA76: the standard's surface pressure at 0 gpm")
            d.expect("value count 2 0", "constructed: readings 1 and 2")
            d.expect("value retracted 1 0", "constructed")
        if k == 59:
            d.expect("value gph_m %r 0.002" % h, "USSA76 pressure at %g gpm" % h)
    return d


def unit_switch():
    atm = S.StandardAtmosphere()
    d = Doc("unit_switch", """\
An ascent at 5 gpm/s, 1 s apart; from reading 100 to 139 the pressure comes
in hPa (the value in Pa divided by 100): 31 km above the column in 1 s, a
factor 100 in pressure. The first two are rejected by rate; the run that
would take over is refused ('pressure': no flight moves the pressure by a
factor beyond 5 between two readings) for as long as it lasts; from reading
140 on the pressure is in Pa again and agrees with the column: accepted, no
level, no tropopause, heights the standard's.""")
    d.setting("lat_deg", LAT)
    for k in range(160):
        h = 5.0 * k
        p = atm.p_pa(h) / (100.0 if 100 <= k < 140 else 1.0)
        d.reading((p, atm.t_k(h), None, k, None))
        if k in (100, 101):
            d.expect("reject rate", "constructed: 31 km in 1 s")
        if 102 <= k < 140 and k % 10 in (2, 9):
            d.expect("reject pressure", "constructed: a factor 100 from the latest accepted reading")
        if k == 140:
            d.expect("accept", "constructed: Pa again, 205 gpm in 41 s")
        if k == 159:
            d.expect("value gph_m %r 0.002" % h, "USSA76 pressure at %g gpm" % h)
    d.expect("no_event tropopause", "constructed: the stream climbs to 795 gpm only")
    d.expect("no_event burst", "constructed: the stream only climbs")
    return d


def pad_drift():
    atm = S.StandardAtmosphere()
    d = Doc("pad_drift", """\
Three hours on the pad, one reading every 10 s, while the weather lowers the
pressure by 1 hPa/h (about 8.6 gpm/h: 26 gpm in 3 h, past launch_gpm); then
an ascent at 5 gpm/s. The track's rate on the pad is 0.0024 gpm/s, below
launch_rate_gpm_s (0.5): no launch until the balloon climbs; the launch comes
within 60 s of it. Pressure and temperature: the U.S. Standard Atmosphere
1976 (the pad at 0 gpm, the drift subtracted).""")
    d.setting("lat_deg", LAT)
    d.setting("sigma_p_pa", 2)
    n_pad = 1080
    drop = 100.0 * n_pad * 10 / 3600.0
    for k in range(n_pad + 60):
        h = 0.0 if k < n_pad else 50.0 * (k - n_pad + 1)
        p = atm.p_pa(h) - (100.0 * k * 10 / 3600.0 if k < n_pad else drop)
        d.reading((p, atm.t_k(h), None, 10 * k, None))
    d.expect("event launch %d %d" % (n_pad, n_pad + 6),
             "constructed: the climb starts at reading %d, 10 s apart" % n_pad)
    return d


def documents():
    out = [ascent_levels(), straddle(), first_bad(), time_glitch(), gap_glitch(), start_guard(),
           flight_events()[0], float_ms()[0], humidity_held(), gps_nofix(), spike_back(),
           first_bad_untimed(), unit_switch(), pad_drift()]
    return dict((d.name + ".txt", d.text()) for d in out)


def main(argv):
    docs = documents()
    if "--check" in argv:
        stale = []
        for name, text in sorted(docs.items()):
            path = os.path.join(OUT, name)
            if not os.path.exists(path) or open(path).read() != text:
                stale.append(name)
        if stale:
            print("stale: %s (run python tests/vectors/gen_column.py)" % " ".join(stale))
            return 1
        return 0
    os.makedirs(OUT, exist_ok=True)
    for name, text in sorted(docs.items()):
        with open(os.path.join(OUT, name), "w") as f:
            f.write(text)
    print("wrote %d files to %s" % (len(docs), OUT))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
