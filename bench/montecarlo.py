"""Monte Carlo figures of the streaming column (tinygeo.column.Column) on seeded
sensor streams (tests/streams.py): flight events, mandatory levels, rejected
good readings, and recovery from single bad readings.

Run from the repository root with the venv active (CPython)::

    python bench/montecarlo.py              # 20 seeds, about 1 min
    python bench/montecarlo.py --quick      # 3 seeds, 1-hour floats, about 12 s
    python bench/montecarlo.py --seeds 50 --first-seed 100

Columns under test (their public API only; event and phase names read by name,
so EV_FLOAT/PH_FLOAT are counted when they exist):

- "defaults": Column(LAT) with every default, fed by a sensor with the noise
  the defaults assume (pressure 10 Pa, temperature 0.2 K, 1-sigma per
  reading; no per-flight bias, so that heights can be compared with the truth);
- "2 Pa": Column(LAT, sigma_p_pa=2) fed by a 2 Pa sensor (0.2 K).

Truth: the U.S. Standard Atmosphere 1976 (dry) of tests/streams.py, flights of
tests/streams.py (gpm and gpm/s): 120 s on the pad at 0 gpm, 5 gpm/s to
35 000 gpm, parachute descent (5 gpm/s at the ground, v ~ rho^-1/2), 600 s on
the ground, one reading a second; floats: 6 h at 32 000 gpm with a +-30 gpm,
15 min wave, then a cut-down. LAT = 45.5425 deg (the latitude of the
standard's sea-level gravity g0; from memory). Every figure comes from the
seeds printed with the command line.
"""
import argparse
import math
import os
import statistics
import sys
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path[:0] = [os.path.join(ROOT, "tests"), ROOT]

import streams as S  # noqa: E402
from tinygeo.column import Column  # noqa: E402

LAT = 45.5425


def med(xs):
    xs = [x for x in xs if x == x]
    return statistics.median(xs) if xs else math.nan


def rng(xs, fmt="%.0f"):
    """'median [min..max]' of the finite values ('value' when all equal, '-' if none)."""
    xs = [x for x in xs if x == x]
    if not xs:
        return "-"
    if min(xs) == max(xs):
        return fmt % xs[0]
    return (fmt + " [" + fmt + ".." + fmt + "]") % (med(xs), min(xs), max(xs))


def factory(**kw):
    return lambda: Column(LAT, **kw)


CONFIGS = (
    ("defaults", dict(sigma_p_pa=10.0, sigma_t_k=0.2), {}),
    ("2 Pa", dict(sigma_p_pa=2.0, sigma_t_k=0.2), dict(sigma_p_pa=2.0)),
)


