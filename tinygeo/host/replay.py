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
from tinygeo.host.logread import InputError

NAN = float("nan")
MAX_REPORTS = 20          # rejected readings reported one by one on stderr
START_GIVE_UP = 50        # consecutive rejections with nothing accepted -> stop
MAJORITY_AFTER = 100      # from this many readings on, stop when most are rejected for one reason
# reasons that say the log's values are misread; 'missing' and 'fields' are
# left out: lines of another record type (a log interleaving GPS-only lines,
# say) are skipped that way and the readings between them are fine
MAJORITY_REASONS = ("rate", "time", "pressure", "temperature", "humidity", "number", "gps")

# time unit check (see TimeUnitCheck)
SPACINGS = 8              # time steps whose median is reported as the log's spacing
STILL_M = 50.0            # height change from the first reading that is still "not moved", gpm
MOVED_M = 500.0           # a height change this large is a real move, gpm
MOVED_READINGS = 3        # ... when this many readings in a row show it (a spike is one reading)
SLOW_M_S = 0.02           # slower than this over the first move: the times are too large
SLOW_SPACING_S = 10.0     # ... and only when the readings are at least this far apart
FAST_FACTOR = 10.0        # faster than this times the column's default max_rate_m_s: too small


class ReplayAbort(InputError):
    """The replay cannot go on (nothing accepted at the start, most readings
    rejected for one reason, a time unit the readings contradict); exit status 2."""


