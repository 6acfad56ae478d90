"""Rounding loss of tinygeo on float32 and 30-bit MicroPython floats vs float64.

Run from the repository root with the venv active (CPython only; it uses the
emulator tests/floatemu.py, which runs the unmodified modules with every float
operation rounded as the device would)::

    python bench/precision.py                  # core table + column ascent (a few minutes)
    python bench/precision.py --n 300 --no-column   # quick core table

Part 1, core functions: for each case of tests/test_float32_core.py (same
inputs: edge points plus --n random ones, fixed seeds) the largest error of
the emulated function vs float64 on the same rounded inputs, for modes f32,
r30t and r30f, next to the budgets the tests hold it to.

Part 2, the streaming column (tinygeo.column.Column): a dry ascent from 0 to
35 km at 5 m/s through the U.S. Standard Atmosphere 1976 (pressure and
temperature from tinygeo.standard in float64 at the balloon's geopotential
height; an invented scenario for this benchmark), sampled at 1 Hz and 10 Hz,
fed reading by reading in each mode. Each device mode receives the readings
rounded to its format, and so does its float64 reference run, so the figures
are the loss of the computation only. Next to it, a naive formulation on the
same data::

    z += (RD / G0) * (t1 + t2) / 2 * (log(p1) - log(p2))

with plain summation (no compensated sum, logs subtracted). Reported: the
error of the gph at 35 km and the largest error along the way, in metres.
"""
import argparse
import math
import os
import sys
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path[:0] = [os.path.join(ROOT, "tests"), ROOT]

import floatemu  # noqa: E402
import test_float32_core as core  # noqa: E402

MODES = ("f32", "r30t", "r30f")

NAIVE = """
from tinygeo.constants import RD, G0
import math
def integrate(ps, ts, out):
    # plain trapezoid in ln p, logs subtracted, plain running sum
    z = 0.0
    out.append(z)
    i = 1
    while i < len(ps):
        z += (RD / G0) * (ts[i - 1] + ts[i]) / 2 * (math.log(ps[i - 1]) - math.log(ps[i]))
        out.append(z)
        i += 1
    return z
"""


def core_table(n):
    print("Part 1: core functions, largest error vs float64 on the same inputs "
          "(%d random + edge inputs per case)" % n)
    head = "%-32s %-4s %10s %9s %10s %10s %9s" % ("case", "unit", "f32", "budget", "r30t", "r30f",
                                                  "budget")
    print(head)
    print("-" * len(head))
    for case in core.CASES:
        errs = [core.measure(case, mode, n)[0] for mode in MODES]
        unit = "rel" if case[2] == "rel" else {"standard_temperature": "K", "virtual_temperature": "K",
                                                "dew_point": "K", "sea_level_pressure": "Pa",
                                                "qnh": "Pa", "qfe": "Pa"}.get(case[1], "m")
        print("%-32s %-4s %10.3g %9.3g %10.3g %10.3g %9.3g" % (case[0], unit, errs[0], case[3],
                                                              errs[1], errs[2], case[4]))
    print()


def ascent(rate_hz, speed_m_s=5.0, top_m=35000.0):
    """Readings (p_pa, t_k, time_s) of a dry ascent in the standard atmosphere,
    float64 (height taken as geopotential height)."""
    from tinygeo import standard
    dt = 1.0 / rate_hz
    n = int(round(top_m / speed_m_s * rate_hz))
    out = []
    for i in range(n + 1):
        z = speed_m_s * dt * i
        out.append((standard.standard_pressure(z), standard.standard_temperature(z), dt * i))
    return out


def run_column(pkg, readings, lat_deg=45.0):
    col = pkg.Column(lat_deg, 0.0)
    gph = []
    for p, t, ts in readings:
        col.feed(p, t, None, ts)
        gph.append(col.gph_m)
    g0 = gph[0]
    return [g - g0 for g in gph]


def run_naive(mode, readings):
    m = floatemu.load_source(mode, NAIVE, "naive")
    out = []
    m.integrate([r[0] for r in readings], [r[1] for r in readings], out)
    return out


def column_table(rates):
    if not hasattr(floatemu.load("f64"), "Column"):
        print("Part 2: tinygeo/column.py not found; skipped")
        return
    print("Part 2: column, dry ascent 0..35 km at 5 m/s (USSA76), error of the gph "
          "increment vs float64 on the same rounded readings, m")
    head = "%-6s %-6s %9s %14s %14s %14s %14s %8s" % (
        "rate", "mode", "readings", "column@35km", "column max", "naive@35km", "naive max", "time s")
    print(head)
    print("-" * len(head))
    for hz in rates:
        raw = ascent(hz)
        for mode in MODES:
            t0 = time.time()
            r = floatemu.rounder(mode)
            readings = [(r(p), r(t), r(ts)) for p, t, ts in raw]
            ref_c = run_column(floatemu.load("f64"), readings)
            got_c = run_column(floatemu.load(mode), readings)
            ref_n = run_naive("f64", readings)
            got_n = run_naive(mode, readings)
            ec = [abs(a - b) for a, b in zip(got_c, ref_c)]
            en = [abs(a - b) for a, b in zip(got_n, ref_n)]
            print("%-6s %-6s %9d %14.4f %14.4f %14.4f %14.4f %8.0f" % (
                "%g Hz" % hz, mode, len(readings), ec[-1], max(ec), en[-1], max(en), time.time() - t0))
        # float64 column vs float64 naive: the two formulations agree when no rounding
        readings = raw
        c64 = run_column(floatemu.load("f64"), readings)
        n64 = run_naive("f64", readings)
        print("%-6s %-6s %9d  float64 column - float64 naive at 35 km: %.3g m (gph %.3f)" % (
            "%g Hz" % hz, "f64", len(readings), c64[-1] - n64[-1], c64[-1]))
    print()


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--n", type=int, default=3000, help="random inputs per core case (default 3000)")
    ap.add_argument("--no-column", action="store_true", help="skip the column ascent")
    ap.add_argument("--rates", default="1,10", help="sampling rates of the ascent, Hz (default 1,10)")
    a = ap.parse_args(argv)
    print("tinygeo precision: emulated float32 (f32), 30-bit truncating (r30t, MicroPython < 1.26 "
          "REPR_C) and 30-bit refilled (r30f, >= 1.26) vs float64; libm correctly rounded")
    print()
    core_table(a.n)
    if not a.no_column:
        column_table([float(x) for x in a.rates.split(",")])
    return 0


if __name__ == "__main__":
    sys.exit(main())