def ascents(atm, flight, seeds):
    print("1. Ascents to 35 000 gpm at 5 gpm/s, %d seeds (one run per seed and column)" % len(seeds))
    lv_rows = {}
    for name, sensor, kw in CONFIGS:
        ev, rej, lv, cols = [], [], [], []
        for seed in seeds:
            st = S.make_stream(flight, atm, seed, **sensor)
            run = S.run_column(factory(**kw), st)
            cols.append(run.column)
            ev.append(S.event_scores(run, st))
            rej.append(S.clean_rejects(run, st))
            lv.append(S.level_scores(run, st))
        n = len(seeds)
        false_b = [e for e in ev if e["n_burst_before_top"]]
        true_b = [e for e in ev if e["n_burst"] and not e["n_burst_before_top"]]
        false_l = [e for e in ev if e["n_landed_before_touchdown"]]
        good_l = [e for e in ev if e["n_landed"] and not e["n_landed_before_touchdown"]]
        print("  [%s] column %s, sensor %s" % (name, kw or "defaults", sensor))
        print("    bursts before the top: %d of %d runs, at true gph %s gpm; bursts per run %s"
              % (len(false_b), n, rng([e["burst_true_gph_m"] for e in false_b]),
                 sorted(set(e["n_burst"] for e in ev))))
        print("    bursts after the top: %d runs; reported %s s after the top; burst_gph_m - top %s gpm; "
              "burst_time_s - top %s s" % (len(true_b), rng([e["burst_delay_s"] for e in true_b]),
                                           rng([e["burst_gph_err_m"] for e in true_b], "%.1f"),
                                           rng([e["burst_time_err_s"] for e in true_b])))
        print("    landings before touchdown: %d of %d runs, at true gph %s gpm (climbing: %d); "
              "after touchdown: %d runs, %s s late; no landing: %d"
              % (len(false_l), n, rng([e["landed_true_gph_m"] for e in false_l]),
                 sum(1 for e in false_l if _climbing(flight, e)),
                 len(good_l), rng([e["landed_delay_s"] for e in good_l]),
                 sum(1 for e in ev if not e["n_landed"])))
        nclean = sum(r["n_clean"] for r in rej)
        reasons = {}
        for r in rej:
            for k, v in r.items():
                if k not in ("n_clean", "gph_min", "gph_max"):
                    reasons[k] = reasons.get(k, 0) + v
        nrej = sum(reasons.values())
        print("    noise-only readings retracted (there and back, FL_REPLACED): %d of %d"
              % (sum(getattr(c, "retracted", 0) for c in cols), nclean))
        print("    noise-only readings rejected: %d of %d (%.2f %%) %s; true gph of the rejected %s..%s gpm"
              % (nrej, nclean, 100.0 * nrej / nclean, reasons or "",
                 "%.0f" % min((r["gph_min"] for r in rej if r["gph_min"] == r["gph_min"]), default=math.nan),
                 "%.0f" % max((r["gph_max"] for r in rej if r["gph_max"] == r["gph_max"]), default=math.nan)))
        lv_rows[name] = lv
    print("    mandatory levels (count = runs reporting it exactly once / missed / more than once;"
          " |err| = level_gph_m - true gph; tol = 4 (Rd/g0) Tv sigma_p/p + 2 m):")
    print("      %-7s %9s | %-22s %8s %6s | %-22s %8s %6s" % ("level", "true gpm", "defaults: once/miss/>1",
                                                           "max|err|", "tol", "2 Pa: once/miss/>1",
                                                           "max|err|", "tol"))
    nlev = len(lv_rows["defaults"][0]) - 1
    for i in range(nlev):
        cells = []
        for name, _, _ in CONFIGS:
            rows = [lv[i] for lv in lv_rows[name]]
            once = sum(1 for r in rows if r["count"] == 1)
            miss = sum(1 for r in rows if r["count"] == 0)
            many = sum(1 for r in rows if r["count"] > 1)
            errs = [abs(r["err_m"]) for r in rows if r["err_m"] == r["err_m"]]
            over = sum(1 for r in rows if r["err_m"] == r["err_m"] and abs(r["err_m"]) > r["tol_m"])
            cells.append(("%d/%d/%d%s" % (once, miss, many, (" over tol %d" % over) if over else ""),
                          "%.1f" % max(errs) if errs else "-", "%.1f" % rows[0]["tol_m"]))
        r0 = lv_rows["defaults"][0][i]
        print("      %-7s %9.0f | %-22s %8s %6s | %-22s %8s %6s"
              % ("%g hPa" % (r0["p_pa"] / 100.0), r0["true_gph_m"], cells[0][0], cells[0][1], cells[0][2],
                 cells[1][0], cells[1][1], cells[1][2]))
    extra = [sum(lv[-1]["count"] for lv in lv_rows[name]) for name, _, _ in CONFIGS]
    print("      levels reported that were not crossed: defaults %d, 2 Pa %d" % tuple(extra))


def _climbing(flight, e):
    # the landing reading lies in the ascent (before the true top)
    return e["landed_delay_s"] + flight.touchdown_time_s < flight.top_time_s


