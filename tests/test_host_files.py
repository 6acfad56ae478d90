"""Files and streams of the host tools: no output may overwrite an input, an
output appears under its name only when complete, and broken streams, full
disks, undecodable text and overlong lines end in one line on stderr with a
documented exit status (tinygeo.host.cli.EXIT_TEXT), never a traceback.

Runs ``tinygeo.host.cli.main`` in-process where the streams allow it, and the
installed console script where file descriptors must really be closed.
Inputs are invented flights from ``tinygeo simulate``.
"""
import io
import os
import shutil
import subprocess
import sys
import tracemalloc
from pathlib import Path

import pytest

from tinygeo.host import cli, options

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE = ROOT / "examples" / "schoolfield_flight.csv"
TINYGEO = shutil.which("tinygeo") or str(Path(sys.executable).with_name("tinygeo"))


def main(args, stdin=None):
    """Run the command line in-process; return (rc, stdout, stderr)."""
    out, err = io.StringIO(), io.StringIO()
    rc = cli.main([str(a) for a in args], stdin=stdin if stdin is not None else io.StringIO(""),
                  stdout=out, stderr=err)
    return rc, out.getvalue(), err.getvalue()


def one_error(err):
    """The single error line of a failed run (and no traceback)."""
    assert "Traceback" not in err, err
    lines = [ln for ln in err.splitlines() if ln.startswith("tinygeo: error: ")]
    assert len(lines) == 1, err
    return lines[0]


@pytest.fixture(scope="module")
def flight(tmp_path_factory):
    d = tmp_path_factory.mktemp("files")
    log = d / "flight.csv"
    rc, _, err = main(["simulate", "--seed", 21, "--burst", 3000, "-o", log])
    assert rc == 0, err
    table = d / "table.tsv"
    rc, _, err = main(["replay", log, "-o", table])
    assert rc == 0, err
    return {"dir": d, "log": log, "table": table}


def _snapshot(paths):
    return dict((str(p), (Path(p).read_bytes(), os.stat(p).st_mtime_ns)) for p in paths)


# --- no output resolves to an input -----------------------------------------------------
def test_an_output_that_is_an_input_is_refused_before_anything_is_written(flight, tmp_path):
    log, tab = flight["log"], flight["table"]
    link = tmp_path / "link.csv"
    link.symlink_to(log)
    hard = tmp_path / "hard.csv"
    os.link(log, hard)
    png_log = tmp_path / "log.png"          # a log named like the image it would become
    shutil.copy(log, png_log)
    before = _snapshot([log, tab, png_log])
    cases = [
        (["replay", log, "-o", log], "-o %s would overwrite the input %s" % (log, log)),
        (["replay", log, "--summary", link], "--summary %s would overwrite the input" % link),
        (["replay", log, "-o", hard], "-o %s would overwrite the input" % hard),
        (["replay", log, "-o", tmp_path / "t.tsv", "--summary", tmp_path / "t.tsv"],
         "--summary %s would overwrite -o" % (tmp_path / "t.tsv")),
        (["compare", tab, "--diffs", tab], "--diffs %s would overwrite the input" % tab),
        (["compare", tab, "--log", log, "--diffs", link], "--diffs %s would overwrite" % link),
        (["plot", png_log, "-o", png_log], "-o %s would overwrite the input" % png_log),
        (["simulate", "-o", tmp_path / "s.csv", "--truth", tmp_path / "s.csv"],
         "--truth %s would overwrite -o" % (tmp_path / "s.csv")),
    ]
    for args, words in cases:
        rc, out, err = main(args)
        assert rc == 2, (args, err)
        assert words in one_error(err), (args, err)
    assert _snapshot([log, tab, png_log]) == before
    assert not (tmp_path / "t.tsv").exists() and not (tmp_path / "s.csv").exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["hard.csv", "link.csv", "log.png"]


def test_stdin_read_from_the_output_file_is_refused(flight, tmp_path):
    copy = tmp_path / "f.csv"
    shutil.copy(flight["log"], copy)
    before = copy.read_bytes()
    with open(copy, "rb") as f:
        p = subprocess.run([TINYGEO, "replay", "-", "-o", str(copy)], stdin=f,
                           capture_output=True, text=True, timeout=60)
    assert p.returncode == 2
    assert "would overwrite the input: standard input reads from it" in one_error(p.stderr)
    assert copy.read_bytes() == before


