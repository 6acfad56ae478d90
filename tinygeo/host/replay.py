"""Replay a log through :class:`tinygeo.column.Column`, streaming.

:func:`run` reads one reading, feeds the column, writes one table row (the
record format of :mod:`tinygeo.record`) and forgets the reading: memory stays
flat however long the log is. What the summary needs is kept in
:class:`Summary`: a few scalars, the 16 mandatory levels, the rejection
reasons, at most MAX_FLOATS floats, and a ring of the last RING readings'
(time, line) to name the line of an event the column dates in the past (the
tropopause 2 km below where it is confirmed, the start of a float, the peak
before a burst).

Only the column's public attributes are read; the levels a reading crossed
come from the column's ``on_event`` hook (tinygeo.host.options.LevelTap).

Events are decided one reading late (the column confirms a reading when the
next is accepted): the table's event word stands on the row of the reading
whose feed returned it; the summary names where each event happened.
"""
import math
from math import copysign
import sys
import time as _time
from array import array

from tinygeo import record
from tinygeo.moisture import td_rh
from tinygeo.column import (EV_LEVEL, EV_TROPOPAUSE, EV_BURST, EV_LANDED, EV_LAUNCH, EV_FLOAT,
                            FL_CAPPED, FL_DRY, FL_HELD_MIXING, FL_REPLACED, FL_TAKEOVER, PH_WAIT,
                            PH_ASCENT, PH_FLOAT, PH_DESCENT)
from tinygeo.host import table
from tinygeo.host.options import (InputError, OutputError, column_default, one_line,
                                  round_numbers)

NAN = float("nan")
MAX_REPORTS = 20          # rejected readings reported one by one on stderr
START_GIVE_UP = 50        # consecutive rejections with nothing accepted -> stop
MAJORITY_AFTER = 100      # from this many readings on, stop when most are rejected for one reason
# reasons that say the log's values are misread; 'missing' and 'fields' are
# left out: lines of another record type (a log interleaving GPS-only lines,
# say) are skipped that way and the readings between them are fine
MAJORITY_REASONS = ("rate", "time", "pressure", "temperature", "humidity", "number", "gps")
RING = 1 << 16            # readings whose (time, line) are kept to date past events
MAX_FLOATS = 20           # floats listed in the summary (more are counted)
STATION_RISE_M = 50.0     # a log that never rises more than this looks like a station, m
# ... and so does a log of hours with no burst whose whole rise is slower than a
# station's pressure altitude moves with the weather (a fall of 10 hPa in 3 h,
# about 85 m in 3 h or 0.008 m/s, is a rapid one; a balloon climbs at metres
# per second: common practice) and smaller than the yearly range of sea-level
# pressure at a place (about 950..1050 hPa, some 850 m; common practice)
STATION_SLOW_M_S = 0.05
STATION_SPAN_M = 1000.0
STATION_HOURS_S = 3600.0

# time unit check (see TimeUnitCheck)
SPACINGS = 8              # time steps whose median is reported as the log's spacing
STILL_M = 50.0            # height change from the first reading that is still "not moved", gpm
MOVED_M = 500.0           # a height change this large is a real move, gpm
MOVED_READINGS = 3        # ... when this many readings in a row show it (a spike is one reading)
SLOW_M_S = 0.02           # slower than this over the first move: the times are too large
SLOW_SPACING_S = 10.0     # ... and only when the readings are at least this far apart
FAST_FACTOR = 10.0        # faster than this times the column's default max_rate_m_s: too small

# climb check (see climb_doubt): a rise of DOUBT_RISE_M above the first reading
# with no launch, or slower than DOUBT_RATE_M_S from the launch, doubts the time
# unit. A sounding balloon climbs at about 5 m/s, slow ones at 1 m/s and more
# (common practice); the column's launch test itself needs launch_rate_gpm_s
# (0.5 gpm/s by default), so a log whose times are 1000 times too large (ms read
# as s) climbs 2000 m and more without a launch.
DOUBT_RISE_M = 2000.0
DOUBT_RATE_M_S = 0.5
DOUBT_FAST_M_S = 50.0     # read in ms, a climb faster than this is no balloon's either


class ReplayAbort(InputError):
    """The replay cannot go on (nothing accepted at the start, most readings
    rejected for one reason, a time unit the readings contradict); exit status 2."""


def dew_point_k(t_k, rh_pct, ice=False):
    """Dew point, K, of air at t_k (K) with relative humidity rh_pct (%); nan
    when the humidity is missing or not above 0.

    tinygeo.moisture.td_rh, the kernel of dew_point_from_rh: the inverse of
    the Magnus form of WMO-No. 8 Annex 4.B applied to e = rh/100 e_s(t) (the
    enhancement factor cancels): y = ln(rh/100) + a t/(b + t),
    td = b y/(a - y) (degC; a = 17.62, b = 243.12 over water). With ``ice``
    (the column's: humidity relative to ice at and below 0 degC) it is the
    frost point there, as dew_point_from_rh gives."""
    if rh_pct is None or not rh_pct > 0.0:
        return NAN
    return td_rh(t_k, rh_pct, ice)