def floats(atm, seeds, float_s):
    fl = S.float_flight(atm, float_s=float_s)
    print("2. Floats: %.1f h at 32 000 gpm (+-30 gpm, 15 min wave), then cut-down; 2 Pa sensor, "
          "Column(sigma_p_pa=2); %d seeds" % (float_s / 3600.0, len(seeds)))
    ev, rej, cols = [], [], []
    for seed in seeds:
        st = S.make_stream(fl, atm, seed, sigma_p_pa=2.0, sigma_t_k=0.2)
        run = S.run_column(factory(sigma_p_pa=2.0), st)
        cols.append(run.column)
        ev.append(S.event_scores(run, st))
        rej.append(S.clean_rejects(run, st))
    n = len(seeds)
    fb = [e for e in ev if e["n_burst_before_top"]]
    fl_l = [e for e in ev if e["n_landed_before_touchdown"]]
    print("    bursts before the cut-down: %d of %d runs (at true gph %s gpm, %s s after float start)"
          % (len(fb), n, rng([e["burst_true_gph_m"] for e in fb]),
             rng([e["burst_delay_s"] + fl.top_time_s - fl.float_start_s for e in fb])))
    print("    landings before touchdown: %d of %d runs (at true gph %s gpm); landings after touchdown: %d"
          % (len(fl_l), n, rng([e["landed_true_gph_m"] for e in fl_l]),
             sum(1 for e in ev if e["n_landed"] and not e["n_landed_before_touchdown"])))
    nf = [e["n_float"] for e in ev]
    print("    float events: %s" % ("no EV_FLOAT in tinygeo.column" if nf[0] is None else
                                  "%d runs with one, float_delay_s %s" % (
                                      sum(1 for x in nf if x), rng([e["float_delay_s"] for e in ev]))))
    nrej = sum(sum(v for k, v in r.items() if k not in ("n_clean", "gph_min", "gph_max")) for r in rej)
    print("    noise-only readings rejected: %d of %d; retracted (there and back): %d"
          % (nrej, sum(r["n_clean"] for r in rej), sum(getattr(c, "retracted", 0) for c in cols)))
    # a float high up with a slow wave, the defaults' 10 Pa sensor (noise 140 m a reading)
    fw = S.float_flight(atm, rate_m_s=5.0, float_gph_m=36000.0, float_s=float_s, wave_m=300.0,
                        wave_period_s=3600.0, ground_s=60.0)
    ev, cols = [], []
    for seed in seeds:
        st = S.make_stream(fw, atm, seed, sigma_p_pa=10.0, humidity=False)
        run = S.run_column(factory(), st)
        cols.append(run.column)
        ev.append(S.event_scores(run, st))
    print("    %.1f h at 36 000 gpm, +-300 gpm wave of 1 h, 10 Pa sensor, defaults: float events per run %s; "
          "bursts before the cut-down %d; readings retracted (there and back) %d"
          % (float_s / 3600.0, sorted(set(e["n_float"] for e in ev)),
             sum(1 for e in ev if e["n_burst_before_top"]), sum(c.retracted for c in cols)))


