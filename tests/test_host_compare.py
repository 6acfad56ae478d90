"""``tinygeo compare`` with what a device can write: ``line`` (or ``time_s``)
and any subset of the record format's columns (tinygeo/record.py), ``nan``
for a value not computed, an end record that says the table is complete.
Rows missing at the end fail in every mode, and the report's counts are the
counts of the statuses in the --diffs file.

In-process runs of ``tinygeo.host.cli.main``. The "device" tables are a
host replay's table edited as a device with less to write would write it;
the MicroPython device itself is in tests/test_host_cli.py. What is checked
is the comparison's bookkeeping, against counts made here by hand.
"""
import io

import pytest

from tinygeo import record
from tinygeo.host import cli


def main(args):
    out, err = io.StringIO(), io.StringIO()
    rc = cli.main([str(a) for a in args], stdin=io.StringIO(""), stdout=out, stderr=err)
    assert "Traceback" not in err.getvalue()
    return rc, out.getvalue(), err.getvalue()


@pytest.fixture(scope="module")
def flight(tmp_path_factory):
    d = tmp_path_factory.mktemp("compare")
    log, tab = d / "flight.csv", d / "table.tsv"
    assert main(["simulate", "--seed", 21, "--burst", 3000, "-o", log])[0] == 0
    rc, _, err = main(["replay", log, "-o", tab])
    assert rc == 0, err
    lines = tab.read_text().splitlines(keepends=True)
    head = [ln for ln in lines if ln.startswith("# ")]
    rows = [ln.rstrip("\n").split("\t") for ln in lines if ln[:1].isdigit()]
    return {"dir": d, "log": log, "table": tab, "head": head, "rows": rows}


def device(flight, name, columns, rows=None, end=True, magic=record.MAGIC):
    """A device table holding only ``columns`` of the replay's rows."""
    idx = [record.COLUMNS.index(c) for c in columns]
    rows = flight["rows"] if rows is None else rows
    text = [magic + "\n"] + [ln for ln in flight["head"] if ln.startswith("# site")]
    text.append("\t".join(columns) + "\n")
    text += ["\t".join(r[i] for i in idx) + "\n" for r in rows]
    if end:
        text.append("%srows=%d\n" % (record.END_PREFIX, len(rows)))
    path = flight["dir"] / name
    path.write_text("".join(text))
    return path


def report(out):
    """The report's 'name: number' lines as a dict."""
    d = {}
    for ln in out.splitlines():
        k, sep, v = ln.rpartition(": ")
        if sep and v.split()[0].isdigit():
            d[k.strip()] = int(v.split()[0])
    return d


INPUTS = ["line", "time_s", "p_pa", "t_k", "rh_pct", "gps_m"]


def test_a_subset_of_the_value_columns_passes(flight):
    n = len(flight["rows"])
    # the inputs and one result: the host feeds them again
    dev = device(flight, "gph.tsv", INPUTS + ["gph_m"])
    rc, out, _ = main(["compare", dev])
    assert rc == 0 and "result: PASS" in out, out
    assert report(out)["readings compared"] == n
    assert "  sigma_m   (not in the device table)" in out and "skipped" not in out
    # with the raw log: 'line' and one value
    dev = device(flight, "line_h.tsv", ["line", "height_m"])
    rc, out, _ = main(["compare", dev, "--log", flight["log"]])
    assert rc == 0 and report(out)["readings compared"] == n, out
    # no line column: rows matched by time since the first row
    dev = device(flight, "time_h.tsv", ["time_s", "height_m", "flags"])
    rc, out, _ = main(["compare", dev, "--log", flight["log"]])
    assert rc == 0 and report(out)["readings compared"] == n, out
    # inputs missing and no log: the host cannot feed the readings
    dev = device(flight, "no_p.tsv", ["line", "height_m"])
    rc, _, err = main(["compare", dev])
    assert rc == 2 and "no p_pa column" in err and "--log FILE" in err


