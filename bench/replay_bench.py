"""Replay speed and memory of ``tinygeo replay`` on a million-line log.

Usage (from the repository root, with the package installed)::

    python bench/replay_bench.py              # 1 000 000 lines (and 100 000 for comparison)
    python bench/replay_bench.py --lines 200000 --keep /tmp/float.csv --repeat 1

The log is an invented long-duration flight, written by this script: a
balloon rises at 5 m/s to a float height near 20 km and floats there for
days, oscillating by +-60 m (a slow made-up wave), one reading per second.
Pressure comes from the U.S. Standard Atmosphere 1976 (tinygeo.standard) at
the geopotential height, temperature from the same standard plus a small
ripple; values are printed like a logger would (0.01 hPa, 0.01 degC, 0.1 %).

Each replay runs as its own process (``python -m tinygeo replay LOG -o
/dev/null``) so its peak resident memory can be read with
``os.wait4`` (the child's own ``ru_maxrss``, Linux: KiB) after it ends.
A replay that streams uses the same peak for 100 000 and 1 000 000 lines.
The children keep their compiled bytecode in this run's temporary folder
(PYTHONPYCACHEPREFIX; PYTHONDONTWRITEBYTECODE removed), as an installed
package keeps its own: a machine that forbids bytecode files would
otherwise have every replay compile tinygeo's modules again (about 50 ms
here), which no installed copy does; a first replay of the small log,
not counted, writes that cache.

In the same run, for the ratio the replay is judged by: the PLAIN script (a
child process too: the csv module reads the same log, float() on every
field, one formatted line written per row, to /dev/null), and the COLUMN
FLOOR (in this process, on the readings already parsed: Column.feed and the
public attributes a table row reads, gph_m height_m rate_m_s sigma_m flags;
no parsing, no formatting): what the column alone costs per reading. The
ratio replay/plain is that of the fastest of ``--repeat`` alternated runs
of each (the machine is shared: the fastest run is the least disturbed), by
wall time and by the children's CPU time (os.wait4);
the floor/plain ratio says how much of it the column takes before the host
does anything.
Not run by the tests.
"""
import argparse
import math
import os
import shutil
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
sys.path.insert(0, ROOT)

from tinygeo import potential, standard  # noqa: E402

LAT_DEG = 43.6
SITE_M = 150.0
FLOAT_M = 20000.0


def write_log(path, n):
    """Write ``n`` readings of the invented float flight to ``path``."""
    with open(path, "w") as f:
        f.write("# invented long-duration float flight for a replay benchmark (not real data)\n")
        f.write("# lat_deg=%.1f start_height_m=%.1f\n" % (LAT_DEG, SITE_M))
        f.write("time_s,pressure_hpa,temp_c,rh_pct\n")
        rise_s = (FLOAT_M - SITE_M) / 5.0
        for i in range(n):
            t = float(i)
            if t < rise_s:
                z = SITE_M + 5.0 * t
            else:
                z = FLOAT_M + 60.0 * math.sin(2.0 * math.pi * (t - rise_s) / 1800.0)
            g = potential.geopotential_height(z, LAT_DEG)
            p = standard.standard_pressure(g)
            tc = standard.standard_temperature(g) - 273.15 + 0.3 * math.sin(t / 97.0)
            rh = 60.0 * math.exp(-z / 4000.0) + 2.0
            f.write("%d,%.2f,%.2f,%.1f\n" % (i, p / 100.0, tc, rh))


PLAIN = r"""
import csv, sys
with open(sys.argv[1], newline="") as f, open("/dev/null", "w") as out:
    for row in csv.reader(f):
        if row[0].startswith("#") or row[0] == "time_s":
            continue
        a, b, c, d = [float(x) for x in row]
        out.write("%.3f\t%.2f\t%.3f\t%.2f\n" % (a, b, c, d))
"""


ENV = dict(os.environ)


def child(args, cwd=None):
    """Run ``args`` as a child process; return (wall s, its own peak RSS KiB,
    its CPU s, exit status, stdout, stderr). The figures are the child's
    alone (os.wait4), not the largest of all children so far."""
    with tempfile.TemporaryFile("w+") as fo, tempfile.TemporaryFile("w+") as fe:
        t0 = time.perf_counter()
        p = subprocess.Popen(args, stdout=fo, stderr=fe, cwd=cwd, env=ENV)
        _, status, ru = os.wait4(p.pid, 0)
        dt = time.perf_counter() - t0
        p.returncode = os.waitstatus_to_exitcode(status)
        fo.seek(0)
        fe.seek(0)
        return dt, ru.ru_maxrss, ru.ru_utime + ru.ru_stime, p.returncode, fo.read(), fe.read()


def plain(path):
    """The plain script on ``path`` in a child process; (wall s, CPU s)."""
    dt, _, cpu, rc, _, err = child([sys.executable, "-c", PLAIN, path])
    if rc != 0:
        raise SystemExit("plain script failed: %s" % err[-2000:])
    return dt, cpu