def test_a_failed_or_interrupted_replay_leaves_the_old_file_and_no_part(flight, tmp_path):
    out = tmp_path / "table.tsv"
    out.write_text("old contents\n")
    # --max-rate 1 m/s rejects the whole ascent: the replay stops (exit 2)
    # after it has written rows
    rc, _, err = main(["replay", flight["log"], "-o", out, "--max-rate", 1])
    assert rc == 2 and "were rejected for 'rate'" in one_error(err)
    assert out.read_text() == "old contents\n"
    assert [p.name for p in tmp_path.iterdir()] == ["table.tsv"]

    class Interrupted(io.BytesIO):
        # a stdin whose reader presses Ctrl-C after 300 lines
        def __init__(self, data):
            super().__init__(data)
            self.n = 0

        def readline(self, *a):
            self.n += 1
            if self.n > 300:
                raise KeyboardInterrupt
            return super().readline(*a)

        def read1(self, n=-1):
            # (after the first lines the replay reads blocks: 200 bytes a
            # call here, the lines in them counted)
            if self.n > 300:
                raise KeyboardInterrupt
            block = super().read1(200)
            self.n += block.count(b"\n")
            return block

    stdin = io.TextIOWrapper(Interrupted(flight["log"].read_bytes()))
    rc, _, err = main(["replay", "-", "-o", out], stdin=stdin)
    assert rc == 130 and "interrupted" in err and "Traceback" not in err
    assert out.read_text() == "old contents\n"
    assert [p.name for p in tmp_path.iterdir()] == ["table.tsv"]
    # a complete run replaces it, with the permissions of the file it replaces
    os.chmod(out, 0o640)
    rc, _, err = main(["replay", flight["log"], "-o", out])
    assert rc == 0, err
    assert out.read_text().startswith("# tinygeo table 1\n") and (os.stat(out).st_mode & 0o777) == 0o640
    # a new file gets the usual mode (0666 less the umask), not the temporary file's 0600
    new = tmp_path / "new.tsv"
    rc, _, err = main(["replay", flight["log"], "-o", new])
    mask = os.umask(0o022)
    os.umask(mask)
    assert rc == 0 and (os.stat(new).st_mode & 0o777) == 0o666 & ~mask


# --- streams and disks --------------------------------------------------------------
def _script(args, close=(), stdin=None, stdout=subprocess.PIPE):
    """Run the console script with the file descriptors ``close`` closed."""
    def pre():
        for fd in close:
            os.close(fd)
    return subprocess.run([TINYGEO] + [str(a) for a in args], preexec_fn=pre, stdin=stdin,
                          stdout=stdout, stderr=subprocess.PIPE, text=True, timeout=60)


def test_closed_stdin_and_stdout(flight):
    p = _script(["replay", "-"], close=(0,))
    assert p.returncode == 2
    assert "standard input is closed" in one_error(p.stderr)
    p = _script(["replay", flight["log"]], close=(1,), stdout=None)
    assert p.returncode == 4
    assert "standard output is closed" in one_error(p.stderr)


def test_a_reader_that_stops_early_ends_the_replay_quietly(flight):
    proc = subprocess.Popen([TINYGEO, "replay", str(EXAMPLE)], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True)
    assert proc.stdout.readline().startswith("# tinygeo table 1")
    proc.stdout.close()                     # as '| head -1' does
    err = proc.stderr.read()
    assert proc.wait(timeout=60) == 0
    assert "Traceback" not in err and "tinygeo: error" not in err


def test_a_full_disk_names_the_file_and_the_line(flight):
    if not os.path.exists("/dev/full"):
        pytest.fail("/dev/full is missing (Linux provides it)")
    rc, _, err = main(["replay", flight["log"], "-o", "/dev/full"])
    assert rc == 4
    msg = one_error(err)
    assert "cannot write /dev/full: No space left on device" in msg
    assert "(writing the row of %s line " % flight["log"] in msg
    with open("/dev/full", "w") as full:
        p = _script(["replay", flight["log"]], stdout=full)
    assert p.returncode == 4 and "cannot write stdout: No space left" in one_error(p.stderr)
    rc, _, err = main(["simulate", "-o", "/dev/full"])
    assert rc == 4 and "cannot write /dev/full" in one_error(err)