def test_nan_in_every_row_means_not_computed_and_is_skipped(flight):
    rows = [r[:10] + ["nan"] + r[11:] for r in flight["rows"]]      # sigma_m not computed
    dev = device(flight, "nan_sigma.tsv", list(record.COLUMNS), rows)
    rc, out, _ = main(["compare", dev])
    assert rc == 0 and "result: PASS" in out, out
    # every sigma_m; the rates nan on both sides (the first reading has none)
    # agree and are not counted
    first = sum(1 for r in rows if r[9] == "nan")
    assert first >= 1
    assert report(out)["values not computed on the device (nan in every row), skipped"] == \
        len(rows)


def test_a_table_cut_short_fails_in_every_mode(flight):
    rows = flight["rows"]
    for end, words in ((False, "no end record"), (True, None)):
        cut = device(flight, "cut.tsv", list(record.COLUMNS), rows[:1], end=end)
        rc, out, _ = main(["compare", cut])
        if words:
            assert rc == 1 and words in out and "result: FAIL" in out, out
        else:
            assert rc == 0, out      # one row that says it is all: complete by its own account
        rc, out, _ = main(["compare", cut, "--log", flight["log"]])
        assert rc == 1 and "result: FAIL" in out
        assert report(out)["missing-at-end"] == len(rows) - 1
    # rows missing in the middle with an end record that counts them
    text = device(flight, "gap.tsv", list(record.COLUMNS)).read_text().splitlines(keepends=True)
    gap = flight["dir"] / "gap.tsv"
    k = next(i for i, ln in enumerate(text) if ln[:1].isdigit()) + 100
    gap.write_text("".join(text[:k] + text[k + 3:]))
    rc, out, _ = main(["compare", gap])
    assert rc == 1 and "the end record says %d rows, the table holds %d: rows are missing" % (
        len(rows), len(rows) - 3) in out


def test_the_report_counts_what_failed(flight, tmp_path):
    rows = [list(r) for r in flight["rows"]]
    rows[50][8] = "%.3f" % (float(rows[50][8]) + 2.0)      # height_m off by 2 m
    rows[60][7] = "%.3f" % (float(rows[60][7]) - 1.0)      # gph_m off by 1 m
    rows[61][11] = str(int(rows[61][11]) ^ 1)               # a flag bit differs
    del rows[200]                                           # one reading missing on the device
    rows = rows[:-5]                                        # and the last five
    dev = device(flight, "bad.tsv", list(record.COLUMNS), rows, end=False)
    diffs = tmp_path / "diffs.tsv"
    rc, out, _ = main(["compare", dev, "--log", flight["log"], "--diffs", diffs])
    assert rc == 1
    status = [ln.rstrip("\n").split("\t")[-1] for ln in diffs.read_text().splitlines()[1:]]
    counts = dict((s, status.count(s)) for s in set(status))
    assert counts == {"ok": len(flight["rows"]) - 9, "FAIL": 3, "missing-on-device": 1,
                      "missing-at-end": 5}
    r = report(out)
    assert r["offending readings"] == 9 == len(status) - counts["ok"]
    assert r["FAIL"] == 3 and r["missing-on-device"] == 1 and r["missing-at-end"] == 5
    assert r["readings on one side only"] == 6 and r["flags/events differing"] == 1
    assert r["readings compared"] == len(flight["rows"]) - 6
    # --ignore-events: the flag difference is listed, no longer an offence
    rc, out, _ = main(["compare", dev, "--log", flight["log"], "--ignore-events"])
    r = report(out)
    assert r["offending readings"] == 8 and r["FAIL"] == 2 and "(ignored)" in out


def test_a_table_of_the_older_name_is_still_read(flight):
    dev = device(flight, "old.tsv", list(record.COLUMNS), magic="# tinygeo replay table 1")
    rc, out, _ = main(["compare", dev])
    assert rc == 0 and "result: PASS" in out, out


