"""Write the station's shared stream vectors, tests/vectors/station/*.txt
(format: tests/vectors/runsta.py), from invented truths and mpmath
evaluations of the published formulas. Every expected number comes from the
truth the readings were made from, an mpmath evaluation of a published
formula on the readings as fed, a definition, or a case constructed by hand
(its rule stated beside it), never from tinygeo. Tolerances: 1e-8 Pa (gpm)
and 1e-9 K (%) for values evaluated from the readings as fed (measured in
double: at most 1.5e-11, the rounding of the expected value); the heave
residual bound where the truth is the noise-free pressure.

    python tests/vectors/gen_station.py            rewrite the files
    python tests/vectors/gen_station.py --check    exit 1 if a file is stale

The reference functions (ref_*) are used by tests/test_station.py too.

References (mpmath, 40 digits)
- [WMO8] WMO-No. 8, Vol. I, Ch. 3 (reduction of pressure; from memory):
  p0 = p exp(g0 H / (Rd (Tv + 0.0065 H/2))); Annex 4.B Magnus forms and
  enhancement factor (from memory).
- [WH06] Wallace and Hobbs (2006) eq. 3.16: Tv = T / (1 - (e/p)(1 - eps)).
- [USSA76] U.S. Standard Atmosphere 1976, Table 2 constants (g0, R*, M0),
  eq. 33a (constant-lapse layer), from memory.
- [ICAO] the altimeter-setting closed form QNH = P0 ((p/P0)^n + L0 E/T0)^(1/n),
  n = Rd L0/g0 (ICAO Doc 7488 layer 0; from memory).
- The geopotential height of the barometer: the closed form of the WGS 84
  normal potential (Heiskanen & Moritz 1967 eq. 2-126, from memory), as
  tests/vectors/gen_gravity.py evaluates it at 50 digits.
- WMO-No. 306 Manual on Codes, code table 0200 (characteristic of pressure
  tendency; definitions from memory).
"""
import math
import os
import sys

import mpmath as mp

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "station")
sys.path.insert(0, HERE)

DPS = 40
"""Working precision of every reference here, digits (local: mpmath.workdps)."""
with mp.workdps(DPS):
    G0 = mp.mpf("9.80665")
    RD = mp.mpf("8.31432") / mp.mpf("0.0289644")
    EPS = mp.mpf("0.621981")
    L0 = mp.mpf("0.0065")
    P0 = mp.mpf(101325)
    T0 = mp.mpf("288.15")


# --- references ---------------------------------------------------------------
@mp.workdps(DPS)
def ref_ew_pa(t_k, ice=False):
    """[WMO8] Annex 4.B Magnus form, Pa (ice form at and below 0 degC if ice)."""
    t = mp.mpf(t_k) - mp.mpf("273.15")
    if ice and t <= 0:
        return mp.mpf("611.2") * mp.exp(mp.mpf("22.46") * t / (mp.mpf("272.62") + t))
    return mp.mpf("611.2") * mp.exp(mp.mpf("17.62") * t / (mp.mpf("243.12") + t))


@mp.workdps(DPS)
def ref_f(p_pa):
    """[WMO8] enhancement factor (p in hPa in the published form)."""
    ph = mp.mpf(p_pa) / 100
    return mp.mpf("1.0016") + mp.mpf("3.15e-6") * ph - mp.mpf("0.074") / ph


@mp.workdps(DPS)
def ref_tv(t_k, p_pa, rh_pct, ice=False):
    """[WH06] eq. 3.16 with e = rh/100 f(p) e_w(t) of [WMO8]; T when rh is None."""
    if rh_pct is None or rh_pct != rh_pct:
        return mp.mpf(t_k)
    e = mp.mpf(rh_pct) / 100 * ref_f(p_pa) * ref_ew_pa(t_k, ice)
    return mp.mpf(t_k) / (1 - e / mp.mpf(p_pa) * (1 - EPS))


@mp.workdps(DPS)
def ref_td(t_k, rh_pct, ice=False):
    """Dew point: findroot of e(Td) = rh/100 e(t) on the [WMO8] Magnus forms, K."""
    e = mp.mpf(rh_pct) / 100 * ref_ew_pa(t_k, ice)
    use_ice = ice and e <= mp.mpf("611.2")
    return mp.findroot(lambda x: ref_ew_pa(x, use_ice) - e, mp.mpf(t_k) - 5)


