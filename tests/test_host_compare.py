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


def test_nan_means_not_computed_and_is_skipped(flight):
    rows = [r[:10] + ["nan"] + r[11:] for r in flight["rows"]]      # sigma_m not computed
    dev = device(flight, "nan_sigma.tsv", list(record.COLUMNS), rows)
    rc, out, _ = main(["compare", dev])
    assert rc == 0 and "result: PASS" in out, out
    # every sigma_m, and the rates nan on both sides (the first reading has none)
    first = sum(1 for r in rows if r[9] == "nan")
    assert first >= 1
    assert report(out)["values not computed on the device (nan), skipped"] == len(rows) + first


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
