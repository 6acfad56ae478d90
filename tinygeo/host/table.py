"""Reading tinygeo's table of per-reading results (the record format of
:mod:`tinygeo.record`, written by a device and by ``tinygeo replay``).

The layout (magic line, ``# site`` line, header, rows, event words, end
record) is defined once, in tinygeo/record.py; this module imports it and
adds what only a host needs: reading a table back, one row at a time, and
the summary records ``#: what key=value ...`` that a host replay writes
after the rows.

A table is read when its first line is ``MAGIC`` (or ``OLD_MAGIC``, the name
of the same layout before it moved to tinygeo.record) and its header names
``line`` or ``time_s`` and any subset of ``COLUMNS``, in any order: a device
may write only what it computes. A value ``nan`` (or a column left out)
means "not given / not computed".

A station table (``STATION_MAGIC``: one row per completed average of
tinygeo.station.Station, written by ``tinygeo station`` or a logger such as
ports/micropython/buoy.py) is read by :class:`StationTableReader` the same
way: its header names ``time_s`` and any subset of ``STATION_COLUMNS`` (and
``iso_gph_m``), in any order, and honours its resume records
(``#: resume rows=N whole``, tinygeo.stationrecord.resume_line). A resume
record torn by a power cut while it was written (its last word is not
``whole``) voids nothing: both readers count it and go on.
"""
import tempfile

from tinygeo import record, stationrecord
from tinygeo.errors import TinygeoError

MAGIC = record.MAGIC
OLD_MAGIC = "# tinygeo replay table 1"
SITE_PREFIX = record.SITE_PREFIX
END_PREFIX = record.END_PREFIX
RESUME_PREFIX = record.RESUME_PREFIX
RESUME_WHOLE = record.RESUME_WHOLE
INPUT_PREFIX = "# input "
SUMMARY_PREFIX = "#: "
TIME_ORIGIN_PREFIX = "# time_s counts from "
COLUMNS = record.COLUMNS
HEADER = record.HEADER
FORMAT = record.FORMAT
events_text = record.events_text
format_row = record.row

STATION_MAGIC = stationrecord.MAGIC
STATION_PREFIX = stationrecord.PREFIX
STATION_COLUMNS = stationrecord.COLUMNS + (stationrecord.ISO,)

EV_LEVEL = record.EV_LEVEL
EVENT_BITS = dict((word, bit) for bit, word in record.EVENT_WORDS)
EVENT_BITS["tropopause"] = EVENT_BITS["tropopause_confirmed"]   # tables before the word changed
EV_TROPOPAUSE = EVENT_BITS["tropopause_confirmed"]
EV_BURST = EVENT_BITS["burst"]
EV_LANDED = EVENT_BITS["landed"]
EV_LAUNCH = EVENT_BITS["launch"]
EV_FLOAT = EVENT_BITS["float"]

NAN = float("nan")


class TableError(TinygeoError):
    """A table cannot be read (the message carries the line number); exit 2."""


def parse_events(text):
    """Return ``(bits, level_hpa)`` from an ``events`` field; level_hpa is the
    last level word's hPa (0 when none). Raises ValueError on an unknown word."""
    text = text.strip()
    if text in ("-", ""):
        return 0, 0
    bits = 0
    level = 0
    for word in text.split("+"):
        if word.startswith("level") and word[5:].isdigit():
            bits |= EV_LEVEL
            level = int(word[5:])
        elif word in EVENT_BITS and word != "level":
            bits |= EVENT_BITS[word]
        else:
            raise ValueError("unknown event word %r" % word)
    return bits, level


def fmt_value(x):
    """Format a summary value: ints as ints, floats with 3 decimals."""
    if isinstance(x, bool):
        return "1" if x else "0"
    if isinstance(x, int):
        return "%d" % x
    if isinstance(x, float):
        return "%.3f" % x
    return str(x).replace(" ", "_").replace("\t", "_")


