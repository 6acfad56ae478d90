"""``tinygeo station LOG`` and the station table (tinygeo/stationrecord.py,
tinygeo/host/table.py, tinygeo/host/stationlog.py, the station plot).

Everything runs in-process (tinygeo.host.cli.main on StringIO streams),
except the MicroPython run of the buoy logger that writes the same table.

References, named beside each check:
- [WMO8] WMO-No. 8, Vol. I, Ch. 3: the reduction of pressure to sea level,
  p0 = p exp(g0 H / (Rd (Tv + 0.0065 H/2))), Annex 4.B Magnus forms and
  enhancement factor (from memory), evaluated in mpmath by
  tests/vectors/gen_station.py (ref_msl, ref_tv, ref_td, ref_iso, ref_gph);
- [ICAO] the altimeter-setting closed form for QNH (ICAO Doc 7488 layer 0,
  from memory; gen_station.ref_qnh);
- [0200] WMO-No. 306 Manual on Codes, Vol. I.1, code table 0200,
  characteristic of pressure tendency (the words of each code, from
  memory): 0 increasing, then decreasing; same or higher than 3 hours ago.
  1 increasing, then steady, or increasing, then increasing more slowly;
  higher. 2 increasing (steadily or unsteadily); higher. 3 decreasing or
  steady, then increasing, or increasing, then increasing more rapidly;
  higher. 4 steady; same. 5 decreasing, then increasing; same or lower.
  6 decreasing, then steady, or decreasing, then decreasing more slowly;
  lower. 7 decreasing (steadily or unsteadily); lower. 8 steady or
  increasing, then decreasing, or decreasing, then decreasing more rapidly;
  lower;
- the pressure tendency is the change of pressure over the last 3 hours,
  the 24-hour change over 24 hours ([WMO8] Ch. 3, from memory);
- the invented buoy day's own scenario (examples/make_buoy_day.py, which
  uses no tinygeo code): its spike times;
- file signatures: PNG (ISO/IEC 15948, the 8-byte signature) and PDF
  (ISO 32000-1 section 7.5.2, the "%PDF-" header).
"""
import io
import math
import os
import sys
from pathlib import Path

import pytest

from conftest import MICROPYTHON, ROOT, VECTORS, require_micropython, run_script

sys.path.insert(0, str(VECTORS))
import gen_station as G  # noqa: E402

from tinygeo import record, stationrecord  # noqa: E402
from tinygeo.host import cli, stationlog, table  # noqa: E402
from tinygeo.station import Station  # noqa: E402

BUOY_LOG = ROOT / "examples" / "buoy_day.csv"
BUOY = ROOT / "ports" / "micropython" / "buoy.py"


def main(args, text=""):
    out, err = io.StringIO(), io.StringIO()
    rc = cli.main([str(a) for a in args], stdin=io.StringIO(text), stdout=out, stderr=err)
    assert "Traceback" not in err.getvalue()
    return rc, out.getvalue(), err.getvalue()


def read_table(text, name="t"):
    """(reader, rows) of a station table's text."""
    rd = table.StationTableReader(io.StringIO(text), name)
    rows = list(rd)
    return rd, rows


def records(text):
    """The ``#:`` records of a table: what -> dict of key -> text."""
    out = {}
    for ln in text.splitlines():
        if ln.startswith("#: "):
            body = ln[3:].split(" -- ")[0].split()
            out[body[0]] = dict(w.split("=", 1) for w in body[1:])
    return out


@pytest.fixture(scope="module")
def buoy():
    rc, out, err = main(["station", BUOY_LOG])
    assert rc == 0, err
    rd, rows = read_table(out, "buoy")
    return {"out": out, "err": err, "reader": rd, "rows": rows}


def station_log(pressures_hpa, step_s=60, t_c=11.0, rh=80.0, head="# lat_deg=47.0 height_m=20"):
    """A log of readings every ``step_s`` s with these pressures (hPa)."""
    lines = [head, "time_s,pressure_hpa,temp_c,rh_pct"]
    for i, p in enumerate(pressures_hpa):
        tc = t_c(i * step_s) if callable(t_c) else t_c
        lines.append("%d,%.2f,%.2f,%.1f" % (i * step_s, p, tc, rh))
    return "\n".join(lines) + "\n"


# ================================================================ the table's values
def test_rows_reduce_to_sea_level_as_the_published_formula(buoy):
    # [WMO8] reduction and [ICAO] QNH in mpmath (gen_station) on the row's own
    # printed p_pa, t_k and rh_pct; the barometer's geopotential height from
    # the closed normal potential (gen_station.ref_gph). The row prints 0.01 Pa
    # (an input and the result: up to 0.01 Pa apart) and 0.001 K: measured
    # worst 0.0082 Pa (mslp), 0.0081 Pa (qnh); goal 0.011 Pa
    gph = G.ref_gph(3.5, 54.2)
    worst_m = worst_q = 0.0
    n = 0
    for r in buoy["rows"]:
        if r.p_pa != r.p_pa:
            assert r.mslp_pa != r.mslp_pa and r.qnh_pa != r.qnh_pa      # stuck hour: unknown
            continue
        tv = G.ref_tv(r.t_k, r.p_pa, r.rh_pct)
        worst_m = max(worst_m, abs(r.mslp_pa - float(G.ref_msl(r.p_pa, tv, gph))))
        worst_q = max(worst_q, abs(r.qnh_pa - float(G.ref_qnh(r.p_pa, 3.5))))
        n += 1
    assert n == 136
    assert worst_m < 0.011 and worst_q < 0.011, (worst_m, worst_q)


def test_rows_dew_point_is_the_inverse_magnus_form(buoy):
    # [WMO8] Annex 4.B Magnus form solved for the dew point in mpmath
    # (gen_station.ref_td) on the row's printed t_k and rh_pct (0.001 K,
    # 0.01 %) and printed to 0.001 K: measured worst 0.0018 K; goal 0.0025 K
    worst = max(abs(r.td_k - float(G.ref_td(r.t_k, r.rh_pct))) for r in buoy["rows"])
    assert worst < 0.0025, worst


def test_rows_tendency_is_the_change_over_three_hours(buoy):
    # the 3-hour tendency is p now minus p 3 hours earlier ([WMO8] Ch. 3):
    # checked on the rows themselves (two printed values: 0.01 Pa)
    by_time = dict((r.time_s, r) for r in buoy["rows"])
    checked = 0
    for r in buoy["rows"]:
        old = by_time.get(r.time_s - 10800.0)
        if old is None or old.p_pa != old.p_pa or r.p_pa != r.p_pa:
            assert r.tend3h_pa != r.tend3h_pa
            continue
        assert abs(r.tend3h_pa - (r.p_pa - old.p_pa)) <= 0.011
        checked += 1
    # 142 rows - 18 in the first 3 h - 6 stuck - 6 three hours after them - 1 three
    # hours after the lost burst
    assert checked == 111


