"""The column on streams that behave like sensors (seeded Monte Carlo runs of
tests/streams.py): noise that grows with height, per-flight biases, a bad
reading at every position (the first one included), one wrong time stamp, a
glitch after a gap, lost humidity, unit slips, floats of hours, float32
boards. The truth is the U.S. Standard Atmosphere 1976 (and a warm humid
profile) computed in tests/streams.py from its defining equations, never
from tinygeo. The counts asserted here are the requirements of the issue
"Trustworthy column"; bench/montecarlo.py prints the same figures for more
seeds (bench/README.md).
"""
import math

import pytest

import floatemu
import streams as S
from tinygeo.column import Column, FL_TAKEOVER, FL_SAME_TIME, PH_FLOAT, PH_LANDED
from tinygeo.errors import ReadingError, RangeError

LAT = 45.5425         # the latitude of the standard's sea-level g0 (from memory)
ATM = S.StandardAtmosphere()
FLIGHT = S.balloon_flight(ATM)                  # 35 000 gpm at 5 gpm/s, 1 s readings
SEEDS = range(1, 11)
CONFIGS = (("defaults", 10.0, {}), ("2 Pa", 2.0, {"sigma_p_pa": 2.0}))


def factory(**kw):
    return lambda: Column(LAT, **kw)


# ----------------------------------------------------------------- ascents

@pytest.mark.parametrize("name,sigma_p,kw", CONFIGS, ids=[c[0] for c in CONFIGS])
def test_ascent_to_35_km_events_and_levels(name, sigma_p, kw):
    # requirement: no burst before the top, the burst within 60 s and 300 gpm
    # of the true top, no landing before touchdown and the landing within 180 s
    # after it, every mandatory level exactly once within 4 (Rd/g0) Tv
    # sigma_p/p + 2 m of its true height (truth: USSA76 in tests/streams.py);
    # at most 1 % of noise-only readings rejected. Measured over 20 seeds
    # (bench/montecarlo.py): burst 19-22 s after the top, -55..+79 gpm
    # (defaults) / -8..+20 gpm (2 Pa); landing 59-88 s after touchdown; level
    # errors <= 2.7 m (defaults) / 0.9 m (2 Pa); no rejections.
    n_clean = n_rej = n_ret = 0
    for seed in SEEDS:
        st = S.make_stream(FLIGHT, ATM, seed, sigma_p_pa=sigma_p, sigma_t_k=0.2)
        run = S.run_column(factory(**kw), st)
        n_ret += run.column.retracted
        ev = S.event_scores(run, st)
        assert ev["n_burst"] == 1 and ev["n_burst_before_top"] == 0, (seed, ev)
        assert 0 <= ev["burst_delay_s"] <= 60, (seed, ev)
        assert abs(ev["burst_gph_err_m"]) <= 300 and abs(ev["burst_time_err_s"]) <= 60, (seed, ev)
        assert ev["n_landed"] == 1 and ev["n_landed_before_touchdown"] == 0, (seed, ev)
        assert 0 <= ev["landed_delay_s"] <= 180 and ev["final_phase"] == "PH_LANDED", (seed, ev)
        assert ev["n_launch"] == 1 and 0 <= ev["launch_delay_s"] <= 30, (seed, ev)
        assert ev["n_float"] == 0, (seed, ev)
        lv = S.level_scores(run, st)
        for r in lv[:-1]:
            assert r["count"] == 1, (seed, r)
            assert abs(r["err_m"]) <= r["tol_m"], (seed, r)
        assert lv[-1]["count"] == 0
        rej = S.clean_rejects(run, st)
        n_clean += rej["n_clean"]
        n_rej += sum(v for k, v in rej.items() if k not in ("n_clean", "gph_min", "gph_max"))
    assert n_rej <= 0.01 * n_clean, (n_rej, n_clean)
    assert n_rej == 0          # measured: none in 211 340 noise-only readings (20 seeds)
    # the "there and back" test retracts no noise-only reading (8 sqrt(2)
    # sigma plus 30 gpm): measured none in 211 340 (20 seeds, bench/montecarlo.py)
    assert n_ret <= 0.01 * n_clean and n_ret == 0, (n_ret, n_clean)


def test_per_flight_biases_fake_no_events():
    # calibration offsets drawn once per flight (0.5 hPa, 0.2 K: the defaults'
    # 1-sigma) shift heights but fake no event: one burst after the top, one
    # landing after touchdown, each level once (its height off by the bias:
    # not checked here)
    for seed in SEEDS:
        st = S.make_stream(FLIGHT, ATM, seed, sigma_p_pa=10.0, sigma_t_k=0.2, bias_p_pa=50.0,
                           bias_t_k=0.2)
        run = S.run_column(factory(), st)
        ev = S.event_scores(run, st)
        assert ev["n_burst"] == 1 and ev["n_burst_before_top"] == 0, (seed, ev)
        assert ev["n_landed"] == 1 and ev["n_landed_before_touchdown"] == 0, (seed, ev)
        assert all(r["count"] == 1 for r in S.level_scores(run, st)[:-1])


