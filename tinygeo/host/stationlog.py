"""Run a station or buoy log through :class:`tinygeo.station.Station`,
streaming: ``tinygeo station LOG``.

The log is read as ``tinygeo replay`` reads one (tinygeo.host.logread: the
same column mapping, units stated or inferred and confirmed by the values,
UTF-8 line by line); the pressure unit is confirmed against the station's
height. Each reading goes to ``Station.feed``; each completed average
becomes one row of the station table (tinygeo.stationrecord: ``MAGIC``,
``station_line``, ``station_header``, ``station_row``, ``station_end_line``;
the same functions a logger on a board writes it with), and the summary
records ``#: what key=value ...`` follow the end record (:class:`Summary`).
Memory stays flat however long the log is: a reading is fed and forgotten;
the summary keeps a few scalars.

Time: a station needs time stamps (its averages are aligned to their
clock). Numbers are fed as they are (seconds, or ms given as ``NAME:ms``);
ISO-8601 stamps are fed as seconds since 1970-01-01T00:00:00Z, so that
averages end on the UTC clock (10:00, 10:10 ...), and the table says so
(``# time_s counts from 1970-01-01T00:00:00Z``).

Only the station's public attributes are read.
"""
import datetime

from tinygeo import stationrecord
from tinygeo.station import (EV_AVERAGE, EV_RESTART, FL_STUCK_P, FL_STUCK_T, FL_STUCK_RH,
                             FL_GAP, FL_TREND_GAP, FL_NO_T12, FL_FEW, FL_TAKEOVER,
                             FL_CLOCK_HELD, FL_CLOCK_STUCK, FL_MSLP_ODD)
from tinygeo.host import table
from tinygeo.host.options import (InputError, UsageError, one_line, round_numbers,
                                  stamp_text, station_default)

NAN = float("nan")
MAX_REPORTS = 20          # rejected readings reported one by one on stderr
START_GIVE_UP = 50        # rejections in a row with nothing accepted -> stop
MAJORITY_AFTER = 100      # from this many readings on, stop when most are rejected for one reason
# reasons that say the log's values are misread ('missing' and 'fields' are
# lines of another kind, which are skipped)
MAJORITY_REASONS = ("pressure", "temperature", "humidity", "number", "time")
MAX_RESTARTS = 10         # restarts listed by line in the summary (more are counted)
MAX_STEPS = 99            # steps between readings kept for the spacing told in the advice
EPOCH = "1970-01-01T00:00:00Z"
# sea-level pressures beyond the recorded extremes (870 and 1085 hPa; WMO
# archive of weather extremes, from memory, as tinygeo/station.py's guard_m)
# say the height is wrong: a note, not a refusal
MSLP_LOW_PA = 87000.0
MSLP_HIGH_PA = 108500.0

# (option, Station keyword, unit word, may be 'none') of the settings the
# command line passes through
SETTINGS = (
    ("average", "average_s", "s", False),
    ("min_readings", "min_readings", "readings", False),
    ("stuck", "stuck_readings", "readings", True),
    ("max_p_step", "max_p_step_pa", "Pa", True),
    ("max_p_rate", "max_p_rate_pa_s", "Pa/s", False),
    ("max_t_step", "max_t_step_k", "K", True),
    ("max_t_rate", "max_t_rate_k_s", "K/s", False),
    ("max_rh_step", "max_rh_step_pct", "%", True),
    ("max_rh_rate", "max_rh_rate_pct_s", "%/s", False),
    ("guard", "guard_m", "m", True),
    ("steady", "steady_pa", "Pa", False),
    ("max_gap", "max_gap_s", "s", False),
    ("takeover", "takeover_readings", "readings", False),
)
ISO_HPA_MIN = 500.0       # --iso-surface range, hPa (Station: iso_p_pa 50000..100000 Pa)
ISO_HPA_MAX = 1000.0

