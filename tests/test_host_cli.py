"""End-to-end tests of the installed ``tinygeo`` console script (host tools).

Every check runs the real column (tinygeo.column) through the command line:
the bundled example, simulated flights with their true heights, compare,
plot, determinism and live stdin streaming. The simulator's flights are
invented data; what they are checked against is stated beside each test.
"""
import csv
import io
import math
import os
import queue
import shutil
import struct
import subprocess
import sys
import threading
from pathlib import Path

import pytest

from conftest import MICROPYTHON, require_micropython, run_script

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE = ROOT / "examples" / "schoolfield_flight.csv"
TINYGEO = shutil.which("tinygeo") or str(Path(sys.executable).with_name("tinygeo"))


def run(*args, stdin=None, check_rc=0, cwd=None):
    """Run the installed console script; return (stdout, stderr)."""
    assert os.path.exists(TINYGEO), (
        "the console script is not installed: pip install -e %s" % ROOT)
    p = subprocess.run([TINYGEO] + [str(a) for a in args], input=stdin, capture_output=True,
                       text=True, timeout=120, cwd=cwd or ROOT)
    assert "Traceback" not in p.stderr, p.stderr
    if check_rc is not None:
        assert p.returncode == check_rc, (p.returncode, p.stdout[-2000:], p.stderr[-2000:])
    return p.stdout, p.stderr


def table_rows(text):
    """Rows of a replay table as dicts of floats (events kept as text)."""
    lines = [ln for ln in text.splitlines() if ln and not ln.startswith("#")]
    header = lines[0].split("\t")
    rows = []
    for ln in lines[1:]:
        f = ln.split("\t")
        d = dict(zip(header, f))
        for k in header:
            if k != "events":
                d[k] = float(d[k])
        rows.append(d)
    return rows


def summary(text):
    """The ``#:`` records of a table as a list of (what, {key: float}); the
    words after ``--`` (a sentence for people) are left out."""
    out = []
    for ln in text.splitlines():
        if ln.startswith("#: "):
            words = ln[3:].split(" -- ")[0].split()
            out.append((words[0], dict((k, float(v)) for k, v in
                                       (w.split("=", 1) for w in words[1:]))))
    return out


def read_truth(path):
    with open(path) as f:
        first = f.readline()
        assert first.startswith("#")
        offsets = dict((k, float(v)) for k, v in
                       (w.split("=") for w in first.split("offsets of its sensor:")[1].split()))
        rows = dict((int(r["line"]), r) for r in csv.DictReader(f))
    return offsets, rows


@pytest.fixture(scope="module")
def flight(tmp_path_factory):
    """A simulated flight (seed 12) with its truth and its host replay."""
    d = tmp_path_factory.mktemp("flight")
    log, truth, tab = d / "flight.csv", d / "truth.csv", d / "table.tsv"
    run("simulate", "--seed", 12, "--spikes", 0, "-o", log, "--truth", truth)
    out, err = run("replay", log, "-o", tab)
    return {"dir": d, "log": log, "truth": truth, "table": tab, "summary_out": out, "err": err}


# --- the bundled example (README's first command) ------------------------------
def test_bundled_example_replays_with_no_flags():
    out, err = run("replay", EXAMPLE)
    assert out.startswith("# tinygeo table 1\n")
    rows = table_rows(out)
    s = dict((w, d) for w, d in summary(out) if w != "level")
    levels = [d["p_hpa"] for w, d in summary(out) if w == "level"]
    assert s["accepted"]["count"] == len(rows) > 3000
    assert s["accepted"]["count"] + s["rejected"]["count"] == 3570  # readings in the log
    # every mandatory level from 925 hPa (above the 420 m site) to 30 hPa (below
    # the 24 km burst) is crossed once, in order (WMO mandatory levels)
    assert levels == [925, 850, 700, 500, 400, 300, 250, 200, 150, 100, 70, 50, 30]
    assert 23500 < s["burst"]["height_m"] < 24500      # invented burst at 24 000 m
    assert abs(s["landing"]["height_m"] - 420.0) < 10.0  # back on the 420 m field
    assert 10000 < s["tropopause"]["height_m"] < 13000   # standard atmosphere: 11 km
    # rejected readings are reported on stderr with their line number
    assert "rejected (rate) line 284:" in err