def ref_gph(h_m, lat_deg):
    """Geopotential height of h_m above the WGS 84 ellipsoid, gpm: (U0 - W)/g0
    with the closed form of the normal potential (tests/vectors/gen_gravity.py
    gph: Heiskanen & Moritz 1967 eq. 2-126, from the defining constants)."""
    import gen_gravity
    return gen_gravity.gph("WGS84", lat_deg, h_m)


@mp.workdps(DPS)
def ref_msl(p_pa, tv_k, gph_m):
    """[WMO8] reduction: p exp(g0 H / (Rd (Tv + 0.0065 H/2))), Pa."""
    h = mp.mpf(gph_m)
    return mp.mpf(p_pa) * mp.exp(G0 * h / (RD * (mp.mpf(tv_k) + L0 * h / 2)))


@mp.workdps(DPS)
def ref_qnh(p_pa, elevation_m):
    """[ICAO] altimeter-setting closed form, Pa."""
    n = RD * L0 / G0
    return P0 * ((mp.mpf(p_pa) / P0) ** n + L0 * mp.mpf(elevation_m) / T0) ** (1 / n)


@mp.workdps(DPS)
def ref_iso(p_pa, tv_k, gph_m, iso_p_pa):
    """[USSA76] eq. 33a solved for the height: the surface iso_p_pa in a column
    of Tv falling at 0.0065 K/gpm from tv_k at (p_pa, gph_m), gpm."""
    return mp.mpf(gph_m) + mp.mpf(tv_k) / L0 * (
        1 - (mp.mpf(iso_p_pa) / mp.mpf(p_pa)) ** (RD * L0 / G0))


@mp.workdps(DPS)
def mean(xs):
    """The exact mean of the readings as fed (mpmath)."""
    return mp.fsum([mp.mpf(x) for x in xs]) / len(xs)


@mp.workdps(DPS)
def heave_residual_bound(amps_pa, periods_s, n):
    """Largest mean of n samples 1 s apart of sinusoids of these amplitudes and
    periods, whatever their phase: sum A |sin(pi n/T) / (n sin(pi/T))| (the
    Dirichlet kernel), Pa."""
    s = 0
    for a, per in zip(amps_pa, periods_s):
        s += mp.mpf(a) * abs(mp.sin(mp.pi * n / per) / (n * mp.sin(mp.pi / per)))
    return s


# --- file writer --------------------------------------------------------------
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

    def reading(self, p, t, rh, ts):
        self.n += 1
        self.lines.append("reading %s %s %s %s" % (_num(p), _num(t), _num(rh), _num(ts)))

    def raw(self, p, t, rh, ts):
        # a reading written as given (bad values: text for a missing time...)
        self.n += 1
        self.lines.append("reading %s %s %s %s" % (p, t, rh, ts))

    def expect(self, text, source):
        self.lines.append("expect %s  # %s" % (text, source))

    def value(self, name, x, tol, source):
        self.expect("value %s %s %s" % (name, _num(float(x)) if x == x else "nan", _num(tol)),
                    source)

    def text(self):
        return "\n".join(self.lines) + "\n"


# --- 1. heave on a buoy ---------------------------------------------------------
HEAVE_A_M = (0.9, 0.6, 0.35)
HEAVE_T_S = (6.3, 8.1, 11.7)
HEAVE_PHI = (0.3, 2.1, 4.0)


def heave_truth(t):
    """(true pressure at the mean barometer height, T, RH, heave z) at time t."""
    p = 100800.0 - 0.02 * t
    tk = 288.4 + 0.3 * math.sin(2 * math.pi * t / 900.0)
    rh = 82.0 + 3.0 * math.sin(2 * math.pi * t / 700.0 + 1.0)
    z = sum(a * math.sin(2 * math.pi * t / per + ph)
            for a, per, ph in zip(HEAVE_A_M, HEAVE_T_S, HEAVE_PHI))
    return p, tk, rh, z


