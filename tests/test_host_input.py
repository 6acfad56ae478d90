"""Malformed input to the host tools: one clear message, never a traceback.

Runs ``tinygeo.host.cli.main`` in-process (fast) with the real column; the
fuzzing uses hypothesis with a bounded number of examples.
"""
import io

from hypothesis import HealthCheck, given, settings, strategies as st

from tinygeo.host import cli, logread, table

GOOD_HEAD = "# lat_deg=47.3 start_height_m=420\ntime_s,pressure_hpa,temp_c,rh_pct\n"
GOOD_ROWS = "".join("%d,%.2f,%.2f,60.0\n" % (2 * i, 965.0 - 0.6 * i, 12.0 - 0.004 * i)
                    for i in range(40))


def main(args, text=""):
    """Run the command line on ``text`` as stdin; return (rc, stdout, stderr)."""
    out, err = io.StringIO(), io.StringIO()
    rc = cli.main(args, stdin=io.StringIO(text), stdout=out, stderr=err)
    return rc, out.getvalue(), err.getvalue()


def replay(text, *extra):
    return main(["replay", "-"] + list(extra), text)


def test_good_log_from_stdin():
    rc, out, err = replay(GOOD_HEAD + GOOD_ROWS)
    assert rc == 0, err
    assert "#: accepted count=40" in out and "#: rejected count=0" in out


def test_empty_input():
    rc, out, err = replay("")
    assert rc == 2 and "empty input" in err and out == ""
    rc, out, err = replay("# only a comment\n\n")
    assert rc == 2 and "no header" in err


def test_missing_header_names_line_and_fix():
    rc, _, err = replay("0,965.0,12.0,60\n2,964.4,12.0,60\n")
    assert rc == 2
    assert "line 1: no header" in err and "add a header line" in err.lower()


def test_unknown_column_lists_the_header():
    rc, _, err = replay(GOOD_HEAD + GOOD_ROWS, "--pressure", "baro_x")
    assert rc == 2
    assert "no column named 'baro_x'" in err
    assert "time_s, pressure_hpa, temp_c, rh_pct" in err
    rc, _, err = replay("time,foo,bar\n1,2,3\n", "--lat", "10")
    assert rc == 2 and "no pressure column found" in err and "--pressure" in err


def test_unparseable_numbers_are_rejected_with_line_and_counted():
    rows = GOOD_ROWS.splitlines(keepends=True)
    rows[5] = "10,96x.2,11.9,60\n"                 # line 8 of the log
    rows[9] = "18,963.0,11.9\n"                     # too few fields, line 12
    rc, out, err = replay(GOOD_HEAD + "".join(rows))
    assert rc == 0
    assert "line 8: pressure '96x.2' in column 'pressure_hpa' is not a number" in err
    assert "line 12: 3 fields, expected 4" in err
    assert "#: rejected count=2 by_column=0 unread=2 fields=1 number=1 -- " in out


def test_celsius_column_declared_kelvin():
    text = GOOD_HEAD.replace("temp_c", "temp_k") + GOOD_ROWS
    rc, out, err = replay(text)
    assert rc == 2
    assert "line 3: column 'temp_k' is declared in K but its value 12 looks like degC" in err
    assert "--temperature temp_k:C" in err
    # declared on the command line instead of the header: same check
    rc, _, err = replay(GOOD_HEAD.replace("temp_c", "temp") + GOOD_ROWS, "--temperature", "temp:K")
    assert rc == 2 and "declared in K" in err


def test_pascal_column_declared_hpa_and_autodetect_note():
    rows = "".join("%d,%.1f,%.2f,60.0\n" % (2 * i, 96500.0 - 60 * i, 12.0) for i in range(30))
    rc, _, err = replay(GOOD_HEAD + rows)
    assert rc == 2 and "declared in hPa but its value 96500 looks like Pa" in err
    # with a unit-less header the unit is taken from the first value, with a note
    rc, out, err = replay("# lat_deg=47.3\ntime,pressure,temperature,rh\n" + rows)
    assert rc == 0, err
    assert "taken as pressure in Pa" in err and "taken as temperature in degC" in err