# ------------------------------------------------------------------ floats

@pytest.mark.parametrize("name,sigma_p,kw", CONFIGS, ids=[c[0] for c in CONFIGS])
def test_a_float_of_hours_is_a_float_not_a_burst(name, sigma_p, kw):
    # requirement: a float of hours raises no burst and no landing and is
    # itself an event and a phase; a cut-down after it is a burst. 3 h at
    # 32 000 gpm with a +-30 gpm wave (tests/streams.py float_flight). Measured
    # (20 seeds, 6 h, 2 Pa): float reported 577-639 s after it began, no
    # false burst or landing.
    fl = S.float_flight(ATM, float_s=3 * 3600.0)
    for seed in range(1, 4):
        st = S.make_stream(fl, ATM, seed, sigma_p_pa=sigma_p, sigma_t_k=0.2)
        run = S.run_column(factory(**kw), st)
        ev = S.event_scores(run, st)
        assert ev["n_float"] == 1 and ev["n_float_outside"] == 0, (seed, ev)
        assert 0 <= ev["float_delay_s"] <= 600 + 120, (seed, ev)
        assert ev["n_burst"] == 1 and ev["n_burst_before_top"] == 0, (seed, ev)
        assert 0 <= ev["burst_delay_s"] <= 60, (seed, ev)
        assert ev["n_landed"] == 1 and ev["n_landed_before_touchdown"] == 0, (seed, ev)
        k = fl.index_at_time(fl.float_start_s + 1200.0)
        assert run.phase[k] == PH_FLOAT
        assert run.column.phase == PH_LANDED
        assert run.column.retracted == 0, seed     # the wave and the noise are no spike


def test_a_float_high_up_with_a_slow_wave_is_one_float():
    # requirement: a float at 36 000 gpm (10 Pa: 140 gpm of noise a reading)
    # with a +-300 gpm wave of an hour is one EV_FLOAT, no burst before the
    # cut-down, no retraction. Measured (20 seeds, 6 h, bench/montecarlo.py):
    # one float event a run, no false burst, no retraction
    fl = S.float_flight(ATM, rate_m_s=5.0, float_gph_m=36000.0, float_s=3 * 3600.0, wave_m=300.0,
                        wave_period_s=3600.0, ground_s=60.0)
    for seed in range(1, 3):
        st = S.make_stream(fl, ATM, seed, sigma_p_pa=10.0, humidity=False)
        run = S.run_column(factory(), st)
        ev = S.event_scores(run, st)
        assert ev["n_float"] == 1 and ev["n_burst_before_top"] == 0, (seed, ev)
        assert run.column.retracted == 0, seed


# ------------------------------------------------------------- single faults

SHORT = S.balloon_flight(ATM, top_gph_m=1500.0, pad_s=60.0, ground_s=60.0)


def _never_saw(st, k):
    return S.gap(st, k, 1)


# (label, the fault, the reference: a column that never saw the bad value)
FAULTS = (
    ("p -6 %", lambda s, k: S.pressure_scaled(s, k, -0.06), _never_saw),
    ("p +6 %", lambda s, k: S.pressure_scaled(s, k, 0.06), _never_saw),
    ("T +15 K", lambda s, k: S.temperature_spike(s, k, 15.0), _never_saw),
    ("T -15 K", lambda s, k: S.temperature_spike(s, k, -15.0), _never_saw),
    ("p nan", lambda s, k: S.nan_value(s, k, "p_pa"), _never_saw),
    # a wrong time stamp on a good reading: its height is right, so the column
    # may keep it (the reference is then the stream with the right stamp) or
    # drop it (a restart from the next readings when it was the first one)
    ("time +1e6 s", lambda s, k: S.time_shifted(s, k, 1e6), None),
    ("time -1e6 s", lambda s, k: S.time_shifted(s, k, -1e6), None),
)


