"""Compare a device's table with a host replay of the same readings.

The pre-deployment check: the device runs the column on its own float
arithmetic and writes its rows with :mod:`tinygeo.record` (``line`` or
``time_s`` and any subset of the value columns; ``nan`` = not computed); the
host runs the same column in double precision on the same readings and the
two are compared reading by reading. Streaming: one device row and one host
result at a time, so memory stays flat.

Two ways to get the host side:

* default: the inputs written in the device table (time_s, p_pa, t_k,
  rh_pct, gps_m; ``nan`` = not given) are fed to a host column set up from
  the table's ``# site`` line (options on the command line override it). The
  table must end with its end record (``#: end rows=N``,
  tinygeo.record.end_line) holding the number of rows: a table cut short, or
  with rows missing, fails.
* ``--log FILE``: the raw log the device was fed is replayed on the host with
  the usual column mapping, and rows are matched by their ``line`` number
  (or, without a line column, by time since the first row). A reading
  accepted on one side only fails; so does every host row after the device
  table's last row (rows missing at the end).

A row offends when |device - host| exceeds a tolerance for gph_m or height_m
(``--tol-height``), rate_m_s (``--tol-rate``) or sigma_m (``--tol-sigma``),
or (unless ``--ignore-events``) flags or events differ. A column the device
left out, or wrote as ``nan`` in every row, is not computed on the device and
skipped; a ``nan`` in a column that holds numbers in other rows offends when
the host has a number (a host ``nan`` against a device number is an infinite
difference; ``nan`` on both sides agrees). Each row gets one status in the
``--diffs`` file; the report's counts are the counts of those statuses.

The table prints p_pa to 0.01 Pa, so two pressures that differ by less print
equal: fed the printed values, the host finds a repeated pressure (FL_SAME_P,
nothing integrated) where the device integrated a tiny step (FL_DESCENT, or
no flag). A row whose flags differ only in those two bits, where the host
has FL_SAME_P and the device not, and whose printed pressure equals the row
before's, gets the status ``rounded``: counted and explained, not an offence
(default mode only; with ``--log`` both sides read the same numbers).

A table written by a logger that resumed from a checkpoint holds resume
records (``#: resume line=N whole``, tinygeo.record.resume_line): the
rows it took again are dropped before the comparison (tinygeo.host.table),
and the report says how many; a resume record torn while it was written
(its last word is not ``whole``) voids nothing and is reported. Rows whose line number repeats or goes back are
reported (a row written twice).
"""
from tinygeo.column import FL_DESCENT, FL_NO_GPS, FL_SAME_P
from tinygeo.host import table
from tinygeo.host import replay as rp
from tinygeo.host.logread import LogReader
from tinygeo.host.options import (EXIT_COMPARE_FAILED, EXIT_OK, Outputs, UsageError, check_paths,
                                  mapping, new_column, open_text, setup_from_site)

NAN = float("nan")
INF = float("inf")
FIELDS = ("gph_m", "height_m", "rate_m_s", "sigma_m")
DIFF_HEADER = "line\tdevice_line\td_gph_m\td_height_m\td_rate_m_s\td_sigma_m\tflags\tevents\tstatus"
TIME_MATCH_S = 0.002      # rows matched by time: the table prints time_s to 1 ms

# the statuses of a row (--diffs) and what the report calls them
STATUSES = (("FAIL", "values or flags/events beyond the tolerances"),
            ("device-only", "in the device table but not accepted by the host"),
            ("missing-on-device", "accepted by the host but missing from the device table"),
            ("missing-at-end", "accepted by the host after the device table's last row"),
            ("host-rejected", "rejected by the host"))
ROUNDED = ("rounded", "flags FL_SAME_P/FL_DESCENT differ where the table's p_pa, printed to 0.01 "
           "Pa, shows a repeated pressure that the device did not have; not an offence")
ROUNDING_BITS = FL_SAME_P | FL_DESCENT


def _opt(x):
    return None if x != x else x


def _num(x):
    return "%.3f" % x