def column_default(name):
    """The default of the Column constructor's keyword ``name`` (read from its
    signature, so the host tools never repeat the column's numbers)."""
    import inspect
    from tinygeo.column import Column
    return inspect.signature(Column.__init__).parameters[name].default


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
        self.first_by_reason = {}
        self.levels = {}          # level hPa -> (gph_m, height_m, time_s, line)
        self.launch = None        # (time_s, line)
        self.burst = None         # (gph_m, time_s, line of the peak, line that confirmed it)
        self.peak = None          # (gph_m, line) of the column's peak so far
        self.prev = None          # (gph_m, line) of the previous accepted reading
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
        if reason not in self.first_by_reason:
            self.first_by_reason[reason] = message

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
            # gph_m, time_s and line are the peak's; confirmed_line is the
            # reading that was burst_readings readings below it
            g, t, ln, confirmed = self.burst
            out.append(table.summary_line("burst", [
                ("gph_m", g), ("height_m", geometric_height_m(g, lat_deg)), ("time_s", t),
                ("line", ln), ("confirmed_line", confirmed)]))
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
    g = _attr(col, "gph_m")
    if summary.max_height is None or h > summary.max_height[0]:
        summary.max_height = (h, g, ts, lineno)
    # the column's peak rule (tinygeo/column.py, max_gph_m): the lower reading
    # of each consecutive pair, a new peak only when strictly higher; so at its
    # burst event this is the line of the reading the burst was measured from
    prev = summary.prev
    if prev is None:
        summary.peak = (g, lineno)
    else:
        low = prev if prev[0] < g else (g, lineno)
        if low[0] > summary.peak[0]:
            summary.peak = low
    summary.prev = (g, lineno)
    if bits & table.EV_LEVEL:
        for p, g, hl in _levels(col):
            hpa = int(round(p / 100.0))
            if hpa not in summary.levels:
                summary.levels[hpa] = (g, hl, ts, lineno)
    if bits & table.EV_LAUNCH and summary.launch is None:
        summary.launch = (_attr(col, "launch_time_s"), lineno)
    if bits & table.EV_BURST and summary.burst is None:
        peak_line = summary.peak[1] if summary.peak is not None else lineno
        summary.burst = (_attr(col, "burst_gph_m"), _attr(col, "burst_time_s"), peak_line, lineno)
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
    ReplayAbort when the first START_GIVE_UP data lines are all rejected,
    when more than half of the readings (from MAJORITY_AFTER on) are rejected
    for one of MAJORITY_REASONS, or when TimeUnitCheck finds the time unit
    wrong."""
    check = TimeUnitCheck(reader)
    for reading in reader:
        if isinstance(reading, ReadingError):
            _rejected(summary, reading, getattr(reading, "lineno", reader.lineno), report)
            continue
        check.see(reading)
        try:
            bits = feed(col, reading)
        except ValueError as e:  # ReadingError by the contract; any check error is a rejection
            _rejected(summary, e, reading[0], report)
            continue
        note_events(summary, col, reading, bits)
        yield reading, bits


MAJORITY_HINTS = {
    "rate": "the readings imply impossible vertical speeds: check the time unit "
            "(--time NAME:s or NAME:ms) and the pressure unit (--pressure NAME:Pa or NAME:hPa), "
            "or raise --max-rate",
    "time": "check the time column (--time NAME[:s|ms|iso]): time stamps must be numbers of "
            "seconds or ISO-8601 timestamps and must not go back",
}


def _rejected(summary, e, lineno, report):
    msg = str(e)
    if not msg.startswith("line "):
        msg = "line %d: %s" % (lineno, msg)
    reason = getattr(e, "reason", "reading") or "reading"
    summary.reject(reason, msg)
    if summary.rejected <= MAX_REPORTS:
        report("rejected (%s) %s" % (getattr(e, "reason", "reading"), msg))
    elif summary.rejected == MAX_REPORTS + 1:
        report("further rejected readings are only counted (see the summary)")
    if summary.accepted == 0 and summary.rejected >= START_GIVE_UP:
        raise ReplayAbort(
            "stopped at line %d: none of the first %d readings was accepted; first problem: %s. "
            "Check the column mapping and units (see --help)"
            % (lineno, summary.rejected, summary.first_rejection))
    seen = summary.accepted + summary.rejected
    n = summary.reasons[reason]
    if seen >= MAJORITY_AFTER and 2 * n > seen and reason in MAJORITY_REASONS:
        raise ReplayAbort(
            "stopped at line %d: %d of the %d readings so far were rejected for '%s' "
            "(first: %s); %s"
            % (lineno, n, seen, reason, summary.first_by_reason[reason],
               MAJORITY_HINTS.get(reason, "check the column mapping and units (see --help)")))


def _median(values):
    v = sorted(values)
    n = len(v)
    if n == 0:
        return NAN
    return v[n // 2] if n % 2 else 0.5 * (v[n // 2 - 1] + v[n // 2])


class TimeUnitCheck:
    """Sanity check of a time column in seconds or milliseconds, from the
    readings themselves (the K/degC and Pa/hPa checks of logread look at one
    value; a time unit needs a move).

    The first real move of the log is its height change from the first
    reading reaching MOVED_M gpm, held for MOVED_READINGS readings in a row
    (a one-reading pressure spike is not a move). Its vertical speed is taken
    from the last reading still within STILL_M of the first one to the first
    reading of the move: at least (MOVED_M - STILL_M) gpm in that time. Height
    changes are the hypsometric thickness between the readings with the dry
    temperatures (tinygeo.layers.layer_thickness; a sanity check, not a
    result). Then:

    * faster than FAST_FACTOR times the column's default max_rate_m_s: the
      time stamps are too small (seconds read as milliseconds);
    * slower than SLOW_M_S (450 m in over 6 h) with readings at least
      SLOW_SPACING_S apart (median of the first SPACINGS steps): the time
      stamps are too large (milliseconds read as seconds). A unit given on the
      command line (``--time NAME:s``) skips this one: a slow log (a
      barograph, say) is then taken as it is.

    Either raises ReplayAbort naming the lines, the speed, the spacing and the
    likely unit. ISO-8601 time stamps are not checked (no unit to mistake).
    The check keeps a few scalars and at most SPACINGS steps."""

    def __init__(self, reader):
        self.reader = reader
        self.active = "time" in reader.columns
        self.ref = None       # (p_pa, t_k) of the first timed reading
        self.still = None     # (time_s, dz_m, line) of the latest reading within STILL_M
        self.move = None      # (time_s, dz_m, line) of the first reading of the current move
        self.run = 0          # readings in a row at MOVED_M or more
        self.prev_t = None
        self.steps = []
        from tinygeo.layers import layer_thickness
        self._thickness = layer_thickness

    def see(self, reading):
        """Look at one parsed reading (before the column); raise ReplayAbort
        when the time unit is contradicted."""
        if not self.active:
            return
        lineno, p, t, ts = reading[0], reading[1], reading[2], reading[4]
        if ts is None:
            return
        unit = self.reader.columns["time"][2]
        if unit not in ("s", "ms"):
            self.active = False
            return
        if self.prev_t is not None and len(self.steps) < SPACINGS:
            self.steps.append(ts - self.prev_t)
        self.prev_t = ts
        try:
            if self.ref is None:
                self._thickness(p, p, t, t)     # in range? (else wait for a usable reading)
                self.ref = (p, t)
                self.still = (ts, 0.0, lineno)
                return
            dz = abs(self._thickness(self.ref[0], p, self.ref[1], t))
        except ValueError:
            return      # out of range: the column rejects it, and it says nothing here
        if dz < STILL_M:
            self.still = (ts, dz, lineno)
            self.run = 0
            return
        if dz < MOVED_M:
            self.run = 0
            return
        if self.run == 0:
            self.move = (ts, dz, lineno)
        self.run += 1
        if self.run >= MOVED_READINGS:
            self.active = False
            self._judge(unit, lineno)

    def _judge(self, unit, lineno):
        t0, z0, line0 = self.still
        t1, z1, line1 = self.move
        dt = t1 - t0
        if not dt > 0.0:
            return      # time going back or repeated: the column reports those
        speed = (z1 - z0) / dt
        spacing = _median(self.steps)
        i, name, _, _ = self.reader.columns["time"]
        what = ("line %d: the time column %r read in %s gives a vertical speed of %.3g m/s over "
                "the first move (%.0f m from line %d to line %d in %.4g s; readings %.4g s apart)"
                % (lineno, name, unit, speed, z1 - z0, line0, line1, dt, spacing))
        fast = FAST_FACTOR * column_default("max_rate_m_s")
        if speed > fast:
            if unit == "ms":
                hint = "the values look like seconds: use --time %s:s" % name
            else:
                hint = ("the time stamps look too small for seconds; convert them to seconds "
                        "or milliseconds and give --time %s:s or --time %s:ms" % (name, name))
            raise ReplayAbort("%s, faster than %g m/s; %s" % (what, fast, hint))
        if unit == "s" and speed < SLOW_M_S and spacing >= SLOW_SPACING_S and \
                "time" not in self.reader.option_units:
            raise ReplayAbort(
                "%s, slower than %g m/s; the values look like milliseconds: use --time %s:ms "
                "(if the log really is this slow, give --time %s:s to skip this check)"
                % (what, SLOW_M_S, name, name))


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
        from tinygeo.host.cli import one_line
        prog.done()
        err.write("tinygeo replay: %s\n" % one_line(msg))

    if "time" not in reader.columns:
        err.write("tinygeo replay: warning: the log has no time column, so pressure glitches are "
                  "not screened by vertical rate and no rate or landing is found; map one with "
                  "--time NAME[:s|ms|iso]\n")
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