def geometric_height_m(gph_m, lat_deg):
    """Geometric height (m) of a geopotential height, from the core; nan if unknown."""
    if gph_m != gph_m:
        return NAN
    from tinygeo import potential
    try:
        return potential.geometric_height(gph_m, lat_deg)
    except ValueError:
        return NAN


_PHASE_WORDS = {PH_WAIT: "waiting", PH_ASCENT: "ascent", PH_FLOAT: "float",
                PH_DESCENT: "descent", 4: "landed"}


class Summary:
    """What one replay found, in bounded memory (see the module docstring).

    The replay loop updates ``accepted``, ``rejected`` and the few running
    values itself; :meth:`event` takes the events; :meth:`lines` writes the
    ``#:`` records."""

    def __init__(self, col, lat_deg):
        self.col = col
        self.lat_deg = lat_deg
        self.accepted = 0          # readings accepted when they came
        self.written = 0           # table rows written (fewer with --every)
        self.rejected = 0
        self.unread = 0            # rejected lines the log reader could not read (never fed)
        self.reasons = {}
        self.first_rejection = None
        self.first_by_reason = {}
        self.last_rejected = None  # the latest rejected reading tuple (a takeover's run)
        self.surface = None        # the first accepted reading: (reading, height_m, td_k)
        self.levels = {}           # level hPa -> (gph_m, height_m, t_k, td_k, time_s, line)
        self.launch = None         # (time_s, line, confirmed line)
        self.tropopause = None     # (p_pa, gph_m, t_k, time_s, line, confirmed line)
        self.floats = []           # (gph_m, time_s, line, confirmed line)
        self.nfloats = 0
        self.burst = None          # (gph_m, time_s, line of the peak, confirmed line)
        self.landing = None        # (height_m, time_s, line, confirmed line)
        self.timed = True          # the log has a time column
        # readings without humidity: [count, first line, last line, held, capped,
        # dry, first line of the latest run of them, count of that run, index
        # (readings accepted before it) of the latest]
        self.no_rh = [0, 0, 0, 0, 0, 0, 0, 0, -2]
        self.highest = None        # (height_m, gph_m, time_s, line): the highest single reading
        self.lowest_m = NAN        # the lowest height accepted (the station check)
        self.last = None           # (reading, height_m) of the latest accepted reading
        self.gps_n = 0
        self.gps_sum = 0.0
        self.gps_worst = (0.0, 0)  # (baro - gps, line) of the largest |difference|
        self.gps_last = NAN
        self.ring_t = array("d", bytes(8 * RING))
        self.ring_l = array("q", bytes(8 * RING))
        self.ring_n = 0            # readings put in the ring (the clock of a log without time)
        self.line = 0              # the line of the latest reading seen
        self.rise = None           # (height_m, time_s, line) of the first reading
                                   # DOUBT_RISE_M above the first accepted one
        self.doubt = None          # the climb check's finding (climb_doubt), kept as a warning

    # -- rejections -----------------------------------------------------------------
    def reject(self, reason, message, unread=False):
        self.rejected += 1
        if unread:
            self.unread += 1
        self.reasons[reason] = self.reasons.get(reason, 0) + 1
        if self.first_rejection is None:
            self.first_rejection = message
        if reason not in self.first_by_reason:
            self.first_by_reason[reason] = message

    # -- times and lines ---------------------------------------------------------------
    def raw_time(self, rel_s):
        """A column time (s since its first stamp) as the log's time_s."""
        t0 = self.col.time_origin
        if rel_s != rel_s or t0 is None:
            return NAN
        return rel_s + t0 * self.col.time_unit_s

    def line_at(self, rel_s):
        """The line of the accepted reading nearest to a column event time
        (s since the first stamp; without time stamps the count of confirmed
        readings), among the last RING readings; None if older."""
        if rel_s != rel_s:
            return None
        t0 = self.col.time_origin
        key = rel_s if t0 is None else rel_s + t0 * self.col.time_unit_s
        n = min(self.ring_n, RING)
        best = None
        best_d = None
        rt, rl = self.ring_t, self.ring_l
        i = (self.ring_n - 1) & (RING - 1)
        for _ in range(n):
            d = abs(rt[i] - key)
            if best_d is None or d < best_d:
                best, best_d = rl[i], d
            i = (i - 1) & (RING - 1)
        if best is None or n == RING and best_d > 1.0:
            return None
        return int(best)

    # -- events -------------------------------------------------------------------------
    def event(self, bits, reading, conf, prev, levels):
        """Record the events ``bits`` returned by the feed of ``reading``;
        ``conf`` is the reading the column confirmed with it (where the
        events happened), ``prev`` the confirmed reading before that (or
        None), ``levels`` what the LevelTap collected."""
        col = self.col
        line = reading[0]
        cline = conf[0] if conf is not None else line
        cts = conf[4] if conf is not None else reading[4]
        if bits & EV_LEVEL:
            for p, g, hl, tk in levels:
                hpa = int(round(p / 100.0))
                if hpa not in self.levels:
                    self.levels[hpa] = (g, hl, tk, self._level_td(p, conf, prev),
                                        NAN if cts is None else cts, cline)
        if bits & EV_LAUNCH and self.launch is None:
            self.launch = (self.raw_time(col.launch_time_s), cline, line)
        if bits & EV_TROPOPAUSE and self.tropopause is None:
            ts = col.tropopause_time_s
            self.tropopause = (col.tropopause_p_pa, col.tropopause_gph_m, col.tropopause_t_k,
                               self.raw_time(ts), self.line_at(ts), line)
        if bits & EV_FLOAT:
            self.nfloats += 1
            if len(self.floats) < MAX_FLOATS:
                ts = col.float_time_s
                self.floats.append((col.float_gph_m, self.raw_time(ts), self.line_at(ts), line))
        if bits & EV_BURST and self.burst is None:
            ts = col.burst_time_s
            self.burst = (col.burst_gph_m, self.raw_time(ts), self.line_at(ts), line)
        if bits & EV_LANDED and self.landing is None:
            self.landing = (col.height_m, self.raw_time(col.landing_time_s), cline, line)

    def _level_td(self, p_lev, conf, prev):
        # dew point at a level: linear in ln p between the two confirmed
        # readings around it (the column's own interpolation for t_k)
        ice = self.col.ice
        if conf is None:
            return NAN
        td1 = dew_point_k(conf[2], conf[3], ice)
        if prev is None or prev[1] == conf[1]:
            return td1
        td0 = dew_point_k(prev[2], prev[3], ice)
        if td0 != td0 or td1 != td1:
            return td1 if td1 == td1 else td0     # one of them had no humidity
        f = math.log(prev[1] / p_lev) / math.log(prev[1] / conf[1])
        return td0 + f * (td1 - td0)

    # -- the records ------------------------------------------------------------------
    def lines(self):
        """The ``#:`` summary records (without newlines), in a fixed order."""
        col = self.col
        lat = self.lat_deg
        rec = table.summary_line
        out = []
        if self.doubt is not None:
            pairs, text = self.doubt
            out.append(rec("time_unit_doubt", pairs, text))
        out.append(rec("accepted", [("count", self.accepted)]))
        pairs = [("count", self.rejected), ("by_column", col.rejected), ("unread", self.unread)]
        for r in sorted(self.reasons):
            pairs.append((r, self.reasons[r]))
        if col.retracted:
            pairs.append(("retracted_after_acceptance", col.retracted))
        text = None
        if self.unread or col.rejected != self.rejected:
            text = ("count: the lines not accepted when they came; by_column: the column's own "
                    "count, the end record's rejected (readings it refused%s); unread: lines the "
                    "log reader could not read as a reading, never fed to the column"
                    % (", and those it took back later" if col.retracted else ""))
        out.append(rec("rejected", pairs, text))
        if self.surface is not None:
            rd, h, td = self.surface
            pairs = [("time_s", _nan(rd[4])), ("line", rd[0]), ("p_hpa", rd[1] / 100.0),
                     ("t_k", rd[2]), ("td_k", td), ("rh_pct", _nan(rd[3])), ("height_m", h)]
            if rd[5] is not None and rd[5] == rd[5]:
                pairs.append(("gps_m", rd[5]))
            out.append(rec("surface", pairs, "the first accepted reading"))
        if self.launch is not None:
            t, ln, conf = self.launch
            out.append(rec("launch", [("time_s", t), ("line", ln), ("confirmed_line", conf)],
                           "when the column detected the launch: its height track (smoothed "
                           "over smooth_s %g s) had risen launch_gpm %g gpm, plus 4 sigma of "
                           "its noise, above its lowest point; lift-off was earlier (the column "
                           "gives no lift-off time)%s; the table's launch word stands on line %d, "
                           "the reading whose feed confirmed line %d"
                           % (col.smooth_s, col.launch_gpm, self._clock_note(), conf, ln)))
        for hpa in sorted(self.levels, reverse=True):
            g, h, tk, td, t, ln = self.levels[hpa]
            out.append(rec("level", [("p_hpa", hpa), ("gph_m", g), ("height_m", h), ("t_k", tk),
                                     ("td_k", td), ("time_s", t), ("line", ln)]))
        if self.tropopause is not None:
            p, g, tk, t, ln, conf = self.tropopause
            pairs = [("p_hpa", p / 100.0), ("gph_m", g), ("height_m", geometric_height_m(g, lat)),
                     ("t_k", tk), ("time_s", t)]
            if ln is not None:
                pairs.append(("line", ln))
            pairs.append(("confirmed_line", conf))
            pairs.append(("layer_gpm", col.tropopause_layer_gpm))
            out.append(rec("tropopause", pairs,
                           "the level itself (WMO lapse-rate definition), found on the profile "
                           "averaged over layers of tropopause_layer_gpm %g gpm: its height is "
                           "resolved to about one such layer; the table's tropopause_confirmed "
                           "word stands on line %d, 2 km higher, where the definition was "
                           "confirmed" % (col.tropopause_layer_gpm, conf)))
        for g, t, ln, conf in self.floats:
            pairs = [("gph_m", g), ("height_m", geometric_height_m(g, lat)), ("time_s", t)]
            if ln is not None:
                pairs.append(("line", ln))
            pairs.append(("confirmed_line", conf))
            out.append(rec("float", pairs, "the float began here at %.0f m; confirmed after "
                                           "float_s %g s" % (geometric_height_m(g, lat),
                                                             col.float_s)))
        if self.nfloats > len(self.floats):
            out.append(rec("floats", [("count", self.nfloats)], "only the first %d are listed"
                           % len(self.floats)))
        if self.burst is not None:
            g, t, ln, conf = self.burst
            hb = geometric_height_m(g, lat)
            pairs = [("gph_m", g), ("height_m", hb), ("time_s", t)]
            if ln is not None:
                pairs.append(("line", ln))
            pairs.append(("confirmed_line", conf))
            out.append(rec("burst", pairs, "the peak of the height track (readings smoothed over "
                                           "smooth_s %g s), confirmed by the descent on line %d"
                           % (col.smooth_s, conf)))
        elif self.last is not None:
            rd, h = self.last
            ph = col.phase
            if ph in (PH_ASCENT, PH_FLOAT):
                out.append(rec("no_burst", [("phase", _PHASE_WORDS[ph]), ("height_m", h),
                                            ("time_s", _nan(rd[4])), ("line", rd[0])],
                               "no burst: log ends %s at %.0f m"
                               % ("ascending" if ph == PH_ASCENT else "floating", h)))
            elif ph == PH_WAIT:
                out.append(rec("no_launch", [("height_m", h), ("time_s", _nan(rd[4])),
                                             ("line", rd[0])],
                               "no launch: the log ends before the column saw a climb"))
        if self.highest is not None:
            h, g, t, ln = self.highest
            text = "the highest single reading"
            if self.burst is not None:
                hb = geometric_height_m(self.burst[0], lat)
                if abs(h - hb) < 0.5:
                    text += "; equal to the burst"
                else:
                    text += ("; %.0f m %s the burst's peak, which is the smoothed height track "
                             "(reading noise)" % (abs(h - hb), "above" if h > hb else "below"))
            out.append(rec("highest", [("gph_m", g), ("height_m", h), ("time_s", t),
                                       ("line", ln)], text))
        if self.landing is not None:
            h, t, ln, conf = self.landing
            touch = t - col.landing_s
            out.append(rec("landing", [("height_m", h), ("time_s", t), ("line", ln),
                                       ("confirmed_line", conf), ("touchdown_time_s", touch)],
                           "when the column detected the landing: the readings had stayed within "
                           "landing_band_gpm %g gpm, plus 4 sigma of their noise, for landing_s %g "
                           "s; touchdown_time_s (time_s - landing_s, where that stay began) is the "
                           "touchdown to within one reading step%s; height_m is that of line %d, "
                           "where the table's landed word stands (the reading whose feed "
                           "confirmed line %d)"
                           % (col.landing_band_gpm, col.landing_s, self._clock_note(), conf, ln)))
        n, first, last, held, capped, dry, run_line, run_n, last_i = self.no_rh
        if n:
            pairs = [("readings", n), ("first_line", first), ("last_line", last)]
            if last_i == self.accepted - 1:
                pairs.append(("missing_from_line", run_line))
            out.append(rec("humidity_missing", pairs + [("held", held), ("capped", capped),
                                                        ("dry", dry)], self._humidity_note()))
        if self.gps_n:
            worst, wline = self.gps_worst
            out.append(rec("gps", [("readings", self.gps_n),
                                   ("mean_baro_minus_gps_m", self.gps_sum / self.gps_n),
                                   ("worst_baro_minus_gps_m", worst), ("worst_line", wline),
                                   ("last_baro_minus_gps_m", self.gps_last)],
                           "barometric height minus GPS height over the readings with a fix"))
        return out

    def _clock_note(self):
        # how the event times count without a time column
        if self.timed:
            return ""
        return " (no time column: the column counts each reading as one second, so time_s is " \
            "nan and the durations are readings)"

    def _humidity_note(self):
        n, first, last, held, capped, dry, run_line, run_n, last_i = self.no_rh
        if last_i != self.accepted - 1:
            span = "on %d readings between lines %d and %d (it came back)" % (n, first, last)
        elif run_n == n:
            span = "from line %d on (%d readings)" % (run_line, n)
        else:
            span = "from line %d on (%d readings), and on %d readings before, from line %d" % (
                run_line, run_n, n - run_n, first)
        if dry == n:
            how = "dry air assumed (no humidity known before)"
        elif dry:
            how = "dry air assumed on %d of them (no humidity known before), the last mixing " \
                "ratio held on %d" % (dry, held)
        else:
            how = "the last mixing ratio held"
        if capped:
            how += " (capped at saturation on %d)" % capped
        return ("humidity missing %s: %s; the unknown humidity raises sigma_m there"
                % (span, how))

    def looks_like_station(self):
        """True when the log never left the ground: no launch and a rise of
        less than STATION_RISE_M above the lowest reading; or no burst, a
        log of STATION_HOURS_S or more, and a rise under STATION_SPAN_M that
        is slower on the whole than STATION_SLOW_M_S (a buoy's heave or the
        weather may look like a launch to the column)."""
        if self.highest is None or self.lowest_m != self.lowest_m:
            return False
        rise = self.highest[0] - self.lowest_m
        if self.launch is None and rise < STATION_RISE_M:
            return True
        if self.burst is not None or self.surface is None or self.last is None:
            return False
        t0, t1 = self.surface[0][4], self.last[0][4]
        if t0 is None or t1 is None or not t1 - t0 >= STATION_HOURS_S:
            return False
        return rise < STATION_SPAN_M and rise / (t1 - t0) < STATION_SLOW_M_S

    def station_span(self):
        """(rise above the lowest reading, m; hours between the first and the
        last accepted reading, nan without time stamps) for the station note."""
        rise = self.highest[0] - self.lowest_m
        hours = NAN
        if self.surface is not None and self.last is not None:
            t0, t1 = self.surface[0][4], self.last[0][4]
            if t0 is not None and t1 is not None:
                hours = (t1 - t0) / 3600.0
        return rise, hours