class Tally:
    """Maxima and offences of one comparison (bounded memory)."""

    def __init__(self, tolerances, ignore_events, show, diffs, present=None, numeric=None):
        self.tol = tolerances
        self.fields = [f for f in FIELDS if present is None or f in present]
        # the columns the device computes (a number in some row); None: all
        self.numeric = numeric
        self.rounded = 0
        self.first_rounded = None
        self.ignore_events = ignore_events
        self.show = show
        self.diffs = diffs
        self.compared = 0
        self.status = dict((s, 0) for s, _ in STATUSES)
        self.mismatched_events = 0
        self.skipped = 0
        self.maxima = dict((f, (0.0, None)) for f in FIELDS)
        self.first = None
        self.listed = []
        self.table_problem = None      # the device table is cut short

    @property
    def offending(self):
        return sum(self.status.values())

    def offence(self, status, line, device_line, text):
        self.status[status] += 1
        where = ("line %d" % line if line is not None else "row") + \
            ("" if device_line is None else " (device table line %d)" % device_line)
        msg = "%s: %s" % (where, text)
        if self.first is None:
            self.first = msg
        if len(self.listed) < self.show:
            self.listed.append(msg)

    def row(self, line, device_line, status, diffs=None, flags="-", events="-"):
        if self.diffs is not None:
            d = diffs or (NAN,) * 4
            self.diffs.write("%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n" % (
                "-" if line is None else line, "-" if device_line is None else device_line,
                _num(d[0]), _num(d[1]), _num(d[2]), _num(d[3]), flags, events, status))

    def one_side(self, status, line, device_line):
        text = dict(STATUSES)[status]
        self.offence(status, line, device_line, text)
        self.row(line, device_line, status)

    def check(self, row, col, bits, levels, printed_same_p=False):
        """Compare device ``row`` with the host column after a feed;
        ``printed_same_p``: the row's printed p_pa equals the row before's."""
        self.compared += 1
        diffs = []
        problems = []
        for f in FIELDS:
            if f not in self.fields:
                diffs.append(NAN)       # not in the device table
                continue
            dev = getattr(row, f)
            host = getattr(col, f)
            if dev != dev:
                diffs.append(NAN)
                if self.numeric is not None and f not in self.numeric:
                    self.skipped += 1   # a column the device does not compute
                elif host == host:
                    problems.append("%s is nan on the device, host %s (the device writes "
                                    "numbers in this column elsewhere)" % (f, _num(host)))
                continue
            d = INF if host != host else dev - host
            diffs.append(d)
            ad = abs(d)
            if ad > self.maxima[f][0]:
                self.maxima[f] = (ad, row.line)
            if ad > self.tol[f]:
                problems.append("%s differs by %s (device %s, host %s, tolerance %g)"
                                % (f, _num(d), _num(dev), _num(host), self.tol[f]))
        flags_ok = row.flags is None or row.flags == col.flags
        rounded = False
        if not flags_ok and printed_same_p and col.flags & FL_SAME_P and \
                not row.flags & FL_SAME_P and not (row.flags ^ col.flags) & ~ROUNDING_BITS:
            flags_ok = rounded = True
        events_ok = True
        host_events = table.events_text(bits, [lv[0] for lv in levels] if bits & 1 else NAN)
        if row.events is not None:
            # a device may name only the highest level a reading crossed
            last = int(round(levels[-1][0] / 100.0)) if bits & 1 and levels else 0
            events_ok = row.event_bits == bits and row.level_hpa == last
        if not (flags_ok and events_ok):
            self.mismatched_events += 1
            if not self.ignore_events:
                if not flags_ok:
                    problems.append("flags device %d, host %d" % (row.flags, col.flags))
                if not events_ok:
                    problems.append("events device %s, host %s" % (row.events, host_events))
        line = row.line
        if problems:
            self.offence("FAIL", line, row.lineno, "; ".join(problems))
        elif rounded:
            self.rounded += 1
            if self.first_rounded is None:
                self.first_rounded = "line %s (device table line %d): flags device %d, host %d, " \
                    "p_pa printed %.2f as on the row before" % (line, row.lineno, row.flags,
                                                                 col.flags, row.p_pa)
        status = "FAIL" if problems else ROUNDED[0] if rounded else "ok"
        self.row(line, row.lineno, status, diffs, "ok" if flags_ok and not rounded else "differ",
                 "ok" if events_ok else "differ")

    def passed(self):
        return self.offending == 0 and self.compared > 0 and self.table_problem is None


