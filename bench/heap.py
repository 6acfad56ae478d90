"""Heap allocated per Column.feed under MicroPython, and retained-heap growth.

Run from the repository root (MicroPython unix runtime from the venv)::

    MICROPYPATH=. micropython bench/heap.py

and the same on a 32-bit MicroPython (the WebAssembly port; sections 1-4)::

    node tests/wasm32/run.mjs --copy tinygeo:/lib/tinygeo \
        --copy ports/micropython:/ports/micropython bench/heap.py --no-long-run

(under CPython the gc figures do not exist: it says so and stops). Prints, in
one run:

1. bytes allocated per ``feed`` with every feature on (humidity, time so the
   rate is computed, the uncertainty bookkeeping, a GPS height every tenth
   reading, event detection with an ``on_event`` callback) over the whole
   simulated flight of ``ports/micropython/flightsim.py`` (1 s steps, ~7 900
   readings: ground wait, ascent, burst, descent, landing), measured around
   each ``feed`` call alone with the collector off (``gc.mem_alloc()``
   delta): mean, largest, and the number of readings over the budget;
2. the same for the column with its optional inputs left out (pressure and
   temperature only, dry air assumed, no time, no GPS, no callback);
3. the bare integration alone: a loop of ``layer_thickness`` plus a running
   sum over the same readings (dry, and with the exact virtual temperature
   from ``virtual_temperature`` each step);
4. where the bytes go: bytes per call of each core function ``feed`` uses,
   and ``feed`` with the uncertainty bookkeeping off (``track_sigma=False``);
5. retained heap (``gc.collect()`` then ``gc.mem_alloc()``) every 10 000
   feeds over 100 000 feeds with every feature on (the same flight at
   0.079 s steps), with the part explained by result attributes that take a
   float of their own for the first time (burst, tropopause, levels: one
   block each, bounded), so that a leak, which grows with the feed count,
   shows in what is left.

The flight's one failed reading (a NaN temperature) is skipped before
``feed``: only accepted feeds are measured.

Budgets: <= 2048 bytes per feed on the mean with every feature on (64-bit
unix runtime: one float result = one 32-byte GC block, so <= 64 float
results per reading), no single feed above 6 KB; no growth of retained
heap. On 32-bit builds a block is 16 bytes
and a float one block: the 32-bit run gives half the byte figures.
"""
import gc
import math
import sys
from array import array

sys.path.append("ports/micropython")

import tinygeo                                       # noqa: E402
from tinygeo import errors                           # noqa: E402
from tinygeo.column import Column                    # noqa: E402
from flightsim import SimulatedFlight, LAUNCH_HEIGHT_M  # noqa: E402

LAT_DEG = 48.2
# bytes per GC block: 4 words (32 on the 64-bit unix runtime, 16 on a 32-bit
# build such as the WebAssembly port run by tests/wasm32/run.mjs)
BLOCK = 32 if sys.maxsize > 2 ** 32 else 16
# the budget: 2048 B on the 64-bit unix runtime, i.e. 64 float-sized blocks,
# which is 1024 B on a 32-bit build
FEED_BUDGET = 64 * BLOCK
# and no single feed above 6 KB (the first reading solves the first height
# node; a takeover restarts the column): 192 blocks, 3 KB on a 32-bit build
FEED_MAX = 192 * BLOCK
LONG_RUN = 100000


def _on_event(column, bits):
    pass


def per_feed(column, sensor, full):
    """Return (accepted feeds, mean bytes, max bytes, reading index of the max,
    feeds over the budget)."""
    total = 0
    most = 0
    most_at = -1
    over = 0
    n = 0
    gc.collect()
    gc.disable()
    try:
        while sensor.read():
            if sensor.t_k != sensor.t_k:
                continue   # the one failed conversion of the flight
            p = sensor.p_pa
            t = sensor.t_k
            if full:
                rh = sensor.rh_pct
                ts = sensor.time_s
                gps = sensor.gps_m
            else:
                rh = ts = gps = None
            a = gc.mem_alloc()
            column.feed(p, t, rh, ts, gps)
            d = gc.mem_alloc() - a
            n += 1
            total += d
            if d > most:
                most = d
                most_at = sensor.index - 1
            if d > FEED_BUDGET:
                over += 1
            if n % 64 == 0:
                gc.collect()
    finally:
        gc.enable()
    return n, total / n, most, most_at, over


def recovery_feeds(sensor):
    """(feeds, mean bytes, max bytes, reading of the max) of the column over the
    flight with faults that take the recovery paths: the first reading 6 %
    low (a run takes over and the column restarts), and at reading 2000 a
    60 s gap followed by a reading 6 % low (accepted, then retracted)."""
    column = Column(LAT_DEG, LAUNCH_HEIGHT_M, on_event=_on_event)
    total = most = n = 0
    most_at = -1
    gc.collect()
    gc.disable()
    try:
        while sensor.read():
            if sensor.t_k != sensor.t_k:
                continue
            k = sensor.index - 1
            if 2000 <= k < 2060:
                continue
            p = sensor.p_pa * (0.94 if k in (0, 2060) else 1.0)
            a = gc.mem_alloc()
            try:
                column.feed(p, sensor.t_k, sensor.rh_pct, sensor.time_s, sensor.gps_m)
            except errors.ReadingError:
                pass
            d = gc.mem_alloc() - a
            n += 1
            total += d
            if d > most:
                most = d
                most_at = k
            if n % 64 == 0:
                gc.collect()
    finally:
        gc.enable()
    return n, total / n, most, most_at, column.retracted


