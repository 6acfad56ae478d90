"""Replay a log through :class:`tinygeo.column.Column`, streaming.

:func:`replay` reads one line, feeds the column, writes one table row and
forgets the reading: memory stays flat however long the log is. What the
summary needs (counts by reason, the first crossing of each mandatory level,
burst, landing, maximum height) is kept in a few scalars and a dict bounded by
the 16 mandatory levels and the handful of rejection reasons.
"""
import sys
import time as _time

from tinygeo.errors import ReadingError
from tinygeo.host import table

NAN = float("nan")
MAX_REPORTS = 20          # rejected readings reported one by one on stderr
START_GIVE_UP = 50        # consecutive rejections with nothing accepted -> stop


class ReplayAbort(ValueError):
    """The replay cannot go on (nothing accepted at the start); exit status 2."""


def make_column(lat_deg, start_height_m, options):
    """Return a new Column; ``options`` holds only the keyword arguments the
    user set (sigma_p_pa, sigma_t_k, sigma_rh_pct, anchor_p_pa, ice,
    dry_fallback, max_rate_m_s, landing_s), so the column's defaults apply to
    the rest."""
    from tinygeo.column import Column
    col = Column(lat_deg, start_height_m, **options)
    col.on_event = LevelTap()
    return col


class LevelTap:
    """``on_event`` hook of a host column: collects every mandatory level a
    reading crossed (the column calls it once per level when one reading
    crosses several, and its return bits name only the highest)."""

    def __init__(self):
        self.levels = []

    def __call__(self, col, bits):
        if bits & table.EV_LEVEL:
            self.levels.append((col.level_p_pa, col.level_gph_m, col.level_height_m))


def _levels(col):
    tap = getattr(col, "on_event", None)
    if isinstance(tap, LevelTap) and tap.levels:
        return tap.levels
    return [(_attr(col, "level_p_pa"), _attr(col, "level_gph_m"), _attr(col, "level_height_m"))]


def dew_point_k(t_k, p_pa, rh_pct):
    """Dew point (K) of a reading for the table, from the core's moisture
    functions (WMO-No. 8 Annex 4.B); nan when humidity is missing or zero."""
    if rh_pct is None or not rh_pct > 0.0:
        return NAN
    from tinygeo import moisture
    try:
        e = moisture.vapour_pressure(t_k, p_pa, min(rh_pct, 100.0))
        return moisture.dew_point(e, p_pa)
    except ValueError:
        return NAN


def geometric_height_m(gph_m, lat_deg):
    """Geometric height (m) of a geopotential height, from the core; nan if unknown."""
    if gph_m != gph_m:
        return NAN
    from tinygeo import potential
    try:
        return potential.geometric_height(gph_m, lat_deg)
    except ValueError:
        return NAN