def words_hold(code, trace):
    """Does the trace (3 hours of averages, Pa, oldest first) fit the words
    of code ``code`` in [0200]? 'same' within 5 Pa (rounds to 0.0 hPa),
    'steady' within 10 Pa (one unit of the report, 0.1 hPa; common
    practice), the halves' changes compared for 'more slowly/rapidly'."""
    a, c = trace[0], trace[-1]
    m = trace[len(trace) // 2]
    d = c - a
    h1, h2 = m - a, c - m
    peak = max(trace) - max(a, c) > 10.0
    trough = min(a, c) - min(trace) > 10.0
    higher, lower, same = d >= 5.0, d <= -5.0, abs(d) < 5.0
    return {
        0: peak and not lower,
        1: higher and h1 > 0 and h2 < h1,
        2: higher and not peak and not trough,
        3: higher and (trough or h2 > h1),
        4: same and not peak and not trough,
        5: trough and not higher,
        6: lower and h1 < 0 and h2 > h1,
        7: lower and not peak and not trough,
        8: lower and (peak or h2 < h1),
    }[code]


def test_buoy_codes_fit_the_words_of_code_table_0200(buoy):
    # every code of the buoy day against [0200]'s words on the 19 averages of
    # its 3 hours (from the table's p_pa)
    by_time = dict((r.time_s, r.p_pa) for r in buoy["rows"])
    seen = set()
    for r in buoy["rows"]:
        if r.tend_code is None:
            continue
        trace = [by_time.get(r.time_s - 600.0 * i, math.nan) for i in range(18, -1, -1)]
        trace = [p for p in trace if p == p]       # the lost burst's average is missing
        assert words_hold(r.tend_code, trace), (r.time_s, r.tend_code, trace)
        seen.add(r.tend_code)
    assert seen == {1, 2, 3, 5, 6, 7}


# each code's 3-hour trace, built to fit its words in [0200] unambiguously:
# (code, change over the first 1.5 h, over the second 1.5 h), hPa
SHAPES = ((0, 1.5, -1.0), (1, 1.5, 0.0), (2, 0.75, 0.75), (3, -0.5, 1.5), (4, 0.0, 0.0),
          (5, -1.5, 1.0), (6, -1.5, 0.0), (7, -0.75, -0.75), (8, 0.5, -1.5))


@pytest.mark.parametrize("code,first,second", SHAPES)
def test_one_log_per_code_of_code_table_0200(code, first, second):
    # readings every 60 s, constant within each 10-minute average, so the
    # averages are the designed trace; the average ending 3 h after the
    # trace's start carries the code its words give ([0200])
    def p_at(k):          # the k-th average's pressure, hPa (k = 0 .. 18 over the 3 h)
        if k <= 9:
            return 1000.0 + first * k / 9.0
        return 1000.0 + first + second * (k - 9) / 9.0
    # +-0.01 hPa in turn (a mean of 0 over each average): a flat part is not
    # a stuck sensor (60 equal readings in a row)
    ps = [p_at(min(i // 10, 18)) + (0.01 if i % 2 else -0.01) for i in range(200)]
    assert words_hold(code, [100.0 * p_at(k) for k in range(19)])
    rc, out, err = main(["station", "-"], station_log(ps))
    assert rc == 0, err
    rd, rows = read_table(out)
    last = [r for r in rows if r.time_s == 10800.0 + 600.0]
    assert len(last) == 1 and last[0].tend_code == code, [(r.time_s, r.tend_code) for r in rows]


def test_a_high_station_reports_its_isobaric_surface_and_24_hour_change():
    # a station at 1500 m: the 850 hPa surface by default (WMO practice for
    # stations from about 800 m; the table's iso_gph_m column), against
    # [WMO8]/[USSA76] eq. 33a in mpmath (gen_station.ref_iso) on the row's
    # printed values: measured 0.0048 gpm; goal 0.01 gpm. Hourly averages over
    # 26 h: the 24-hour change is p now minus p 24 h earlier.
    n = 26 * 60 + 2
    ps = [845.0 + 3.0 * math.sin(2 * math.pi * i / 1000.0) for i in range(n)]
    log = station_log(ps, t_c=lambda s: 8.0 + 4.0 * math.sin(2 * math.pi * s / 86400.0),
                      head="# lat_deg=46.5 height_m=1500")
    rc, out, err = main(["station", "-", "--average", "3600", "--mean12"], log)
    assert rc == 0, err
    rd, rows = read_table(out)
    assert rd.present[-1] == "iso_gph_m" and rd.station["iso_p_pa"] == "85000.0"
    gph = G.ref_gph(1500.0, 46.5)
    worst = 0.0
    for r in rows:
        tv = G.ref_tv(r.t_k, r.p_pa, r.rh_pct)
        worst = max(worst, abs(r.iso_gph_m - float(G.ref_iso(r.p_pa, tv, gph, 85000.0))))
    assert worst < 0.01, worst
    by_time = dict((r.time_s, r) for r in rows)
    day = [r for r in rows if r.time_s - 86400.0 in by_time]
    assert len(day) == 2
    for r in day:
        assert abs(r.chg24h_pa - (r.p_pa - by_time[r.time_s - 86400.0].p_pa)) <= 0.011
    # --mean12: no temperature 12 hours earlier for the first 12 averages (flag 32)
    assert [bool(r.flags & 32) for r in rows[:13]] == [True] * 12 + [False]


# ================================================================ the summary
def test_summary_extremes_and_counts_match_a_scan_of_the_table(buoy):
    rows = buoy["rows"]
    rec = records(buoy["out"])
    known = [r for r in rows if r.mslp_pa == r.mslp_pa]
    hi = max(known, key=lambda r: r.mslp_pa)
    lo = min(known, key=lambda r: r.mslp_pa)
    # the summary holds the unrounded value (3 decimals of hPa), the table 0.01 Pa
    assert abs(float(rec["highest_mslp"]["mslp_hpa"]) * 100.0 - hi.mslp_pa) < 0.06
    assert float(rec["highest_mslp"]["time_s"]) == hi.time_s == 600.0
    assert abs(float(rec["lowest_mslp"]["mslp_hpa"]) * 100.0 - lo.mslp_pa) < 0.06
    assert float(rec["lowest_mslp"]["time_s"]) == lo.time_s
    falls = [r for r in rows if r.tend3h_pa == r.tend3h_pa]
    fall = min(falls, key=lambda r: r.tend3h_pa)
    assert abs(float(rec["largest_fall"]["tend3h_hpa"]) * 100.0 - fall.tend3h_pa) < 0.06
    assert float(rec["largest_fall"]["time_s"]) == fall.time_s
    assert rec["largest_fall"]["tend_code"] == "-" and fall.tend_code is None
    for bit, word in stationlog.FLAG_WORDS:
        assert int(rec["flags"][word]) == sum(1 for r in rows if r.flags & bit), word
    assert int(rec["averages"]["count"]) == len(rows) == 142
    assert rec["flags"]["stuck_p"] == "6" and rec["flags"]["gap"] == "1"
    # the end record and the counters
    end = buoy["reader"].end
    assert end == {"rows": "142", "count": "8575", "rejected": "5", "averages": "142",
                   "missing": "1"}
    assert rec["rejected"] == {"count": "5", "humidity": "1", "pressure": "3",
                               "temperature": "1"}
    assert rec["restarts"] == {"count": "0"} and rec["open"] == {"readings": "60"}


def test_rejected_readings_are_the_invented_spikes_by_line(buoy):
    # the five rejections reported on stderr name the log lines of the
    # scenario's five spikes (examples/make_buoy_day.py: P_SPIKES, T_SPIKE,
    # RH_SPIKE; that script uses no tinygeo code)
    sys.path.insert(0, str(ROOT / "examples"))
    import make_buoy_day as M
    spikes = set(M.P_SPIKES) | {M.T_SPIKE[0], M.RH_SPIKE}
    lines = BUOY_LOG.read_text().splitlines()
    reported = [ln for ln in buoy["err"].splitlines() if ln.startswith("tinygeo station: rejected")]
    assert len(reported) == 5
    times = set()
    for ln in reported:
        n = int(ln.split(" line ")[1].split(":")[0])
        times.add(int(lines[n - 1].split(",")[0]))
    assert times == spikes
    # the messages speak in the command's options
    assert "(limits: --max-p-step, --max-p-rate)" in buoy["err"]
    assert "max_p_step_pa" not in buoy["err"]


def test_restarts_after_a_clock_set_back_are_counted_with_their_line():
    # a clock set back by 2 h in the middle: 3 readings in a row restart the
    # station (Station's takeover_readings); the summary names the line
    ps = [1005.0] * 400
    text = station_log(ps)
    lines = text.splitlines()
    for i in range(2 + 200, len(lines)):
        t, rest = lines[i].split(",", 1)
        lines[i] = "%d,%s" % (int(t) - 7200, rest)
    rc, out, err = main(["station", "-"], "\n".join(lines) + "\n")
    assert rc == 0, err
    rec = records(out)
    assert rec["restarts"] == {"count": "1", "line1": "205"}
    assert rec["rejected"] == {"count": "2", "time": "2"}
    assert "line 203: time_s=4800" in err


# ================================================================ units
def head_of(n):
    lines = BUOY_LOG.read_text().splitlines()
    return lines[:3], lines[3], lines[4:4 + n]


def relabel(header, conv=None):
    comments, _, data = head_of(1500)
    out = comments + [header]
    for ln in data:
        w = ln.split(",")
        if conv:
            w = conv(w)
        out.append(",".join(w))
    return "\n".join(out) + "\n"


def test_units_stated_or_inferred_give_the_same_rows():
    rc, ref, err = main(["station", "-"], relabel("time_s,pressure_hpa,temp_c,rh_pct"))
    assert rc == 0, err
    ref_rows = read_table(ref)[1]
    assert len(ref_rows) == 24
    # no unit words: hPa and degC inferred from the values, confirmed, said on stderr
    rc, out, err = main(["station", "-"], relabel("time,p,t,rh"))
    assert rc == 0, err
    assert "column 'p' taken as pressure in hPa" in err and "taken as temperature in degC" in err
    assert [r.p_pa for r in read_table(out)[1]] == [r.p_pa for r in ref_rows]
    # Pa and K (converted here: x 100 and + 273.15 as printed text)
    def si(w):
        return [w[0], "%.0f" % (float(w[1]) * 100.0), "%.2f" % (float(w[2]) + 273.15), w[3]]
    rc, out, err = main(["station", "-"], relabel("time_s,pressure_pa,temp_k,rh_pct", si))
    assert rc == 0, err
    for a, b in zip(read_table(out)[1], ref_rows):
        assert abs(a.p_pa - b.p_pa) <= 0.011 and abs(a.t_k - b.t_k) <= 0.0011


@pytest.mark.parametrize("args,header,words", [
    (["--pressure", "p:Pa"], "time_s,p,temp_c,rh_pct", "declared in Pa but its value 1011.44 looks "
                                                        "like hPa"),
    (["--temperature", "t:K"], "time_s,pressure_hpa,t,rh_pct", "declared in K but its value "
                                                               "11.51 looks like degC"),
    ([], "time_s,p,temp_c,rh_pct", None),
])
def test_a_unit_the_values_contradict_stops_with_the_option_to_give(args, header, words):
    rc, out, err = main(["station", "-"] + args, relabel(header))
    if words is None:
        assert rc == 0, err
        return
    assert rc == 2 and words in err, err
    assert out == ""


def test_a_height_far_from_the_pressures_is_refused_or_noted():
    text = relabel("time_s,pressure_hpa,temp_c,rh_pct")
    # 3500 m: every pressure lies kilometres of pressure altitude away (guard_m 2000)
    rc, out, err = main(["station", "-", "--height", "3500"], text)
    assert rc == 2 and "none of the first 50 readings was accepted" in err, err
    assert "wrong unit or --height?" in err
    # 1000 m: accepted, but the sea-level pressure is beyond the recorded
    # extremes (1085 hPa; WMO archive of weather extremes, from memory): a note
    rc, out, err = main(["station", "-", "--height", "1000"], text)
    assert rc == 0 and "beyond the recorded extremes" in err and "--height 1000" in err, err


# ================================================================ refusals and files
@pytest.mark.parametrize("args,head,words", [
    ([], "# lat_deg=54.2", "the station's height is not known: pass --height M"),
    ([], "# lat_deg=54.2 start_height_m=3.5", "if the barometer stays there, pass --height 3.5"),
    ([], "# height_m=3.5", "the latitude is not known: pass --lat DEG"),
    (["--average", "700"], None, "--average 700 must be whole seconds dividing 10800 s"),
    (["--iso-surface", "85000"], None, "Pa passed? give hPa: --iso-surface 850"),
    (["--max-p-rate", "none"], None, "invalid"),
    (["--stuck", "2.5"], None, "--stuck 2.5: give a whole number of readings"),
    (["--takeover", "1"], None, "--takeover 1 outside 2..100 readings"),
])
def test_settings_and_heights_refused_with_what_to_pass(args, head, words):
    comments, header, data = head_of(20)
    lines = ([head] if head else comments) + [header] + data
    rc, out, err = main(["station", "-"] + args, "\n".join(lines) + "\n")
    assert rc == 2 and words in err, err


def test_no_time_column_is_refused():
    rc, out, err = main(["station", "-"], "# lat_deg=1 height_m=2\np,t\n1000,10\n")
    assert rc == 2 and "no time column" in err and "--time NAME" in err, err


def test_output_over_the_input_is_refused_and_outputs_are_whole(tmp_path):
    log = tmp_path / "day.csv"
    log.write_text(relabel("time_s,pressure_hpa,temp_c,rh_pct"))
    link = tmp_path / "link.csv"
    os.symlink(log, link)
    before = log.read_bytes()
    for target in (log, link):
        rc, out, err = main(["station", log, "-o", target])
        assert rc == 2 and "would overwrite the input" in err, err
    rc, out, err = main(["station", log, "--summary", log])
    assert rc == 2
    assert log.read_bytes() == before
    # -o and --summary: the table in the file, the summary in both and on stdout
    rc, out, err = main(["station", log, "-o", tmp_path / "t.tsv", "--summary", tmp_path / "s.txt"])
    assert rc == 0, err
    text = (tmp_path / "t.tsv").read_text()
    summ = (tmp_path / "s.txt").read_text()
    assert text.startswith(stationrecord.MAGIC + "\n") and text.endswith(summ) and out == summ
    # a full disk: exit 4, nothing left under the name
    if os.path.exists("/dev/full"):
        rc, out, err = main(["station", log, "-o", "/dev/full"])
        assert rc == 4 and "/dev/full" in err, err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["day.csv", "link.csv", "s.txt", "t.tsv"]


def test_iso_time_stamps_align_the_averages_to_utc():
    # ISO-8601 stamps from 09:03:27Z every 30 s: averages end on the UTC
    # clock (09:10, 09:20 ...); time_s counts from 1970-01-01T00:00:00Z
    import datetime
    t0 = datetime.datetime(2026, 3, 1, 9, 3, 27, tzinfo=datetime.timezone.utc)
    lines = ["# lat_deg=50 height_m=10", "utc,pressure_hpa,temp_c"]
    for i in range(240):
        t = t0 + datetime.timedelta(seconds=30 * i)
        lines.append("%s,%.2f,12.0" % (t.strftime("%Y-%m-%dT%H:%M:%SZ"), 1010.0 - 0.002 * i))
    rc, out, err = main(["station", "-"], "\n".join(lines) + "\n")
    assert rc == 0, err
    rd, rows = read_table(out)
    assert rd.time_origin == "1970-01-01T00:00:00Z"
    first = datetime.datetime(2026, 3, 1, 9, 10, tzinfo=datetime.timezone.utc).timestamp()
    assert [r.time_s for r in rows] == [first + 600.0 * k for k in range(len(rows))]
    assert rows[0].readings == 14          # 09:03:27 .. 09:09:57
    assert records(out)["highest_mslp"]["utc"] == "2026-03-01T09:10:00Z"


def test_stdin_streams_and_the_help_lists_the_flags():
    rc, out, err = main(["station", "-", "--quiet"], relabel("time_s,pressure_hpa,temp_c,rh_pct"))
    assert rc == 0 and out.count("\n#: ") >= 6 and "rejected" not in err
    rc, out, err = main(["station", "--help"])
    assert rc == 0
    for words in ("--height M", "--max-p-step PA", "--iso-surface HPA", "128  a run of readings",
                  "Not for aviation", "tinygeo station examples/buoy_day.csv"):
        assert words in out, words


def test_readme_shows_the_table_and_summary_as_the_command_prints_them(monkeypatch):
    # the README's "Stations and buoys" block: every line but '...' is a line
    # of 'tinygeo station examples/buoy_day.csv' (run from the repository root)
    doc = (ROOT / "README.md").read_text()
    doc = doc[doc.index("## Stations and buoys"):]
    start = doc.index("```text\n" + stationrecord.MAGIC) + len("```text\n")
    block = doc[start:doc.index("```", start)].strip().splitlines()
    monkeypatch.chdir(ROOT)
    rc, out, err = main(["station", "examples/buoy_day.csv"])
    assert rc == 0
    lines = out.splitlines()
    assert len(block) >= 20 and block[:7] == lines[:7]
    for line in block:
        assert line == "..." or line in lines, line
    assert "tinygeo station examples/buoy_day.csv -o buoy_day.tsv && tinygeo plot buoy_day.tsv " \
           "-o examples/buoy_day.png" in doc
    assert (ROOT / "examples" / "buoy_day.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


# ================================================================ the table round trip
def test_table_round_trip_against_a_station_fed_in_process(buoy):
    # the table's rows, read back, are the Station's attributes after each
    # completed average (printed to 0.01 Pa / 0.001 K / 0.01 %), and the
    # '# station' words rebuild a station with the same settings
    rd = buoy["reader"]
    words = dict((k, None if v == "nan" else float(v)) for k, v in rd.station.items())
    for k in ("ice", "mean12"):
        words[k] = bool(words[k])
    for k in ("min_readings", "stuck_readings", "takeover_readings"):
        words[k] = int(words[k])
    st = Station(**words)
    assert all(getattr(st, k) == getattr(Station(3.5, 54.2), k) for k in stationrecord.KEYS)
    got = []
    for ln in BUOY_LOG.read_text().splitlines()[4:]:
        w = ln.split(",")
        try:
            bits = st.feed(float(w[1]) * 100.0, float(w[2]) + 273.15, float(w[3]), int(w[0]))
        except ValueError:
            continue
        if bits & 1:
            got.append((st.time_s, st.p_pa, st.mslp_pa, st.tendency_3h_pa, st.tendency_code,
                        st.t_k, st.rh_pct, st.flags, st.average_readings))
    assert len(got) == len(buoy["rows"])
    for g, r in zip(got, buoy["rows"]):
        assert r.time_s == g[0] and r.tend_code == g[4] and r.flags == g[7] and r.readings == g[8]
        for a, b, tol in ((r.p_pa, g[1], 0.005), (r.mslp_pa, g[2], 0.005),
                          (r.tend3h_pa, g[3], 0.005), (r.t_k, g[5], 0.0005),
                          (r.rh_pct, g[6], 0.005)):
            assert (a != a and b != b) or abs(a - b) <= tol + 1e-9, (r.time_s, a, b)


def test_the_buoy_logger_writes_the_same_table_under_micropython(tmp_path, buoy):
    # ports/micropython/buoy.py --table: the same rows as the host command
    # (numbers compared: MicroPython may round a last digit differently),
    # then read and drawn by the host
    require_micropython()
    path = tmp_path / "dev.tsv"
    run_script(MICROPYTHON, [BUOY, "--log", BUOY_LOG, "--checkpoint", tmp_path / "b.ckpt",
                             "--table", path])
    rd, rows = read_table(path.read_text(), "dev")
    assert rd.end == buoy["reader"].end and rd.summary == []
    assert rd.station == buoy["reader"].station
    assert len(rows) == len(buoy["rows"])
    for a, b in zip(rows, buoy["rows"]):
        for k in stationrecord.COLUMNS:
            x, y = getattr(a, k), getattr(b, k)
            if isinstance(x, float):
                assert (x != x and y != y) or abs(x - y) <= 0.011, (k, x, y)
            else:
                assert x == y, (k, x, y)


def _buoy_run(exe, tmp_path, *args):
    return run_script(exe, [BUOY, "--log", BUOY_LOG, "--checkpoint", tmp_path / "b.ckpt"]
                      + list(args), cwd=tmp_path)


def _rows_text(path):
    return [ln for ln in path.read_text().splitlines() if ln and ln[0].isdigit()]


def test_buoy_resume_voids_the_rows_written_after_its_checkpoint(tmp_path, buoy):
    # a power cut after two rows and part of a third were written, before
    # their checkpoint (constructed: the rows the uninterrupted run writes
    # next are appended by hand): resumed, the logger writes a resume record
    # (stationrecord.resume_line) and those rows again; the host reads the
    # rows of the uninterrupted run, once each (MicroPython: device code)
    require_micropython()
    full = tmp_path / "full"
    full.mkdir()
    _buoy_run(MICROPYTHON, full, "--table", full / "t.tsv")
    whole = _rows_text(full / "t.tsv")
    path = tmp_path / "t.tsv"
    out = _buoy_run(MICROPYTHON, tmp_path, "--table", path, "--stop-after", "4000")
    assert "stopped after 4000" in out
    kept = len(_rows_text(path))
    assert 0 < kept < 140
    with open(path, "a") as f:
        f.write(whole[kept] + "\n" + whole[kept + 1] + "\n" + whole[kept + 2][:25])
    out = _buoy_run(MICROPYTHON, tmp_path, "--table", path)
    text = path.read_text()
    assert ("\n" + stationrecord.resume_line(kept) + "\n") in text
    assert "#: resume rows=%d whole\n" % kept in text
    rd, rows = read_table(text, "dev")
    assert (rd.voided, rd.torn, rd.resumes, rd.backwards) == (2, 1, 1, 0)
    assert rd.end == buoy["reader"].end and rd.end["rows"] == "142"
    assert len(rows) == len(buoy["rows"]) == 142
    for a, b in zip(rows, buoy["rows"]):
        assert a.time_s == b.time_s
        assert (a.mslp_pa != a.mslp_pa and b.mslp_pa != b.mslp_pa) or \
            abs(a.mslp_pa - b.mslp_pa) <= 0.011        # last digit: MicroPython may differ


def test_buoy_resumed_without_its_table_writes_magic_and_header(tmp_path, buoy):
    # the table file lost (or empty) while the checkpoint survived: the rows
    # after the checkpoint go to a new table with its magic line and header
    path = tmp_path / "t.tsv"
    _buoy_run(sys.executable, tmp_path, "--table", path, "--stop-after", "4000")
    kept = len(_rows_text(path))
    for lost in ("missing", "empty"):
        if lost == "missing":
            path.unlink()
        else:
            path.write_text("")
        work = tmp_path / lost
        work.mkdir()
        for k in (0, 1):
            (work / ("b.ckpt.%d" % k)).write_bytes((tmp_path / ("b.ckpt.%d" % k)).read_bytes())
        out = _buoy_run(sys.executable, work, "--table", path)
        assert out.startswith("resuming from ")
        text = path.read_text()
        assert text.startswith(stationrecord.MAGIC + "\n# station height_m=3.5 lat_deg=54.2 ")
        rd, rows = read_table(text, lost)
        assert rd.resumes == 0 and rd.end["rows"] == str(len(rows))
        assert [r.time_s for r in rows] == [r.time_s for r in buoy["rows"][kept:]]


def test_buoy_reads_a_slot_written_before_it_kept_the_rows(tmp_path):
    # b"TGBY" index, blob length, blob, CRC-32 (the layout before the rows):
    # restored, rows not known (the table's rows are counted instead)
    import importlib.util
    import struct
    from tinygeo.checkpoint import crc32
    spec = importlib.util.spec_from_file_location("tinygeo_buoy_old_slot", str(BUOY))
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    st = Station(3.5, 54.2)
    st.feed(101000.0, 285.0, 80.0, 0)
    blob = st.to_bytes()
    data = b"TGBY" + struct.pack("<II", 77, len(blob)) + blob
    (tmp_path / "o.ckpt.0").write_bytes(data + struct.pack("<I", crc32(data)))
    got = mod.Slots(str(tmp_path / "o.ckpt")).load()
    assert got[0] == 77 and got[2] is None and got[1].to_bytes() == blob
    slots = mod.Slots(str(tmp_path / "o.ckpt"))
    slots.load()
    slots.save(78, st, 5)
    assert mod.Slots(str(tmp_path / "o.ckpt")).load()[::2] == (78, 5)


def test_buoy_log_line_with_an_empty_pressure_is_a_rejected_line(tmp_path):
    # an empty or unreadable field is a rejected reading, like the other bad
    # inputs (it raised an uncaught ValueError before)
    lines = BUOY_LOG.read_text().splitlines()
    head = [x for x in lines if not x[0].isdigit()]
    data = [x for x in lines if x[0].isdigit()][:200]
    w = data[50].split(",")
    data[50] = ",".join([w[0], ""] + w[2:])
    w = data[60].split(",")
    data[60] = ",".join([w[0], w[1], "x"] + w[3:])
    w = data[70].split(",")
    data[70] = ",".join([""] + w[1:])
    log = tmp_path / "holes.csv"
    log.write_text("\n".join(head + data) + "\n")
    out = run_script(sys.executable, [BUOY, "--log", log, "--checkpoint", tmp_path / "h.ckpt"],
                     cwd=tmp_path)
    assert "#50 rejected number: p_pa=nan" in out, out
    assert "#60 rejected number: t_k=nan" in out, out
    assert "#70 rejected time: time_s is required" in out, out
    assert out.strip().splitlines()[-1].startswith("summary accepted 197 rejected 3 ")


def test_buoy_height_and_latitude_options(tmp_path):
    # --height and --lat set the station (constants had to be edited
    # before): the table's station line carries them and its sea-level
    # pressure is the [WMO8] reduction for that height (gen_station in
    # mpmath; the row prints 0.01 Pa: goal 0.011 Pa, as the day's test)
    path = tmp_path / "t.tsv"
    run_script(sys.executable, [BUOY, "--log", BUOY_LOG, "--checkpoint", tmp_path / "c.ckpt",
                                "--table", path, "--height", "12.5", "--lat", "-33.9",
                                "--stop-after", "700"], cwd=tmp_path)
    rd, rows = read_table(path.read_text())
    assert rd.station["height_m"] == "12.5" and rd.station["lat_deg"] == "-33.9"
    gph = G.ref_gph(12.5, -33.9)
    assert len(rows) == 11
    for r in rows:
        tv = G.ref_tv(r.t_k, r.p_pa, r.rh_pct)
        assert abs(r.mslp_pa - float(G.ref_msl(r.p_pa, tv, gph))) < 0.011
    import subprocess
    for args, words in ((["--height", "3m"], "--height '3m': give a number"),
                        (["--lat", "95"], "lat_deg=95")):
        p = subprocess.run([sys.executable, str(BUOY), "--log", str(BUOY_LOG), "--checkpoint",
                            str(tmp_path / "bad.ckpt")] + args, capture_output=True, text=True,
                           env=dict(os.environ, PYTHONPATH=str(ROOT)), cwd=str(tmp_path))
        assert p.returncode == 1 and words in p.stderr and "Traceback" not in p.stderr, p.stderr


def _buoy_fails(exe, cwd, args):
    # run buoy.py expecting a refusal: (exit status, stdout, stderr)
    import subprocess
    p = subprocess.run([exe, str(BUOY)] + [str(a) for a in args], capture_output=True, text=True,
                       env=dict(os.environ, PYTHONPATH=str(ROOT), MICROPYPATH=str(ROOT)),
                       cwd=str(cwd), timeout=120)
    return p.returncode, p.stdout, p.stderr


def test_buoy_table_rows_ignores_a_torn_resume_record(tmp_path):
    # '#: resume ro' (a cut while the record was written) raised IndexError
    # in table_rows on every restart; a torn record voids nothing, a whole
    # one counts (constructed tables)
    import importlib.util
    spec = importlib.util.spec_from_file_location("tinygeo_buoy_rows", str(BUOY))
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    path = tmp_path / "t.tsv"
    body = _HEAD + _r(600) + "\n" + _r(1200) + "\n" + _r(1800) + "\n"
    for torn in ("#: resume ro", "#: resume rows=1", "#: resume rows=1 wh", "#: resume rows=-1 whole",
                 "#: resume rows=1_0 whole"):
        path.write_text(body + "\n" + torn + "\n")
        assert mod.table_rows(str(path)) == 3, torn
    path.write_text(body + "\n" + stationrecord.resume_line(1) + "\n" + _r(1200) + "\n")
    assert mod.table_rows(str(path)) == 2


def test_buoy_resumes_after_a_torn_resume_record(tmp_path, buoy):
    # the table ends in a resume record torn on the way out ('#: resume ro',
    # as /tmp/attack3/tornres): the next start goes on, and the host reads
    # the rows of the uninterrupted run (CPython: the same script)
    path = tmp_path / "t.tsv"
    _buoy_run(sys.executable, tmp_path, "--table", path, "--stop-after", "4000")
    with open(path, "a") as f:
        f.write("\n#: resume ro")
    out = _buoy_run(sys.executable, tmp_path, "--table", path)
    assert out.startswith("resuming from ")
    rd, rows = read_table(path.read_text(), "dev")
    assert (rd.torn_resumes, rd.resumes, rd.voided, rd.lost) == (1, 1, 0, 0)
    assert [r.time_s for r in rows] == [r.time_s for r in buoy["rows"]]


def test_buoy_resume_refuses_other_settings_and_another_log(tmp_path):
    # a resumed run keeps its checkpoint's station: a different --height or
    # --lat is refused (exit status 1) with the files to delete, and so is a
    # log whose line at the checkpoint's reading differs or that ends before
    path = tmp_path / "t.tsv"
    ck = tmp_path / "b.ckpt"
    base = ["--log", BUOY_LOG, "--checkpoint", ck, "--table", path]
    _buoy_run(sys.executable, tmp_path, "--table", path, "--stop-after", "700")
    before = path.read_text()
    for extra, words in ((["--height", "12"], "--height 12.0: the checkpoint "),
                         (["--lat", "-33.9"], "--lat -33.9: the checkpoint ")):
        rc, out, err = _buoy_fails(sys.executable, tmp_path, base + extra)
        assert rc == 1 and words in err and "to start over" in err and "Traceback" not in err, err
        assert "b.ckpt.0 and " in err and out == "" and path.read_text() == before
    import importlib.util
    spec = importlib.util.spec_from_file_location("tinygeo_buoy_mark", str(BUOY))
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    index = mod.Slots(str(ck)).load()[0]        # readings taken at the checkpoint
    assert 600 < index <= 700
    lines = BUOY_LOG.read_text().splitlines()
    data = [i for i, x in enumerate(lines) if x[:1].isdigit()]
    other = list(lines)
    w = other[data[index - 1]].split(",")      # the last reading fed before the checkpoint
    other[data[index - 1]] = ",".join([w[0], "1000.00"] + w[2:])
    for name, text in (("other.csv", other), ("short.csv", lines[:data[index - 2]])):
        log = tmp_path / name
        log.write_text("\n".join(text) + "\n")
        rc, out, err = _buoy_fails(sys.executable, tmp_path, ["--log", log, "--checkpoint", ck,
                                                              "--table", path])
        assert rc == 1 and "not the log the checkpoint" in err and "to start over" in err, err
        assert path.read_text() == before
    # the same settings given again, and the same log: it goes on
    out = _buoy_run(sys.executable, tmp_path, "--table", path, "--height", "3.5", "--lat", "54.2")
    assert out.startswith("resuming from ")


def test_buoy_refuses_a_log_with_iso_times_once(tmp_path):
    # a log whose time column holds ISO 8601 text: one message, not one
    # rejection per line
    log = tmp_path / "iso.csv"
    log.write_text("time,pressure_hpa,temp_c,rh_pct\n" + "".join(
        "2026-10-12T00:%02d:00+01:00,973.24,9.17,83.8\n" % i for i in range(40)))
    rc, out, err = _buoy_fails(sys.executable, tmp_path, ["--log", log, "--checkpoint",
                                                          tmp_path / "i.ckpt"])
    assert rc == 1 and "rejected" not in out and err.count("\n") == 1, (out, err)
    assert "the time column holds '2026-10-12T00:00:00+01:00': buoy.py needs numeric seconds" in err


def test_buoy_help_says_what_the_height_is(tmp_path):
    rc, out, err = _buoy_fails(sys.executable, tmp_path, ["--help"])
    text = " ".join(out.split())
    assert rc == 0 and "above mean sea level (a sea buoy: above the water line; a lake or " \
        "river: the water's elevation above sea level plus the mast)" in text, out
    assert "is refused (exit status 1)" in text


HEIGHT_WORDS = ("above mean sea level (a sea buoy: above the water line; a lake or river: the "
                "water's elevation above sea level plus the mast)")


def test_the_barometer_height_is_explained_alike(tmp_path):
    # README, 'tinygeo station --help' and buoy.py --help (tested above) say
    # what the height is measured from, for a lake as for the sea
    rc, out, _ = main(["station", "--help"])
    assert rc == 0 and HEIGHT_WORDS in " ".join(out.split()), out
    doc = " ".join((ROOT / "README.md").read_text().split())
    assert HEIGHT_WORDS in doc


def test_readme_steady_pa_sentence_matches_the_station_docstring():
    # tinygeo/station.py: 'same' when |D| < 5 Pa whatever steady_pa is;
    # steady_pa decides the shape parts (steady halves, peaks, troughs)
    import tinygeo.station as S
    assert "same when |D| < 5 Pa" in " ".join(S.__doc__.split())
    doc = " ".join((ROOT / "README.md").read_text().split())
    i = doc.index("`steady_pa` (`--steady`, 10 Pa)")
    sentence = doc[i:i + 400]
    assert "governs the shape parts" in sentence and '"same" is fixed (within 5 Pa' in sentence
    assert "sets the change taken as steady" not in doc
    # 'tinygeo plot' counts in words: one record, not 'records'
    from tinygeo.host import plot
    assert plot._count(1, "resume record") == "1 resume record"
    assert plot._count(2, "row") == "2 rows"


def test_buoy_readme_command_keeps_checkpoints_out_of_the_repository():
    # the README's command puts the slot files in a temporary directory and
    # says how to start over; the default name is ignored by git
    doc = (ROOT / "README.md").read_text()
    doc = doc[doc.index("## Stations and buoys"):doc.index("## The host companion")]
    cmd = [ln for ln in doc.splitlines() if "ports/micropython/buoy.py --log" in ln]
    assert cmd and all("--checkpoint /tmp/" in ln for ln in cmd), cmd
    assert "to start over" in doc
    assert "buoy.ckpt.*" in (ROOT / ".gitignore").read_text().splitlines()


def test_station_table_resume_records_void_by_row_count(tmp_path):
    # tinygeo.stationrecord: '#: resume rows=N' keeps the first N rows kept
    # before it and drops the rest, an end record before it and a torn last
    # row; nested records (a second cut before the first resume's checkpoint)
    def r(t):
        return "%d.000\t100000.00\t100040.00\t100040.00\tnan\t-\tnan\t285.000\t80.00\t" \
               "281.500\t0\t60" % t
    head = stationrecord.MAGIC + "\n" + "\t".join(stationrecord.COLUMNS) + "\n"
    text = (head + r(600) + "\n" + r(1200) + "\n" + r(1800) + "\n" + r(2400)[:9]
            + "\n" + stationrecord.resume_line(2) + "\n"
            + r(1800) + "\n" + r(2400) + "\n" + r(3000) + "\n"
            + "\n" + stationrecord.resume_line(3) + "\n"
            + r(2400) + "\n" + r(3000) + "\n#: end rows=5 count=1 rejected=0 averages=5 missing=0\n")
    rd, rows = read_table(text)
    assert [x.time_s for x in rows] == [600, 1200, 1800, 2400, 3000]
    assert (rd.voided, rd.torn, rd.resumes, rd.backwards) == (3, 1, 2, 0)
    assert rd.end["rows"] == "5"
    (tmp_path / "r.tsv").write_text(text)
    # an end record voided by a resume record after it; without a record the
    # repeated rows are read and counted backwards
    rd, rows = read_table(head + r(600) + "\n" + r(1200) + "\n#: end rows=2\n"
                          + stationrecord.resume_line(1) + "\n" + r(1200) + "\n")
    assert [x.time_s for x in rows] == [600, 1200] and rd.end is None and rd.voided == 1
    rd, rows = read_table(head + r(600) + "\n" + r(1200) + "\n" + r(1200) + "\n" + r(1800) + "\n")
    assert len(rows) == 4 and rd.backwards == 1 and rd.first_backwards == 5
    with pytest.raises(table.TableError, match="expected #: resume rows=N whole"):
        read_table(head + r(600) + "\n#: resume line=3 whole\n")
    assert stationrecord.RESUME_PREFIX == record.RESUME_PREFIX
    assert stationrecord.RESUME_WHOLE == record.RESUME_WHOLE == "whole"
    # 'tinygeo plot' draws the rows kept and says what it dropped
    pytest.importorskip("matplotlib")
    rc, out, err = main(["plot", tmp_path / "r.tsv", "-o", tmp_path / "r.png"])
    assert rc == 0 and "3 rows voided by 2 resume records" in err and "1 torn" in err, err
    assert "go back" not in err and "5 points of 5" in err, err


def _r(t, n=60):
    # a station table row at time_s t with n readings (made up; the reader
    # does not check the values)
    return "%d.000\t100000.00\t100040.00\t100040.00\tnan\t-\tnan\t285.000\t80.00\t" \
           "281.500\t0\t%d" % (t, n)


_HEAD = stationrecord.MAGIC + "\n" + "\t".join(stationrecord.COLUMNS) + "\n"


def test_the_station_resume_record_ends_in_whole():
    # the layout documented in tinygeo/stationrecord.py: 'rows=N' then the
    # word that tells a record written to the end
    assert stationrecord.resume_line(99) == "#: resume rows=99 whole"
    assert record.resume_line(3000) == "#: resume line=3000 whole"


def test_a_torn_resume_record_voids_no_row():
    # a power cut while '#: resume rows=99 whole' was written left '#: resume
    # rows=9' (constructed, as /tmp/attack3/tornres2); the next start wrote a
    # whole one: the torn record is ignored (counted), the 99 rows are kept
    rows = "".join(_r(600 * (i + 1)) + "\n" for i in range(99))
    for torn in ("#: resume rows=9", "#: resume ro", "#: resume", "#: resu",
                 "#: resume rows=99 who", "#: resume rows=99"):
        text = _HEAD + rows + "\n" + torn + "\n\n" + stationrecord.resume_line(99) + "\n" \
            + _r(600 * 100) + "\n#: end rows=100 count=1 rejected=0 averages=100 missing=0\n"
        rd, got = read_table(text)
        assert len(got) == 100 and rd.voided == 0 and rd.torn == 0, torn
        assert (rd.resumes, rd.torn_resumes, rd.first_torn_resume) == (1, 1, 103), torn
        assert rd.end is not None and rd.lost == 0
    # the torn record last in the file (the logger has not started again)
    rd, got = read_table(_HEAD + rows + "\n#: resume ro")
    assert len(got) == 99 and rd.torn_resumes == 1 and rd.resumes == 0


@pytest.mark.parametrize("bad", ["rows=-3 whole", "rows=3_0 whole", "rows=\u0663 whole",
                                 "rows=3 rows=3 whole", "rows= whole", "rows=+3 whole",
                                 "line=3 whole", "whole"])
def test_a_malformed_whole_resume_record_is_unreadable(bad):
    with pytest.raises(table.TableError, match="unreadable resume record"):
        read_table(_HEAD + _r(600) + "\n" + record.RESUME_PREFIX + bad + "\n" + _r(1200) + "\n")


def test_a_resume_record_beyond_the_rows_says_rows_were_lost():
    # the logger counted 5 rows when it took the checkpoint; the table holds 2
    rd, got = read_table(_HEAD + _r(600) + "\n" + _r(1200) + "\n\n"
                         + stationrecord.resume_line(5) + "\n" + _r(3600) + "\n")
    assert len(got) == 3 and rd.voided == 0
    assert (rd.lost, rd.first_lost) == (3, 6)


def test_a_last_row_without_a_line_end_is_torn():
    # a cut inside the last field ('60' written as '6') reads as a value: with
    # no line end after it and no end record, it is torn (as
    # /tmp/attack3/tornfield)
    text = _HEAD + _r(600) + "\n" + _r(1200) + "\n" + _r(1800)[:-1]
    rd, got = read_table(text)
    assert [x.time_s for x in got] == [600, 1200] and rd.torn == 1
    rd, got = read_table(text + "0\n")          # whole: kept
    assert len(got) == 3 and rd.torn == 0
    rd, got = read_table(text + "0")             # no line end, but no way to tell: torn
    assert len(got) == 2 and rd.torn == 1


def test_plot_notes_torn_resume_records_and_lost_rows(tmp_path):
    pytest.importorskip("matplotlib")
    path = tmp_path / "t.tsv"
    path.write_text(_HEAD + _r(600) + "\n" + _r(1200) + "\n\n#: resume rows=9\n\n"
                    + stationrecord.resume_line(5) + "\n" + _r(1800) + "\n" + _r(2400) + "\n")
    rc, out, err = main(["plot", path, "-o", tmp_path / "t.png"])
    assert rc == 0, err
    assert "1 resume record torn by a power cut while it was written (the first at table " \
           "line 6" in err, err
    assert "3 rows lost: the resume record at table line 8" in err, err
    path.write_text(_HEAD + _r(600) + "\n" + _r(1200) + "\n" + _r(1800) + "\n\n"
                    + stationrecord.resume_line(2) + "\n" + _r(1800) + "\n")
    rc, out, err = main(["plot", path, "-o", tmp_path / "t.png"])
    assert rc == 0 and "1 row voided by 1 resume record (written" in err, err


@pytest.mark.parametrize("text,words", [
    (stationrecord.MAGIC + "\ntime_s\tp_pa\ttend_code\n600\t1e5\t9\n", "tend_code 9 outside 0..8"),
    (stationrecord.MAGIC + "\np_pa\tmslp_pa\n", "the fields are time_s and any of"),
    (stationrecord.MAGIC + "\ntime_s\tp_pa\n600\t1e5\t3\n", "3 fields, expected 2"),
    ("# tinygeo table 1\n", "not a station table"),
])
def test_the_station_table_reader_refuses_what_it_cannot_read(text, words):
    with pytest.raises(table.TableError, match=words):
        read_table(text)


def test_a_cut_table_has_no_end_and_compare_names_a_station_table(tmp_path, buoy):
    cut = buoy["out"].split(record.END_PREFIX)[0]
    rd, rows = read_table(cut)
    assert rd.end is None and len(rows) == 142
    path = tmp_path / "st.tsv"
    path.write_text(buoy["out"])
    rc, out, err = main(["compare", path])
    assert rc == 2 and "a station table ('tinygeo station')" in err, err


# ================================================================ the plot
@pytest.fixture(scope="module")
def station_table(tmp_path_factory, buoy):
    path = tmp_path_factory.mktemp("plot") / "buoy.tsv"
    path.write_text(buoy["out"])
    return path


def test_plot_of_a_station_table_writes_png_and_pdf(station_table, tmp_path):
    pytest.importorskip("matplotlib")
    png, pdf = tmp_path / "day.png", tmp_path / "day.pdf"
    rc, out, err = main(["plot", station_table, "-o", png])
    assert rc == 0 and "142 points of 142" in err, err
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"        # PNG signature
    # a device's table (no summary records) draws too
    dev = tmp_path / "dev.tsv"
    dev.write_text("".join(ln + "\n" for ln in station_table.read_text().splitlines()
                           if not ln.startswith("#: ") or ln.startswith("#: end")))
    rc, out, err = main(["plot", dev, "-o", pdf])
    assert rc == 0, err
    assert pdf.read_bytes()[:5] == b"%PDF-"                       # PDF header
    # the plot's summary (a scan of the rows) is the command's
    rd, rows = read_table(dev.read_text())
    assert len(rows) == 142
    rc, out, err = main(["plot", tmp_path / "missing.tsv", "-o", tmp_path / "x.png"])
    assert rc == 2
    assert sorted(p.name for p in tmp_path.iterdir()) == ["day.pdf", "day.png", "dev.tsv"]


def test_plot_of_an_iso_station_table_and_an_empty_one(tmp_path):
    pytest.importorskip("matplotlib")
    import datetime
    t0 = datetime.datetime(2026, 3, 1, 0, 0, 0, tzinfo=datetime.timezone.utc)
    lines = ["# lat_deg=50 height_m=10", "utc,pressure_hpa,temp_c"]
    for i in range(600):
        t = t0 + datetime.timedelta(seconds=60 * i)
        lines.append("%s,%.2f,12.0" % (t.strftime("%Y-%m-%dT%H:%M:%SZ"),
                                       1010.0 - 3.0 * math.sin(i / 200.0)))
    rc, out, err = main(["station", "-", "-o", tmp_path / "iso.tsv"], "\n".join(lines) + "\n")
    assert rc == 0, err
    rc, out, err = main(["plot", tmp_path / "iso.tsv", "-o", tmp_path / "iso.svg"])
    assert rc == 0, err
    assert b"<svg" in (tmp_path / "iso.svg").read_bytes()[:400]
    # a table with no rows (fewer readings than one average)
    rc, out, err = main(["station", "-", "-o", tmp_path / "empty.tsv"],
                        "\n".join(lines[:6]) + "\n")
    assert rc == 0, err
    rc, out, err = main(["plot", tmp_path / "empty.tsv", "-o", tmp_path / "e.png"])
    assert rc == 2 and "no rows to plot" in err, err


def _hand_table(times, origin=None):
    # a station table of hand-made rows at these time_s (the rows are drawn
    # as written)
    head = stationrecord.MAGIC + "\n# station height_m=3.5 lat_deg=54.2 average_s=600\n"
    if origin:
        head += table.TIME_ORIGIN_PREFIX + origin + "\n"
    return (head + "\t".join(stationrecord.COLUMNS) + "\n"
            + "".join("%d.000\t%.2f\t100040.00\t100040.00\tnan\t-\tnan\t285.000\t80.00\t"
                      "281.500\t0\t60\n" % (t, 100000.0 + k) for k, t in enumerate(times)))


def _drawn(text, tmp_path):
    from tinygeo.host import plot
    data = plot.StationData(table.StationTableReader(io.StringIO(text), "t"))
    fig = plot.draw_station(data, str(tmp_path / "f.png"), "t", 40)
    return data, fig


def test_plot_of_epoch_seconds_shows_utc_and_dates_across_days(tmp_path):
    # time_s counting from 1970 without a time origin line (a logger on a
    # clock set to UTC): the axis in UTC, not hours since 1970 with an
    # offset; 2026-03-26T23:10:00Z is 1774566600 s (datetime's arithmetic)
    pytest.importorskip("matplotlib")
    import datetime
    t0 = datetime.datetime(2026, 3, 26, 23, 10, tzinfo=datetime.timezone.utc)
    assert t0.timestamp() == 1774566600
    data, fig = _drawn(_hand_table([1774566600 + 600 * k for k in range(12)]), tmp_path)
    assert data.epoch and data.epoch_guessed
    ax = fig.axes[4]
    assert ax.get_xlabel().startswith("date and time (UTC); time_s taken as seconds since 1970")
    labels = [t.get_text() for t in ax.get_xticklabels()]
    assert any(x.startswith("2026-03-27") for x in labels), labels   # crosses midnight
    assert ax.xaxis.get_offset_text().get_text() == ""
    # one day only: times of day; hours of the log's clock stay plain numbers
    data, fig = _drawn(_hand_table([1774566600 - 7200 + 600 * k for k in range(6)]), tmp_path)
    assert fig.axes[4].get_xlabel().startswith("time (UTC);")
    assert all(":" in t.get_text() and "-" not in t.get_text()
               for t in fig.axes[4].get_xticklabels() if t.get_text())
    data, fig = _drawn(_hand_table([3600 * 1000 + 600 * k for k in range(6)]), tmp_path)
    assert not data.epoch and fig.axes[4].xaxis.get_offset_text().get_text() == ""
    # a table whose time origin is 1970 (ISO stamps), across days: dates
    data, fig = _drawn(_hand_table([1774566600 + 600 * k for k in range(12)],
                                   stationlog.EPOCH), tmp_path)
    assert fig.axes[4].get_xlabel() == "date and time (UTC)"


def test_plot_breaks_and_marks_where_time_goes_back(tmp_path):
    # a restart on a clock set back 3000 s, and a row written twice: the
    # lines break (a nan between), the places are marked, and 'tinygeo plot'
    # says so with the table line of the first
    pytest.importorskip("matplotlib")
    times = [600 * k for k in range(1, 9)] + [4800 - 3000 + 600 * k for k in range(4)]
    times += [times[-1]] + [times[-1] + 600]
    text = _hand_table(times)
    data, fig = _drawn(text, tmp_path)
    assert (data.repeated, data.backwards) == (1, 1)
    p = [ln for ln in fig.axes[1].lines if ln.get_label() == "station pressure (p_pa)"]
    p = list(p[0].get_ydata())
    assert sum(1 for v in p if v != v) == 2 and len(p) == len(times) + 2
    assert p[8] != p[8] and p[13] != p[13] and p[9] == 1000.08 and p[14] == 1000.12
    marks = [ln for ln in fig.axes[0].lines if ln.get_label().startswith("time goes back")]
    assert len(marks) == 1 and "from 1.33 h" in marks[0].get_label()
    path = tmp_path / "back.tsv"
    path.write_text(text)
    rc, out, err = main(["plot", path, "-o", tmp_path / "back.png"])
    assert rc == 0, err
    assert ("1 rows repeat the time_s of the row before and 1 go back in time (first at table "
            "line 12: time_s=1800 after time_s=4800)") in err, err


def test_station_table_end_prefix_is_the_column_tables():
    # stationrecord imports nothing (a buoy logger loads only it): its end
    # record prefix is written out and must stay the column table's
    assert stationrecord.END_PREFIX == record.END_PREFIX


# ================================================================ flags everywhere
def _station_flags():
    from tinygeo import station
    return sorted((getattr(station, n), n) for n in dir(station) if n.startswith("FL_"))


def test_every_station_flag_is_named_in_help_readme_summary_and_plot(tmp_path):
    # each FL_* bit of tinygeo.station: a line of 'tinygeo station --help', a
    # name in README's "Stations and buoys", a word of the summary's '#: flags'
    # record and a row of the plot's QC strip
    from tinygeo.host import plot
    flags = _station_flags()
    assert len(flags) == 11 and flags[-1] == (1024, "FL_MSLP_ODD")
    rc, out, err = main(["station", "--help"])
    assert rc == 0
    doc = (ROOT / "README.md").read_text()
    doc = doc[doc.index("## Stations and buoys"):doc.index("## The host companion")]
    words = dict(stationlog.FLAG_WORDS)
    labels = dict(plot.STATION_FLAG_LABELS)
    for bit, name in flags:
        assert ("\n  %-5d" % bit) in out, name
        assert "`%s`" % name in doc or (name.startswith("FL_STUCK") and "`FL_STUCK_P/T/RH`" in doc), name
        assert bit in words and words[bit] in labels, name
    rc, out, err = main(["station", "-", "--quiet"], relabel("time_s,pressure_hpa,temp_c,rh_pct"))
    got = records(out)["flags"]
    assert sorted(got) == sorted(words.values())
    # the plot's QC strip has a row for a flag an average carries: 1024 on a
    # row of a hand-made table (the rows are drawn as written)
    pytest.importorskip("matplotlib")
    text = (stationrecord.MAGIC + "\n# station height_m=3.5 lat_deg=54.2 average_s=600\n"
            + "\t".join(stationrecord.COLUMNS) + "\n"
            + "".join("%d.000\t100000.00\t100040.00\t100040.00\tnan\t-\tnan\t285.000\t80.00\t"
                      "281.500\t%d\t60\n" % (600 * (k + 1), 1024 if k == 2 else 0)
                      for k in range(6)))
    data = plot.StationData(table.StationTableReader(io.StringIO(text), "t"))
    fig = plot.draw_station(data, str(tmp_path / "f.png"), "t", 40)
    qc = fig.axes[4]
    assert [t.get_text() for t in qc.get_yticklabels()] == [labels["mslp_odd"]]


# ================================================================ the command's help and notes
def test_station_help_has_its_own_exit_status_and_layout_file():
    rc, out, err = main(["station", "--help"])
    assert rc == 0
    status = out[out.index("exit status:"):out.index("flags (")]
    for words in ("compare", "lapse rate", "gps", "device table", "start height", "matplotlib"):
        assert words not in status, words
    for words in ("no time\n      column", "station's height or latitude not known", "--guard"):
        assert words in status, words
    assert "table layout: see tinygeo/stationrecord.py." in out and "record.py (" not in out
    doc = (ROOT / "README.md").read_text()
    doc = doc[doc.index("## Stations and buoys"):doc.index("## The host companion")]
    assert "`tinygeo/stationrecord.py`" in doc and "`tinygeo/record.py`" not in doc


def test_an_inferred_pressure_unit_is_noted_against_the_station_height_and_guard():
    # kPa inferred from the values: the note names the station's height and
    # its guard (2000 m by default, --guard), not a start height
    log = station_log([1012.0 + 0.01 * i for i in range(30)], head="# lat_deg=58.5 height_m=2.8")
    log = log.replace("pressure_hpa", "baro")
    kpa = "\n".join(ln if not ln[0].isdigit() else
                    ",".join([ln.split(",")[0], "%.4f" % (float(ln.split(",")[1]) / 10.0)]
                             + ln.split(",")[2:]) for ln in log.splitlines()) + "\n"
    rc, out, err = main(["station", "-"], kpa)
    assert rc == 0, err
    assert "taken as pressure in kPa" in err
    assert "within 2000 m of the station's height 2.8 m" in err and "start height" not in err, err
    rc, out, err = main(["station", "-", "--guard", "500"], kpa)
    assert "within 500 m of the station's height 2.8 m" in err, err


# ================================================================ time stamps in messages
def _epoch_log(iso):
    # 1-minute readings from 2026-03-28T14:00:00Z (1774706400 s since 1970,
    # datetime's UTC arithmetic), then a stamp 4141 s ahead of the latest
    import datetime
    t0 = datetime.datetime(2026, 3, 28, 14, 0, 0, tzinfo=datetime.timezone.utc)
    assert t0.timestamp() == 1774706400
    lines = ["# lat_deg=58.5 height_m=2.8", ("utc" if iso else "time_s") + ",pressure_hpa,temp_c"]
    stamps = [60 * i for i in range(40)] + [39 * 60 + 4141]
    for k, s in enumerate(stamps):
        t = t0 + datetime.timedelta(seconds=s)
        lines.append("%s,%.2f,7.0" % (t.strftime("%Y-%m-%dT%H:%M:%SZ") if iso else
                                      "%d" % t.timestamp(), 1015.0 + 0.01 * k))
    return "\n".join(lines) + "\n"


def test_time_stamps_in_station_messages_stay_whole_or_utc():
    # epoch seconds in a number column: whole digits, not 1.77471e+09
    rc, out, err = main(["station", "-"], _epoch_log(False))
    assert rc == 0, err
    assert "time_s=1774712881 is 4141 s after the latest accepted reading's 1774708740," in err, err
    assert "e+09" not in err
    # ISO stamps: the same, with their UTC text
    rc, out, err = main(["station", "-"], _epoch_log(True))
    assert rc == 0, err
    assert ("time_s=1774712881 (2026-03-28T15:48:01Z) is 4141 s after the latest accepted "
            "reading's 1774708740 (2026-03-28T14:39:00Z),") in err, err


def test_time_stamps_in_replay_messages_stay_whole():
    # a column fed epoch seconds that go back: the stamp whole, not 1.77471e+09
    lines = ["# lat_deg=47 start_height_m=420", "time_s,pressure_hpa,temp_c"]
    for i in range(30):
        lines.append("%d,%.2f,12.0" % (1774706400 + (2 * i if i != 20 else -600), 965.0 - 0.1 * i))
    rc, out, err = main(["replay", "-"], "\n".join(lines) + "\n")
    assert rc == 0, err
    assert "time_s=1774705800 before the latest reading's 38 s" in err, err
    assert "e+09" not in err
    from tinygeo.host.options import round_numbers
    assert round_numbers("p_pa=96447.00000000001 time_s=12.250000 at the reading's -3.5") == \
        "p_pa=96447 time_s=12.25 at the reading's -3.5"


# ================================================================ naive time stamps
@pytest.mark.parametrize("command", ["station", "replay"])
def test_time_stamps_without_an_offset_are_noted_as_utc(command):
    # '2026-03-29 00:59:00' has no offset: taken as UTC, and a note says so
    # once (with the daylight-saving caution); stamps with Z or an offset: no note
    import datetime
    t0 = datetime.datetime(2026, 3, 29, 0, 0, 0)
    head = ["# lat_deg=47 height_m=20 start_height_m=20", "timestamp,pressure_hpa,temp_c"]
    naive, zulu = list(head), list(head)
    for i in range(120):
        t = t0 + datetime.timedelta(seconds=60 * i)
        row = ",%.2f,12.0" % (1010.0 - 0.001 * i)
        naive.append(t.strftime("%Y-%m-%d %H:%M:%S") + row)
        zulu.append(t.strftime("%Y-%m-%dT%H:%M:%S+01:00") + row)
    rc, out, err = main([command, "-"], "\n".join(naive) + "\n")
    assert rc == 0, err
    assert err.count("without a UTC offset") == 1, err
    assert ("holds time stamps without a UTC offset ('2026-03-29 00:00:00', line 3): taken as "
            "UTC") in err and "daylight-saving" in err, err
    rc, out, err = main([command, "-"], "\n".join(zulu) + "\n")
    assert rc == 0, err
    assert "UTC offset" not in err, err


# ================================================================ the advice on 'time' rejections
def test_most_readings_rejected_for_time_the_advice_names_the_spacing():
    # a log newest first (constructed): most readings are 'time'
    # rejections; the final advice gives the readings' spacing and says to
    # sort the log, not only mapping/units/height/QC limits
    head = ["# lat_deg=47 height_m=20", "time_s,pressure_hpa,temp_c"]
    log = "\n".join(head + ["%d,%.2f,10" % (100000 - 60 * i, 1010 + 0.01 * i)
                            for i in range(300)]) + "\n"
    rc, out, err = main(["station", "-", "--quiet"], log)
    assert rc == 2 and "rejected for 'time'" in err, err
    assert "the readings are 60 s apart (median of the first 99 steps) and 99 of those steps " \
           "go back in time: is the log newest first?" in err, err
    assert "QC limits" not in err
    # readings going forward an hour apart: the advice names --average and
    # --max-gap against that spacing (stationlog.advice, fed the stamps)
    st = Station(20.0, 47.0)
    s = stationlog.Summary()
    for k in range(150):
        s.stamp(1774706400 + 3600 * k)
    text = stationlog.advice("time", s, st)
    assert "the readings are 3600 s apart (median of the first 99 steps)" in text, text
    assert "--average (600 s now)" in text and "--max-gap + --average (2400 s now)" in text
    assert "hourly readings: --average 3600" in text
    assert "QC limits" in stationlog.advice("pressure", s, st)
    # no time at all: the time column named, nothing about spacing
    log = "\n".join(head + [",%.2f,10" % (1010 + 0.01 * i) for i in range(60)]) + "\n"
    rc, out, err = main(["station", "-", "--quiet"], log)
    assert rc == 2 and "time_s is required" in err and \
        "check the time column and its unit (--time NAME:s|ms|iso) (see --help)" in err, err


def test_readme_station_cautions_noise_mean12_time_and_digits():
    # README's "Stations and buoys" cautions: the characteristic of a flat
    # trace under noise with the figures bench/tendency_noise.py printed
    # (bench/README.md), --mean12 and the isobaric height, UTC stamps, and
    # MicroPython's last digit
    doc = (ROOT / "README.md").read_text()
    doc = doc[doc.index("**Cautions.**", doc.index("## Stations and buoys")):
              doc.index("## The host companion")]
    bench = (ROOT / "bench" / "README.md").read_text()
    assert "     3.0 Pa                 26.8 %                   5.5 %" in bench
    assert "     5.0 Pa                 78.5 %                  55.3 %" in bench
    flat = " ".join(doc.split())
    for words in ("3 Pa of noise on each 10-minute average, 5.5 % of flat 3-hour traces get a "
                  "shape code", "with 5 Pa 55 %", "`bench/tendency_noise.py`",
                  "`steady_pa` (`--steady`, 10 Pa)",
                  "`mean12` applies to the sea-level pressure only",
                  "uses the latest average's temperature",
                  "Time stamps: UTC, or with an offset", "taken as UTC",
                  "daylight-saving", "Compare numbers, not text", "MicroPython and CPython"):
        assert words in flat, words
    assert (ROOT / "bench" / "tendency_noise.py").exists()