FLAG_WORDS = ((FL_STUCK_P, "stuck_p"), (FL_STUCK_T, "stuck_t"), (FL_STUCK_RH, "stuck_rh"),
              (FL_GAP, "gap"), (FL_TREND_GAP, "trend_gap"), (FL_NO_T12, "no_t12"),
              (FL_FEW, "few"), (FL_TAKEOVER, "takeover"), (FL_CLOCK_HELD, "clock_held"),
              (FL_CLOCK_STUCK, "clock_stuck"), (FL_MSLP_ODD, "mslp_odd"))
"""The station's flag bits with the summary's words for them (every FL_* of
tinygeo.station: tests/test_host_station.py checks it)."""

FLAG_TEXT = (
    (FL_STUCK_P, "stuck pressure readings taken out of this average"),
    (FL_STUCK_T, "stuck temperature readings taken out"),
    (FL_STUCK_RH, "stuck humidity readings taken out (never at 100 % or more: fog)"),
    (FL_GAP, "averages missing just before this one (a gap)"),
    (FL_TREND_GAP, "tendency or its characteristic unknown (an end average missing, or a gap "
                   "in the 3 hours longer than --max-gap)"),
    (FL_NO_T12, "--mean12: no temperature 12 hours earlier (the latest one was used)"),
    (FL_FEW, "a quantity had fewer than --min-readings readings (nan in this average)"),
    (FL_TAKEOVER, "a run of readings that contradicted the latest accepted one took over (a "
                  "sensor's real jump)"),
    (FL_CLOCK_HELD, "readings stamped before the latest accepted one, by no more than the "
                    "clock step (--max-gap + --average), were taken at the latest stamp (a "
                    "clock corrected back a little)"),
    (FL_CLOCK_STUCK, "--stuck readings in a row or more had the same time stamp (a clock that "
                     "stopped: everything falls into one average)"),
    (FL_MSLP_ODD, "the sea-level pressure lies outside 870..1085 hPa, beyond any ever observed: "
                  "is --height the barometer's height in metres (not feet)?"),
)
"""The flag bits with a sentence each, for ``tinygeo station --help``."""


def option_name(opt):
    """The command-line form of a SETTINGS option: 'max_p_step' -> '--max-p-step'."""
    return "--" + opt.replace("_", "-")


class Setup:
    """A station set-up: ``height_m``, ``lat_deg`` and ``options`` (the
    Station keywords given; its defaults apply to the rest)."""

    def __init__(self, height_m, lat_deg, options):
        self.height_m = height_m
        self.lat_deg = lat_deg
        self.options = options


def station_setup(a, reader):
    """The Setup from the command line ``a`` with the log's comment words
    (``reader.meta``: ``height_m``, ``lat_deg``) as defaults; UsageError
    (exit 2) naming what to pass when the height or latitude is unknown."""
    meta = reader.meta if reader is not None else {}
    h = a.height if a.height is not None else meta.get("height_m")
    if h is None:
        hint = ""
        if "start_height_m" in meta:
            hint = ("; the log's start_height_m=%g is where a flight starts: if the barometer "
                    "stays there, pass --height %g" % (meta["start_height_m"],
                                                       meta["start_height_m"]))
        raise UsageError("the station's height is not known: pass --height M (the barometer's "
                         "height above mean sea level in metres; for a buoy, above the water "
                         "line), or put '# height_m=..' in a comment line before the header%s"
                         % hint)
    lat = a.lat if a.lat is not None else meta.get("lat_deg")
    if lat is None:
        raise UsageError("the latitude is not known: pass --lat DEG (degrees north), or put "
                         "'# lat_deg=..' in a comment line before the header")
    opts = {}
    for opt, key, unit, none_ok in SETTINGS:
        v = getattr(a, opt, None)
        if v is None:
            continue
        if v == "none":
            if not none_ok:
                raise UsageError("%s none: this setting needs a number of %s"
                                 % (option_name(opt), unit))
            v = None
        elif key == "average_s" and v == int(v):
            v = int(v)
        elif unit == "readings":
            if v != int(v):
                raise UsageError("%s %g: give a whole number of readings" % (option_name(opt), v))
            v = int(v)
        opts[key] = v
    if getattr(a, "iso_surface", None) is not None:
        hpa = a.iso_surface
        if not ISO_HPA_MIN <= hpa <= ISO_HPA_MAX:
            hint = ""
            if ISO_HPA_MIN * 100.0 <= hpa <= ISO_HPA_MAX * 100.0:
                hint = "; Pa passed? give hPa: --iso-surface %g" % (hpa / 100.0)
            raise UsageError("--iso-surface %g outside %g..%g hPa (a standard isobaric surface: "
                             "850, 700, 500)%s" % (hpa, ISO_HPA_MIN, ISO_HPA_MAX, hint))
        opts["iso_p_pa"] = hpa * 100.0
    if getattr(a, "mean12", False):
        opts["mean12"] = True
    if getattr(a, "ice", False):
        opts["ice"] = True
    return Setup(float(h), float(lat), opts)