def column_floor(path, limit, repeat):
    """Seconds per reading of Column.feed plus the row's attribute reads over
    the first ``limit`` readings of ``path`` (parsed beforehand); the fastest
    of ``repeat`` runs, each with a new column."""
    from tinygeo.column import Column
    rows = []
    with open(path) as f:
        for line in f:
            if line[0] in "#t":
                continue
            a = line.split(",")
            rows.append((float(a[1]) * 100.0, float(a[2]) + 273.15, float(a[3]), float(a[0])))
            if len(rows) >= limit:
                break
    best = None
    for _ in range(repeat):
        col = Column(LAT_DEG, SITE_M)
        feed = col.feed
        t0 = time.perf_counter()
        for p, t, rh, ts in rows:
            feed(p, t, rh, ts)
            col.gph_m, col.height_m, col.rate_m_s, col.sigma_m, col.flags
        dt = (time.perf_counter() - t0) / len(rows)
        best = dt if best is None else min(best, dt)
    return best


def replay(path):
    """Replay ``path`` in a child process; return (wall s, peak RSS KiB, stdout, CPU s)."""
    dt, peak, cpu, rc, out, err = child([sys.executable, "-m", "tinygeo", "replay", path, "-o",
                                         os.devnull, "--quiet"], cwd=ROOT)
    if rc != 0:
        raise SystemExit("replay failed (%d): %s" % (rc, err[-2000:]))
    return dt, peak, out, cpu


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--lines", type=int, default=1000000, help="readings in the big log")
    ap.add_argument("--small", type=int, default=100000, help="readings in the comparison log")
    ap.add_argument("--keep", metavar="PATH", help="keep the big log at PATH")
    ap.add_argument("--repeat", type=int, default=3,
                    help="runs of the replay and of the plain script, alternated (3)")
    a = ap.parse_args()
    tmp = tempfile.mkdtemp(prefix="tinygeo-bench-")
    ENV.pop("PYTHONDONTWRITEBYTECODE", None)
    ENV["PYTHONPYCACHEPREFIX"] = os.path.join(tmp, "pycache")
    small = os.path.join(tmp, "small.csv")
    big = a.keep or os.path.join(tmp, "big.csv")
    t0 = time.perf_counter()
    write_log(small, a.small)
    write_log(big, a.lines)
    gen = time.perf_counter() - t0
    print("python %s, %s" % (sys.version.split()[0], sys.platform))
    print("logs written in %.1f s: %d lines (%.1f MB), %d lines (%.1f MB)" % (
        gen, a.small, os.path.getsize(small) / 1e6, a.lines, os.path.getsize(big) / 1e6))
    replay(small)       # (writes the children's bytecode cache; not counted)
    results = {}
    for name, path, n in (("small", small, a.small), ("big", big, a.lines)):
        dt, peak, out, cpu = replay(path)
        results[name] = (dt, cpu)
        accepted = [ln for ln in out.splitlines() if ln.startswith("#: accepted")]
        print("replay %-5s %8d lines: %7.1f s, %6.1f us/reading, peak RSS %.1f MiB  %s" % (
            name, n, dt, 1e6 * dt / n, peak / 1024.0, accepted[0] if accepted else ""))
    # the ratio: replay and plain script alternated, the fastest of each (the
    # least disturbed by other jobs on the machine), by wall time and by the
    # CPU time of the child (user + system, less sensitive to other jobs)
    tr, tp = [results["big"]], []
    for i in range(a.repeat):
        tp.append(plain(big))
        if i + 1 < a.repeat:
            r = replay(big)
            tr.append((r[0], r[3]))
    print("replay big (%d runs): wall %s s, CPU %s s" % (
        len(tr), " ".join("%.2f" % x[0] for x in tr), " ".join("%.2f" % x[1] for x in tr)))
    print("plain  big (%d runs): wall %s s, CPU %s s (csv module, float() per field, one "
          "formatted line per row)" % (len(tp), " ".join("%.2f" % x[0] for x in tp),
                                       " ".join("%.2f" % x[1] for x in tp)))
    fl = column_floor(big, min(a.lines, 200000), a.repeat)
    wall_p = min(x[0] for x in tp)
    print("column floor (feed + the row's attributes, %d readings, in this process): "
          "%.2f us/reading" % (min(a.lines, 200000), 1e6 * fl))
    print("ratio replay/plain: wall %.2f, CPU %.2f (fastest runs); column floor/plain wall %.2f"
          % (min(x[0] for x in tr) / wall_p, min(x[1] for x in tr) / min(x[1] for x in tp),
             fl * a.lines / wall_p))
    for path in (small, big if not a.keep else None):
        if path:
            os.remove(path)
    shutil.rmtree(os.path.join(tmp, "pycache"), ignore_errors=True)
    if not a.keep:
        os.rmdir(tmp)


if __name__ == "__main__":
    main()