def summary_line(what, pairs, text=None):
    """Return a ``#: what k=v ...`` line from (key, value) pairs; ``text``, a
    sentence for people, follows after `` -- `` (it holds no '=')."""
    line = SUMMARY_PREFIX + what + "".join(" %s=%s" % (k, fmt_value(v)) for k, v in pairs)
    if text:
        line += " -- " + text.replace("=", " ")
    return line


def is_resume(line):
    """True for a resume record, whole or torn: a line starting with ``#:
    resume``, or a piece of one cut by a power cut (``#: re``)."""
    text = line.rstrip()
    return text.startswith(RESUME_PREFIX[:-1]) or (len(text) > 3 and
                                                   RESUME_PREFIX.startswith(text))


def parse_resume(line, key):
    """The N of a resume record ``#: resume <key>=N whole``
    (tinygeo.record.resume_line, tinygeo.stationrecord.resume_line); None
    when the record is torn (its last word is not ``whole``: a power cut
    while it was written). Raises ValueError when it ends in ``whole`` but
    does not hold exactly one ``key=N`` with N ASCII digits before it."""
    words = line[len(RESUME_PREFIX):].split() if line.startswith(RESUME_PREFIX) else []
    if not words or words[-1] != RESUME_WHOLE:
        return None
    digits = words[0][len(key) + 1:] if words[0].startswith(key + "=") else ""
    if len(words) != 2 or not digits or [c for c in digits if c not in "0123456789"]:
        raise ValueError("expected %s%s=N %s (N: digits 0-9)" % (RESUME_PREFIX, key,
                                                                 RESUME_WHOLE))
    return int(digits)


def resume_number(reader, line, lineno, key):
    """N of the whole resume record ``line`` (line ``lineno`` of a table
    ``reader`` reads: ``#: resume KEY=N whole``); None for one torn while it
    was written, which voids nothing and is counted on the reader
    (``torn_resumes``, ``first_torn_resume``). TableError for a malformed one."""
    try:
        n = parse_resume(line, key)
    except ValueError as e:
        raise TableError("%s line %d: unreadable resume record %r; %s"
                         % (reader.name, lineno, line[:60], e))
    if n is None:
        reader.torn_resumes += 1
        if reader.first_torn_resume is None:
            reader.first_torn_resume = lineno
    return n


def parse_pairs(words):
    """Return a dict from ``key=value`` words (others are ignored; so is
    everything after a ``--`` word)."""
    out = {}
    for w in words:
        if w == "--":
            break
        k, sep, v = w.partition("=")
        if sep and k:
            out[k] = v
    return out


class Row:
    """One parsed table row: an attribute per name of COLUMNS (nan, or None
    for ``flags`` and ``events``, when the table has no such column), plus
    ``lineno`` (the line within the table file), ``event_bits`` and
    ``level_hpa``."""

    __slots__ = COLUMNS + ("lineno", "event_bits", "level_hpa")


_INTS = ("line", "flags")
_TEXT = ("line", "flags", "events")