def heave_1hz():
    h, lat = 3.5, 54.2
    d = Doc("heave_1hz", """\
A moored buoy, barometer 3.5 m above the water line at 54.2 N, read at 1 Hz
for 20 minutes while the pressure falls 0.72 hPa/h. The waves lift and lower
the barometer by three sinusoids (0.9, 0.6, 0.35 m; 6.3, 8.1, 11.7 s), and a
barometer that rises z metres reads rho g0 z less (rho = p/(Rd T), dry air,
about 11.9 Pa/m): single readings swing by up to 22 Pa. The 600 s averages
must give the mean of the true pressure to within the sinusoids' sampling
residual (the Dirichlet-kernel bound, 0.04 Pa here). Sea level, QNH and dew
point of the averages by mpmath on the published formulas.""")
    d.setting("height_m", h)
    d.setting("lat_deg", lat)
    d.setting("min_readings", 300)
    gph = ref_gph(h, lat)
    rows = []
    for i in range(1201):
        p, tk, rh, z = heave_truth(float(i))
        rho = p / (float(RD) * tk)
        pm = p - rho * float(G0) * z
        rows.append((pm, tk, rh, i, p))
        d.reading(pm, tk, rh, i)
        if i in (600, 1200):
            sl = rows[i - 600:i]
            pmean = mean([r[0] for r in sl])
            ptrue = mean([r[4] for r in sl])
            tmean = mean([r[1] for r in sl])
            rhmean = mean([r[2] for r in sl])
            amps = [a * 1.25 * float(G0) for a in HEAVE_A_M]   # rho g0 A, rho <= 1.25 kg/m3
            bound = heave_residual_bound(amps, HEAVE_T_S, 600)
            d.expect("bits %d" % 1, "constructed: an average completed, flags unchanged (0)")
            d.value("p_pa", pmean, 1e-8, "mpmath mean of the 600 readings as fed")
            d.value("p_pa", ptrue, float(bound) + 1e-6,
                    "truth: mean of the true pressure; heave residual bound %.3g Pa "
                    "(Dirichlet kernel of the three sinusoids)" % bound)
            d.value("t_k", tmean, 1e-9, "mpmath mean of the readings")
            d.value("rh_pct", rhmean, 1e-9, "mpmath mean of the readings")
            d.value("dew_point_k", ref_td(tmean, rhmean), 1e-9,
                    "findroot on the WMO-No. 8 Annex 4.B Magnus form, means of the readings")
            tv = ref_tv(tmean, pmean, rhmean)
            d.value("mslp_pa", ref_msl(pmean, tv, gph), 1e-8,
                    "mpmath WMO-No. 8 reduction, Tv by Wallace & Hobbs eq. 3.16, gph by "
                    "the closed normal potential")
            d.value("qnh_pa", ref_qnh(pmean, h), 1e-8, "mpmath ICAO altimeter-setting closed form")
            d.value("time_s", i, 0, "constructed: the end of the average, a multiple of 600 s")
            d.value("average_readings", 600, 0, "constructed: 1 Hz over 600 s")
            d.value("tendency_3h_pa", float("nan"), 0, "constructed: less than 3 hours of data")
            d.expect("code none", "constructed: less than 3 hours of data")
            d.expect("noflag FL_TREND_GAP", "constructed: the station has not run 3 hours")
    return d


# --- 2. one trace per tendency characteristic ------------------------------------
CODE_TEXT = {
    0: "increasing, then decreasing; same or higher than 3 h ago",
    1: "increasing, then steady (or increasing more slowly); higher",
    2: "increasing (steadily or unsteadily); higher",
    3: "decreasing or steady, then increasing (or increasing more rapidly); higher",
    4: "steady; same as 3 h ago",
    5: "decreasing, then increasing; same or lower",
    6: "decreasing, then steady (or decreasing more slowly); lower",
    7: "decreasing (steadily or unsteadily); lower",
    8: "steady or increasing, then decreasing (or decreasing more rapidly); lower",
}


def code_shape(code, x):
    """The constructed 3-hour trace (19 averages, x = 0..18) of one code, Pa
    relative to its start."""
    if code == 0:
        return 12.5 * x if x <= 12 else 150.0 - 15.0 * (x - 12)
    if code == 1:
        return 200.0 * x / 9 if x <= 9 else 200.0 + (x - 9)
    if code == 2:
        return 20.0 * x
    if code == 3:
        return float(x) if x <= 9 else 9.0 + 200.0 * (x - 9) / 9
    if code == 4:
        return 2.0 * math.sin(x)
    if code == 5:
        return -20.0 * x if x <= 9 else -180.0 + 140.0 * (x - 9) / 9
    if code == 6:
        return -200.0 * x / 9 if x <= 9 else -200.0 - (x - 9)
    if code == 7:
        return -20.0 * x
    return float(x) if x <= 9 else 9.0 - 209.0 * (x - 9) / 9