def test_a_reading_the_host_rejects_is_an_offence(flight):
    rows = [list(r) for r in flight["rows"]]
    rows[30][3] = "600.000"          # t_k out of the column's 150..350 K
    dev = device(flight, "reject.tsv", list(record.COLUMNS), rows)
    rc, out, _ = main(["compare", dev])
    assert rc == 1
    r = report(out)
    assert r["host-rejected"] == 1 and r["offending readings"] >= 1
    assert "the host rejects this reading (temperature" in out


def test_a_thinned_table_is_refused(flight, tmp_path):
    thin = tmp_path / "thin.tsv"
    rc, _, err = main(["replay", flight["log"], "--every", 10, "-o", thin])
    assert rc == 0, err
    assert "#: end rows=%d " % sum(1 for ln in thin.read_text().splitlines() if ln[:1].isdigit()) \
        in thin.read_text()
    rc, _, err = main(["compare", thin])
    assert rc == 2 and "every 10-th row only" in err and "without --every" in err


def _body(path):
    """The lines of a device table split into (head, rows) as text lines."""
    text = path.read_text().splitlines(keepends=True)
    k = next(i for i, ln in enumerate(text) if ln[:1].isdigit())
    return text[:k], [ln for ln in text[k:] if ln[:1].isdigit()]