def test_all_readings_rejected_stops_with_the_first_reason():
    rows = "".join("%d,%.2f,%.2f,60.0\n" % (2 * i, 965.0, 500.0 + i) for i in range(80))
    rc, out, err = replay(GOOD_HEAD.replace("temp_c", "temp_k") + rows)
    assert rc == 2
    assert "none of the first 50 readings was accepted" in err
    assert "line 3:" in err


def test_missing_latitude_and_bad_options():
    rc, _, err = replay("time_s,pressure_hpa,temp_c\n0,965,12\n")
    assert rc == 2 and "--lat" in err
    rc, _, err = main(["replay", "-", "--lat", "91"], GOOD_HEAD + GOOD_ROWS)
    assert rc == 2 and "lat" in err
    rc, _, err = main(["replay"])
    assert rc == 2 and "usage" in err.lower() or "required" in err
    rc, _, err = main(["replay", "/nonexistent/log.csv"])
    assert rc == 2 and "cannot read /nonexistent/log.csv" in err
    rc, _, err = main(["frobnicate"])
    assert rc == 2
    rc, _, err = main(["compare", "-"], "not a table\n")
    assert rc == 2 and "not a tinygeo table" in err


def test_header_name_classification():
    # the default mapping by header name (documented in tinygeo.host.logread)
    assert logread.classify("Pressure [hPa]") == ("pressure", "hPa")
    assert logread.classify("Temp (\u00b0C)") == ("temperature", "C")
    assert logread.classify("RH %") == ("humidity", "%")
    assert logread.classify("dewpoint_k") == ("dewpoint", "K")
    assert logread.classify("utc") == ("time", None)
    assert logread.classify("gps_alt_m") == ("gps", "m")
    assert logread.classify("battery_v") == (None, None)


def test_table_event_words_round_trip():
    for bits, lv in ((0, 0.0), (1, 85000.0), (1 | 4, 2000.0), (2 | 8, 0.0), (16, 0.0)):
        text = table.events_text(bits, lv)
        back, hpa = table.parse_events(text)
        assert back == bits
        assert hpa == (int(lv / 100) if bits & 1 else 0)
    assert table.events_text(1, [70000.0, 50000.0]) == "level700+level500"


# --- fuzzing ------------------------------------------------------------------------------
_cell = st.one_of(
    st.sampled_from(["", "nan", "inf", "-", "1e999", "abc", "12,5", '"965.0"', "-40", "0",
                     "2026-05-04T09:30:00Z", "2026-13-99", "101325", "1013.2", "\u00e9", "\x00"]),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-10 ** 6, 10 ** 6).map(str),
    st.text(max_size=8))
_header = st.lists(st.sampled_from(
    ["time_s", "time", "utc", "pressure_hpa", "pressure", "p_pa", "temp_c", "temp_k", "t",
     "rh_pct", "rh", "dewpoint_c", "gps_m", "battery", "", "pressure_hpa"]), min_size=0, max_size=6)
_delim = st.sampled_from([",", "\t", ";", " ", "|"])


@st.composite
def _logs(draw):
    d = draw(_delim)
    lines = []
    if draw(st.booleans()):
        lines.append("# lat_deg=%s start_height_m=%s" % (draw(_cell), draw(_cell)))
    lines.append(d.join(draw(_header)))
    width = draw(st.integers(0, 7))
    for _ in range(draw(st.integers(0, 12))):
        lines.append(d.join(draw(st.lists(_cell, min_size=width, max_size=width))))
    if draw(st.booleans()):
        lines.append(draw(st.text(max_size=40)))
    return "\n".join(lines) + draw(st.sampled_from(["", "\n", "\r\n"]))


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_logs(), st.lists(st.sampled_from(
    [["--lat", "45"], ["--delimiter", ";"], ["--time", "time:iso"], ["--pressure", "2"],
     ["--temperature", "t:C"], ["--humidity", "rh"], ["--dew-point", "dewpoint_c:C"],
     ["--gps", "gps_m"], ["--every", "2"], ["--anchor-pressure", "960"]]), max_size=3))