def test_python_m_and_help_document_exit_codes():
    p = subprocess.run([sys.executable, "-m", "tinygeo", "--help"], capture_output=True,
                       text=True, cwd=ROOT, timeout=60)
    assert p.returncode == 0
    for code in ("0 ", "1 ", "2 ", "3 "):
        assert "\n  " + code in p.stdout
    for cmd in ("replay", "simulate", "compare", "plot"):
        assert cmd in p.stdout
    out, _ = run("replay", "--help")
    assert "--pressure" in out and "exit status" in out


def test_simulate_reproduces_the_bundled_example_bytes():
    out, _ = run("simulate", "--seed", 4)
    assert out == EXAMPLE.read_text()


# --- replay recovers the simulator's true heights ------------------------------
def test_replay_recovers_true_heights_within_stated_uncertainty(flight):
    offsets, truth = read_truth(flight["truth"])
    # the calibration offsets drawn for this flight are ordinary (within 2 sigma
    # of the stated bias_*), so a 3-sigma bound must hold everywhere
    assert abs(offsets["p_pa"]) < 2 * 20.0 and abs(offsets["t_k"]) < 2 * 0.1
    rows = table_rows(flight["table"].read_text())
    assert len(rows) > 3000
    worst = 0.0
    within_1 = 0
    for r in rows:
        t = truth[int(r["line"])]
        err = abs(r["height_m"] - float(t["height_m"]))
        gerr = abs(r["gph_m"] - float(t["gph_m"]))
        bound = 3.0 * r["sigma_m"] + 0.05  # 5 cm: print rounding of heights and sigma
        assert err <= bound and gerr <= bound, (r, t)
        worst = max(worst, err / max(r["sigma_m"], 0.01))
        within_1 += err <= r["sigma_m"] + 0.05
    # the errors are not all far inside the bound either: sigma is not inflated
    assert within_1 < len(rows)
    assert worst > 0.5


def test_replay_of_a_clean_flight_is_limited_by_quantisation_only(tmp_path):
    log, truth = tmp_path / "c.csv", tmp_path / "t.csv"
    run("simulate", "--clean", "--seed", 3, "--burst", 16000, "-o", log, "--truth", truth)
    out, _ = run("replay", log)
    _, tr = read_truth(truth)
    rows = table_rows(out)
    for r in rows:
        t = tr[int(r["line"])]
        # 1 Pa pressure steps: a half step of 0.5 Pa moves a height by
        # (Rd T / g0) 0.5/p (hypsometric equation), here < 0.2 m below 16 km
        tol = 29.3 * float(t["t_k"]) * 0.5 / float(t["p_pa"]) * 2.0 + 0.01
        assert abs(r["height_m"] - float(t["height_m"])) <= tol, (r, t)


def test_iso_times_dew_point_and_tabs_replay_like_seconds_and_humidity(tmp_path):
    a, b = tmp_path / "a.csv", tmp_path / "b.tsv"
    run("simulate", "--seed", 5, "--burst", 8000, "-o", a)
    run("simulate", "--seed", 5, "--burst", 8000, "--tsv", "--dew-point",
        "--start", "2026-05-04T09:30:00Z", "-o", b)
    assert "utc\tpressure_hpa\ttemp_c\tdewpoint_c\tgps_m" in b.read_text()
    ra = table_rows(run("replay", a)[0])
    rb = table_rows(run("replay", b)[0])
    assert len(ra) == len(rb) > 500
    for x, y in zip(ra, rb):
        assert x["line"] == y["line"]
        # same readings; dew point is printed to 0.01 degC and converted back: half a
        # unit (0.005 K) is about 0.3 Pa of vapour pressure near the ground, 4e-4 K of
        # Tv, under 1 cm of height over the 8 km; measured 1 mm, the print rounding of
        # the heights (was 0.5 m)
        assert abs(x["height_m"] - y["height_m"]) < 0.012
        # times: seconds since the first timestamp vs seconds as written; the
        # simulator prints seconds to 0.01 s and timestamps to 1 ms, and both
        # sides are differences of two printed times
        assert abs((x["time_s"] - ra[0]["time_s"]) - y["time_s"]) <= 0.0111