def _nan(x):
    return NAN if x is None else x


# --- message tidying ---------------------------------------------------------------
_OPTION_HINTS = (
    ("(max_t_step_k=None turns this check off)",
     "(limits: --max-t-step, --max-t-rate, --max-t-gradient)"),
    ("(max_t_step_k=None turns this check off)",
     "(limits: --max-t-step, --max-t-rate, --max-t-gradient)"),
    ("beyond max_rate_m_s=", "beyond --max-rate "),
    ("(start_guard_m=None: no guard)", "(--start-height)"),
    ("start_height_m=", "start height "),
)


def tidy(message):
    """A column's rejection message for the command line: long floats
    rounded to 6 significant digits (96447.00000000001 -> 96447) and the
    column's keyword hints given as the command's options."""
    for old, new in _OPTION_HINTS:
        message = message.replace(old, new)
    return round_numbers(message)


# --- the replay loop ----------------------------------------------------------------
MAJORITY_HINTS = {
    "rate": "the readings imply impossible vertical speeds: check the time unit "
            "(--time NAME:s or NAME:ms) and the pressure unit (--pressure NAME:Pa or NAME:hPa), "
            "or raise --max-rate",
    "time": "check the time column (--time NAME[:s|ms|iso]): time stamps must be numbers of "
            "seconds or ISO-8601 timestamps and must not go back",
}