class TableReader:
    """Read a table one row at a time (memory bounded by the number of
    resume records, not by the rows).

    ``lines`` is a :class:`tinygeo.host.options.TextLines` (or any object with
    ``readline``). The constructor reads the whole table once (into a
    temporary file, so standard input works too): the set-up lines before
    the first row, wherever they stand around the header, the resume records
    and which value columns hold a number. After construction ``site`` (dict
    of the ``# site`` words), ``input`` (dict of the ``# input`` words),
    ``time_origin`` (ISO text of ``# time_s counts from``, or None),
    ``present`` (the columns the header names) and ``numeric`` (the columns
    of ``present`` other than line, flags and events that hold a value other
    than nan in some row) hold the set-up; iterate for :class:`Row` objects.

    Resume records (``#: resume line=N whole``, tinygeo.record.resume_line)
    are honoured: an earlier row whose ``line`` is N or more is dropped
    (counted in ``voided``), and so is an earlier end record; a row that
    cannot be read and is the last line before a resume record, or the last
    line of a table without an end record, is a row torn by a power cut:
    dropped and counted in ``torn``, and so is a last line without a line
    end in a table without an end record (even if it reads: the cut may
    have fallen inside its last number). A resume record torn while it was
    written (its last word is not ``whole``) voids nothing: it is counted in
    ``torn_resumes`` (the first at table line ``first_torn_resume``); one
    that ends in ``whole`` but is malformed (``line=-3``, ``line=3_0``,
    two ``line=`` words) makes the table unreadable (TableError). After the iteration ``summary`` holds the ``#:``
    records as a list of (what, dict) in file order, ``end`` the end
    record's dict (None: the table has no end record), ``rows`` the number
    of rows read (dropped ones not counted), ``resumes`` the number of
    resume records, and ``backwards`` the number of rows whose ``line`` is
    not above every row before (rows written twice; the first at table line
    ``first_backwards``)."""

    def __init__(self, lines, name="table"):
        self.stream = lines
        self.name = name
        self.site = {}
        self.input = {}
        self.summary = []
        self.end = None
        self.rows = 0
        self.voided = 0
        self.torn = 0
        self.resumes = 0
        self.torn_resumes = 0
        self.first_torn_resume = None
        self.backwards = 0
        self.first_backwards = None
        self.time_origin = None
        self.lineno = 0
        first = True
        while True:
            raw = lines.readline()
            if not raw:
                raise TableError("%s: no header line; is this a table written by "
                                 "'tinygeo replay' or tinygeo.record?" % name)
            self.lineno += 1
            line = raw.rstrip("\r\n")
            if first:
                first = False
                if line.strip() == STATION_MAGIC:
                    raise TableError("%s line 1: a station table ('tinygeo station'): one row "
                                     "per average, not per reading; draw it with 'tinygeo plot'"
                                     % name)
                if line.strip() not in (MAGIC, OLD_MAGIC):
                    raise TableError("%s line 1: not a tinygeo table (expected %r); replay the "
                                     "log first with 'tinygeo replay'" % (name, MAGIC))
                continue
            if self._setup_line(line):
                continue
            if line.startswith("#") or not line.strip():
                continue
            self._header(line)
            break
        self._scan()

    def _setup_line(self, line):
        # take a set-up comment line (site, input, time origin); True if it was one
        if line.startswith(SITE_PREFIX):
            self.site.update(parse_pairs(line[len(SITE_PREFIX):].split()))
        elif line.startswith(INPUT_PREFIX):
            self.input.update(parse_pairs(line[len(INPUT_PREFIX):].split()))
        elif line.startswith(TIME_ORIGIN_PREFIX):
            self.time_origin = line[len(TIME_ORIGIN_PREFIX):].strip()
        else:
            return False
        return True

    def _scan(self):
        # read the rest once into a temporary file: the set-up lines before
        # the first row, the resume records (table line, N), the rows that may
        # be torn, the value columns holding a number; the iteration reads
        # the temporary file
        value_cols = [(n, i) for n, i in self.index if n not in _TEXT]
        numeric = set()
        width = len(self.present)
        marks = []              # (table line, N) of the resume records
        self._ends = set()      # lines of rows last before a resume record or the end
        self._cut = None        # the last row, when no line end follows it (and no end)
        cut = False
        first_row = None
        last_row = None         # the latest row line, while nothing but blanks followed it
        end_after = False       # an end record after the latest row
        lineno = self.lineno
        spool = tempfile.TemporaryFile(mode="w+", encoding="utf-8", newline="\n")
        try:
            while True:
                raw = self.stream.readline()
                if not raw:
                    break
                lineno += 1
                spool.write(raw)
                line = raw.rstrip("\r\n")
                if not line.strip():
                    continue
                if line.startswith("#"):
                    if is_resume(line):
                        n = self._resume_at(line, lineno)
                        if n is not None:
                            marks.append((lineno, n))
                        if last_row is not None:
                            self._ends.add(last_row)
                        end_after = False
                    elif line.startswith(END_PREFIX):
                        end_after = True
                    elif first_row is None:
                        self._setup_line(line)
                    elif line.startswith((SITE_PREFIX, INPUT_PREFIX, TIME_ORIGIN_PREFIX)):
                        raise TableError("%s line %d: %r after the first row (line %d): the set-up "
                                         "lines (site, input, time origin) must come before the "
                                         "rows" % (self.name, lineno, line.split("=")[0][:40],
                                                   first_row))
                    last_row = None
                    continue
                if first_row is None:
                    first_row = lineno
                last_row = lineno
                end_after = False
                cut = not raw.endswith("\n")
                if len(numeric) < len(value_cols):
                    fields = line.split("\t")
                    if len(fields) == width:
                        for n, i in value_cols:
                            if n not in numeric and fields[i].strip() != "nan":
                                numeric.add(n)
            if last_row is not None and not end_after:
                self._ends.add(last_row)
                if cut:
                    # no line end after the last row: cut by a power cut
                    self._cut = last_row
            spool.seek(0)
        except BaseException:
            spool.close()
            raise
        if marks and "line" not in self.present:
            spool.close()
            raise TableError("%s line %d: a resume record in a table without a 'line' column: the "
                             "rows it voids cannot be told" % (self.name, marks[0][0]))
        # the smallest N of the resume records from each one to the end: a row
        # before record k is void when its line is at least floor[k]
        floor = [0] * len(marks)
        m = None
        for k in range(len(marks) - 1, -1, -1):
            m = marks[k][1] if m is None else min(m, marks[k][1])
            floor[k] = m
        self._marks = [(mk[0], f) for mk, f in zip(marks, floor)]
        self._whole = set(mk[0] for mk in marks)
        self.numeric = frozenset(numeric)
        self._spool = spool

    def _resume_at(self, line, lineno):
        return resume_number(self, line, lineno, "line")

    def _header(self, line):
        names = [f.strip() for f in line.split("\t")]
        unknown = [n for n in names if n not in COLUMNS]
        if unknown or len(set(names)) != len(names):
            raise TableError("%s line %d: unexpected header %r; the fields are any of %s, each "
                             "once, separated by tabs" % (self.name, self.lineno, line[:80],
                                                          " ".join(COLUMNS)))
        if "line" not in names and "time_s" not in names:
            raise TableError("%s line %d: the header names neither 'line' nor 'time_s'; a row "
                             "needs one of them to be matched" % (self.name, self.lineno))
        self.present = tuple(names)
        self.index = [(n, names.index(n)) for n in COLUMNS if n in names]
        self.absent = [n for n in COLUMNS if n not in names]

    def __iter__(self):
        stream = self._spool
        n = len(self.present)
        index = self.index
        absent = self.absent
        marks = self._marks
        k = 0                   # the next resume record
        floor = marks[0][1] if marks else None
        top = None              # the highest line of the rows kept
        try:
            while True:
                raw = stream.readline()
                if not raw:
                    return
                self.lineno += 1
                line = raw.rstrip("\r\n")
                if not line.strip():
                    continue
                if line.startswith("#"):
                    if is_resume(line):
                        # the rows it voids were dropped as they came; an end
                        # record before it is void too (a torn record: nothing)
                        if self.lineno in self._whole:
                            self.resumes += 1
                            self.end = None
                            k += 1
                            floor = marks[k][1] if k < len(marks) else None
                    elif line.startswith(SUMMARY_PREFIX):
                        words = line[len(SUMMARY_PREFIX):].split()
                        if words:
                            pairs = parse_pairs(words[1:])
                            if words[0] == "end":
                                self.end = pairs
                            else:
                                self.summary.append((words[0], pairs))
                    continue
                if self.lineno == self._cut:
                    self.torn += 1          # no line end: cut by a power cut
                    continue
                try:
                    row = self._row(line, n, index, absent)
                except TableError:
                    if self.lineno in self._ends:
                        self.torn += 1      # cut by a power cut: the logger takes it again
                        continue
                    raise
                if floor is not None and row.line is not None and row.line >= floor:
                    self.voided += 1        # taken again after a resume record below
                    continue
                if self.end is not None:
                    raise TableError("%s line %d: a row after the end record"
                                     % (self.name, self.lineno))
                if row.line is not None:
                    if top is not None and row.line <= top:
                        self.backwards += 1
                        if self.first_backwards is None:
                            self.first_backwards = self.lineno
                    else:
                        top = row.line
                row.lineno = self.lineno
                self.rows += 1
                yield row
        finally:
            self._spool.close()

    def _row(self, line, n, index, absent):
        fields = line.split("\t")
        if len(fields) != n:
            raise TableError("%s line %d: %d fields, expected %d (%s)"
                             % (self.name, self.lineno, len(fields), n, " ".join(self.present)))
        row = Row()
        try:
            for name, i in index:
                text = fields[i].strip()
                if name in _INTS:
                    setattr(row, name, int(text))
                elif name == "events":
                    row.events = text
                else:
                    setattr(row, name, float(text))   # 'nan' parses to nan
            for name in absent:
                setattr(row, name, None if name in ("flags", "events") else NAN)
            if row.line is NAN:
                row.line = None
            row.event_bits, row.level_hpa = (None, 0) if row.events is None else \
                parse_events(row.events)
        except ValueError as e:
            raise TableError("%s line %d: unreadable field (%s); the row must hold %s"
                             % (self.name, self.lineno, e, " ".join(self.present)))
        return row


