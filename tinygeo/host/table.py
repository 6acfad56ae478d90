"""The replay table: tinygeo's own plain text layout for per-reading results.

Layout (UTF-8 text, one record per line, fields separated by one TAB)::

    # tinygeo replay table 1
    # site lat_deg=47.3 start_height_m=420 anchor_p_pa=nan ice=0 dry_fallback=0
    # input source=flight.csv pressure=pressure_hpa:hPa temperature=temp_c:C ...
    line  time_s  p_pa  t_k  rh_pct  td_k  gps_m  gph_m  height_m  rate_m_s  sigma_m  flags  events
    12    0.000   96512.00  ...
    ...
    #: accepted count=3012
    #: rejected count=4 rate=3 number=1
    #: level p_hpa=850 gph_m=1457.210 height_m=1458.031 time_s=207.000
    ...

* Lines starting with ``#`` are comments. The first one names the layout and
  its version; ``# site`` holds the column set-up (``key=value`` words) so a
  reader can rebuild the same column; ``#:`` lines after the rows are the
  summary, one ``<what> key=value ...`` record per line. ``line=`` is the
  log line of the reading the record describes; in ``burst`` that is the
  highest reading (its gph_m and time_s), and ``confirmed_line=`` the
  reading that confirmed the burst (the column's burst_readings-th reading
  burst_drop_m below it).
* The first line that is not a comment is the header naming the fields below.
* ``line`` is the line number of the reading in the input log (on a device:
  the running number of the reading offered to the column, rejected ones
  included). Only accepted readings get a row.
* Inputs as fed to the column: ``time_s`` (s since the first reading's time),
  ``p_pa`` (Pa), ``t_k`` (K), ``rh_pct`` (%), ``gps_m`` (m above MSL); a
  missing value is written ``nan``. ``td_k`` is the dew point (K) derived
  from rh_pct for plotting.
* Column outputs: ``gph_m`` geopotential height (gpm), ``height_m`` geometric
  height above MSL (m), ``rate_m_s`` vertical rate (m/s, up positive),
  ``sigma_m`` 1-sigma height uncertainty (m), ``flags`` (the column's flag
  bits as a decimal integer) and ``events``: ``-`` when none, otherwise words
  joined by ``+`` in this order: ``launch``, ``level<hPa>`` (a mandatory
  level was crossed, e.g. ``level850``; one word per level, lowest first,
  when a reading crossed several), ``tropopause``, ``burst``, ``landed``.
* Fixed decimals (see ``FORMAT``) make the output byte-identical for the same
  input. ``%`` formatting only, so a MicroPython logger can write the same
  rows with :func:`format_row`.
"""

from tinygeo.errors import TinygeoError

MAGIC = "# tinygeo replay table 1"
SITE_PREFIX = "# site "
INPUT_PREFIX = "# input "
SUMMARY_PREFIX = "#: "

COLUMNS = ("line", "time_s", "p_pa", "t_k", "rh_pct", "td_k", "gps_m",
           "gph_m", "height_m", "rate_m_s", "sigma_m", "flags", "events")
HEADER = "\t".join(COLUMNS)
FORMAT = "%d\t%.3f\t%.2f\t%.3f\t%.2f\t%.3f\t%.2f\t%.3f\t%.3f\t%.3f\t%.3f\t%d\t%s"

# Event bits of the column contract (tinygeo.column EV_*), repeated here so a
# table can be read without importing the column; tests check they agree.
EV_LEVEL = 1
EV_TROPOPAUSE = 2
EV_BURST = 4
EV_LANDED = 8
EV_LAUNCH = 16

NAN = float("nan")


class TableError(TinygeoError):
    """A replay table cannot be read (message carries the line number)."""


def events_text(bits, level_p_pa):
    """Return the ``events`` field for event ``bits`` ('-' when none).

    ``level_p_pa`` is the mandatory level crossed (Pa), or a list of them in
    the order crossed when one reading crossed several, used when EV_LEVEL is
    set. Example: ``events_text(1 | 4, 85000.0) == 'level850+burst'``."""
    if not bits:
        return "-"
    words = []
    if bits & EV_LAUNCH:
        words.append("launch")
    if bits & EV_LEVEL:
        if isinstance(level_p_pa, (list, tuple)):
            for p in level_p_pa:
                words.append("level%d" % int(round(p / 100.0)))
        else:
            words.append("level%d" % int(round(level_p_pa / 100.0)))
    if bits & EV_TROPOPAUSE:
        words.append("tropopause")
    if bits & EV_BURST:
        words.append("burst")
    if bits & EV_LANDED:
        words.append("landed")
    return "+".join(words)


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
        elif word == "launch":
            bits |= EV_LAUNCH
        elif word == "tropopause":
            bits |= EV_TROPOPAUSE
        elif word == "burst":
            bits |= EV_BURST
        elif word == "landed":
            bits |= EV_LANDED
        else:
            raise ValueError("unknown event word %r" % word)
    return bits, level