@pytest.mark.parametrize("label,make,never", FAULTS, ids=[f[0] for f in FAULTS])
def test_a_bad_reading_at_every_position_costs_at_most_10_readings(label, make, never):
    # requirement: a single bad reading anywhere, the first one included,
    # costs at most 10 readings; from then on the heights equal, within 1 m,
    # those of a column that never saw it (the same stream with that reading
    # removed; for a wrong time stamp, or the right one). Every position of a
    # short flight (60 s pad, 5 gpm/s to 1500 gpm, descent; 10 Pa noise; every
    # third position for the time faults). Measured: at most 2 readings lost,
    # the worst difference after them 17 mm (a reading skipped changes the
    # trapezoid of one layer); the bound below is 0.03 m, the goal 1 m.
    st = S.make_stream(SHORT, ATM, 5, sigma_p_pa=10.0, sigma_t_k=0.2)
    worst_lost = 0
    worst_m = 0.0
    for k in range(0, len(st.readings), 1 if k_all(label) else 3):
        bad = S.run_column(factory(), make(st, k))
        sc = S.fault_scores(S.run_column(factory(), _never_saw(st, k)), bad, k)
        if never is None:
            right = S.fault_scores(S.run_column(factory(), st), bad, k)
            if right["worst_m"] < sc["worst_m"]:
                sc = right
        worst_lost = max(worst_lost, sc["lost"])
        worst_m = max(worst_m, sc["worst_m"])
        assert sc["lost"] <= 10 and sc["worst_m"] <= 1.0, (label, k, sc)
    assert worst_lost <= 3 and worst_m <= 0.03, (label, worst_lost, worst_m)


def k_all(label):
    # every position for the pressure faults; every third for the others (time)
    return label.startswith("p ")


@pytest.mark.parametrize("gph", [10000.0, 20000.0, 30000.0])
def test_faults_high_up_where_noise_is_large(gph):
    # the same requirement at 10, 20 and 30 km (10 Pa noise: 5, 25, 90 m of
    # height noise a reading), for a pressure glitch after a 60 s gap, a time
    # stamp far ahead and a temperature spike
    st = S.make_stream(FLIGHT, ATM, 3, sigma_p_pa=10.0, sigma_t_k=0.2)
    k = FLIGHT.index_at_gph(gph)
    cases = (
        (lambda s: S.pressure_scaled(S.gap(s, k, 60), k + 60, -0.06), lambda s: S.gap(s, k, 61), k + 60),
        (lambda s: S.time_shifted(s, k, 1e6), lambda s: S.gap(s, k, 1), k),
        (lambda s: S.temperature_spike(s, k, 20.0), lambda s: S.gap(s, k, 1), k),
    )
    for make, ref, idx in cases:
        sc = S.fault_scores(S.run_column(factory(), ref(st)), S.run_column(factory(), make(st)), idx)
        assert sc["lost"] <= 10 and sc["worst_m"] <= 1.0, (gph, idx, sc)


def test_flags_of_the_recovery():
    # the look-back retracts a glitch after a gap (FL_REPLACED) and a run of
    # good readings takes over from a bad first reading (FL_TAKEOVER)
    st = S.make_stream(SHORT, ATM, 2, sigma_p_pa=2.0, sigma_t_k=0.2)
    k = SHORT.index_at_gph(1000.0)
    run = S.run_column(factory(), S.pressure_scaled(S.gap(st, k, 60), k + 60, -0.06))
    assert run.column.retracted == 1
    col = Column(LAT)
    flags = 0
    for r in S.pressure_scaled(st, 0, -0.06).readings[:10]:
        try:
            col.feed(*r)
            flags |= col.flags
        except ReadingError:
            pass
    # readings 1-9 are the column's (1 and 2 rejected when they came, then
    # followed); rejected: the first reading and readings 1 and 2
    assert flags & FL_TAKEOVER and col.count == 9 and col.rejected == 3
    assert abs(col.gph_m) < 3.0       # on the pad (0 gpm), within the noise


# ------------------------------------------------------------------ units

def test_hpa_passed_as_pa_is_refused_at_the_start():
    # a first reading in hPa (pressure altitude ~30 km, USSA76) is refused with
    # reason 'pressure' and the hint; an anchor in hPa is refused by the
    # constructor; the rest of the flight is unaffected (requirement: the
    # issue's "10 hPa level at 184 gpm" and "-38 119 gpm" cases)
    st = S.make_stream(FLIGHT, ATM, 1, sigma_p_pa=10.0, sigma_t_k=0.2)
    bad = S.run_column(factory(), S.hpa_as_pa(st, 0))
    assert bad.reason[0] == "pressure"
    ref = S.run_column(factory(), S.gap(st, 0, 1))
    assert S.fault_scores(ref, bad, 0)["worst_m"] == 0.0
    with pytest.raises(RangeError):
        Column(LAT, anchor_p_pa=S.P0_PA / 100.0)


# --------------------------------------------------------------- humidity