def bare_integration(sensor, moist):
    """(steps, mean bytes per step) of the bare hypsometric sum over the readings."""
    sensor.read()
    p0 = sensor.p_pa
    tv0 = tinygeo.virtual_temperature(sensor.t_k, p0, sensor.rh_pct) if moist else sensor.t_k
    h = 0.0
    total = 0
    n = 0
    gc.collect()
    gc.disable()
    try:
        while sensor.read():
            p1 = sensor.p_pa
            t1 = sensor.t_k
            rh = sensor.rh_pct
            if t1 != t1 or (moist and rh is None):
                continue
            a = gc.mem_alloc()
            tv1 = tinygeo.virtual_temperature(t1, p1, rh) if moist else t1
            h += tinygeo.layer_thickness(p0, p1, tv0, tv1)
            total += gc.mem_alloc() - a
            n += 1
            p0 = p1
            tv0 = tv1
            if n % 64 == 0:
                gc.collect()
    finally:
        gc.enable()
    return n, total / n


def per_call(fn, n):
    """Mean bytes allocated by one call of fn(), over n calls with the collector off."""
    gc.collect()
    gc.disable()
    try:
        a = gc.mem_alloc()
        for _ in range(n):
            fn()
        return (gc.mem_alloc() - a) / n
    finally:
        gc.enable()


_NODE_COL = Column(LAT_DEG, LAUNCH_HEIGHT_M)


_LATS = [LAT_DEG, LAT_DEG + 0.5]


def _two_latitudes():
    # alternate between two latitudes: potential evaluates its series (reads
    # its text tables) on every call, as for a Column's first node
    _LATS.reverse()
    return tinygeo.geometric_height(5000.0, _LATS[0])


def breakdown():
    """(label, bytes per call) for the core functions one feed uses."""
    p0, p1, t1, rh = 90000.0, 89950.0, 279.9, 50.0
    far = 50000.0
    return [
        ("math.log(p0 / p1) (for scale)", per_call(lambda: math.log(p0 / p1), 200)),
        ("ln_ratio(p0, p1), consecutive readings (series branch)",
         per_call(lambda: tinygeo.ln_ratio(p0, p1), 200)),
        ("ln_ratio(p0, p0/1.8), far apart (log branch)", per_call(lambda: tinygeo.ln_ratio(p0, far), 200)),
        ("layer_thickness(p0, p1, tv0, tv1)", per_call(lambda: tinygeo.layer_thickness(p0, p1, 280.0, t1), 200)),
        ("virtual_temperature(t, p, rh)", per_call(lambda: tinygeo.virtual_temperature(t1, p1, rh), 200)),
        ("virtual_temperature_from_mixing_ratio(t, w)",
         per_call(lambda: tinygeo.virtual_temperature_from_mixing_ratio(t1, 0.005), 200)),
        ("errors.as_finite(name, x, unit)", per_call(lambda: errors.as_finite("p_pa", p1, "Pa"), 200)),
        ("geometric_height(gph, lat), a new latitude each call",
         per_call(_two_latitudes, 10)),
        ("geometric_height(gph, lat), the same latitude again",
         per_call(lambda: tinygeo.geometric_height(5000.0, LAT_DEG), 10)),
        ("Column height node after the first (every 3 km)",
         per_call(lambda: _NODE_COL._nodes(5000.0, 5004.0), 10)),
    ]


def _own_floats(obj, shared):
    # distinct float objects held by obj's attributes, not counting `shared`
    # (the module's nan that every not-yet-known result points to)
    seen = {}
    d = obj.__dict__
    for k in d:
        v = d[k]
        if isinstance(v, float) and v is not shared:
            seen[id(v)] = 1
    return len(seen)


def retained_growth():
    """Feed LONG_RUN readings; after 1 000 and every 10 000 feeds collect and
    record (feeds, phase, growth B, new own-float attributes, growth they do
    not explain B)."""
    import tinygeo.column as column_module
    nan = column_module._NAN
    sensor = SimulatedFlight(0.079)
    column = Column(LAT_DEG, LAUNCH_HEIGHT_M, on_event=_on_event)
    # results go to preallocated int arrays: storing a small int allocates
    # nothing, so the bookkeeping cannot look like growth
    slots = LONG_RUN // 10000 + 1
    cols = [array("i", [0] * slots) for _ in range(5)]
    k = 0
    gc.collect()
    base = gc.mem_alloc()
    own0 = _own_floats(column, nan) + _own_floats(sensor, None)
    n = 0
    while n < LONG_RUN and sensor.read():
        if sensor.t_k != sensor.t_k:
            continue
        column.feed(sensor.p_pa, sensor.t_k, sensor.rh_pct, sensor.time_s, sensor.gps_m)
        n += 1
        if n % 10000 == 0 or n == 1000:
            gc.collect()
            grown = gc.mem_alloc() - base
            own = _own_floats(column, nan) + _own_floats(sensor, None) - own0
            cols[0][k] = n
            cols[1][k] = column.phase
            cols[2][k] = grown
            cols[3][k] = own
            cols[4][k] = grown - BLOCK * own
            k += 1
    return [tuple(c[i] for c in cols) for i in range(k)]