def new_station(setup):
    """A Station for ``setup``; UsageError (exit 2) naming the option when
    the station refuses a setting."""
    from tinygeo.station import Station
    try:
        return Station(setup.height_m, setup.lat_deg, **setup.options)
    except ValueError as e:
        msg = str(e)
        for opt, key, unit, none_ok in SETTINGS:
            msg = msg.replace(key + "=", option_name(opt) + " ")
        msg = msg.replace("height_m=", "--height ").replace("lat_deg=", "--lat ")
        raise UsageError("station set-up rejected: %s" % msg)


def tidy(message, st, epoch=False):
    """A station's rejection message for the command line: the keyword hints
    given as the command's options, long floats rounded, time stamps whole
    (``epoch`` True: time_s counts from 1970-01-01T00:00:00Z, and the stamps
    are followed by their UTC text)."""
    for old, new in (
            ("(max_p_step_pa=None turns this check off)", "(limits: --max-p-step, --max-p-rate)"),
            ("(max_t_step_k=None turns this check off)", "(limits: --max-t-step, --max-t-rate)"),
            ("(max_rh_step_pct=None turns this check off)", "(limits: --max-rh-step, --max-rh-rate)"),
            ("wrong unit or height_m? (guard_m=None: no guard)",
             "wrong unit or --height? (--guard none: no such check)"),
            ("takeover_readings in a row restart the station",
             "%d readings in a row restart the station, --takeover" % st.takeover_readings),
            ("takeover_readings in a row go on from it",
             "%d readings in a row go on from it, --takeover" % st.takeover_readings),
            ("(max_gap_s + average_s)", "(--max-gap + --average)")):
        message = message.replace(old, new)
    return round_numbers(message, utc_stamp if epoch else None)


def utc_stamp(time_s):
    """A time stamp in seconds since 1970 as whole digits and its UTC text:
    ``1774714200 (2026-03-28T16:10:00Z)``."""
    u = utc_text(time_s)
    return stamp_text(time_s) + ("" if u is None else " (%s)" % u)


def utc_text(time_s):
    """ISO-8601 UTC text of seconds since 1970 (whole seconds)."""
    try:
        dt = datetime.datetime.fromtimestamp(round(time_s), datetime.timezone.utc)
    except (ValueError, OverflowError, OSError):
        return None
    return dt.strftime("%Y-%m-%dT%H:%M:%SZ")