def tendency_codes():
    d = Doc("tendency_codes", """\
The characteristic of pressure tendency (WMO-No. 306 Manual on Codes, code
table 0200, definitions from memory), one constructed 3-hour trace per code:
a station 10 m up, 600 s averages, one reading in the middle of each
average (so each average is that reading). The traces follow each other:
window w covers averages 18w..18w+18, and the code of window w is read when
its last average completes. Shapes (Pa over the 3 hours): 0 up 150 then down
90; 1 up 200 in 1.5 h then +9; 2 up 20 per average; 3 +9 then up 200;
4 within +-2; 5 down 180 then up 140; 6 down 200 then -9; 7 down 20 per
average; 8 +9 then down 209. Each is far from the rule's thresholds (5 Pa
same, 10 Pa steady).""")
    d.setting("height_m", 10.0)
    d.setting("lat_deg", 30.0)
    base = 101000.0
    vals = []
    for w in range(9):
        for x in range(18):
            vals.append(base + code_shape(w, x))
        base += code_shape(w, 18)
    vals.append(base)
    vals.append(base)          # one more: closes the last window's end average
    for i, p in enumerate(vals):
        t = 290.0 + 0.5 * math.sin(i / 5.0)
        rh = 70.0 + 5.0 * math.sin(i / 7.0)
        d.reading(p, t, rh, 300 + 600 * i)
        w = (i - 1) // 18 - 1
        if i >= 19 and (i - 1) % 18 == 0 and w < 9:
            d.expect("code %d" % w, "WMO-No. 306 code table 0200: %s (constructed trace %d)"
                     % (CODE_TEXT[w], w))
            d.value("tendency_3h_pa", code_shape(w, 18), 1e-8,
                    "constructed: the trace's change over 3 hours")
            d.expect("noflag FL_TREND_GAP", "constructed: no gap")
    d.value("change_24h_pa", vals[162] - vals[18], 1e-8,
            "constructed: the average 24 h (144 averages) before the last one is number 18")
    return d