def test_text_that_is_not_utf8_names_the_file_and_the_line(flight, tmp_path):
    text = flight["log"].read_text()
    cases = {
        "bom16.csv": (text.encode("utf-16"), "line 1: not UTF-8 text (it starts with a UTF-16 "
                                             "byte order mark)"),
        "le16.csv": (text.encode("utf-16-le"), "line 1: holds NUL characters"),
        "latin.csv": (text.replace("time_s", "t\u00e9mps").encode("latin-1"),
                      "line 4: not UTF-8 text: byte 0xe9"),
    }
    for name, (data, words) in cases.items():
        path = tmp_path / name
        path.write_bytes(data)
        rc, out, err = main(["replay", path])
        assert rc == 2 and "%s %s" % (path, words) in one_error(err), err
        assert out == ""
        # standard input: the same check, named stdin
        rc, _, err = main(["replay", "-"], stdin=io.TextIOWrapper(io.BytesIO(data)))
        assert rc == 2 and "stdin %s" % words in one_error(err), err
    # a device table and a plot input are read the same way
    rc, _, err = main(["compare", tmp_path / "bom16.csv"])
    assert rc == 2 and "not UTF-8 text" in one_error(err)


def test_an_overlong_line_stops_in_bounded_memory(flight, tmp_path):
    lines = flight["log"].read_text().splitlines(keepends=True)
    big = tmp_path / "long.csv"
    with open(big, "w") as f:
        f.writelines(lines[:10])
        f.write("1," + "9" * (24 << 20) + "\n")    # one 24 MiB line (line 11)
        f.writelines(lines[10:])
    tracemalloc.start()
    try:
        rc, out, err = main(["replay", big])
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert rc == 2
    assert "%s line 11: longer than %d characters" % (big, options.MAX_LINE_CHARS) in one_error(err)
    # a few times the 1 MiB limit is held, not the 24 MiB line (measured 4.2
    # MiB: the bytes read, their decoded copy, the replay's 1 MiB ring of
    # times and lines); goal: under 8 MiB
    assert peak < 8 << 20, peak


def _rows_and_rejections(out, err):
    return ([ln for ln in out.splitlines() if ln[:1].isdigit()],
            [ln for ln in err.splitlines() if "rejected (" in ln])