def main():
    if not hasattr(gc, "mem_alloc"):
        print("gc.mem_alloc() is MicroPython-only: run  MICROPYPATH=. micropython bench/heap.py")
        return 1
    print("MicroPython %s, %s; GC block %d B (%d-bit)" % (
        ".".join(str(v) for v in sys.implementation.version[:3]), sys.platform, BLOCK,
        64 if BLOCK == 32 else 32))

    gc.collect()
    a = gc.mem_alloc()
    column = Column(LAT_DEG, LAUNCH_HEIGHT_M, on_event=_on_event)
    gc.collect()
    print("one Column object: %d B retained; checkpoint blob %d B" % (
        gc.mem_alloc() - a, len(column.to_bytes())))

    n, mean, most, at, over = per_feed(column, SimulatedFlight(1.0), True)
    print("")
    print("1. feed, every feature on (rh, time, sigma, GPS every 10th, events + on_event), %d feeds:" % n)
    print("   mean %.1f B/feed (%.1f blocks), max %d B at reading %d, %d feeds over %d B" % (
        mean, mean / BLOCK, most, at, over, FEED_BUDGET))
    print("   budgets: mean <= %d B/feed %s; largest <= %d B %s" % (
        FEED_BUDGET, "met" if mean <= FEED_BUDGET else "MISSED", FEED_MAX,
        "met" if most <= FEED_MAX else "MISSED"))
    n, mean, most, at, retracted = recovery_feeds(SimulatedFlight(1.0))
    print("   with the recovery paths (first reading 6 %% low: a takeover; a glitch after a 60 s gap:"
          " a retraction, %d): mean %.1f B/feed, max %d B at reading %d -> largest %s" % (
              retracted, mean, most, at, "met" if most <= FEED_MAX else "MISSED"))

    bare = Column(LAT_DEG, LAUNCH_HEIGHT_M, dry_fallback=True, on_event=None)
    n, mean, most, at, over = per_feed(bare, SimulatedFlight(1.0), False)
    print("")
    print("2. feed, optional inputs off (p, t only: dry, no time, no GPS, no callback), %d feeds:" % n)
    print("   mean %.1f B/feed (%.1f blocks), max %d B at reading %d" % (mean, mean / BLOCK, most, at))

    n, mean = bare_integration(SimulatedFlight(1.0), False)
    print("")
    print("3. bare integration, h += layer_thickness(p0, p1, t0, t1), %d steps: %.1f B/step (%.1f blocks)" % (
        n, mean, mean / BLOCK))
    n, mean = bare_integration(SimulatedFlight(1.0), True)
    print("   with tv = virtual_temperature(t, p, rh) each step, %d steps: %.1f B/step (%.1f blocks)" % (
        n, mean, mean / BLOCK))

    print("")
    print("4. where the bytes go (bytes per call, collector off):")
    for label, b in breakdown():
        print("   %-58s %7.1f B %6.1f blocks" % (label, b, b / BLOCK))
    lean = Column(LAT_DEG, LAUNCH_HEIGHT_M, on_event=_on_event, track_sigma=False)
    n, mean, most, at, over = per_feed(lean, SimulatedFlight(1.0), True)
    print("   feed as in 1. but track_sigma=False: mean %.1f B/feed (%.1f blocks), max %d B" % (
        mean, mean / BLOCK, most))

    if "--no-long-run" in sys.argv:
        print("")
        print("5. skipped (--no-long-run)")
        return 0
    rows = retained_growth()
    print("")
    print("5. retained heap over %d feeds, every feature on (gc.collect() then gc.mem_alloc()):" % rows[-1][0])
    print("   %7s %5s %10s %11s %9s" % ("feeds", "phase", "growth B", "own floats", "other B"))
    for r in rows:
        print("   %7d %5d %10d %11d %9d" % r)
    later = [r[4] for r in rows[1:]]
    spread = max(later) - min(later)
    print("   own floats: result attributes that went from the shared nan to a float of their own")
    print("   (levels, tropopause, burst, landing...), one %d-B block each; other = growth - those." % BLOCK)
    print("   'other' from 10 000 to %d feeds varies by %d B -> %s" % (
        rows[-1][0], spread, "no growth" if spread <= BLOCK else "GROWS"))
    return 0


if __name__ == "__main__":
    sys.exit(main())