class Summary:
    """What one station run found, in bounded memory: the counts, the
    rejections by reason, the extremes of sea-level pressure, the largest
    3-hour fall, the averages per flag, the restarts.

    :meth:`average` takes each completed average (from a Station, or from
    the rows of a station table: ``tinygeo plot`` scans a table with it);
    :meth:`lines` writes the ``#:`` records. ``epoch`` True: time_s counts
    from 1970-01-01T00:00:00Z (the records add ``utc=``)."""

    def __init__(self, epoch=False):
        self.epoch = epoch
        self.accepted = 0
        self.rejected = 0
        self.reasons = {}
        self.first_rejection = None
        self.first_by_reason = {}
        self.averages = 0            # rows: completed averages
        self.missing = 0             # averages missing in gaps (the station's count)
        self.first_time = NAN
        self.last_time = NAN
        self.highest = None          # (mslp_pa, time_s)
        self.lowest = None
        self.fall = None             # (tendency_pa, time_s, code): the most negative tendency
        self.flags = dict((w, 0) for _, w in FLAG_WORDS)
        self.restarts = []           # (line, time_s), the first MAX_RESTARTS
        self.nrestarts = 0
        self.open = 0                # readings accepted after the latest completed average
        self.steps = []              # the first MAX_STEPS nonzero steps between stamps, s
        self._stamp = None

    def stamp(self, time_s):
        """A reading's time stamp (accepted or not): the steps between the
        first ones tell the readings' spacing (``spacing``)."""
        if time_s is None or len(self.steps) >= MAX_STEPS:
            return
        if self._stamp is not None and time_s != self._stamp:
            self.steps.append(time_s - self._stamp)
        self._stamp = time_s

    def spacing(self):
        """``(median, back, n)`` of the first steps between stamps: the
        median size of a step, s, how many went back, how many were seen;
        None before two stamps differ."""
        if not self.steps:
            return None
        size = sorted(abs(x) for x in self.steps)
        return size[len(size) // 2], sum(1 for x in self.steps if x < 0), len(size)

    def reject(self, reason, message):
        self.rejected += 1
        self.reasons[reason] = self.reasons.get(reason, 0) + 1
        if self.first_rejection is None:
            self.first_rejection = message
        if reason not in self.first_by_reason:
            self.first_by_reason[reason] = message

    def restart(self, line, time_s):
        self.nrestarts += 1
        self.open = 0
        if len(self.restarts) < MAX_RESTARTS:
            self.restarts.append((line, time_s))

    def average(self, time_s, mslp_pa, tend_pa, code, flags):
        """One completed average (nan for a value not known, None for no code)."""
        self.averages += 1
        if self.first_time != self.first_time:
            self.first_time = time_s
        self.last_time = time_s
        if mslp_pa == mslp_pa:
            if self.highest is None or mslp_pa > self.highest[0]:
                self.highest = (mslp_pa, time_s)
            if self.lowest is None or mslp_pa < self.lowest[0]:
                self.lowest = (mslp_pa, time_s)
        if tend_pa < 0.0 and (self.fall is None or tend_pa < self.fall[0]):
            self.fall = (tend_pa, time_s, code)
        if flags:
            for bit, word in FLAG_WORDS:
                if flags & bit:
                    self.flags[word] += 1

    def _time(self, time_s):
        pairs = [("time_s", time_s)]
        if self.epoch:
            u = utc_text(time_s)
            if u is not None:
                pairs.append(("utc", u))
        return pairs

    def lines(self):
        """The ``#:`` summary records (without newlines), in a fixed order."""
        rec = table.summary_line
        out = [rec("accepted", [("count", self.accepted)])]
        pairs = [("count", self.rejected)]
        for r in sorted(self.reasons):
            pairs.append((r, self.reasons[r]))
        out.append(rec("rejected", pairs))
        out.append(rec("averages", [("count", self.averages), ("missing", self.missing),
                                    ("first_time_s", self.first_time),
                                    ("last_time_s", self.last_time)],
                       "completed averages written as rows; missing: averages with no usable "
                       "reading inside gaps"))
        if self.highest is not None:
            out.append(rec("highest_mslp", [("mslp_hpa", self.highest[0] / 100.0)] +
                           self._time(self.highest[1])))
            out.append(rec("lowest_mslp", [("mslp_hpa", self.lowest[0] / 100.0)] +
                           self._time(self.lowest[1])))
        else:
            out.append(rec("no_mslp", [], "no average had a sea-level pressure"))
        if self.fall is not None:
            tend, t, code = self.fall
            out.append(rec("largest_fall", [("tend3h_hpa", tend / 100.0)] + self._time(t) +
                           [("tend_code", "-" if code is None else code)],
                           "the largest fall of station pressure over 3 hours, ending at time_s"))
        else:
            out.append(rec("no_fall", [], "no 3-hour tendency was negative"))
        out.append(rec("flags", [(w, self.flags[w]) for _, w in FLAG_WORDS],
                       "the number of averages with each flag"))
        pairs = [("count", self.nrestarts)]
        for i, (line, t) in enumerate(self.restarts):
            pairs.append(("line%d" % (i + 1), line))
        out.append(rec("restarts", pairs, "readings in a row contradicted the station (a clock "
                                          "set back, a bad first reading): it started afresh"
                       if self.nrestarts else None))
        if self.open:
            out.append(rec("open", [("readings", self.open)],
                           "accepted after the latest completed average: an average completes "
                           "only when a reading after its end arrives"))
        return out


def header_lines(st, reader, source_name):
    """The station table's comment and header lines (without newlines)."""
    lines = [table.STATION_MAGIC, stationrecord.station_line(st),
             table.INPUT_PREFIX + "source=%s %s" % (source_name.replace(" ", "_"),
                                                    reader.describe())]
    if reader.time_origin_s is not None:
        lines.append(table.TIME_ORIGIN_PREFIX + EPOCH)
    lines.append(stationrecord.header(st))
    return lines


def advice(reason, summary, st):
    """What to check when most readings are rejected for ``reason``; for
    'time', the readings' spacing against --average and --max-gap."""
    if reason != "time":
        return "check the column mapping, the units, --height and the QC limits (see --help)"
    out = "check the time column and its unit (--time NAME:s|ms|iso)"
    sp = summary.spacing()
    if sp is None:
        return out + " (see --help)"
    gap, back, n = sp
    out += "; the readings are %s s apart (median of the first %d steps)" % (
        stamp_text(round(gap, 3)), n)
    if 2 * back > n:
        return out + (" and %d of those steps go back in time: is the log newest first? Sort "
                      "it oldest first (see --help)" % back)
    return out + ("; readings further apart than --average (%s s now) leave averages empty, and "
                  "a step beyond --max-gap + --average (%s s now) is refused as a clock jump: "
                  "give --average at least the readings' spacing (hourly readings: --average "
                  "3600) and --max-gap the longest outage (see --help)"
                  % (stamp_text(st.average_s), stamp_text(st.max_gap_s + st.average_s)))


def _rejected(summary, e, lineno, report, st, epoch=False):
    msg = tidy(str(e), st, epoch)
    if not msg.startswith("line "):
        msg = "line %d: %s" % (lineno, msg)
    reason = getattr(e, "reason", "reading") or "reading"
    summary.reject(reason, msg)
    if summary.rejected <= MAX_REPORTS:
        report("rejected (%s) %s" % (reason, msg))
    elif summary.rejected == MAX_REPORTS + 1:
        report("further rejected readings are only counted (see the summary)")
    if summary.accepted == 0 and summary.rejected >= START_GIVE_UP:
        hint = "check the column mapping, the units and --height (see --help)"
        if summary.reasons.get("time") == summary.rejected:
            hint = advice("time", summary, st)
        raise InputError(
            "stopped at line %d: none of the first %d readings was accepted; first problem: %s; "
            "%s" % (lineno, summary.rejected, summary.first_rejection, hint))
    seen = summary.accepted + summary.rejected
    n = summary.reasons[reason]
    if seen >= MAJORITY_AFTER and 2 * n > seen and reason in MAJORITY_REASONS:
        raise InputError(
            "stopped at line %d: %d of the %d readings so far were rejected for '%s' "
            "(first: %s); %s" % (lineno, n, seen, reason, summary.first_by_reason[reason],
                                 advice(reason, summary, st)))


def run(reader, st, summary, report, write=None, before_first=None, flush=None, note=None):
    """Feed every reading of ``reader`` to the Station ``st``.

    Each completed average: its table row (stationrecord.row) goes to
    ``write(text)`` (with ``flush()`` after it when given) and to
    ``summary.average``. ``before_first()`` is called before the first row
    is written (the table's header). Rejected lines go to
    ``report(message)``; ``note(message)`` gets a sea-level pressure beyond
    the recorded extremes (a wrong height?). Raises InputError when nothing
    is accepted at the start or most readings are rejected for one reason.
    """
    feed = st.feed
    origin = reader.time_origin_s
    started = False
    checked = False
    for reading in reader:
        if reading.__class__ is not tuple:
            _rejected(summary, reading, getattr(reading, "lineno", reader.lineno), report, st)
            continue
        lineno, p, t, rh, ts, gps = reading
        if origin is None:
            origin = reader.time_origin_s or 0     # known once the first stamp is read
        if ts is not None and origin:
            ts = ts + origin
        summary.stamp(ts)
        try:
            bits = feed(p, t, rh, ts)
        except ValueError as e:    # ReadingError by the contract
            _rejected(summary, e, lineno, report, st, bool(origin))
            continue
        summary.accepted += 1
        summary.open += 1
        if bits & EV_RESTART:
            summary.restart(lineno, ts)
            summary.open = 1
        if bits & EV_AVERAGE:
            summary.open = 1
            summary.missing = st.missing
            summary.average(st.time_s, st.mslp_pa, st.tendency_3h_pa, st.tendency_code, st.flags)
            if not checked and st.mslp_pa == st.mslp_pa:
                checked = True
                if note is not None and not MSLP_LOW_PA <= st.mslp_pa <= MSLP_HIGH_PA:
                    note("the first sea-level pressure, %.1f hPa (line %d), lies beyond the "
                         "recorded extremes (%.0f..%.0f hPa): is --height %g the barometer's "
                         "height above mean sea level in metres?"
                         % (st.mslp_pa / 100.0, lineno, MSLP_LOW_PA / 100.0,
                            MSLP_HIGH_PA / 100.0, st.height_m))
            if write is not None:
                if not started:
                    started = True
                    if before_first is not None:
                        before_first()
                write(stationrecord.row(st) + "\n")
                if flush is not None:
                    flush()


def command(a, stdin, stdout, stderr):
    """The ``station`` command (``a``: its parsed options); returns the exit status."""
    from tinygeo.host.logread import LogReader
    from tinygeo.host.options import Outputs, check_paths, mapping, open_text
    check_paths([("log", a.log)], [("-o", a.out), ("--summary", a.summary)], stdin)
    lines, name, close = open_text(a.log, stdin)
    try:
        reader = LogReader(lines, mapping(a), a.delimiter, name)
        if "time" not in reader.columns:
            raise InputError("%s: no time column among: %s. A station needs time stamps (its "
                             "averages are aligned to their clock); map one with --time "
                             "NAME[:s|ms|iso]" % (name, ", ".join(reader.header)))
        setup = station_setup(a, reader)
        st = new_station(setup)
        guard = st.guard_m if st.guard_m is not None else station_default("guard_m")
        reader.settle(setup.height_m, True, guard)
        live = a.log == "-" or a.flush
        quiet = a.quiet

        def report(msg):
            if not quiet:
                stderr.write("tinygeo station: %s\n" % one_line(msg))

        def note(msg):
            stderr.write("tinygeo station: note: %s\n" % one_line(msg))

        with Outputs(stdout) as outs:
            out = outs.open(a.out)
            state = {"header": False, "notes": 0}

            def notes():
                for n in reader.notes[state["notes"]:]:
                    note(n)
                state["notes"] = len(reader.notes)

            def header():
                notes()
                for line in header_lines(st, reader, name):
                    out.write(line + "\n")
                state["header"] = True

            summary = Summary()
            run(reader, st, summary, report, write=out.write, before_first=header,
                flush=out.flush if live else None, note=note)
            summary.epoch = reader.time_origin_s is not None
            if summary.accepted == 0:
                raise InputError(
                    "%s: no reading was accepted (%d rejected%s); check the column mapping, "
                    "the units and --height" % (
                        name, summary.rejected,
                        "; first: " + summary.first_rejection if summary.first_rejection
                        else ", no data lines after the header"))
            if not state["header"]:
                header()
            notes()             # those found after the header (a later time stamp)
            out.write(stationrecord.end_line(summary.averages, st) + "\n")
            records = summary.lines()
            for line in records:
                out.write(line + "\n")
            outs.finish(records, a.summary, a.out)
        return 0
    finally:
        close()