# --- 3. a gap and stuck sensors ---------------------------------------------------
def gap_stuck():
    h, lat = 2.0, 45.0
    d = Doc("gap_stuck", """\
A station 2 m up at 45 N, readings every 60 s (10 per 600 s average), the
pressure falling 0.01 Pa/s with a 3 Pa wiggle, stuck_readings 15. An hour
without readings (averages 24-29 missing): the first two readings after it
lie beyond the clock step (max_gap_s + average_s = 2400 s) and are refused
as 'time', the third agrees with them and the station goes on (takeover
after an outage); the gap is flagged on the first average after it (FL_GAP,
EV_GAP, gap_s 3600); the tendency is the difference of two
averages and is given across the gap when both ends exist, but the
characteristic needs a trace without a run of missing averages longer than
max_gap_s (1800 s): FL_TREND_GAP until the 3-hour window is clear of the
gap. Then the barometer sticks for 30 readings (averages 50-52): the run
reaches 15 inside average 51, which loses the run's readings (nan, FL_STUCK_P)
as does 52; average 50 keeps its 10 stuck readings (completed before the run
was known). Then the humidity sticks for 20 readings (averages 60-61).""")
    d.setting("height_m", h)
    d.setting("lat_deg", lat)
    d.setting("stuck_readings", 15)
    slots = {}
    stuck_p = None
    stuck_rh = None
    gph = ref_gph(h, lat)
    for i in range(700):
        t = 30 + 60 * i
        if 14400 <= t < 18000:
            continue
        k = t // 600
        p = 101200.0 - 0.01 * t + 3.0 * math.sin(i / 3.0)
        tk = 285.0 + 0.2 * math.sin(i / 4.0)
        rh = 75.0 + 2.0 * math.sin(i / 5.0)
        if 50 <= k < 53:
            if stuck_p is None:
                stuck_p = p
            p = stuck_p
        if 60 <= k < 62:
            if stuck_rh is None:
                stuck_rh = rh
            rh = stuck_rh
        if t in (18030, 18090):
            d.reading(p, tk, rh, t)
            d.expect("reject time", "constructed: %d s after the latest reading, beyond the "
                     "2400 s clock step" % (t - 14370))
            continue
        slots.setdefault(k, []).append((p, tk, rh))
        d.reading(p, tk, rh, t)
        first = len(slots[k]) == 1
        if not first:
            continue
        # the reading that opens average k completes the one before it (j)
        j = max(x for x in slots if x < k) if len(slots) > 1 else None
        if j is None:
            continue
        sl = slots[j]
        pm = mean([r[0] for r in sl])
        tm = mean([r[1] for r in sl])
        if j == 23:
            d.expect("bits 1", "constructed: the average before the gap, no flag")
        if j == 30:
            d.expect("bits 7", "constructed: EV_AVERAGE | EV_FLAGS | EV_GAP")
            d.expect("flag FL_GAP", "constructed: averages 24-29 missing")
            d.value("gap_s", 3600, 0, "constructed")
            d.value("missing", 6, 0, "constructed")
            a = mean([r[0] for r in slots[12]])
            d.value("tendency_3h_pa", pm - a, 1e-8,
                    "mpmath means of averages 30 and 12 as fed: the ends exist")
            d.expect("code none", "constructed: a 3600 s gap in the trace (max_gap_s 1800)")
            d.expect("flag FL_TREND_GAP", "constructed")
        if j == 31:
            d.expect("bits 3", "constructed: FL_GAP cleared (EV_AVERAGE | EV_FLAGS)")
            d.expect("noflag FL_GAP", "constructed")
        if j == 46:
            d.value("tendency_3h_pa", float("nan"), 0,
                    "constructed: the average 3 h earlier (28) is missing")
            d.expect("flag FL_TREND_GAP", "constructed")
        if j == 48:
            d.expect("bits 3", "constructed: the window 30..48 is clear (FL_TREND_GAP cleared)")
            d.expect("code 7", "WMO-No. 306 code table 0200: decreasing (steadily); the "
                     "constructed fall of 108 Pa in 3 h")
        if j == 50:
            d.value("p_pa", stuck_p, 1e-9, "constructed: 10 stuck readings, the run not yet 15")
            d.expect("noflag FL_STUCK_P", "constructed")
        if j in (51, 52):
            d.value("p_pa", float("nan"), 0, "constructed: the stuck run taken out")
            d.expect("flag FL_STUCK_P", "constructed")
            d.value("t_k", tm, 1e-9, "mpmath mean of the readings")
            d.value("mslp_pa", float("nan"), 0, "constructed: no pressure")
            d.expect("code none", "constructed: no pressure")
            d.expect("flag FL_TREND_GAP", "constructed: no pressure")
        if j == 53:
            d.expect("noflag FL_STUCK_P", "constructed: the value changes again")
            d.expect("noflag FL_TREND_GAP", "constructed: 2 missing averages, 1200 s <= 1800 s")
            d.expect("code 7", "WMO-No. 306 code table 0200: decreasing (steadily); constructed "
                     "fall")
            d.value("p_pa", pm, 1e-8, "mpmath mean of the readings")
            d.value("mslp_pa", ref_msl(pm, ref_tv(tm, pm, mean([r[2] for r in sl])), gph),
                    1e-6, "mpmath WMO-No. 8 reduction of the mean readings")
        if j == 60:
            d.expect("noflag FL_STUCK_RH", "constructed: 10 readings of the run")
        if j == 61:
            d.expect("flag FL_STUCK_RH", "constructed: the run reaches 15")
            d.value("rh_pct", float("nan"), 0, "constructed: the run taken out")
            d.value("dew_point_k", float("nan"), 0, "constructed: no humidity")
            d.value("p_pa", pm, 1e-8, "mpmath mean of the readings")
        if j == 62:
            d.expect("noflag FL_STUCK_RH", "constructed")
            d.value("change_24h_pa", float("nan"), 0, "constructed: under 24 h of data")
    d.value("missing", 6, 0, "constructed")
    return d