class Summary:
    """Counts and events of one replay, kept in bounded memory."""

    def __init__(self):
        self.accepted = 0
        self.rejected = 0
        self.reasons = {}
        self.first_rejection = None
        self.levels = {}          # level hPa -> (gph_m, height_m, time_s, line)
        self.launch = None        # (time_s, line)
        self.burst = None         # (gph_m, time_s, line)
        self.landing = None       # (height_m, time_s, line)
        self.max_height = None    # (height_m, gph_m, time_s, line)
        self.tropopause = None    # (p_pa, gph_m, t_k) from the column at the end
        self.gps_diff_m = NAN
        self.last_line = 0

    def reject(self, reason, message):
        self.rejected += 1
        self.reasons[reason] = self.reasons.get(reason, 0) + 1
        if self.first_rejection is None:
            self.first_rejection = message

    def lines(self, lat_deg):
        """Return the ``#:`` summary lines (without newlines), fixed order."""
        out = [table.summary_line("accepted", [("count", self.accepted)])]
        pairs = [("count", self.rejected)]
        for r in sorted(self.reasons):
            pairs.append((r, self.reasons[r]))
        out.append(table.summary_line("rejected", pairs))
        if self.launch is not None:
            out.append(table.summary_line("launch", [("time_s", self.launch[0]),
                                                     ("line", self.launch[1])]))
        for hpa in sorted(self.levels, reverse=True):
            g, h, t, ln = self.levels[hpa]
            out.append(table.summary_line("level", [("p_hpa", hpa), ("gph_m", g), ("height_m", h),
                                                    ("time_s", t), ("line", ln)]))
        if self.tropopause is not None:
            p, g, t = self.tropopause
            out.append(table.summary_line("tropopause", [
                ("p_hpa", p / 100.0), ("gph_m", g), ("height_m", geometric_height_m(g, lat_deg)),
                ("t_k", t)]))
        if self.burst is not None:
            g, t, ln = self.burst
            out.append(table.summary_line("burst", [
                ("gph_m", g), ("height_m", geometric_height_m(g, lat_deg)), ("time_s", t),
                ("line", ln)]))
        if self.max_height is not None:
            h, g, t, ln = self.max_height
            out.append(table.summary_line("highest", [("gph_m", g), ("height_m", h), ("time_s", t),
                                                      ("line", ln)]))
        if self.landing is not None:
            h, t, ln = self.landing
            out.append(table.summary_line("landing", [("height_m", h), ("time_s", t), ("line", ln)]))
        if self.gps_diff_m == self.gps_diff_m:
            out.append(table.summary_line("gps", [("baro_minus_gps_m", self.gps_diff_m)]))
        return out


def _attr(col, name):
    v = getattr(col, name, NAN)
    return NAN if v is None else v


def feed(col, reading):
    """Feed one reading tuple (lineno, p_pa, t_k, rh_pct, time_s, gps_m) to the
    column; return the event bits (raises ReadingError as the column does)."""
    tap = getattr(col, "on_event", None)
    if isinstance(tap, LevelTap) and tap.levels:
        tap.levels = []
    return col.feed(reading[1], reading[2], rh_pct=reading[3], time_s=reading[4], gps_m=reading[5])


def row_text(col, reading, bits, lat_deg):
    """Return the table row (no newline) for an accepted reading."""
    lineno, p, t, rh, ts, gps = reading
    return table.format_row(
        lineno, NAN if ts is None else ts, p, t, NAN if rh is None else rh,
        dew_point_k(t, p, rh), NAN if gps is None else gps,
        _attr(col, "gph_m"), _attr(col, "height_m"), _attr(col, "rate_m_s"),
        _attr(col, "sigma_m"), int(getattr(col, "flags", 0) or 0),
        table.events_text(bits, [lv[0] for lv in _levels(col)] if bits & table.EV_LEVEL else NAN))


def note_events(summary, col, reading, bits):
    """Update the summary after an accepted reading with event ``bits``."""
    lineno = reading[0]
    summary.accepted += 1
    summary.last_line = lineno
    h = _attr(col, "height_m")
    ts = _attr(col, "time_s")
    if summary.max_height is None or h > summary.max_height[0]:
        summary.max_height = (h, _attr(col, "gph_m"), ts, lineno)
    if bits & table.EV_LEVEL:
        for p, g, hl in _levels(col):
            hpa = int(round(p / 100.0))
            if hpa not in summary.levels:
                summary.levels[hpa] = (g, hl, ts, lineno)
    if bits & table.EV_LAUNCH and summary.launch is None:
        summary.launch = (_attr(col, "launch_time_s"), lineno)
    if bits & table.EV_BURST and summary.burst is None:
        summary.burst = (_attr(col, "burst_gph_m"), _attr(col, "burst_time_s"), lineno)
    if bits & table.EV_LANDED and summary.landing is None:
        summary.landing = (h, ts, lineno)
    if reading[5] is not None:
        summary.gps_diff_m = _attr(col, "gps_diff_m")


def finish(summary, col):
    """Copy the column's final tropopause into the summary."""
    g = _attr(col, "tropopause_gph_m")
    if g == g:
        summary.tropopause = (_attr(col, "tropopause_p_pa"), g, _attr(col, "tropopause_t_k"))