def _rejected(summary, e, reading, lineno, report):
    msg = tidy(str(e))
    if not msg.startswith("line "):
        msg = "line %d: %s" % (lineno, msg)
    reason = getattr(e, "reason", "reading") or "reading"
    summary.reject(reason, msg, reading is None)
    if reading is not None:
        summary.last_rejected = reading
    if summary.rejected <= MAX_REPORTS:
        report("rejected (%s) %s" % (reason, msg))
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


def run(reader, col, summary, report, out=None, every=1, flush=False, sink=None,
        progress=None, before_first=None):
    """Feed every reading of ``reader`` to ``col``.

    For every accepted reading either ``sink(reading, bits)`` is called or,
    without a sink, its table row is written with ``out.write`` (every
    ``every``-th row and every row with an event; ``out.flush()`` after each
    row with ``flush``). ``before_first()`` is called before the first
    accepted reading is handled (the table's header waits for it: units and
    the time origin are decided by then). Rejected lines go to
    ``report(message)``. Updates ``summary``; returns nothing. Raises
    ReplayAbort (see ``_rejected`` and TimeUnitCheck).

    The loop is the replay's hot path (bench/replay_bench.py): per reading
    it reads the column's public attributes once and keeps the summary in
    locals; events and the rare flags take the slow path."""
    feed = col.feed
    tap = col.on_event
    levels = tap.levels
    check = TimeUnitCheck(reader)
    checking = check.active
    # record.FORMAT with the pressure and with the temperature, humidity
    # and dew point formatted apart (%s in the row), as the same bytes
    # (and the GPS height, the gph with the height, and the rate)
    parts = record.FORMAT.split("\t")
    fmt_p = parts[2]
    fmt_trt = "\t".join(parts[3:6])
    fmt_gps = parts[6]
    fmt_gh = "\t".join(parts[7:9])
    fmt_r = parts[9]
    fmt = "\t".join(parts[:2] + ["%s"] * 5 + parts[10:]) + "\n"
    if fmt_gps % NAN != "nan":
        raise AssertionError("record.FORMAT: a GPS height of nan must print as nan")
    c_p = c_t = c_rh = c_g = c_h = c_r = NAN
    c_ps = c_trt = c_gh = c_rs = ""
    zero_pos = fmt_r % 0.0
    zero_neg = fmt_r % -0.0
    write = out.write if out is not None else None
    ice = col.ice
    nan = NAN
    ring_t, ring_l = summary.ring_t, summary.ring_l
    mask = RING - 1
    rn = summary.ring_n
    special = FL_REPLACED | FL_TAKEOVER
    no_rh_bits = FL_DRY | FL_HELD_MIXING
    no_rh = summary.no_rh
    thin = sink is None and every > 1
    # the look-back of the replay: the readings of the column's two latest
    # records (h, b) and the one confirmed before b (c)
    c_rd = b_rd = h_rd = None
    accepted = summary.accepted
    hmax = -1e300
    hmin = 1e300
    rise_h = 1e300          # the first accepted height + DOUBT_RISE_M (climb_doubt)
    rise = summary.rise
    gps_n = 0
    gps_sum = 0.0
    gps_worst = 0.0
    gps_wline = 0
    gps_last = nan
    lineno = 0
    written = 0
    try:
        for reading in reader:
            if reading.__class__ is not tuple:
                lineno = getattr(reading, "lineno", reader.lineno)
                summary.accepted = accepted
                _rejected(summary, reading, None, lineno, report)
                continue
            lineno, p, t, rh, ts, gps = reading
            if checking:
                check.see(reading)
                checking = check.active
            if levels:
                del levels[:]
            try:
                bits = feed(p, t, rh, ts, gps)
            except ValueError as e:   # ReadingError by the contract; any check error is a rejection
                summary.accepted = accepted
                _rejected(summary, e, reading, lineno, report)
                continue
            if not accepted and before_first is not None:
                before_first()
            h = col.height_m
            flags = col.flags
            if flags & no_rh_bits:
                # no humidity: where it went missing and how it was filled in
                if not no_rh[0]:
                    no_rh[1] = lineno
                if no_rh[8] != accepted - 1:
                    no_rh[6] = lineno       # a new run of readings without humidity
                    no_rh[7] = 0
                no_rh[0] += 1
                no_rh[2] = lineno
                no_rh[7] += 1
                no_rh[8] = accepted
                if flags & FL_HELD_MIXING:
                    no_rh[3] += 1
                    if flags & FL_CAPPED:
                        no_rh[4] += 1
                else:
                    no_rh[5] += 1
            # the summary's running values (the ring dates past events)
            j = rn & mask
            ring_t[j] = rn if ts is None else ts
            ring_l[j] = lineno
            rn += 1
            if h > hmax:
                hmax = h
                summary.highest = (h, col.gph_m, nan if ts is None else ts, lineno)
                if h >= rise_h and rise is None:
                    rise = (h, ts, lineno)
            elif h < hmin:
                hmin = h
            if gps is not None and gps == gps:      # nan: no fix
                d = col.gps_diff_m
                if d == d:
                    gps_n += 1
                    gps_sum += d
                    gps_last = d
                    if abs(d) > abs(gps_worst):
                        gps_worst = d
                        gps_wline = lineno
            if flags & special:
                if flags & FL_TAKEOVER:
                    c_rd, b_rd, h_rd = None, summary.last_rejected, reading
                else:
                    h_rd = reading
            else:
                c_rd, b_rd, h_rd = b_rd, h_rd, reading
            if bits:
                summary.ring_n = rn
                summary.event(bits, reading, b_rd, c_rd, levels)
            if not accepted:
                hmin = h
                rise_h = h + DOUBT_RISE_M
                summary.surface = (reading, h, dew_point_k(t, rh, ice))
            accepted += 1
            # the row
            if sink is not None:
                sink(reading, bits)
                continue
            if thin and not bits and (accepted - 1) % every:
                continue
            # the fields of a value that repeats the row before's are not
            # formatted again (a sensor's resolution makes most repeat while
            # floating or standing): the pressure, the temperature with the
            # humidity and the dew point, the heights (a repeated pressure
            # repeats them) and the rate; zero heights and humidity always
            # anew, a zero rate by its sign (-0.0 compares equal to 0.0 and
            # prints as -0.000)
            if p != c_p:
                c_p = p
                c_ps = fmt_p % p
            if t != c_t or rh != c_rh or not rh:
                c_t = t
                c_rh = rh
                c_trt = fmt_trt % (t, nan if rh is None else rh,
                                   td_rh(t, rh, ice) if rh is not None and rh > 0.0 else nan)
            g = col.gph_m
            if g != c_g or h != c_h or not g or not h:
                c_g = g
                c_h = h
                c_gh = fmt_gh % (g, h)
            rate = col.rate_m_s
            if rate != c_r:
                c_r = rate
                c_rs = fmt_r % rate
            elif not rate:
                c_rs = zero_neg if copysign(1.0, rate) < 0.0 else zero_pos
            if bits:
                ev = record.events_text(bits, [lv[0] for lv in levels] if bits & EV_LEVEL else nan)
            else:
                ev = "-"
            write(fmt % (lineno, nan if ts is None else ts, c_ps, c_trt,
                         "nan" if gps is None else fmt_gps % gps, c_gh, c_rs,
                         col.sigma_m, flags, ev))
            written += 1
            if flush:
                out.flush()
            if progress is not None and not lineno & 1023:
                progress.update(lineno, h)
    finally:
        summary.accepted = accepted
        summary.written += written
        summary.ring_n = rn
        summary.line = lineno
        summary.lowest_m = hmin if accepted else NAN
        if h_rd is not None:
            summary.last = (h_rd, col.height_m)
        summary.gps_n = gps_n
        summary.gps_sum = gps_sum
        summary.gps_worst = (gps_worst, gps_wline)
        summary.gps_last = gps_last
        summary.rise = rise
    doubt = climb_doubt(summary, reader)
    if doubt is not None:
        message, pairs, stop = doubt
        if stop:
            raise ReplayAbort(message)
        summary.doubt = (pairs, message)