def test_a_resume_record_drops_the_rows_taken_again(flight, tmp_path):
    # a logger cut at row k+30 after a checkpoint at row k: on resume it
    # writes '#: resume line=N' (tinygeo.record.resume_line) and takes the
    # readings from N on again; the copies before the record are void
    n = len(flight["rows"])
    head, rows = _body(device(flight, "whole.tsv", list(record.COLUMNS), end=False))
    k = 500
    line_k = int(rows[k].split("\t")[0])
    torn = rows[k + 30][:25]                   # the power cut tore this row
    text = head + rows[:k + 30] + [torn, "\n", record.resume_line(line_k) + "\n"] + rows[k:] + \
        [record.END_PREFIX + "rows=%d\n" % n]
    dev = tmp_path / "resumed.tsv"
    dev.write_text("".join(text))
    rc, out, _ = main(["compare", dev])
    assert rc == 0 and "result: PASS" in out, out
    r = report(out)
    assert r["readings compared"] == n
    assert "rows it took again, earlier copies dropped: 30" in out
    assert "rows torn by a power cut, dropped: 1" in out
    rc, out, _ = main(["compare", dev, "--log", flight["log"]])
    assert rc == 0 and report(out)["readings compared"] == n, out
    # the same table read from standard input (read once, into a temporary file)
    o, e = io.StringIO(), io.StringIO()
    rc = cli.main(["compare", "-"], stdin=io.StringIO("".join(text)), stdout=o, stderr=e)
    assert rc == 0 and "result: PASS" in o.getvalue(), o.getvalue() + e.getvalue()
    # a resume record torn while it was written (no final 'whole', as
    # '#: resume line=3' left from line=3000) voids nothing: with the whole
    # record the next start wrote after it, the result is the same
    for torn in ("#: resume line=%d" % (line_k // 10), "#: resume li", "#: res"):
        cut = head + rows[:k + 30] + [torn, "\n", "\n", record.resume_line(line_k) + "\n"] + \
            rows[k:] + [record.END_PREFIX + "rows=%d\n" % n]
        dev.write_text("".join(cut))
        rc, out, _ = main(["compare", dev])
        assert rc == 0 and "result: PASS" in out, out
        assert report(out)["readings compared"] == n
        assert "rows it took again, earlier copies dropped: 30" in out
        assert "resume records torn by a power cut while written (no final word 'whole'), " \
               "ignored: 1 (the first at table line %d)" % (len(head) + k + 31) in out, out
    # a whole record that is malformed makes the table unreadable
    for bad in ("line=-3", "line=3_0", "line=\u0663", "line=3 line=3", "rows=3"):
        dev.write_text("".join(head + rows[:k] + ["\n", record.RESUME_PREFIX + bad + " whole\n"]
                               + rows[k:]), encoding="utf-8")
        rc, out, err = main(["compare", dev])
        assert rc == 2 and "unreadable resume record" in err, (bad, err)
    # a last row without a line end in a table without an end record is torn,
    # even when it reads (a cut inside its last field)
    dev.write_text("".join(head + rows[:k]).rstrip("\n")[:-1])
    rc, out, _ = main(["compare", dev])
    assert "last row torn (the table was cut short), dropped: 1" in out, out
    assert report(out)["readings compared"] == k - 1
    # without the record the repeated rows are named as such
    dup = tmp_path / "dup.tsv"
    dup.write_text("".join(head + rows[:k + 30] + rows[k:] +
                           [record.END_PREFIX + "rows=%d\n" % n]))
    rc, out, _ = main(["compare", dup])
    assert rc == 1
    assert "rows whose line is not above every row before: 30" in out
    assert "the end record says %d rows, the table holds %d: 30 extra rows (duplicated rows?" % (
        n, n + 30) in out and "rows are missing" not in out


def test_a_torn_last_row_is_a_table_cut_short(flight, tmp_path):
    head, rows = _body(device(flight, "whole2.tsv", list(record.COLUMNS), end=False))
    dev = tmp_path / "torn.tsv"
    dev.write_text("".join(head + rows[:100] + [rows[100][:30]]))     # no line end, no end record
    rc, out, err = main(["compare", dev])
    assert rc == 1 and "no end record" in out and "last row torn" in out, out + err
    # a row that cannot be read in the middle is still an error (exit 2)
    dev.write_text("".join(head + rows[:100] + [rows[100][:30] + "\n"] + rows[101:]))
    rc, out, err = main(["compare", dev])
    assert rc == 2 and "fields, expected 13" in err


def test_the_site_line_may_stand_anywhere_before_the_first_row(flight, tmp_path):
    head, rows = _body(device(flight, "site.tsv", list(record.COLUMNS)))
    site = [ln for ln in head if ln.startswith(record.SITE_PREFIX)]
    rest = [ln for ln in head if not ln.startswith(record.SITE_PREFIX)]
    tail = [record.END_PREFIX + "rows=%d\n" % len(rows)]
    dev = tmp_path / "after_header.tsv"
    dev.write_text("".join(rest + site + rows + tail))          # after the column header
    assert rest[-1].startswith("line\t")
    rc, out, err = main(["compare", dev])
    assert rc == 0 and "result: PASS" in out, out + err
    dev.write_text("".join(rest + rows[:1] + site + rows[1:] + tail))
    rc, out, err = main(["compare", dev])
    assert rc == 2 and "after the first row" in err and "must come before the rows" in err, err
    dev.write_text("".join(rest + rows + tail))
    rc, out, err = main(["compare", dev])
    assert rc == 2 and "'# site' line before its first row" in err and "--lat" in err, err


def test_a_nan_where_the_device_writes_numbers_fails(flight):
    # one row with nan heights, rate and sigma: the device computes these
    # columns (numbers in every other row), the host has numbers there
    rows = [list(r) for r in flight["rows"]]
    rows[400][7:11] = ["nan"] * 4
    dev = device(flight, "nan_row.tsv", list(record.COLUMNS), rows)
    rc, out, _ = main(["compare", dev])
    assert rc == 1 and report(out)["FAIL"] == 1, out
    assert "gph_m is nan on the device, host" in out
    rc, out, _ = main(["compare", dev, "--log", flight["log"]])
    assert rc == 1 and report(out)["FAIL"] == 1, out


def _rounding_table(path, flags_edit=None):
    """A device table written with tinygeo.record by a column fed pressures
    0.003 Pa apart (they print equal with %.2f); ``flags_edit``: (row, flags)
    to overwrite."""
    from tinygeo.column import Column
    col = Column(47.0, 420.0)
    ps = [96500.0 - 2.0 * i for i in range(40)]
    ps[20] = ps[19] + 0.003          # pressure rose by 0.003 Pa: FL_DESCENT on the device
    ps[30] = ps[29] - 0.003          # fell by 0.003 Pa: no flag on the device
    lines = [record.MAGIC, record.site_line(col), record.HEADER]
    for i, p in enumerate(ps):
        bits = col.feed(p, 288.0, 50.0, i)
        lines.append(record.column_row(i, col, bits, 50.0))
    if flags_edit is not None:
        f = lines[3 + flags_edit[0]].split("\t")
        f[11] = str(flags_edit[1])
        lines[3 + flags_edit[0]] = "\t".join(f)
    lines.append(record.end_line(len(ps), col))
    path.write_text("\n".join(lines) + "\n")
    return lines


def test_flags_the_table_rounding_changes_are_explained_not_failed(tmp_path):
    from tinygeo.column import FL_DESCENT, FL_SAME_P
    dev = tmp_path / "rounding.tsv"
    lines = _rounding_table(dev)
    row = [ln.split("\t") for ln in lines[3:-1]]
    assert row[20][2] == row[19][2] and row[30][2] == row[29][2]    # printed equal
    assert int(row[20][11]) == FL_DESCENT and int(row[30][11]) == 0
    diffs = tmp_path / "d.tsv"
    rc, out, _ = main(["compare", dev, "--diffs", diffs])
    assert rc == 0 and "result: PASS" in out, out
    assert "rounded: 2 (flags FL_SAME_P/FL_DESCENT" in out and "offending readings: 0" in out
    status = [ln.split("\t")[-1] for ln in diffs.read_text().splitlines()[1:]]
    assert status.count("rounded") == 2 and status.count("ok") == 38
    # FL_SAME_P on a row whose printed pressure differs from the row before's
    # is no rounding: it fails
    _rounding_table(dev, (10, FL_SAME_P))
    rc, out, _ = main(["compare", dev])
    assert rc == 1 and "flags device %d, host 0" % FL_SAME_P in out, out


def test_an_empty_gps_cell_is_no_fix_as_the_device_passes_it(flight, tmp_path):
    # a log with a GPS column, some cells empty (no fix); the device passes
    # nan for them ('gps_m=nan means no fix', README), so its column sets
    # FL_NO_GPS: the host's replay of the log must read them the same way
    from tinygeo.column import Column, FL_NO_GPS
    from tinygeo.errors import ReadingError
    src = flight["log"].read_text().splitlines()
    k = src.index("time_s,pressure_hpa,temp_c,rh_pct,gps_m")
    log_lines = src[:k + 1]
    col = Column(47.3, 420.0)
    out = [record.MAGIC, record.site_line(col), record.HEADER]
    rows = 0
    for i, ln in enumerate(src[k + 1:]):
        f = ln.split(",")
        if i % 7 == 3:
            f[4] = ""                      # no fix on this line
        log_lines.append(",".join(f))
        try:
            t, p, tc = float(f[0]), float(f[1]) * 100.0, float(f[2]) + 273.15
            rh = float(f[3]) if f[3] else None
        except ValueError:
            continue
        gps = float(f[4]) if f[4] else float("nan")
        try:
            bits = col.feed(p, tc, rh, t, gps)
        except ReadingError:
            continue
        out.append(record.column_row(k + 2 + i, col, bits, rh, gps))
        rows += 1
    out.append(record.end_line(rows, col))
    log = tmp_path / "nofix.csv"
    log.write_text("\n".join(log_lines) + "\n")
    dev = tmp_path / "nofix.tsv"
    dev.write_text("\n".join(out) + "\n")
    assert sum(1 for r in out[3:-1] if int(r.split("\t")[11]) & FL_NO_GPS) > 50
    rc, rep, _ = main(["compare", dev, "--log", log])
    assert rc == 0 and "result: PASS" in rep and report(rep)["flags/events differing"] == 0, rep
    assert report(rep)["readings compared"] == rows