# --- 4. rejected readings ------------------------------------------------------
def qc_rejects():
    h, lat = 25.0, 60.0
    d = Doc("qc_rejects", """\
A station 25 m up at 60 N, 300 s averages, readings every 10 s, with bad
readings interleaved: each is refused with its reason and leaves the station
as it was, so the averages are those of the good readings. Then a genuine
pressure jump of 115 Pa (beyond 50 Pa + 1 Pa/s times the time since the
latest accepted reading): its first two readings are refused, the third
agrees with them and takes over (takeover_readings 3; FL_TAKEOVER on that
average), so the checks do not lock the station. Last, the clock is set back
50 minutes: two readings are refused, the third restarts the station
(EV_RESTART; the averages start afresh; count, rejected and the count of
averages go on).""")
    d.setting("height_m", h)
    d.setting("lat_deg", lat)
    d.setting("average_s", 300)
    good = {}
    n_good = 0
    n_bad = 0
    jump = 0.0
    for i in range(95):
        t = 10 * i
        p = 100500.0 + 2.0 * math.sin(i / 2.0) + jump
        tk = 280.0 + 0.1 * math.sin(i / 3.0)
        rh = 80.0 + 1.0 * math.sin(i / 4.0)
        if i == 40:
            jump = 115.0
            p += jump
        bad = []
        if i == 5:
            bad = [("%r" % (p / 100), tk, rh, t, "pressure", "hPa passed as Pa"),
                   ("nan", tk, rh, t, "number", "nan"),
                   ("150000.0", tk, rh, t, "pressure", "out of range"),
                   ("60000.0", tk, rh, t, "pressure", "pressure altitude 4.2 km, guard 2 km")]
        if i == 12:
            bad = [(repr(p + 300.0), tk, rh, t, "pressure", "a 300 Pa spike")]
        if i == 17:
            bad = [(repr(p), "15.2", rh, t, "temperature", "Celsius passed")]
        if i == 22:
            bad = [(repr(p), repr(tk + 8.0), rh, t, "temperature", "an 8 K spike")]
        if i == 27:
            bad = [(repr(p), tk, "0.8", t, "humidity", "a 0..1 fraction: a 79 % step"),
                   (repr(p), tk, "150.0", t, "humidity", "out of range")]
        if i == 33:
            bad = [(repr(p), tk, rh, t - 2500, "time", "time goes back 2500 s, beyond the "
                    "clock step of 2100 s (max_gap_s 1800 + average_s 300)"),
                   (repr(p), tk, rh, "-", "time", "no time"),
                   (repr(p), tk, rh, "true", "number", "a bool is not a number")]
        for bp, bt, brh, bts, reason, why in bad:
            d.raw(bp, _num(bt) if isinstance(bt, float) else bt,
                  _num(brh) if isinstance(brh, float) else brh,
                  _num(bts) if isinstance(bts, int) else bts)
            d.expect("reject %s" % reason, "constructed: %s" % why)
            n_bad += 1
        if 40 <= i < 42:
            d.reading(p, tk, rh, t)
            d.expect("reject pressure", "constructed: 115 Pa > 50 + %d Pa allowed" % (t - 390))
            n_bad += 1
            continue
        d.reading(p, tk, rh, t)
        d.expect("accept", "constructed: a good reading" if i != 42 else
                 "constructed: the third reading of the jump takes over")
        if i == 30:
            d.expect("noflag FL_TAKEOVER", "constructed: no jump in 0..300 s")
        if i == 60:
            d.expect("flag FL_TAKEOVER", "constructed: the average of 300..600 s holds the jump")
            d.expect("flag FL_CLOCK_HELD", "constructed: and the held reading")
        if i == 90:
            d.expect("noflag FL_TAKEOVER", "constructed: no jump in 600..900 s")
            d.expect("noflag FL_CLOCK_HELD", "constructed")
        n_good += 1
        good.setdefault(t // 300, []).append((p, tk, rh))
        if i == 35:
            # the same reading stamped 15 s back (a clock corrected back, within
            # the clock step): taken at the latest stamp, into this average
            d.reading(p, tk, rh, t - 15)
            d.expect("accept", "constructed: 15 s back is within the 2100 s clock step: held")
            n_good += 1
            good[t // 300].append((p, tk, rh))
        if i % 30 == 0 and i:
            sl = good[t // 300 - 1]
            d.value("p_pa", mean([r[0] for r in sl]), 1e-8,
                    "mpmath mean of the good readings of the average")
            d.value("t_k", mean([r[1] for r in sl]), 1e-9, "mpmath mean of the good readings")
            d.value("rh_pct", mean([r[2] for r in sl]), 1e-9, "mpmath mean of the good readings")
            d.value("average_readings", len(sl), 0, "constructed: the good readings")
    d.value("count", n_good, 0, "constructed")
    d.value("rejected", n_bad, 0, "constructed")
    d.value("averages", 3, 0, "constructed: 0..300, 300..600, 600..900 s")
    for k in range(3):
        t = 950 - 3000 + 10 * k
        d.reading(100615.0, 280.0, 80.0, t)
        if k < 2:
            d.expect("reject time", "constructed: the clock set back 50 minutes")
            n_bad += 1
        else:
            d.expect("accept", "constructed: the third reading in a row restarts the station")
            d.expect("bits 8", "constructed: EV_RESTART only")
            n_good += 1
    d.value("count", n_good, 0, "constructed: counted on through the restart")
    d.value("rejected", n_bad, 0, "constructed")
    d.value("averages", 3, 0, "constructed: counted on through the restart (no new one yet)")
    d.value("p_pa", float("nan"), 0, "constructed: no average yet after the restart")
    return d


# --- 5. a mountain station: 12-hour mean temperature, isobaric surface -------------
def high_station():
    h, lat = 1600.0, 46.5
    d = Doc("high_station", """\
A mountain station 1600 m up at 46.5 N with hourly averages (average_s 3600)
of readings every 600 s, mean12 on: the sea-level reduction uses the mean of
the latest hour's temperature and that of the hour 12 hours earlier (WMO
12-hour mean temperature method, from memory), with the latest hour's
virtual-temperature increment; FL_NO_T12 while there is none. The 850 hPa
surface (standard_surface_pa: 800 to 2300 m) is given as a geopotential
height by the constant-lapse column of USSA76 eq. 33a. A daily temperature
cycle of +-6 K.""")
    d.setting("height_m", h)
    d.setting("lat_deg", lat)
    d.setting("average_s", 3600)
    d.setting("mean12", True)
    gph = ref_gph(h, lat)
    slots = {}
    for i in range(14 * 6 + 1):
        t = 300 + 600 * i
        p = 83800.0 + 30.0 * math.sin(2 * math.pi * t / 43200.0) + 0.7 * math.sin(i)
        tk = 278.0 + 6.0 * math.sin(2 * math.pi * (t - 30000.0) / 86400.0) + 0.05 * math.cos(i)
        rh = 60.0 + 10.0 * math.sin(2 * math.pi * t / 86400.0) + 0.3 * math.sin(i / 2.0)
        k = t // 3600
        slots.setdefault(k, []).append((p, tk, rh))
        d.reading(p, tk, rh, t)
        if len(slots[k]) != 1 or k == 0:
            continue
        j = k - 1
        sl = slots[j]
        pm = mean([r[0] for r in sl])
        tm = mean([r[1] for r in sl])
        rm = mean([r[2] for r in sl])
        tv = ref_tv(tm, pm, rm)
        if j < 12:
            tr = tv
            flag = "flag FL_NO_T12"
        else:
            t12 = mean([r[1] for r in slots[j - 12]])
            tr = (tm + t12) / 2 + (tv - tm)
            flag = "noflag FL_NO_T12"
        if j in (0, 5, 11, 12, 13):
            d.expect(flag, "constructed: the average 12 h earlier %s" % (
                "exists" if j >= 12 else "does not exist"))
            d.value("mslp_pa", ref_msl(pm, tr, gph), 1e-8,
                    "mpmath WMO-No. 8 reduction with %s" % (
                        "the 12-hour mean temperature" if j >= 12 else "the latest temperature"))
            d.value("iso_p_pa", 85000.0, 0, "standard_surface_pa rule: 850 hPa from 800 to 2300 m")
            d.value("iso_gph_m", ref_iso(pm, tv, gph, 85000.0), 1e-8,
                    "mpmath USSA76 eq. 33a, lapse 0.0065 K/gpm from the station's Tv")
            d.value("qnh_pa", ref_qnh(pm, h), 1e-8, "mpmath ICAO altimeter-setting closed form")
            d.value("time_s", 3600 * (j + 1), 0, "constructed: hourly averages end on the hour")
        if j == 13:
            a = mean([r[0] for r in slots[j - 3]])
            d.value("tendency_3h_pa", pm - a, 1e-8, "mpmath means of the hours 3 h apart")
    return d


FILES = (heave_1hz, tendency_codes, gap_stuck, qc_rejects, high_station)


@mp.workdps(DPS)
def main(argv):
    check = "--check" in argv
    stale = []
    if not check and not os.path.isdir(OUT):
        os.makedirs(OUT)
    for make in FILES:
        d = make()
        path = os.path.join(OUT, d.name + ".txt")
        text = d.text()
        if check:
            try:
                with open(path) as f:
                    old = f.read()
            except OSError:
                old = None
            if old != text:
                stale.append(path)
        else:
            with open(path, "w") as f:
                f.write(text)
    if stale:
        print("stale: " + " ".join(stale))
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