def fault_table(atm, flight, seeds):
    print("3. Single faults, against a column that never saw the bad reading (the same seed's stream with")
    print("   that reading removed; for a glitch after a gap, gap and glitch removed): lost = later readings")
    print("   rejected or > 1 m off; worst = max |gph diff| from the fault + 10 readings on; end = diff at the")
    print("   last reading; target worst <= 1 m, lost <= 10")
    k10 = flight.index_at_gph(10000.0)
    k30 = flight.index_at_gph(30000.0)
    # (label, fault stream, reference stream "never saw it", index of the fault)
    cases = [
        ("bad first reading: p 6 % low", lambda s: S.pressure_scaled(s, 0, -0.06),
         lambda s: S.gap(s, 0, 1), 0),
        ("hPa as Pa, first reading", lambda s: S.hpa_as_pa(s, 0), lambda s: S.gap(s, 0, 1), 0),
        ("60 s gap at 10 km, then T +40 K",
         lambda s: S.temperature_spike(S.gap(s, k10, 60), k10 + 60, 40.0), lambda s: S.gap(s, k10, 61),
         k10 + 60),
        ("60 s gap at 10 km, then T +20 K",
         lambda s: S.temperature_spike(S.gap(s, k10, 60), k10 + 60, 20.0), lambda s: S.gap(s, k10, 61),
         k10 + 60),
        ("60 s gap at 10 km, then p 6 % low",
         lambda s: S.pressure_scaled(S.gap(s, k10, 60), k10 + 60, -0.06), lambda s: S.gap(s, k10, 61),
         k10 + 60),
        ("T +10 K at 10 km (no gap)", lambda s: S.temperature_spike(s, k10, 10.0),
         lambda s: S.gap(s, k10, 1), k10),
        ("p 6 % low at 10 km (no gap)", lambda s: S.pressure_scaled(s, k10, -0.06),
         lambda s: S.gap(s, k10, 1), k10),
        ("p 6 % low at 30 km (no gap)", lambda s: S.pressure_scaled(s, k30, -0.06),
         lambda s: S.gap(s, k30, 1), k30),
        ("time stamp +1e6 s at 10 km", lambda s: S.time_shifted(s, k10, 1e6),
         lambda s: S.gap(s, k10, 1), k10),
        ("time stamp -10 s at 10 km", lambda s: S.time_shifted(s, k10, -10.0),
         lambda s: S.gap(s, k10, 1), k10),
        ("p nan at 10 km", lambda s: S.nan_value(s, k10, "p_pa"), lambda s: S.gap(s, k10, 1), k10),
    ]
    print("   %-34s %-9s %-22s %-16s %-24s %s" % ("fault", "column", "lost", "good rejected", "worst m",
                                                  "end m (fault - never saw it)"))
    for label, make, ref, idx in cases:
        for name, sensor, kw in CONFIGS:
            res = []
            for seed in seeds:
                st = S.make_stream(flight, atm, seed, **sensor)
                clean = S.run_column(factory(**kw), ref(st))
                bad = S.run_column(factory(**kw), make(st))
                res.append(S.fault_scores(clean, bad, idx))
            print("   %-34s %-9s %-22s %-16s %-24s %s" % (
                label, name, rng([r["lost"] for r in res]), rng([r["rejected"] for r in res]),
                rng([r["worst_m"] for r in res], "%.3g"), rng([r["offset_end_m"] for r in res], "%.3g")))
            label = ""
    # a pressure anchor given in hPa: refused by the constructor (start guard)
    try:
        Column(LAT, anchor_p_pa=S.P0_PA / 100.0)
        print("   anchor_p_pa in hPa (1013.25): ACCEPTED by the constructor")
    except ValueError as e:
        print("   anchor_p_pa in hPa (1013.25): refused by the constructor: %s" % e)


def time_and_gps(atm, flight, seeds):
    print("4. Time stamps and GPS (defaults column and sensor; lost/worst vs the same seed with plain"
          " stamps from 0 / without GPS)")
    k5, k15, k25 = (flight.index_at_gph(h) for h in (5000.0, 15000.0, 25000.0))
    cases = [
        ("origin 1.7e7 s (double)", dict(time_origin_s=1.7e7)),
        ("origin 1.7e9 s (double)", dict(time_origin_s=1.7e9)),
        ("origin 1.7e7 s rounded to float32", dict(time_origin_s=1.7e7, time_format="f32")),
        ("origin 1.7e9 s rounded to float32", dict(time_origin_s=1.7e9, time_format="f32")),
        ("integer ms ticks from 0", dict(time_format="ms")),
        ("jitter 0.05 s", dict(jitter_s=0.05)),
        ("GPS (5 m), 3 no-fix spells of 30 s as nan",
         dict(gps=True, gps_nofix=((k5, 30), (k15, 30), (k25, 30)))),
        ("GPS (5 m), the same spells as None",
         dict(gps=True, gps_nofix=((k5, 30), (k15, 30), (k25, 30)), gps_nofix_value=None)),
    ]
    for label, opts in cases:
        res, rej = [], {}
        for seed in seeds:
            ref = S.make_stream(flight, atm, seed)
            st = S.make_stream(flight, atm, seed, **opts)
            a = S.run_column(factory(), ref)
            b = S.run_column(factory(), st)
            res.append(S.fault_scores(a, b, -1, settle=0))
            for k, v in S.clean_rejects(b, st).items():
                if k not in ("n_clean", "gph_min", "gph_max"):
                    rej[k] = rej.get(k, 0) + v
        print("   %-42s rejected %s; lost %s; worst %s m"
              % (label, rej or "none", rng([r["lost"] for r in res]),
                 rng([r["worst_m"] for r in res], "%.3g")))