def climb_doubt(summary, reader):
    """The climb check of a time column in s or ms, after the replay:
    ``(message, pairs, stop)`` or None.

    It doubts the time unit when the height rose DOUBT_RISE_M above the first
    accepted reading and the column saw no launch, or saw one but the mean
    climb from the launch to that height is slower than DOUBT_RATE_M_S (and no
    float began before it). TimeUnitCheck judges the first move only, and
    not a unit given on the command line; this judges the whole rise. With
    the unit given on the command line (``--time NAME:s``) it is a warning
    (``stop`` False: a summary record and a line on stderr), else the replay
    stops (exit 2) asking for the unit."""
    rise, surface = summary.rise, summary.surface
    cols = getattr(reader, "columns", {})
    if rise is None or surface is None or "time" not in cols or cols["time"][2] not in ("s", "ms"):
        return None
    h1, t1, line1 = rise
    rd0, h0 = surface[0], surface[1]
    t0, line0 = rd0[4], rd0[0]
    launch = summary.launch
    if launch is not None:
        t0, line0 = launch[0], launch[1]
        if any(f[1] < t1 for f in summary.floats):
            return None
    if t0 is None or t1 is None or not t1 - t0 > 0.0:
        return None
    dt = t1 - t0
    rate = (h1 - h0) / dt
    if launch is not None and rate >= DOUBT_RATE_M_S:
        return None
    i, name, unit, _ = cols["time"]
    given = "time" in getattr(reader, "option_units", ())
    what = ("the height rose %.0f m, from %.0f m (line %d) to %.0f m (line %d), in %.6g s "
            "with the time column %r read in %s: a mean climb of %.3g m/s%s"
            % (h1 - h0, h0, surface[0][0], h1, line1, dt, name, unit, rate,
               ", and the column saw no launch (it needs launch_rate_gpm_s %g gpm/s)"
               % summary.col.launch_rate_gpm_s if launch is None else
               " from the launch (line %d), slower than %g m/s" % (line0, DOUBT_RATE_M_S)))
    balloon = "a balloon climbs at 1 to 8 m/s"
    if unit == "s" and DOUBT_RATE_M_S <= rate * 1000.0 <= DOUBT_FAST_M_S:
        ask = "are the values milliseconds? give --time %s:ms" % name
    else:
        ask = ("the time stamps look too large; convert them to seconds or milliseconds "
               "and give --time %s:s or --time %s:ms" % (name, name))
    if given:
        message = ("%s; %s: is the time unit right? %s (--time %s:%s was given, so the log is "
                   "taken as it is)" % (what, balloon, ask, name, unit))
    else:
        message = ("%s; %s: is the time unit right? %s (if the log really climbs this slowly, "
                   "give --time %s:%s to take it as it is)" % (what, balloon, ask, name, unit))
    pairs = [("rise_m", h1 - h0), ("seconds", dt), ("rate_m_s", rate), ("from_line", line0),
             ("to_line", line1), ("unit", unit)]
    return message, pairs, not given