def test_fuzzed_logs_never_raise(text, opts):
    args = [a for o in opts for a in o]
    rc, out, err = replay(text, *args)
    assert rc in (0, 2)
    assert "Traceback" not in err
    if rc == 2:
        # one error message, last, after any per-line reports
        lines = err.splitlines()
        assert lines[-1].startswith("tinygeo: error: ") and err.count("tinygeo: error:") == 1
    else:
        assert "#: accepted count=" in out


@settings(max_examples=60, deadline=None)
@given(st.text(max_size=300))
def test_fuzzed_device_tables_never_raise(text):
    for body in (text, table.MAGIC + "\n" + table.HEADER + "\n" + text):
        rc, out, err = main(["compare", "-", "--lat", "47"], body)
        assert rc in (0, 1, 2) and "Traceback" not in err


class _Terminal(io.StringIO):
    def isatty(self):
        return True


def test_progress_only_when_stderr_is_a_terminal(tmp_path):
    log = tmp_path / "long.csv"
    log.write_text(GOOD_HEAD + "".join(
        "%d,%.2f,%.2f,60.0\n" % (2 * i, 965.0 - 0.05 * i, 12.0 - 0.0003 * i) for i in range(3000)))
    for err, shown in ((_Terminal(), True), (io.StringIO(), False)):
        out = io.StringIO()
        assert cli.main(["replay", str(log)], stdout=out, stderr=err) == 0
        assert ("\rreplay: line 1024" in err.getvalue()) == shown
        assert "\r" not in out.getvalue()


@st.composite
def _damaged_logs(draw):
    """The good log with a few lines damaged: a cell replaced, a line cut,
    duplicated or replaced by noise."""
    rows = GOOD_ROWS.splitlines()
    for _ in range(draw(st.integers(1, 6))):
        if not rows:
            break
        i = draw(st.integers(0, len(rows) - 1))
        kind = draw(st.sampled_from(["cell", "cut", "dup", "noise", "drop"]))
        if kind == "cell":
            cells = rows[i].split(",")
            cells[draw(st.integers(0, len(cells) - 1))] = draw(_cell)
            rows[i] = ",".join(cells)
        elif kind == "cut":
            rows[i] = rows[i][:draw(st.integers(0, len(rows[i])))]
        elif kind == "dup":
            rows.insert(i, rows[i])
        elif kind == "noise":
            rows[i] = draw(st.text(max_size=30)).replace("\n", " ").replace("\r", " ")
        else:
            del rows[i]
    return GOOD_HEAD + "\n".join(rows) + "\n"


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_damaged_logs())
def test_damaged_lines_are_skipped_and_counted(text):
    rc, out, err = replay(text)
    assert "Traceback" not in err
    assert rc in (0, 2)
    if rc == 0:
        # every data line is either in the table or counted as rejected
        # lines end at "\n" only (str.splitlines would also split at \x85, \x1c...)
        data = [ln for ln in text.split("\n")[2:] if ln.strip() and not ln.strip().startswith("#")]
        counts = dict((w.split()[0], int(w.split("count=")[1].split()[0]))
                      for w in (ln[3:] for ln in out.splitlines() if ln.startswith("#: "))
                      if "count=" in w)
        rows = [ln for ln in out.splitlines() if ln[:1].isdigit()]
        assert counts["accepted"] == len(rows)
        assert counts["accepted"] + counts["rejected"] == len(data)
        assert err.count("tinygeo replay: rejected") == min(counts["rejected"], 20)
    else:
        assert err.count("tinygeo: error:") == 1


def test_semicolons_with_decimal_commas():
    text = GOOD_HEAD.replace(",", ";") + GOOD_ROWS.replace(",", ";").replace(".", ",")
    rc, out, err = replay(text)
    assert rc == 0, err
    assert out == replay(GOOD_HEAD + GOOD_ROWS)[1]     # the same table, byte for byte