def readings(reader, col, summary, report):
    """Yield ``(reading, bits)`` for every accepted reading of ``reader``;
    rejected lines go to ``report(message)`` and the summary. Raises
    ReplayAbort when the first START_GIVE_UP data lines are all rejected."""
    for reading in reader:
        if isinstance(reading, ReadingError):
            _rejected(summary, reading, getattr(reading, "lineno", reader.lineno), report)
            continue
        try:
            bits = feed(col, reading)
        except ValueError as e:  # ReadingError by the contract; any check error is a rejection
            _rejected(summary, e, reading[0], report)
            continue
        note_events(summary, col, reading, bits)
        yield reading, bits


def _rejected(summary, e, lineno, report):
    msg = str(e)
    if not msg.startswith("line "):
        msg = "line %d: %s" % (lineno, msg)
    summary.reject(getattr(e, "reason", "reading") or "reading", msg)
    if summary.rejected <= MAX_REPORTS:
        report("rejected (%s) %s" % (getattr(e, "reason", "reading"), msg))
    elif summary.rejected == MAX_REPORTS + 1:
        report("further rejected readings are only counted (see the summary)")
    if summary.accepted == 0 and summary.rejected >= START_GIVE_UP:
        raise ReplayAbort(
            "stopped at line %d: none of the first %d readings was accepted; first problem: %s. "
            "Check the column mapping and units (see --help)"
            % (lineno, summary.rejected, summary.first_rejection))


class Progress:
    """Progress on stderr, only when stderr is a terminal."""

    def __init__(self, stream, enabled):
        self.stream = stream
        self.enabled = enabled
        self.next_t = 0.0
        self.shown = False

    def update(self, lineno, col):
        if not self.enabled or lineno & 1023:
            return
        now = _time.monotonic()
        if now < self.next_t:
            return
        self.next_t = now + 0.5
        self.shown = True
        self.stream.write("\rreplay: line %d, height %.0f m   " % (lineno, _attr(col, "height_m")))
        self.stream.flush()

    def done(self):
        if self.shown:
            self.stream.write("\r" + " " * 50 + "\r")
            self.stream.flush()


def header_lines(site, reader, source_name):
    """Return the table's comment and header lines (without newlines)."""
    words = " ".join("%s=%s" % (k, table.fmt_value(v) if not isinstance(v, str) else v)
                     for k, v in site)
    lines = [table.MAGIC, table.SITE_PREFIX + words,
             table.INPUT_PREFIX + "source=%s %s" % (source_name.replace(" ", "_"), reader.describe())]
    if reader.time_origin:
        lines.append("# time_s counts from %s" % reader.time_origin)
    lines.append(table.HEADER)
    return lines


def replay(reader, col, out, lat_deg, site, source_name, flush=False, err=None, progress=False):
    """Replay ``reader`` through ``col``, writing the table to ``out``.

    ``site`` is the list of (key, value) set-up pairs for the ``# site`` line.
    Returns the Summary. Rejections are reported on ``err`` (stderr)."""
    err = err or sys.stderr
    summary = Summary()
    prog = Progress(err, progress)

    def report(msg):
        prog.done()
        err.write("tinygeo replay: %s\n" % msg)

    write = out.write
    started = False
    for reading, bits in readings(reader, col, summary, report):
        if not started:
            # the header waits for the first reading so that units and the
            # time origin decided from it are described in the table
            for note in reader.notes:
                err.write("tinygeo replay: note: %s\n" % note)
            for line in header_lines(site, reader, source_name):
                write(line + "\n")
            started = True
        write(row_text(col, reading, bits, lat_deg) + "\n")
        if flush:
            out.flush()
        prog.update(reading[0], col)
    prog.done()
    if not started:
        for line in header_lines(site, reader, source_name):
            write(line + "\n")
    finish(summary, col)
    for line in summary.lines(lat_deg):
        write(line + "\n")
    if flush:
        out.flush()
    return summary