def run(a, stdin, stdout, stderr):
    """The ``compare`` command; returns the exit status."""
    if a.show < 0:
        raise UsageError("--show %d: give a whole number >= 0" % a.show)
    for name in ("tol_height", "tol_rate", "tol_sigma"):
        v = getattr(a, name)
        if not v >= 0.0:
            raise UsageError("--%s %s: give a tolerance >= 0" % (name.replace("_", "-"), v))
    if a.log == "-" and a.device == "-":
        raise UsageError("only one of the device table and --log can be stdin")
    check_paths([("device", a.device), ("log", a.log)], [("--diffs", a.diffs)], stdin)
    lines, dev_name, close = open_text(a.device, stdin)
    close_log = None
    try:
        dev = table.TableReader(lines, dev_name)
        if dev.input.get("every", "1") != "1":
            raise table.TableError("%s holds every %s-th row only (replayed with --every): replay "
                                   "the log without --every to compare it" % (dev_name,
                                                                            dev.input["every"]))
        reader = None
        if a.log:
            log_lines, log_name, close_log = open_text(a.log, stdin)
            reader = LogReader(log_lines, mapping(a), a.delimiter, log_name)
        setup = setup_from_site(dev.site, a, reader.meta if reader else {})
        if reader is not None:
            if "humidity" not in reader.columns and "dewpoint" not in reader.columns:
                setup.options["dry_fallback"] = True
            reader.settle(setup.start_height_m, True)
        elif "p_pa" not in dev.present or "t_k" not in dev.present:
            raise table.TableError("%s: the table has no %s column, so the host cannot feed its "
                                   "readings again; give the raw log with --log FILE"
                                   % (dev_name, "p_pa" if "p_pa" not in dev.present else "t_k"))
        col = new_column(setup)
        tol = {"gph_m": a.tol_height, "height_m": a.tol_height, "rate_m_s": a.tol_rate,
               "sigma_m": a.tol_sigma}
        with Outputs(stdout) as outs:
            diffs = outs.open(a.diffs) if a.diffs else None
            tally = Tally(tol, a.ignore_events, a.show, diffs, dev.present, dev.numeric)
            if diffs is not None:
                diffs.write(DIFF_HEADER + "\n")
            if reader is None:
                _against_inputs(dev, col, tally)
                source = "its own inputs"
            else:
                _against_log(dev, reader, col, tally)
                source = "log %s" % a.log
            _check_end(dev, tally, reader is None)
            report = outs.open(None)
            _report(report, tally, dev_name, source, setup, dev)
            outs.commit()
        return EXIT_OK if tally.passed() else EXIT_COMPARE_FAILED
    finally:
        close()
        if close_log is not None:
            close_log()


def _check_end(dev, tally, strict):
    end = dev.end
    if end is None:
        # a table written by an older host replay ends with its summary
        acc = dict(dev.summary).get("accepted")
        if acc is not None and "count" in acc:
            end = {"rows": acc["count"]}
    if end is None:
        if strict:
            tally.table_problem = ("no end record ('#: end rows=N'): the table was cut short, or "
                                   "its writer did not finish (tinygeo.record.end_line)")
        return
    try:
        rows = int(end.get("rows", "-1"))
    except ValueError:
        rows = -1
    if rows < 0 or rows > dev.rows:
        tally.table_problem = ("the end record says %s rows, the table holds %d: rows are missing"
                               % (end.get("rows", "?"), dev.rows))
    elif rows < dev.rows:
        tally.table_problem = ("the end record says %d rows, the table holds %d: %d extra rows "
                               "(duplicated rows?%s)" % (
                                   rows, dev.rows, dev.rows - rows,
                                   " %d rows repeat or go back in line number, the first at "
                                   "table line %d" % (dev.backwards, dev.first_backwards)
                                   if dev.backwards else ""))


def _feed(col, reading):
    tap = col.on_event
    del tap.levels[:]
    return col.feed(reading[1], reading[2], reading[3], reading[4], reading[5])


def _against_inputs(dev, col, tally):
    prev_p = NAN
    for row in dev:
        same_p = row.p_pa == prev_p
        prev_p = row.p_pa
        gps = row.gps_m
        if gps != gps:
            # nan: not given, or given as nan ('no fix': the flag tells)
            gps = NAN if row.flags is not None and row.flags & FL_NO_GPS else None
        reading = (row.line, row.p_pa, row.t_k, _opt(row.rh_pct), _opt(row.time_s), gps)
        try:
            bits = _feed(col, reading)
        except ValueError as e:
            tally.compared += 1
            tally.offence("host-rejected", row.line, row.lineno, "the host rejects this reading "
                          "(%s: %s)" % (getattr(e, "reason", "reading"), rp.tidy(str(e))))
            tally.row(row.line, row.lineno, "host-rejected")
            continue
        tally.check(row, col, bits, col.on_event.levels, same_p)


