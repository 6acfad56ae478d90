"""Run time and memory of ``tinygeo station`` on the bundled buoy day and on a
longer invented station log.

Usage (from the repository root, with the package installed)::

    python bench/station_bench.py                 # buoy day, and 30 days of 1-minute readings
    python bench/station_bench.py --days 365 --repeat 3

What it runs, each command as its own process so that its wall time, CPU
time (getrusage of the children) and peak resident memory
(``ru_maxrss``, Linux: KiB) can be read after it ends:

1. START: ``python -c "import tinygeo.host.cli, tinygeo.host.stationlog"``:
   the interpreter's start and the imports, which every command pays;
2. BUOY: ``python -m tinygeo station examples/buoy_day.csv -o /dev/null
   --quiet`` (8 580 readings: 1 Hz for one minute every 10 minutes);
3. LONG: the same on an invented log of ``--days`` days, one reading a
   minute, written by this script (a slow sinusoidal pressure, a daily
   temperature cycle; printed as a logger would: 0.01 hPa, 0.01 degC,
   0.1 %).

Each is run ``--repeat`` times, alternated, and the fastest run is shown
(the machine is shared: the fastest is the least disturbed). In this
process, on the long log's readings parsed beforehand: the STATION FLOOR,
``Station.feed`` alone plus the row of each completed average
(tinygeo.stationrecord.row), us per reading: what the station costs before
the host reads or writes anything. Not run by the tests.
"""
import argparse
import math
import os
import resource
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
sys.path.insert(0, ROOT)

BUOY = os.path.join(ROOT, "examples", "buoy_day.csv")
LAT_DEG = 47.0
HEIGHT_M = 440.0


def write_log(path, days):
    """An invented station log: one reading a minute for ``days`` days."""
    n = int(days * 1440)
    with open(path, "w") as f:
        f.write("# invented station log for a benchmark (not real data)\n")
        f.write("# lat_deg=%.1f height_m=%.1f\n" % (LAT_DEG, HEIGHT_M))
        f.write("time_s,pressure_hpa,temp_c,rh_pct\n")
        for i in range(n):
            t = 60 * i
            p = 965.0 + 8.0 * math.sin(2 * math.pi * t / (5.3 * 86400.0)) + \
                0.4 * math.sin(2 * math.pi * t / 43200.0) + 0.03 * math.sin(i * 1.7)
            tc = 9.0 + 5.0 * math.sin(2 * math.pi * (t - 30000.0) / 86400.0) + 0.05 * math.sin(i)
            rh = 70.0 - 15.0 * math.sin(2 * math.pi * (t - 30000.0) / 86400.0)
            f.write("%d,%.2f,%.2f,%.1f\n" % (t, p, tc, rh))
    return n


def _usage():
    r = resource.getrusage(resource.RUSAGE_CHILDREN)
    return r.ru_utime + r.ru_stime, r.ru_maxrss


def child(args):
    """Run ``python args`` in ROOT; return (wall s, CPU s, peak RSS KiB so far, stdout)."""
    c0, _ = _usage()
    t0 = time.perf_counter()
    p = subprocess.run([sys.executable] + args, capture_output=True, text=True, cwd=ROOT)
    dt = time.perf_counter() - t0
    c1, peak = _usage()
    if p.returncode != 0:
        raise SystemExit("%s failed (%d): %s" % (args, p.returncode, p.stderr[-2000:]))
    return dt, c1 - c0, peak, p.stdout


def station_floor(path, repeat):
    """us per reading of Station.feed (+ the row of each average) on the
    readings of ``path`` parsed beforehand; the fastest of ``repeat`` runs."""
    from tinygeo import stationrecord
    from tinygeo.station import Station
    rows = []
    with open(path) as f:
        for line in f:
            if line[0] in "#t":
                continue
            a = line.split(",")
            rows.append((float(a[1]) * 100.0, float(a[2]) + 273.15, float(a[3]), int(a[0])))
    best = None
    for _ in range(repeat):
        st = Station(HEIGHT_M, LAT_DEG)
        feed = st.feed
        row = stationrecord.row
        t0 = time.perf_counter()
        for p, t, rh, ts in rows:
            if feed(p, t, rh, ts) & 1:
                row(st)
        dt = (time.perf_counter() - t0) / len(rows)
        best = dt if best is None else min(best, dt)
    return best, len(rows)


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--days", type=float, default=30.0, help="days of the long log (30)")
    ap.add_argument("--repeat", type=int, default=5, help="runs of each command (5)")
    a = ap.parse_args()
    tmp = tempfile.mkdtemp(prefix="tinygeo-station-bench-")
    long_log = os.path.join(tmp, "long.csv")
    n = write_log(long_log, a.days)
    print("python %s, %s" % (sys.version.split()[0], sys.platform))
    print("long log: %d readings (%.1f MB)" % (n, os.path.getsize(long_log) / 1e6))
    cmds = (("start", ["-c", "import tinygeo.host.cli, tinygeo.host.stationlog"], None),
            ("buoy", ["-m", "tinygeo", "station", BUOY, "-o", os.devnull, "--quiet"], 8580),
            ("long", ["-m", "tinygeo", "station", long_log, "-o", os.devnull, "--quiet"], n))
    runs = dict((name, []) for name, _, _ in cmds)
    peaks = {}
    for i in range(a.repeat):
        for name, args, _ in cmds:
            dt, cpu, peak, out = child(args)
            runs[name].append((dt, cpu))
            if i == 0:
                # RUSAGE_CHILDREN keeps the largest child so far: the first
                # round (start, buoy, long in order) gives each its own peak
                # as long as it is not smaller than the one before
                peaks[name] = peak
    for name, args, count in cmds:
        wall = " ".join("%.3f" % r[0] for r in runs[name])
        best = min(r[0] for r in runs[name])
        cpu = min(r[1] for r in runs[name])
        extra = ""
        if count:
            extra = ", %.1f us/reading after the start" % (
                1e6 * (best - min(r[0] for r in runs["start"])) / count)
        print("%-5s wall %s s; fastest %.3f s, CPU %.3f s, peak RSS (at most) %.1f MiB%s" % (name, wall, best, cpu, peaks[name] / 1024.0, extra))
    fl, m = station_floor(long_log, a.repeat)
    print("station floor (feed + the row of each average, %d readings, in this process): "
          "%.2f us/reading" % (m, 1e6 * fl))
    os.remove(long_log)
    os.rmdir(tmp)


if __name__ == "__main__":
    main()