# --- determinism -----------------------------------------------------------------
def test_same_input_gives_byte_identical_output(flight, tmp_path):
    one, _ = run("replay", flight["log"])
    two, _ = run("replay", flight["log"])
    assert one == two
    s1, _ = run("simulate", "--seed", 99, "--burst", 3000)
    s2, _ = run("simulate", "--seed", 99, "--burst", 3000)
    s3, _ = run("simulate", "--seed", 98, "--burst", 3000)
    assert s1 == s2 and s1 != s3


def test_output_files_summary_and_thinning(flight, tmp_path):
    tab, summ = tmp_path / "t.tsv", tmp_path / "s.txt"
    out, _ = run("replay", flight["log"], "-o", tab, "--summary", summ)
    lines = summ.read_text().splitlines()
    assert lines and all(ln.startswith("#: ") for ln in lines)
    assert out.splitlines() == lines                    # summary also on stdout
    assert tab.read_text().endswith(summ.read_text())   # and at the end of the table
    thin, _ = run("replay", flight["log"], "--every", 100)
    rows = table_rows(thin)
    full = table_rows(tab.read_text())
    events = [r for r in full if r["events"] != "-"]
    assert len(full) // 100 <= len(rows) <= len(full) // 100 + len(events) + 1
    # every row with an event is kept (by line: a row holding nan, a GPS
    # dropout say, never compares equal as a dict)
    kept = set(r["line"] for r in rows)
    assert all(e["line"] in kept for e in events)


# --- compare ------------------------------------------------------------------
def test_compare_passes_on_identical_inputs(flight):
    out, _ = run("compare", flight["table"])
    assert "result: PASS" in out and "offending readings: 0" in out
    out, _ = run("compare", flight["table"], "--log", flight["log"])
    assert "result: PASS" in out and "readings on one side only: 0" in out


def test_compare_fails_naming_the_first_offending_line(flight, tmp_path):
    text = flight["table"].read_text().splitlines(keepends=True)
    data = [i for i, ln in enumerate(text) if ln[0].isdigit()]
    k1, k2 = data[700], data[1500]
    bad = list(text)
    for k, dz in ((k1, 0.8), (k2, 5.0)):
        f = bad[k].split("\t")
        f[8] = "%.3f" % (float(f[8]) + dz)          # height_m as a device would drift
        bad[k] = "\t".join(f)
    dev = tmp_path / "device.tsv"
    dev.write_text("".join(bad))
    diffs = tmp_path / "diffs.tsv"
    out, _ = run("compare", dev, "--diffs", diffs, check_rc=1)
    line1 = int(text[k1].split("\t")[0])
    assert "first offending: line %d (device table line %d): height_m differs by 0.800" % (
        line1, k1 + 1) in out
    assert "result: FAIL" in out and "offending readings: 2" in out
    status = [ln.split("\t")[-1].strip() for ln in diffs.read_text().splitlines()[1:]]
    assert status.count("FAIL") == 2
    # a wider tolerance lets the small one pass, not the large one
    out, _ = run("compare", dev, "--tol-height", 1.0, check_rc=1)
    assert "first offending: line %s" % text[k2].split("\t")[0] in out
    # a reading missing on the device side is named too (with --log)
    dev.write_text("".join(text[:k1] + text[k1 + 1:]))
    out, _ = run("compare", dev, "--log", flight["log"], check_rc=1)
    assert "first offending: line %d: accepted by the host but missing" % line1 in out