def _median(values):
    v = sorted(values)
    n = len(v)
    if n == 0:
        return NAN
    return v[n // 2] if n % 2 else 0.5 * (v[n // 2 - 1] + v[n // 2])


class TimeUnitCheck:
    """Sanity check of a time column in seconds or milliseconds, from the
    readings themselves (a time unit needs a move).

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
    The check keeps a few scalars and at most SPACINGS steps; ``active`` is
    False once it has judged (the caller skips it then)."""

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

    def __init__(self, stream):
        self.stream = stream
        self.next_t = 0.0
        self.shown = False

    def update(self, lineno, height_m):
        now = _time.monotonic()
        if now < self.next_t:
            return
        self.next_t = now + 0.5
        self.shown = True
        self.stream.write("\rreplay: line %d, height %.0f m   " % (lineno, height_m))
        self.stream.flush()

    def done(self):
        if self.shown:
            self.shown = False
            self.stream.write("\r" + " " * 50 + "\r")
            self.stream.flush()


def header_lines(site, reader, source_name, every=1):
    """Return the table's comment and header lines (without newlines); a
    thinned table says so in its ``# input`` line (``every=N``)."""
    words = " ".join("%s=%s" % (k, table.fmt_value(v) if not isinstance(v, str) else v)
                     for k, v in site)
    lines = [table.MAGIC, table.SITE_PREFIX + words,
             table.INPUT_PREFIX + "source=%s %s%s" % (source_name.replace(" ", "_"),
                                                      reader.describe(),
                                                      " every=%d" % every if every > 1 else "")]
    if reader.time_origin:
        lines.append(table.TIME_ORIGIN_PREFIX + reader.time_origin)
    lines.append(table.HEADER)
    return lines


def replay(reader, col, out, setup, source_name, every=1, flush=False, err=None, progress=False):
    """Replay ``reader`` through ``col``, writing the table (comments, header,
    rows, end record, summary records) to ``out``.

    ``setup`` is the tinygeo.host.options.Setup the column was made from.
    Returns the Summary. Rejections and notes are reported on ``err``."""
    err = err or sys.stderr
    summary = Summary(col, setup.lat_deg)
    summary.timed = "time" in reader.columns
    prog = Progress(err) if progress else None

    def report(msg):
        if prog is not None:
            prog.done()
        err.write("tinygeo replay: %s\n" % one_line(msg))

    if "time" not in reader.columns:
        err.write("tinygeo replay: warning: the log has no time column, so pressure glitches are "
                  "not screened by vertical rate, rate_m_s is nan, and the events (launch, "
                  "float, burst, landing) are timed by counting each reading as one second "
                  "(their time_s is nan); map one with --time NAME[:s|ms|iso]\n")
    state = {"header": False}

    def header():
        # the header waits for the first reading so that the units and the
        # time origin decided from it are described in the table
        for note in reader.notes:
            err.write("tinygeo replay: note: %s\n" % one_line(note))
        for line in header_lines(setup.site(), reader, source_name, every):
            out.write(line + "\n")
        state["header"] = True

    # the rows go to the file object itself (no wrapper per row); its
    # errors become OutputError here
    raw = getattr(out, "f", out)
    try:
        run(reader, col, summary, report, out=raw, every=every, flush=flush, progress=prog,
            before_first=header)
    except BrokenPipeError:
        raise
    except (OSError, ValueError) as e:
        if isinstance(e, ValueError) and not str(e).startswith("I/O operation on closed"):
            raise
        err_out = out.error(e) if hasattr(out, "error") else OutputError(str(e))
        raise OutputError("%s (writing the row of %s line %d)" % (err_out, source_name,
                                                                  summary.line))
    if prog is not None:
        prog.done()
    if summary.doubt is not None:
        err.write("tinygeo replay: warning: %s\n" % one_line(summary.doubt[1]))
    if not state["header"]:
        header()
    out.write(record.end_line(summary.written, col) + "\n")
    for line in summary.lines():
        out.write(line + "\n")
    if flush:
        out.flush()
    return summary


def _isatty(stream):
    try:
        return stream.isatty()
    except (AttributeError, ValueError):
        return False


def command(a, stdin, stdout, stderr):
    """The ``replay`` command (``a``: its parsed options); returns the exit status."""
    from tinygeo.host.logread import LogReader
    from tinygeo.host.options import (Outputs, UsageError, check_paths, column_setup, mapping,
                                      new_column, open_text)
    if a.every < 1:
        raise UsageError("--every %d: give a whole number >= 1" % a.every)
    check_paths([("log", a.log)], [("-o", a.out), ("--summary", a.summary)], stdin)
    lines, name, close = open_text(a.log, stdin)
    try:
        reader = LogReader(lines, mapping(a), a.delimiter, name)
        setup = column_setup(a, reader)
        col = new_column(setup)
        reader.settle(setup.start_height_m, setup.start_given)
        live = a.log == "-" or a.flush
        err = _Quiet(stderr) if a.quiet else stderr
        with Outputs(stdout) as outs:
            out = outs.open(a.out)
            summary = replay(reader, col, out, setup, name, every=a.every, flush=live, err=err,
                             progress=_isatty(stderr) and a.log != "-")
            if summary.accepted == 0:
                raise InputError(
                    "%s: no reading was accepted (%d rejected%s); check the column mapping and "
                    "units" % (name, summary.rejected,
                               "; first: " + summary.first_rejection if summary.first_rejection
                               else ", no data lines after the header"))
            records = summary.lines()
            outs.finish(records, a.summary, a.out)
        if summary.looks_like_station():
            cmd, unknown = station_command(a, reader, setup)
            rise, hours = summary.station_span()
            stderr.write("tinygeo replay: note: the log never rises more than %.0f m above its "
                         "lowest reading%s: it looks like a fixed station or a buoy, not a "
                         "flight; for averages, sea-level pressure, the 3-hour tendency and "
                         "quality control run:  %s%s\n"
                         % (rise, " in %.1f h" % hours if hours == hours else "", cmd,
                            "  (M: the barometer's height above mean sea level, m)" if unknown
                            else ""))
        return 0
    finally:
        close()


def station_command(a, reader, setup):
    """The ``tinygeo station`` command line for the log a replay read
    (``a``: the replay's options, ``reader`` its LogReader, ``setup`` its
    column Setup): the log, the mapping options given, the latitude and the
    height where the log's comments do not carry them, ``--ice``. Returns
    (text, unknown): ``unknown`` is True when the height is not known (the
    start height defaulted to 0 m), and the text then says ``--height M``."""
    import shlex
    words = ["tinygeo", "station", a.log]
    for q in ("pressure", "temperature", "humidity", "dewpoint", "time"):
        v = getattr(a, q, None)
        if v:
            words += ["--dew-point" if q == "dewpoint" else "--" + q, v]
    if a.delimiter:
        words += ["--delimiter", a.delimiter]
    if "lat_deg" not in reader.meta:
        words += ["--lat", "%g" % setup.lat_deg]
    unknown = False
    if "height_m" not in reader.meta:
        if setup.start_given:
            words += ["--height", "%g" % setup.start_height_m]
        else:
            words += ["--height", "M"]
            unknown = True
    if a.ice:
        words.append("--ice")
    return " ".join(shlex.quote(w) for w in words), unknown


class _Quiet:
    """stderr for --quiet: drops the per-reading reports, keeps notes and warnings."""

    def __init__(self, stream):
        self.stream = stream

    def write(self, text):
        if not text.startswith("tinygeo replay: rejected") and "further rejected" not in text:
            self.stream.write(text)

    def flush(self):
        self.stream.flush()