class _Matcher:
    """Merges the host's accepted readings (pushed by replay.run) with the
    device rows (pulled), by line number or by time since the first row."""

    def __init__(self, dev, col, tally):
        self.rows = iter(dev)
        self.col = col
        self.tally = tally
        self.by_line = "line" in dev.present
        self.d = next(self.rows, None)
        self.t0_dev = None if self.d is None else self.d.time_s
        self.t0_host = None

    def key_dev(self, d):
        return d.line if self.by_line else round((d.time_s - self.t0_dev) / TIME_MATCH_S)

    def key_host(self, reading):
        if self.by_line:
            return reading[0]
        ts = reading[4]
        if ts is None:
            return None
        if self.t0_host is None:
            self.t0_host = ts
        return round((ts - self.t0_host) / TIME_MATCH_S)

    def __call__(self, reading, bits):
        t = self.tally
        hk = self.key_host(reading)
        while self.d is not None and hk is not None and self.key_dev(self.d) < hk:
            t.one_side("device-only", self.d.line, self.d.lineno)
            self.d = next(self.rows, None)
        if self.d is None:
            t.one_side("missing-at-end", reading[0], None)
        elif hk is not None and self.key_dev(self.d) == hk:
            t.check(self.d, self.col, bits, self.col.on_event.levels)
            self.d = next(self.rows, None)
        else:
            t.one_side("missing-on-device", reading[0], None)

    def rest(self):
        while self.d is not None:
            self.tally.one_side("device-only", self.d.line, self.d.lineno)
            self.d = next(self.rows, None)


def _against_log(dev, reader, col, tally):
    summary = rp.Summary(col, col.lat_deg)
    match = _Matcher(dev, col, tally)
    rp.run(reader, col, summary, lambda msg: None, sink=match)
    match.rest()


def _report(out, tally, dev_name, source, setup, dev):
    w = out.write
    w("tinygeo compare: device table %s against a host replay of %s\n" % (dev_name, source))
    w("column: lat_deg=%s start_height_m=%s\n" % (_num(setup.lat_deg), _num(setup.start_height_m)))
    if dev.resumes:
        w("resume records (the logger went on from a checkpoint): %d; rows it took again, "
          "earlier copies dropped: %d%s\n"
          % (dev.resumes, dev.voided, "; rows torn by a power cut, dropped: %d" % dev.torn
             if dev.torn else ""))
    elif dev.torn:
        w("last row torn (the table was cut short), dropped: %d\n" % dev.torn)
    if dev.torn_resumes:
        w("resume records torn by a power cut while written (no final word 'whole'), "
          "ignored: %d (the first at table line %d)\n"
          % (dev.torn_resumes, dev.first_torn_resume))
    if dev.backwards:
        w("rows whose line is not above every row before: %d (the first at table line %d; "
          "rows written twice? a logger that resumes from a checkpoint writes '#: resume "
          "line=N whole', tinygeo.record.resume_line)\n"
          % (dev.backwards, dev.first_backwards))
    w("readings compared: %d\n" % tally.compared)
    if tally.skipped:
        w("values not computed on the device (nan in every row), skipped: %d\n" % tally.skipped)
    w("largest |device - host|:\n")
    for f in FIELDS:
        if f not in tally.fields:
            w("  %-9s (not in the device table)\n" % f)
            continue
        v, line = tally.maxima[f]
        w("  %-9s %10s   tolerance %-6g %s\n" % (f, _num(v), tally.tol[f],
                                                  "" if line is None else "(line %d)" % line))
    w("flags/events differing: %d%s\n" % (tally.mismatched_events,
                                          " (ignored)" if tally.ignore_events else ""))
    if tally.rounded:
        w("%s: %d (%s; first: %s)\n" % (ROUNDED[0], tally.rounded, ROUNDED[1],
                                        tally.first_rounded))
    one_side = tally.status["device-only"] + tally.status["missing-on-device"] + \
        tally.status["missing-at-end"]
    w("readings on one side only: %d\n" % one_side)
    w("offending readings: %d\n" % tally.offending)
    for status, text in STATUSES:
        if tally.status[status]:
            w("  %s: %d (%s)\n" % (status, tally.status[status], text))
    if tally.table_problem:
        w("device table: %s\n" % tally.table_problem)
    if tally.first:
        w("first offending: %s\n" % tally.first)
        for msg in tally.listed[1:]:
            w("  also: %s\n" % msg)
        if tally.offending > len(tally.listed):
            w("  ... %d more (use --diffs FILE for all)\n" % (tally.offending - len(tally.listed)))
    if tally.compared == 0:
        w("result: FAIL (no readings to compare)\n")
    else:
        w("result: %s\n" % ("PASS" if tally.passed() else "FAIL"))