def _float32_device_table(log, out_path):
    """Write the table a float32 board would write for ``log``: the unmodified
    column run with every float rounded to binary32 (tests/floatemu.py), rows
    and the end record written with tinygeo.record as a device logger would."""
    import floatemu
    from tinygeo import record
    colmod = floatemu.load_module("f32", "tinygeo.column")
    r32 = floatemu.r32
    col = colmod.Column(r32(47.3), r32(420.0))
    levels = []
    col.on_event = lambda c, bits: levels.extend(x[0] for x in c.levels) \
        if bits & record.EV_LEVEL else None
    rows = 0
    with open(out_path, "w") as out:
        out.write(record.MAGIC + "\n" + record.site_line(col) + "\n")
        out.write(record.HEADER + "\n")
        for n, raw in enumerate(open(log), 1):
            f = raw.strip().split(",")
            if raw.startswith("#") or f[0] == "time_s":
                continue
            p, t = r32(float(f[1]) * 100.0), r32(float(f[2]) + 273.15)
            rh, ts = (r32(float(f[3])) if f[3] else None), r32(float(f[0]))
            del levels[:]
            try:
                bits = col.feed(p, t, rh, ts, None)
            except ValueError:
                continue
            out.write(record.row(n, ts, p, t, rh, None, None, col.gph_m, col.height_m,
                                 col.rate_m_s, col.sigma_m, col.flags,
                                 record.events_text(bits, list(levels))) + "\n")
            rows += 1
        out.write(record.end_line(rows, col) + "\n")


def test_compare_float32_device_against_host(tmp_path):
    log, dev = tmp_path / "f.csv", tmp_path / "dev.tsv"
    run("simulate", "--seed", 8, "--burst", 6000, "--no-gps", "-o", log)
    _float32_device_table(log, dev)
    for extra in ([], ["--log", log]):
        out, _ = run("compare", dev, *extra)
        assert "result: PASS" in out and "readings compared: 10" in out
        assert "flags/events differing: 0" in out
        largest = dict(ln.split()[:2] for ln in out.splitlines() if ln.startswith("  ")
                       and ln.split()[0] in ("gph_m", "height_m"))
        # the sides do differ (binary32 vs double) by more than the 0.5 mm
        # rounding of the printed heights, and by far less than the tolerance
        assert 0.0006 < float(largest["height_m"]) < 0.05
    out, _ = run("compare", dev, "--tol-height", "0.0001", check_rc=1)
    assert "first offending: line " in out


MP_LOGGER = r"""
import sys
from tinygeo.column import Column
from tinygeo.errors import ReadingError
from tinygeo import record
col = Column(47.3, 420.0)
print(record.MAGIC)
print(record.site_line(col))
print(record.HEADER)
n = 0
rows = 0
for raw in open(sys.argv[1]):
    n += 1
    f = raw.strip().split(",")
    if raw[0] == "#" or f[0] == "time_s":
        continue
    rh = float(f[3]) if f[3] else None
    try:
        bits = col.feed(float(f[1]) * 100.0, float(f[2]) + 273.15, rh, float(f[0]), None)
    except ReadingError:
        continue
    print(record.column_row(n, col, bits, rh))
    rows += 1
print(record.end_line(rows, col))
"""


def test_compare_a_table_written_under_micropython(tmp_path):
    # the device side: MicroPython (unix port) runs the column and writes its
    # rows and end record with tinygeo.record, as a logger on a board would
    # (the column_row of each reading names only the highest level it crossed)
    require_micropython()
    log, script, dev = tmp_path / "f.csv", tmp_path / "logger.py", tmp_path / "dev.tsv"
    run("simulate", "--seed", 9, "--burst", 5000, "--no-gps", "-o", log)
    script.write_text(MP_LOGGER)
    text = run_script(MICROPYTHON, [script, log])
    dev.write_text(text)
    for extra in ([], ["--log", log]):
        out, _ = run("compare", dev, *extra)
        assert "result: PASS" in out and "readings on one side only: 0" in out, out
        assert "flags/events differing: 0" in out
    # the same table cut short: 10 rows and no end record fail in both modes,
    # and the report counts the rows the log has beyond the device's last one
    lines = text.splitlines(keepends=True)
    rows = [i for i, ln in enumerate(lines) if ln[:1].isdigit()]
    dev.write_text("".join(lines[:rows[9] + 1]))
    out, _ = run("compare", dev, check_rc=1)
    assert "no end record" in out and "result: FAIL" in out
    out, _ = run("compare", dev, "--log", log, check_rc=1)
    missing = len(rows) - 10
    assert "  missing-at-end: %d (" % missing in out
    assert "offending readings: %d\n" % missing in out and "result: FAIL" in out


