"""Heap allocated per Column.feed under MicroPython, and retained-heap growth.

Run from the repository root (MicroPython unix runtime from the venv)::

    MICROPYPATH=. micropython bench/heap.py

(it also runs under CPython, where the gc figures do not exist: it then says so
and stops). Prints, in one run:

1. bytes allocated per ``feed`` with every feature on (humidity, time so the
   rate and the uncertainty are computed, a GPS height every tenth reading,
   event detection with an ``on_event`` callback) over the whole simulated
   flight of ``ports/micropython/flightsim.py`` (1 s steps, ~7 900 readings:
   ground wait, ascent, burst, descent, landing), measured around each
   accepted ``feed`` call alone with the collector off (``gc.mem_alloc()``
   delta): mean, largest, and the readings over the budget;
2. the same for the column with its optional inputs left out (pressure and
   temperature only, dry air assumed, no time, no GPS, no callback);
3. the bare integration alone: a loop of ``layers.layer_thickness`` plus a
   running sum over the same readings (dry, and with the exact virtual
   temperature from ``moisture.virtual_temperature``);
4. retained heap (``gc.collect()`` then ``gc.mem_alloc()``) before and after
   100 000 feeds with every feature on (the same flight at 0.079 s steps),
   and after the first 1 000 of them, so a leak or growing state shows.

Budget: <= 2048 bytes per feed with every feature on (64-bit unix runtime:
one float result = one 32-byte GC block, so <= 64 float results per
reading); no growth of retained heap. On 32-bit boards a block is 16 bytes:
expect about half the byte figures (not measured on hardware).
"""
import gc
import sys

sys.path.append("ports/micropython")

from tinygeo.column import Column                    # noqa: E402
from tinygeo.errors import ReadingError              # noqa: E402
from tinygeo import layers, moisture                 # noqa: E402
from flightsim import SimulatedFlight, LAUNCH_HEIGHT_M  # noqa: E402

LAT_DEG = 48.2
FEED_BUDGET = 2048
LONG_RUN = 100000


def _on_event(column, bits):
    pass


def per_feed(column, sensor, full):
    """Return (readings, accepted, mean bytes, max bytes, index of max, over budget)."""
    total = 0
    most = 0
    most_at = -1
    over = 0
    n = 0
    accepted = 0
    gc.collect()
    gc.disable()
    try:
        while sensor.read():
            n += 1
            if sensor.t_k != sensor.t_k:
                continue   # the flight's one failed conversion: only accepted feeds are measured
            if full:
                p, t, rh, ts, gps = sensor.p_pa, sensor.t_k, sensor.rh_pct, sensor.time_s, sensor.gps_m
            else:
                p, t, rh, ts, gps = sensor.p_pa, sensor.t_k, None, None, None
            a = gc.mem_alloc()
            try:
                column.feed(p, t, rh, ts, gps)
            except ReadingError:
                continue
            d = gc.mem_alloc() - a
            accepted += 1
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
    return n, accepted, total / accepted, most, most_at, over


def bare_integration(sensor, moist):
    """Mean bytes per step of the bare hypsometric sum over the same readings."""
    sensor.read()
    p0 = sensor.p_pa
    tv0 = moisture.virtual_temperature(sensor.t_k, p0, sensor.rh_pct) if moist else sensor.t_k
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
            tv1 = moisture.virtual_temperature(t1, p1, rh) if moist else t1
            h += layers.layer_thickness(p0, p1, tv0, tv1)
            total += gc.mem_alloc() - a
            n += 1
            p0 = p1
            tv0 = tv1
            if n % 64 == 0:
                gc.collect()
    finally:
        gc.enable()
    return n, total / n, h


def _long_run(column, sensor, warm):
    # Feed until the flight ends or LONG_RUN readings; return heap after `warm` feeds.
    n = 0
    at_warm = 0
    while n < LONG_RUN and sensor.read():
        if sensor.t_k != sensor.t_k:
            continue
        try:
            column.feed(sensor.p_pa, sensor.t_k, sensor.rh_pct, sensor.time_s, sensor.gps_m)
        except ReadingError:
            pass
        n += 1
        if n == warm:
            gc.collect()
            at_warm = gc.mem_alloc()
    return n, at_warm


def retained_growth():
    sensor = SimulatedFlight(0.079)
    column = Column(LAT_DEG, LAUNCH_HEIGHT_M, on_event=_on_event)
    gc.collect()
    before = gc.mem_alloc()
    n, at_warm = _long_run(column, sensor, 1000)
    gc.collect()
    after = gc.mem_alloc()
    return n, column.count, before, at_warm, after


def main():
    if not hasattr(gc, "mem_alloc"):
        print("gc.mem_alloc() is MicroPython-only: run  MICROPYPATH=. micropython bench/heap.py")
        return 1
    print("MicroPython %s, %s; GC block %d B (64-bit unix runtime)" % (
        ".".join(str(v) for v in sys.implementation.version[:3]), sys.platform, 32))

    gc.collect()
    a = gc.mem_alloc()
    column = Column(LAT_DEG, LAUNCH_HEIGHT_M, on_event=_on_event)
    gc.collect()
    print("one Column object: %d B retained; checkpoint blob %d B" % (
        gc.mem_alloc() - a, len(column.to_bytes())))

    n, acc, mean, most, at, over = per_feed(column, SimulatedFlight(1.0), True)
    print("")
    print("feed, every feature on (rh, time, GPS every 10th, events + on_event), %d readings, %d accepted:" % (n, acc))
    print("  mean %.1f B/feed (%.1f float-sized blocks), max %d B at reading %d, %d feeds over %d B" % (
        mean, mean / 32.0, most, at, over, FEED_BUDGET))
    print("  budget <= %d B/feed -> %s" % (FEED_BUDGET, "met" if most <= FEED_BUDGET else "MISSED (max)"))
    gc.collect()
    print("  retained after the flight and a collect: %d B in use" % gc.mem_alloc())

    bare = Column(LAT_DEG, LAUNCH_HEIGHT_M, dry_fallback=True)
    n, acc, mean, most, at, over = per_feed(bare, SimulatedFlight(1.0), False)
    print("")
    print("feed, optional inputs off (p, t only; dry; no time, GPS, callback), %d accepted:" % acc)
    print("  mean %.1f B/feed (%.1f blocks), max %d B at reading %d" % (mean, mean / 32.0, most, at))

    n, mean, h = bare_integration(SimulatedFlight(1.0), False)
    print("")
    print("bare integration, h += layer_thickness(p0, p1, t0, t1), %d steps: %.1f B/step (%.1f blocks)" % (
        n, mean, mean / 32.0))
    n, mean, h = bare_integration(SimulatedFlight(1.0), True)
    print("  with tv = virtual_temperature(t, p, rh) each step, %d steps: %.1f B/step (%.1f blocks)" % (
        n, mean, mean / 32.0))

    n, acc, before, warm, after = retained_growth()
    print("")
    print("retained heap over %d feeds (%d accepted), every feature on, after gc.collect():" % (n, acc))
    print("  before %d B, after 1000 feeds %d B, after %d feeds %d B" % (before, warm, n, after))
    print("  growth over the run %+d B, after warm-up %+d B -> %s" % (
        after - before, after - warm, "no growth" if after <= warm else "GROWS"))
    return 0


if __name__ == "__main__":
    sys.exit(main())