def test_a_line_that_cannot_be_read_stops_the_replay_after_the_lines_before_it(flight, tmp_path):
    from tinygeo.host.logread import LogReader
    # the replay reads blocks of lines (logread.CHUNK_BYTES) and checks a
    # block before its lines go to the column; a line that is not UTF-8,
    # holds a NUL or is too long must still stop the replay only after every
    # line before it was replayed, as reading line by line does: the rows
    # and the rejections written are those of the log cut before that line
    lines = flight["log"].read_bytes().splitlines(keepends=True)
    header = next(i for i, ln in enumerate(lines) if not ln.startswith(b"#"))
    # the header with units stated (nothing read ahead) and without them (the
    # lines of the first climb read ahead to confirm the units: tinygeo.host.logread)
    plain = lines[header].replace(b"pressure_hpa", b"pressure").replace(b"temp_c", b"temp")
    assert plain != lines[header]
    n = len(lines)
    bad_lines = {
        "not UTF-8 text: byte 0xff": lambda ln: ln[:5] + b"\xff" + ln[5:],
        "not UTF-8 text: byte 0xe2": lambda ln: ln.rstrip(b"\n") + b"\xe2\x82\n",
        "holds NUL characters": lambda ln: ln[:3] + b"\x00" + ln[3:],
        "longer than %d characters" % options.MAX_LINE_CHARS:
            lambda ln: b"#" + b"x" * options.MAX_LINE_CHARS + b"\n",
    }
    for head in (lines[header], plain):
        log = lines[:header] + [head] + lines[header + 1:]
        # the last line the units' check reads ahead (a bad line up to there
        # stops the replay before its first row)
        good = tmp_path / "good.csv"
        good.write_bytes(b"".join(log))
        with open(good, "rb") as f:
            reader = LogReader(options.TextLines(f, "good"))
            reader.settle(420.0, True)
            ahead = reader.lineno
        assert (ahead > header + 100) == (head == plain), ahead
        for lineno in sorted({ahead, ahead + 1, ahead + 2, ahead + 40, n // 2, n - 1, n}):
            for words, spoil in bad_lines.items():
                bad = tmp_path / "bad.csv"
                bad.write_bytes(b"".join(log[:lineno - 1] + [spoil(log[lineno - 1])] + log[lineno:]))
                cut = tmp_path / "cut.csv"
                cut.write_bytes(b"".join(log[:lineno - 1]))
                rc, out, err = main(["replay", bad])
                assert rc == 2 and "%s line %d: %s" % (bad, lineno, words) in one_error(err), err
                rows, rejected = _rows_and_rejections(out, err)
                if lineno <= ahead:
                    assert rows == rejected == [], (words, lineno)
                    continue
                _, out_cut, err_cut = main(["replay", cut])
                assert (rows, rejected) == _rows_and_rejections(out_cut, err_cut), (words, lineno)
                assert len(rows) > lineno - header - 12, (words, lineno)


def test_an_unfinished_line_that_is_not_utf8_stops_at_once(flight, tmp_path):
    # a line without LF is read a block at a time (logread.CHUNK_BYTES) until
    # its end; bytes that are not UTF-8 must stop it once MAX_LINE_CHARS
    # bytes are held, not after the rest of the file (12 MiB here)
    lines = flight["log"].read_bytes().splitlines(keepends=True)
    bad = tmp_path / "ff.csv"
    bad.write_bytes(b"".join(lines[:10]) + b"1," + b"\xff" * (12 << 20))
    tracemalloc.start()
    try:
        rc, out, err = main(["replay", bad])
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert rc == 2
    assert "%s line 11: not UTF-8 text: byte 0xff at character 3" % bad in one_error(err)
    # measured 5.6 MiB; goal: under 8 MiB (not the 12 MiB line)
    assert peak < 8 << 20, peak
    # a long line of UTF-8 text (3 bytes a character) is too long, whichever
    # block ends inside a character
    long3 = tmp_path / "long3.csv"
    long3.write_bytes(b"".join(lines[:10]) + b"#" + "\u20ac".encode() * (options.MAX_LINE_CHARS + 1)
                      + b"\n" + b"".join(lines[10:]))
    rc, out, err = main(["replay", long3])
    assert rc == 2
    assert "%s line 11: longer than %d characters" % (long3, options.MAX_LINE_CHARS) in one_error(err)


def test_a_number_of_hundreds_of_digits_is_refused_by_the_reader_in_any_block(flight, tmp_path):
    # float() reads a decimal number of 309 digits or more as inf, with no
    # letter in it (IEEE 754 double: the largest finite value is about
    # 1.8e308, from memory); the block reader's shortcut for blocks without
    # the letters of nan, inf or an exponent must not let it through: the line
    # is refused by the reader as not a number (reason number, counted as
    # unread), as when the lines come one at a time from a text stream
    lines = flight["log"].read_text().splitlines(keepends=True)
    header = next(i for i, ln in enumerate(lines) if not ln.startswith("#"))
    names = lines[header].strip().split(",")
    k = header + 100            # a line in the middle of a block
    for i, name in enumerate(names):
        for digits in ("9" * 400, "-" + "9" * 309, "9_" * 320 + "9"):
            fields = lines[k].strip().split(",")
            fields[i] = digits
            log = lines[:k] + [",".join(fields) + "\n"] + lines[k + 1:]
            path = tmp_path / "digits.csv"
            path.write_text("".join(log))
            rc, out, err = main(["replay", path])
            assert rc == 0, err
            said = [ln for ln in err.splitlines() if "line %d:" % (k + 1) in ln]
            assert len(said) == 1, err
            assert "rejected (%s)" % ("time" if name == "time_s" else "number") in said[0] and \
                "%r in column %r is not a number" % (digits[:30], name) in said[0], said
            assert "unread=1 " in out, name
            rc, out_text, err_text = main(["replay", "-"], stdin=io.StringIO("".join(log)))
            assert said == [ln for ln in err_text.splitlines() if "line %d:" % (k + 1) in ln]


def test_a_comment_line_among_the_readings_is_not_a_reading(flight, tmp_path):
    # a line starting with '#' after the header is a comment (logread: skipped
    # like a blank line), also when its fields would parse as a reading: here
    # the first column is not read, and the comment's other fields are numbers
    lines = flight["log"].read_text().splitlines(keepends=True)
    header = next(i for i, ln in enumerate(lines) if not ln.startswith("#"))
    log = lines[:header] + ["note," + lines[header]] + ["x," + ln for ln in lines[header + 1:]]
    k = header + 60
    comments = ["#,210.0,700.0,-5.0,20.0,3000.0\n", "  #x,210.0,700.0,-5.0,20.0,3000.0\n",
                "#,210.0,700.0,-5.0,nan,3000.0\n"]
    for comment in comments:
        text = "".join(log[:k] + [comment] + log[k:])
        path = tmp_path / "comment.csv"
        path.write_text(text)
        for args, stdin in (([path], None), (["-"], io.StringIO(text))):
            rc, out, err = main(["replay"] + args, stdin=stdin)
            assert rc == 0, err
            rows = [ln.split("\t") for ln in out.splitlines() if ln[:1].isdigit()]
            assert len(rows) > 100
            assert str(k + 1) not in [r[0] for r in rows], comment
            assert "line %d" % (k + 1) not in err, comment


def test_exit_codes_are_documented():
    rc, out, _ = main(["--help"])
    assert rc == 0
    for code, words in (("0", "success"), ("1", "compare found"), ("2", "usage or input error"),
                        ("3", "plot: matplotlib"), ("4", "an output could not be written"),
                        ("130", "interrupted")):
        assert "\n  %-3s %s" % (code, words) in out, code
    for words in ("not UTF-8", "a line over 1 MiB", "would overwrite an", "closed standard output",
                  "'| head'", "two columns for one"):
        assert words in " ".join(out.split()), words


def test_a_small_file_with_cr_line_ends_says_so(tmp_path):
    # line ends of CR alone (classic Mac OS): the whole file is one line
    log = tmp_path / "cr.csv"
    log.write_bytes(b"# lat_deg=47 start_height_m=420\rtime_s,p_hpa,t_c\r0,965.0,12.0\r"
                    b"2,964.4,12.0\r")
    rc, _, err = main(["replay", log])
    msg = one_error(err)
    assert rc == 2 and "line 1" in msg and "CR alone" in msg and "LF" in msg, msg
    assert "only comments" not in msg
    table = tmp_path / "cr.tsv"
    table.write_bytes(b"# tinygeo table 1\r# site lat_deg=47\rline\tp_pa\tt_k\r")
    rc, _, err = main(["compare", table])
    assert rc == 2 and "CR alone" in one_error(err)
    # CR LF line ends are fine
    log.write_bytes(log.read_bytes().replace(b"\r", b"\r\n"))
    rc, out, err = main(["replay", log])
    assert rc == 0, err


def test_an_output_named_by_a_symlink_is_written_through_it(flight, tmp_path):
    target = tmp_path / "real.tsv"
    target.write_text("old\n")
    link = tmp_path / "link.tsv"
    link.symlink_to(target)
    rc, _, err = main(["replay", flight["log"], "-o", link])
    assert rc == 0, err
    assert link.is_symlink() and os.readlink(link) == str(target)
    assert target.read_text() == flight["table"].read_text()
    # a dangling link: its target is created
    target.unlink()
    rc, _, err = main(["replay", flight["log"], "-o", link, "--summary", tmp_path / "s.txt"])
    assert rc == 0, err
    assert link.is_symlink() and target.read_text() == flight["table"].read_text()
    assert not [p for p in os.listdir(tmp_path) if p.endswith(".part")]


def test_a_read_only_output_is_not_replaced(flight, tmp_path):
    out = tmp_path / "kept.tsv"
    out.write_text("keep me\n")
    out.chmod(0o444)
    try:
        for args in (["replay", flight["log"], "-o", out],
                     ["compare", flight["table"], "--diffs", out],
                     ["simulate", "-o", out]):
            rc, _, err = main(args)
            msg = one_error(err)
            assert rc == 4 and "read-only (mode 0444)" in msg and "chmod u+w" in msg, msg
            assert out.read_text() == "keep me\n" and (out.stat().st_mode & 0o777) == 0o444
        png = tmp_path / "kept.png"
        png.write_text("keep me\n")
        png.chmod(0o444)
        rc, _, err = main(["plot", flight["table"], "-o", png])
        assert rc == 4 and "read-only (mode 0444)" in one_error(err)
        assert png.read_text() == "keep me\n"
        # through a link too
        link = tmp_path / "link.tsv"
        link.symlink_to(out)
        rc, _, err = main(["replay", flight["log"], "-o", link])
        assert rc == 4 and "the file the link points to" in one_error(err)
        assert out.read_text() == "keep me\n"
    finally:
        out.chmod(0o644)
    assert not [p for p in os.listdir(tmp_path) if p.endswith(".part")]


def _repeating_log():
    # invented: a slow rise from a 0 m site (given as -0) whose readings repeat
    # at the sensors' resolution (pressure every 3, temperature every 5),
    # humidity 55 %, 0.0, -0.0 and missing in turn, GPS fixes and no-fix cells
    out = ["# invented log with repeating values (not real data)", "# lat_deg=45.0",
           "time_s,pressure_hpa,temp_c,rh_pct,gps_m"]
    rh_cycle = ("55.0", "55.0", "0.0", "-0.0", "")
    for i in range(600):
        p = 1013.25 - 0.05 * (i // 3)
        t = 15.00 - 0.01 * (i // 5)
        rh = rh_cycle[(i // 41) % len(rh_cycle)]     # (41: a change between two repeats)
        gps = "" if (i // 25) % 2 else "%.1f" % (0.4 * (i // 3))
        out.append("%d,%.2f,%.2f,%s,%s" % (i, p, t, rh, gps))
    return "\n".join(out) + "\n"


def test_replay_rows_are_the_record_rows_of_the_column_values():
    # the replay formats a field again only when its value changed (speed,
    # bench/replay_bench.py); each row must still be byte for byte
    # record.row() of the column's values after that reading (the device's
    # format, tinygeo/record.py), built here independently reading by reading
    from tinygeo import record
    from tinygeo.host import replay as rp
    from tinygeo.host.cli import build_parser
    from tinygeo.host.logread import LogReader
    from tinygeo.host.options import TextLines, column_setup, new_column
    log = _repeating_log()
    args = ["replay", "-", "--start-height", "-0"]
    rc, out, err = main(args, stdin=io.TextIOWrapper(io.BytesIO(log.encode())))
    assert rc == 0, err
    rows = [ln for ln in out.splitlines() if ln[:1].isdigit()]
    reader = LogReader(TextLines(io.StringIO(log), "stdin"), {}, None, "stdin")
    setup = column_setup(build_parser().parse_args(args), reader)
    col = new_column(setup)
    reader.settle(setup.start_height_m, setup.start_given)
    expect = []
    for r in reader:
        try:
            col.feed(*r[1:])
        except ValueError:
            continue
        lineno, p, t, rh, ts, gps = r
        expect.append(record.row(lineno, ts, p, t, rh, rp.dew_point_k(t, rh, col.ice), gps,
                                 col.gph_m, col.height_m, col.rate_m_s, col.sigma_m, col.flags, "-"))
    assert len(rows) == len(expect) == 600
    # (the events field aside: the replay names the events, this loop does not)
    assert [r.rsplit("\t", 1)[0] for r in rows] == [e.rsplit("\t", 1)[0] for e in expect]
    # the log exercised what the row cache must tell apart: repeated values,
    # zero and -0.0 humidity, missing humidity and GPS
    cells = [r.split("\t") for r in rows]
    assert {c[4] for c in cells} >= {"55.00", "0.00", "-0.00", "nan"}
    assert sum(a[2] == b[2] for a, b in zip(cells, cells[1:])) > 300
    assert {c[6] == "nan" for c in cells} == {True, False}


def test_a_huge_number_in_a_clean_block_is_unread_as_before(tmp_path):
    # a pressure of 400 digits (no letter: float() makes it inf) in the middle
    # of a long log: the readings' loop takes a block without the letters of
    # nan/inf/exponents as finite, unless it holds a line of CLEAN_MAX_CHARS
    # or more; the line must be refused by the reader as "not a number"
    # (unread), as the line-by-line reader did, not reach the column as inf
    rows = ["time_s,pressure_hpa,temp_c,rh_pct"]
    for i in range(20000):
        rows.append("%d,%.2f,%.2f,50.0" % (i, 1000.0 - 0.01 * (i // 4), 15.0 - 0.001 * (i // 40)))
    rows[15001] = "15000," + "9" * 400 + ",0.00,50.0"
    log = tmp_path / "huge.csv"
    log.write_text("\n".join(rows) + "\n")
    rc, out, err = main(["replay", log, "--start-height", 110, "--lat", 45])
    assert rc == 0, err
    assert "line 15002: pressure '9999" in err and "is not a number" in err
    assert "#: rejected count=1 by_column=0 unread=1" in out