# --- plot ------------------------------------------------------------------------
def _png_size(path):
    data = Path(path).read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24]), len(data)


def test_plot_renders_png_and_svg(flight, tmp_path):
    import matplotlib  # noqa: F401  (the plot extra; .ci/run installs it: a failure, not a skip)
    # in-process: matplotlib is imported once for the whole test run (the
    # console script's argument handling and exits are the same main())
    from tinygeo.host import cli
    png = tmp_path / "p.png"
    err = io.StringIO()
    assert cli.main(["plot", str(flight["table"]), "-o", str(png)], stdout=io.StringIO(),
                    stderr=err) == 0, err.getvalue()
    (w, h), size = _png_size(png)
    assert (w, h) == (1100, 850)              # 11 x 8.5 in at 100 dpi
    assert 30_000 < size < 2_000_000
    svg = tmp_path / "p.svg"
    # a raw log, replayed on the fly
    err = io.StringIO()
    assert cli.main(["plot", str(flight["log"]), "-o", str(svg), "--title", "raw log"],
                    stdout=io.StringIO(), stderr=err) == 0, err.getvalue()
    text = svg.read_text()
    assert text.lstrip().startswith("<?xml") and "<svg" in text and "raw log" in text


def test_plot_without_matplotlib_says_how_to_install(flight, monkeypatch):
    from tinygeo.host import cli
    monkeypatch.setitem(sys.modules, "matplotlib", None)   # import now fails
    out, err = io.StringIO(), io.StringIO()
    rc = cli.main(["plot", str(flight["table"]), "-o", "x.png"], stdout=out, stderr=err)
    assert rc == 3
    assert "pip install 'tinygeo[plot]'" in err.getvalue()


# --- live stdin ------------------------------------------------------------------------
def test_stdin_rows_come_out_before_end_of_input(flight):
    lines = flight["log"].read_text().splitlines(keepends=True)
    head, data = lines[:4], lines[4:]          # 3 comment lines and the header
    p = subprocess.Popen([TINYGEO, "replay", "-"], stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                         stderr=subprocess.DEVNULL, text=True, bufsize=1)
    got = queue.Queue()
    reader = threading.Thread(target=lambda: [got.put(ln) for ln in p.stdout] + [got.put(None)],
                              daemon=True)
    reader.start()
    try:
        p.stdin.write("".join(head))
        rows = []
        for i in range(3):
            p.stdin.write(data[i])
            p.stdin.flush()
            # wait for this reading's row while stdin stays open
            while True:
                line = got.get(timeout=30)
                assert line is not None, "replay ended before its input did"
                if line[:1].isdigit():
                    rows.append(line)
                    break
        assert p.poll() is None                 # still running: stdin is still open
        assert [int(r.split("\t")[0]) for r in rows] == [5, 6, 7]
    finally:
        p.stdin.close()
        p.wait(timeout=60)
    rest = []
    while True:
        line = got.get(timeout=30)
        if line is None:
            break
        rest.append(line)
    assert "#: accepted count=3\n" in rest


def test_event_bits_of_the_table_match_the_column():
    from tinygeo import column
    from tinygeo.host import table
    for name in ("EV_LEVEL", "EV_TROPOPAUSE", "EV_BURST", "EV_LANDED", "EV_LAUNCH", "EV_FLOAT"):
        assert getattr(table, name) == getattr(column, name)
    assert math.isnan(table.NAN)