def humid(seeds):
    atm = S.warm_humid()
    fl = S.balloon_flight(atm, top_gph_m=30000.0)
    ks = [fl.index_at_gph(h) for h in (5000.0, 10000.0, 20000.0)]
    k1 = fl.index_at_gph(1000.0)
    print("5. Warm humid ascent (%s; to 30 000 gpm), sensor 10 Pa / 0.2 K / 1 %%RH, humidity"
          " lost (None) from 1 km on; %d seeds" % (atm.name, len(seeds)))
    print("   gph_m - truth at 5 / 10 / 20 km, median (min..max) over seeds, and the column's sigma_m there:")
    for label, lost, kw in (("humidity kept (reference)", False, {}),
                            ("lost, default (held mixing ratio)", True, {}),
                            ("lost, dry_fallback=True", True, dict(dry_fallback=True))):
        errs = [[] for _ in ks]
        sig = [[] for _ in ks]
        for seed in seeds:
            st = S.make_stream(fl, atm, seed, sigma_p_pa=10.0, sigma_t_k=0.2, sigma_rh_pct=1.0)
            if lost:
                st = S.humidity_lost(st, k1)
            run = S.run_column(factory(**kw), st, sigma_at=ks)
            for j, k in enumerate(ks):
                errs[j].append(run.gph_m[k] - fl.gph_m[k])
                sig[j].append(run.sigma_m[k])
        print("   %-36s %s" % (label, "  ".join(
            "%+.1f (%+.1f..%+.1f) sigma %.1f" % (med(e), min(e), max(e), med(s)) for e, s in zip(errs, sig))))


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--seeds", type=int, default=20, help="number of seeds (default 20)")
    ap.add_argument("--first-seed", type=int, default=1, help="first seed (default 1)")
    ap.add_argument("--quick", action="store_true", help="3 seeds and 1-hour floats")
    a = ap.parse_args()
    n = 3 if a.quick else a.seeds
    seeds = list(range(a.first_seed, a.first_seed + n))
    float_s = 3600.0 if a.quick else 6 * 3600.0
    t0 = time.time()
    print("command: python bench/montecarlo.py %s" % " ".join(sys.argv[1:]))
    print("seeds: %s; Python %s; tinygeo from %s" % (
        "%d..%d" % (seeds[0], seeds[-1]), sys.version.split()[0],
        os.path.dirname(sys.modules[Column.__module__].__file__)))
    names = S.column_names()
    print("tinygeo.column names: %s" % ", ".join("%s=%s" % kv for kv in names.items()))
    atm = S.StandardAtmosphere()
    flight = S.balloon_flight(atm)
    print("truth: top %.0f gpm at %.0f s, touchdown at %.1f s (%d readings a run)"
          % (flight.top_gph_m, flight.top_time_s, flight.touchdown_time_s, len(flight)))
    ascents(atm, flight, seeds)
    floats(atm, seeds, float_s)
    fault_table(atm, flight, seeds)
    time_and_gps(atm, flight, seeds)
    humid(seeds)
    print("run time %.1f s" % (time.time() - t0))


if __name__ == "__main__":
    main()