class StationRow:
    """One parsed station table row: an attribute per name of
    STATION_COLUMNS (nan when the table has no such column; ``tend_code``
    None when unknown, ``flags`` and ``readings`` None when absent), plus
    ``lineno`` (the line within the table file)."""

    __slots__ = STATION_COLUMNS + ("lineno",)


_STATION_INTS = ("flags", "readings")


class StationTableReader:
    """Read a station table one row at a time (memory bounded by the number
    of resume records, not by the rows).

    ``lines`` as for :class:`TableReader` (the rest of the table is read
    once into a temporary file, for the resume records). After construction
    ``station`` (dict of the ``# station`` words), ``input`` (dict of the
    ``# input`` words), ``time_origin`` (ISO text of ``# time_s counts
    from``, or None) and ``present`` (the columns the header names) hold the
    set-up; iterate for :class:`StationRow` objects.

    Resume records (``#: resume rows=N whole``,
    tinygeo.stationrecord.resume_line) are honoured: of the rows before one,
    the first N kept are kept and the others dropped (counted in
    ``voided``), and so is an earlier end record; a row cut short (fewer
    fields, or the last one empty) that is the last line before a resume
    record, or the last line of a table without an end record, is a row
    torn by a power cut: dropped and counted in ``torn``, and so is a last
    line without a line end in a table without an end record (even if it
    reads: the cut may have fallen inside its last number). A resume record
    torn while it was written (its last word is not ``whole``) voids
    nothing: it is counted in ``torn_resumes`` (the first at table line
    ``first_torn_resume``); one that ends in ``whole`` but is malformed
    (``rows=-3``, ``rows=3_0``, two ``rows=`` words) makes the table
    unreadable (TableError). A whole record whose N is more than the rows
    before it (as the logger counted them) says rows were lost: ``lost``
    counts the rows missing, ``first_lost`` is the table line of the first
    such record. After the iteration
    ``summary`` holds the ``#:`` records as (what, dict) in file order,
    ``end`` the end record's dict (None: no end record, the table was cut
    short), ``rows`` the number of rows read (dropped ones not counted),
    ``resumes`` the number of resume records, and ``backwards`` the number
    of rows whose time_s is not after the row before (rows written twice
    without a resume record, or a clock set back: a restart); the first
    such row is at table line ``first_backwards``, with ``back_times`` its
    (previous, own) time_s."""

    def __init__(self, lines, name="station table"):
        self.stream = lines
        self.name = name
        self.station = {}
        self.input = {}
        self.summary = []
        self.end = None
        self.rows = 0
        self.voided = 0
        self.torn = 0
        self.resumes = 0
        self.torn_resumes = 0
        self.first_torn_resume = None
        self.lost = 0
        self.first_lost = None
        self.backwards = 0
        self.first_backwards = None
        self.back_times = None
        self.time_origin = None
        self.lineno = 0
        first = True
        while True:
            raw = lines.readline()
            if not raw:
                raise TableError("%s: no header line; is this a table written by "
                                 "'tinygeo station' or tinygeo.stationrecord.row?" % name)
            self.lineno += 1
            line = raw.rstrip("\r\n")
            if first:
                first = False
                if line.strip() != STATION_MAGIC:
                    raise TableError("%s line 1: not a station table (expected %r); write one "
                                     "with 'tinygeo station LOG -o FILE'" % (name, STATION_MAGIC))
                continue
            if line.startswith(STATION_PREFIX):
                self.station.update(parse_pairs(line[len(STATION_PREFIX):].split()))
            elif line.startswith(INPUT_PREFIX):
                self.input.update(parse_pairs(line[len(INPUT_PREFIX):].split()))
            elif line.startswith(TIME_ORIGIN_PREFIX):
                self.time_origin = line[len(TIME_ORIGIN_PREFIX):].strip()
            elif line.startswith("#") or not line.strip():
                continue
            else:
                self._header(line)
                break
        self._scan()

    def _header(self, line):
        names = [f.strip() for f in line.split("\t")]
        unknown = [n for n in names if n not in STATION_COLUMNS]
        if unknown or len(set(names)) != len(names) or "time_s" not in names:
            raise TableError("%s line %d: unexpected header %r; the fields are time_s and any "
                             "of %s, each once, separated by tabs"
                             % (self.name, self.lineno, line[:80], " ".join(STATION_COLUMNS[1:])))
        self.present = tuple(names)
        self.index = [(n, names.index(n)) for n in STATION_COLUMNS if n in names]
        self.absent = [n for n in STATION_COLUMNS if n not in names]

    def _scan(self):
        # read the rest once into a temporary file: the resume records
        # (table line, N) and the rows that may be torn (last before a resume
        # record, or last of a table without an end record)
        marks = []
        self._ends = set()
        self._cut = None        # the last row, when no line end follows it (and no end)
        cut = False
        last_row = None
        end_after = False
        lineno = self.lineno
        spool = tempfile.TemporaryFile(mode="w+", encoding="utf-8", newline="\n")
        try:
            while True:
                raw = self.stream.readline()
                if not raw:
                    break
                lineno += 1
                spool.write(raw)
                line = raw.rstrip("\r\n")
                if not line.strip():
                    continue
                if line.startswith("#"):
                    if is_resume(line):
                        n = resume_number(self, line, lineno, "rows")
                        if n is not None:
                            marks.append((lineno, n))
                        if last_row is not None:
                            self._ends.add(last_row)
                        end_after = False
                    elif line.startswith(END_PREFIX):
                        end_after = True
                    last_row = None
                    continue
                last_row = lineno
                end_after = False
                cut = not raw.endswith("\n")
            if last_row is not None and not end_after:
                self._ends.add(last_row)
                if cut:
                    # no line end after the last row: cut by a power cut
                    self._cut = last_row
            spool.seek(0)
        except BaseException:
            spool.close()
            raise
        # a row before resume record k is void when the number of rows before
        # it (void ones included, as the logger counted them) is at least the
        # smallest N of the records from k on
        floor = [0] * len(marks)
        m = None
        for k in range(len(marks) - 1, -1, -1):
            m = marks[k][1] if m is None else min(m, marks[k][1])
            floor[k] = m
        self._marks = [(mk[1], f) for mk, f in zip(marks, floor)]
        self._whole = set(mk[0] for mk in marks)
        self._spool = spool

    def __iter__(self):
        stream = self._spool
        n = len(self.present)
        marks = self._marks
        k = 0                   # the next resume record
        floor = marks[0][1] if marks else None
        before = 0              # rows before this one as the logger counted them
        prev = None             # time_s of the latest row kept
        try:
            while True:
                raw = stream.readline()
                if not raw:
                    return
                self.lineno += 1
                line = raw.rstrip("\r\n")
                if not line.strip():
                    continue
                if line.startswith("#"):
                    if is_resume(line):
                        # the rows it voids were dropped as they came; an end
                        # record before it is void too (a torn record: nothing)
                        if self.lineno in self._whole:
                            self.resumes += 1
                            self.end = None
                            if before < marks[k][0]:
                                # the logger had written more rows than are here
                                self.lost += marks[k][0] - before
                                if self.first_lost is None:
                                    self.first_lost = self.lineno
                            before = min(before, marks[k][0])
                            k += 1
                            floor = marks[k][1] if k < len(marks) else None
                    elif line.startswith(SUMMARY_PREFIX):
                        words = line[len(SUMMARY_PREFIX):].split()
                        if words:
                            pairs = parse_pairs(words[1:])
                            if words[0] == "end":
                                self.end = pairs
                            else:
                                self.summary.append((words[0], pairs))
                    continue
                if self.lineno == self._cut:
                    self.torn += 1          # no line end: cut by a power cut
                    continue
                try:
                    row = self._row(line, n)
                except TableError:
                    # a row cut short by a power cut (fewer fields, or the
                    # last one empty), last before a resume record or the end
                    fields = line.split("\t")
                    if self.lineno in self._ends and (len(fields) < n or not fields[-1].strip()):
                        self.torn += 1      # the logger writes it again
                        continue
                    raise
                before += 1
                if floor is not None and before > floor:
                    self.voided += 1        # written again after a resume record below
                    continue
                if self.end is not None:
                    raise TableError("%s line %d: a row after the end record"
                                     % (self.name, self.lineno))
                if prev is not None and not row.time_s > prev and row.time_s == row.time_s:
                    self.backwards += 1
                    if self.first_backwards is None:
                        self.first_backwards = self.lineno
                        self.back_times = (prev, row.time_s)
                if row.time_s == row.time_s:
                    prev = row.time_s
                row.lineno = self.lineno
                self.rows += 1
                yield row
        finally:
            self._spool.close()

    def _row(self, line, n):
        fields = line.split("\t")
        if len(fields) != n:
            raise TableError("%s line %d: %d fields, expected %d (%s)"
                             % (self.name, self.lineno, len(fields), n, " ".join(self.present)))
        row = StationRow()
        try:
            for name, i in self.index:
                text = fields[i].strip()
                if name in _STATION_INTS:
                    setattr(row, name, int(text))
                elif name == "tend_code":
                    row.tend_code = None if text in ("-", "") else int(text)
                    if row.tend_code is not None and not 0 <= row.tend_code <= 8:
                        raise ValueError("tend_code %d outside 0..8" % row.tend_code)
                else:
                    setattr(row, name, float(text))
            for name in self.absent:
                setattr(row, name, None if name in _STATION_INTS or name == "tend_code"
                        else NAN)
        except ValueError as e:
            raise TableError("%s line %d: unreadable field (%s); the row must hold %s"
                             % (self.name, self.lineno, e, " ".join(self.present)))
        return row