def format_row(line, time_s, p_pa, t_k, rh_pct, td_k, gps_m, gph_m, height_m,
               rate_m_s, sigma_m, flags, events):
    """Return one table row (no newline); ``events`` is the text field."""
    return FORMAT % (line, time_s, p_pa, t_k, rh_pct, td_k, gps_m, gph_m,
                     height_m, rate_m_s, sigma_m, flags, events)


def fmt_value(x):
    """Format a summary value: ints as ints, floats with 3 decimals."""
    if isinstance(x, bool):
        return "1" if x else "0"
    if isinstance(x, int):
        return "%d" % x
    if isinstance(x, float):
        return "%.3f" % x
    return str(x).replace(" ", "_").replace("\t", "_")


def summary_line(what, pairs):
    """Return a ``#: what k=v ...`` line from (key, value) pairs."""
    return SUMMARY_PREFIX + what + "".join(" %s=%s" % (k, fmt_value(v)) for k, v in pairs)


def parse_pairs(words):
    """Return a dict from ``key=value`` words (others are ignored)."""
    out = {}
    for w in words:
        k, sep, v = w.partition("=")
        if sep and k:
            out[k] = v
    return out


def _float(text):
    x = float(text)  # 'nan' parses to nan
    return x


class Row:
    """One parsed table row; attributes named as the table columns, plus
    ``lineno`` (the line number within the table file) and ``event_bits``."""

    __slots__ = COLUMNS + ("lineno", "event_bits", "level_hpa")


class TableReader:
    """Read a replay table one row at a time (constant memory).

    After construction ``site`` (dict of the ``# site`` words) and ``input``
    (dict of the ``# input`` words) hold the set-up; iterate for :class:`Row`
    objects; after the iteration ``summary`` holds the ``#:`` records as a
    list of (what, dict) in file order."""

    def __init__(self, stream, name="table"):
        self.stream = stream
        self.name = name
        self.site = {}
        self.input = {}
        self.summary = []
        self.lineno = 0
        first = True
        while True:
            raw = stream.readline()
            if not raw:
                raise TableError("%s: no header line; is this a table written by "
                                 "'tinygeo replay'?" % name)
            self.lineno += 1
            line = raw.rstrip("\r\n")
            if first:
                first = False
                if line.strip() != MAGIC:
                    raise TableError("%s line 1: not a tinygeo replay table (expected %r); "
                                     "replay the log first with 'tinygeo replay'" % (name, MAGIC))
                continue
            if line.startswith(SITE_PREFIX):
                self.site.update(parse_pairs(line[len(SITE_PREFIX):].split()))
            elif line.startswith(INPUT_PREFIX):
                self.input.update(parse_pairs(line[len(INPUT_PREFIX):].split()))
            elif line.startswith("#") or not line.strip():
                continue
            else:
                fields = line.split("\t")
                if tuple(f.strip() for f in fields) != COLUMNS:
                    raise TableError("%s line %d: unexpected header %r; expected the fields %s"
                                     % (name, self.lineno, line[:80], " ".join(COLUMNS)))
                break

    def __iter__(self):
        stream = self.stream
        n = len(COLUMNS)
        while True:
            raw = stream.readline()
            if not raw:
                return
            self.lineno += 1
            line = raw.rstrip("\r\n")
            if not line.strip():
                continue
            if line.startswith("#"):
                if line.startswith(SUMMARY_PREFIX):
                    words = line[len(SUMMARY_PREFIX):].split()
                    if words:
                        self.summary.append((words[0], parse_pairs(words[1:])))
                continue
            fields = line.split("\t")
            if len(fields) != n:
                raise TableError("%s line %d: %d fields, expected %d (%s)"
                                 % (self.name, self.lineno, len(fields), n, " ".join(COLUMNS)))
            row = Row()
            try:
                row.line = int(fields[0])
                row.time_s = _float(fields[1])
                row.p_pa = _float(fields[2])
                row.t_k = _float(fields[3])
                row.rh_pct = _float(fields[4])
                row.td_k = _float(fields[5])
                row.gps_m = _float(fields[6])
                row.gph_m = _float(fields[7])
                row.height_m = _float(fields[8])
                row.rate_m_s = _float(fields[9])
                row.sigma_m = _float(fields[10])
                row.flags = int(fields[11])
                row.events = fields[12].strip()
                row.event_bits, row.level_hpa = parse_events(row.events)
            except ValueError as e:
                raise TableError("%s line %d: unreadable field (%s); the row must hold %s"
                                 % (self.name, self.lineno, e, " ".join(COLUMNS)))
            row.lineno = self.lineno
            yield row