def test_lost_humidity_stays_within_two_sigma():
    # requirement: with humidity lost above 1 km in a warm humid ascent, the
    # height error stays within 2 sigma_m at 5, 10 and 20 km (truth: the warm
    # humid profile of tests/streams.py, hydrostatic integral with the exact
    # virtual temperature). Measured (3 seeds): errors +5.7/+9.2/+23.8 m
    # against sigma_m 17.5/24.7/60.9 m (the held mixing ratio capped at
    # saturation); before the cap and the humidity term +19/+68/+174 m against
    # 5.5/13/57 m.
    atm = S.warm_humid()
    fl = S.balloon_flight(atm, top_gph_m=30000.0)
    ks = [fl.index_at_gph(h) for h in (5000.0, 10000.0, 20000.0)]
    k1 = fl.index_at_gph(1000.0)
    for kw in ({}, {"dry_fallback": True}):
        for seed in (1, 2, 3):
            st = S.humidity_lost(S.make_stream(fl, atm, seed, sigma_p_pa=10.0, sigma_t_k=0.2,
                                               sigma_rh_pct=1.0), k1)
            run = S.run_column(factory(**kw), st, sigma_at=ks)
            for k in ks:
                err = run.gph_m[k] - fl.gph_m[k]
                assert abs(err) <= 2 * run.sigma_m[k], (kw, seed, k, err, run.sigma_m[k])


# ----------------------------------------------------------- time on boards

@pytest.mark.parametrize("mode", ["f32", "r30t"])
def test_int_millisecond_ticks_keep_their_resolution_on_float32_boards(mode):
    # requirement: large time origins and integer stamps (milliseconds of a tick
    # counter) keep 1 ms resolution on a float32 build. The unmodified column
    # under the float32 / 30-bit emulation (tests/floatemu.py) is fed int ticks
    # from 1.7e12 ms (epoch-like) with 0-13 ms of jitter and time_unit_s=0.001:
    # no reading is rejected, every rate equals the float64 column's within
    # float32 precision, and the time of the latest reading is exact to 1 ms.
    R = floatemu.rounder(mode)
    emu = floatemu.load(mode)
    ce = emu.column.Column(LAT, time_unit_s=0.001)
    cr = Column(LAT, time_unit_s=0.001)
    st = S.make_stream(SHORT, ATM, 4, sigma_p_pa=2.0, sigma_t_k=0.2)
    origin = 1700000000000
    worst = 0.0
    for k, (p, t, rh, ts, gps) in enumerate(st.readings[:600]):
        tick = origin + 1000 * k + (k * 7) % 13
        ce.feed(R(p), R(t), None, tick)
        cr.feed(R(p), R(t), None, tick)
        if k > 1:
            worst = max(worst, abs(ce.rate_m_s - cr.rate_m_s))
        assert ce.time_origin == origin
    assert ce.rejected == 0 and cr.rejected == 0
    # the rate from 5 gpm steps in float32: a few ulps of the height difference
    assert worst < (0.02 if mode == "f32" else 0.3), worst
    assert abs(ce.time_s - (1000 * 599 + (599 * 7) % 13) / 1000.0) < 6e-4


def test_float_stamps_with_a_large_origin_on_float32_lose_no_readings():
    # the case: seconds since New Year (1.7e7 s) as float32 floats step
    # by 2 s, so stamps repeat: a repeated stamp skips the rate check
    # (FL_SAME_TIME) instead of rejecting the reading; heights are unchanged
    # (pressure alone sets them). Under the float32 emulation.
    R = floatemu.rounder("f32")
    emu = floatemu.load("f32")
    ce = emu.column.Column(LAT)
    st = S.make_stream(SHORT, ATM, 4, sigma_p_pa=2.0, sigma_t_k=0.2)
    flags = 0
    for k, (p, t, rh, ts, gps) in enumerate(st.readings[:400]):
        ce.feed(R(p), R(t), None, R(1.7e7 + k))
        flags |= ce.flags
    assert ce.rejected == 0 and flags & FL_SAME_TIME


# --------------------------------------------------------------------- GPS

def test_gps_nofix_as_nan_keeps_every_reading():
    # requirement: gps_m nan means "no fix": the reading is kept, GPS ignored,
    # a flag says so (the issue: nan rejected the whole reading)
    k5 = FLIGHT.index_at_gph(5000.0)
    st = S.make_stream(FLIGHT, ATM, 1, sigma_p_pa=10.0, sigma_t_k=0.2, gps=True,
                       gps_nofix=((k5, 30),))
    ref = S.make_stream(FLIGHT, ATM, 1, sigma_p_pa=10.0, sigma_t_k=0.2)
    a = S.run_column(factory(), st)
    b = S.run_column(factory(), ref)
    assert all(r is None for r in a.reason)
    assert a.gph_m == b.gph_m
