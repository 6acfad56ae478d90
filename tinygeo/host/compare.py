"""Compare a device's replay table with a host replay of the same readings.

The pre-deployment check: the device runs the column on its own float
arithmetic and writes the table layout of :mod:`tinygeo.host.table`; the host
runs the same column in double precision on the same readings and the two are
compared reading by reading. Streaming: one device row and one host result at
a time, so memory stays flat.

Two ways to get the host side:
* default: the inputs written in the device table (time_s, p_pa, t_k,
  rh_pct, gps_m; ``nan`` = missing) are fed to a host column set up from the
  table's ``# site`` line (options on the command line override it);
* ``--log FILE``: the raw log the device was fed is replayed on the host with
  the usual column mapping, and rows are matched by their ``line`` number; a
  reading accepted on one side only is an offence.

A reading offends when |device - host| exceeds a tolerance for gph_m or
height_m (``--tol-height``), rate_m_s (``--tol-rate``) or sigma_m
(``--tol-sigma``), or (unless ``--ignore-events``) flags or events differ.
nan on both sides counts as equal, nan on one side only as an infinite
difference.
"""
from tinygeo.host import table
from tinygeo.host import replay as rp

NAN = float("nan")
INF = float("inf")
FIELDS = ("gph_m", "height_m", "rate_m_s", "sigma_m")
DIFF_HEADER = "line\tdevice_line\td_gph_m\td_height_m\td_rate_m_s\td_sigma_m\tflags\tevents\tstatus"


def _diff(dev, host):
    if dev != dev and host != host:
        return 0.0
    if dev != dev or host != host:
        return INF
    return dev - host


def _opt(x):
    return None if x != x else x


class Tally:
    """Maxima and offences of one comparison (bounded memory)."""

    def __init__(self, tolerances, ignore_events, show):
        self.tol = tolerances
        self.ignore_events = ignore_events
        self.show = show
        self.compared = 0
        self.offending = 0
        self.mismatched_events = 0
        self.unmatched = 0
        self.maxima = dict((f, (0.0, None)) for f in FIELDS)
        self.first = None
        self.listed = []

    def offence(self, line, device_line, text):
        self.offending += 1
        where = "line %d" % line + ("" if device_line is None else
                                    " (device table line %d)" % device_line)
        msg = "%s: %s" % (where, text)
        if self.first is None:
            self.first = msg
        if len(self.listed) < self.show:
            self.listed.append(msg)

    def check(self, row, col, bits):
        """Compare device ``row`` with the host column after a feed; return
        the diff-file line."""
        self.compared += 1
        diffs = []
        problems = []
        for f in FIELDS:
            host = getattr(col, f, NAN)
            host = NAN if host is None else host
            d = _diff(getattr(row, f), host)
            diffs.append(d)
            ad = abs(d)
            if ad > self.maxima[f][0]:
                self.maxima[f] = (ad, row.line)
            if ad > self.tol[f]:
                problems.append("%s differs by %s (device %s, host %s, tolerance %g)"
                                % (f, _num(d), _num(getattr(row, f)), _num(host), self.tol[f]))
        host_flags = int(getattr(col, "flags", 0) or 0)
        host_events = table.events_text(
            bits, [lv[0] for lv in rp._levels(col)] if bits & table.EV_LEVEL else NAN)
        flags_ok = host_flags == row.flags
        events_ok = host_events == row.events
        if not (flags_ok and events_ok):
            self.mismatched_events += 1
            if not self.ignore_events:
                if not flags_ok:
                    problems.append("flags device %d, host %d" % (row.flags, host_flags))
                if not events_ok:
                    problems.append("events device %s, host %s" % (row.events, host_events))
        if problems:
            self.offence(row.line, row.lineno, "; ".join(problems))
        return "%d\t%d\t%s\t%s\t%s\t%s\t%s\t%s\t%s" % (
            row.line, row.lineno, _num(diffs[0]), _num(diffs[1]), _num(diffs[2]), _num(diffs[3]),
            "ok" if flags_ok else "differ", "ok" if events_ok else "differ",
            "FAIL" if problems else "ok")

    def passed(self):
        return self.offending == 0 and self.compared > 0


def _num(x):
    return "%.3f" % x


def _device_reading(row):
    return (row.line, row.p_pa, row.t_k, _opt(row.rh_pct), _opt(row.time_s), _opt(row.gps_m))


def _site_from_table(site, a, meta):
    """Column set-up from the device table's site line, overridden by options.

    The raw log's comments (``meta``) only fill in a latitude or start height
    the device table lacks: its sensor errors describe the sensor, not what
    the device's column was set up with."""
    def num(key):
        if key in site:
            try:
                return float(site[key])
            except ValueError:
                raise table.TableError("device table: %s=%r in the '# site' line is not a number"
                                       % (key, site[key]))
        if key in ("lat_deg", "start_height_m"):
            return meta.get(key)
        return None

    lat = a.lat if a.lat is not None else num("lat_deg")
    if lat is None:
        raise table.TableError("the latitude is not known: the device table has no lat_deg in its "
                               "'# site' line; pass --lat DEG")
    h0 = a.start_height if a.start_height is not None else num("start_height_m")
    h0 = 0.0 if h0 is None else h0
    opts = {}
    from tinygeo.host import cli
    anchor = cli.anchor_p_pa(a.anchor_pressure) if a.anchor_pressure is not None \
        else num("anchor_p_pa")
    if anchor is not None and anchor == anchor:
        opts["anchor_p_pa"] = anchor
    for key, arg in cli.sensor_options(a):
        v = arg if arg is not None else num(key)
        if v is not None:
            opts[key] = v
    rate = a.max_rate if a.max_rate is not None else num("max_rate_m_s")
    if rate is not None:
        opts["max_rate_m_s"] = rate
    if a.ice or num("ice"):
        opts["ice"] = True
    if a.dry or num("dry_fallback"):
        opts["dry_fallback"] = True
    return lat, h0, opts


def run(a, stdin, stdout, stderr):
    """The ``compare`` command; returns the exit status."""
    from tinygeo.host import cli, logread
    if a.show < 0:
        raise cli.UsageError("--show %d: give a whole number >= 0" % a.show)
    for name in ("tol_height", "tol_rate", "tol_sigma"):
        v = getattr(a, name)
        if not v >= 0.0:
            raise cli.UsageError("--%s %s: give a tolerance >= 0" % (name.replace("_", "-"), v))
    f, dev_name, close = cli._open_text(a.device, stdin)
    log = None
    diffs = None
    try:
        dev = table.TableReader(f, dev_name)
        reader = None
        if a.log:
            if a.log == "-" and a.device == "-":
                raise cli.UsageError("only one of the device table and --log can be stdin")
            log, log_name, _ = cli._open_text(a.log, stdin)
            reader = logread.LogReader(log, cli._mapping(a), a.delimiter, log_name)
        lat, h0, opts = _site_from_table(dev.site, a, reader.meta if reader else {})
        if reader is not None and "humidity" not in reader.columns and "dewpoint" not in reader.columns:
            opts["dry_fallback"] = True
        col = cli.new_column(lat, h0, opts)
        tol = {"gph_m": a.tol_height, "height_m": a.tol_height, "rate_m_s": a.tol_rate,
               "sigma_m": a.tol_sigma}
        tally = Tally(tol, a.ignore_events, a.show)
        if a.diffs:
            diffs, _ = cli._open_out(a.diffs, stdout)
            diffs.write(DIFF_HEADER + "\n")
        if reader is None:
            _against_inputs(dev, col, tally, diffs)
            source = "its own inputs"
        else:
            _against_log(dev, reader, col, tally, diffs, stderr)
            source = "log %s" % a.log
        _report(stdout, tally, dev_name, source, lat, h0)
        return 0 if tally.passed() else 1
    finally:
        if close:
            f.close()
        if log is not None and a.log != "-":
            log.close()
        if diffs is not None and diffs is not stdout:
            diffs.close()


def _against_inputs(dev, col, tally, diffs):
    for row in dev:
        try:
            bits = rp.feed(col, _device_reading(row))
        except ValueError as e:
            tally.compared += 1
            tally.offence(row.line, row.lineno, "the host rejects this reading (%s: %s)"
                          % (getattr(e, "reason", "reading"), e))
            if diffs is not None:
                diffs.write("%d\t%d\tnan\tnan\tnan\tnan\t-\t-\thost-rejected\n" % (row.line, row.lineno))
            continue
        line = tally.check(row, col, bits)
        if diffs is not None:
            diffs.write(line + "\n")


def _against_log(dev, reader, col, tally, diffs, stderr):
    summary = rp.Summary()
    host = rp.readings(reader, col, summary, lambda msg: None)
    dev_it = iter(dev)
    h = next(host, None)
    d = next(dev_it, None)
    while h is not None or d is not None:
        if d is None or (h is not None and h[0][0] < d.line):
            tally.unmatched += 1
            tally.offence(h[0][0], None, "accepted by the host but missing from the device table")
            if diffs is not None:
                diffs.write("%d\t-\tnan\tnan\tnan\tnan\t-\t-\tmissing-on-device\n" % h[0][0])
            h = next(host, None)
        elif h is None or d.line < h[0][0]:
            tally.unmatched += 1
            tally.offence(d.line, d.lineno, "in the device table but not accepted by the host")
            if diffs is not None:
                diffs.write("%d\t%d\tnan\tnan\tnan\tnan\t-\t-\tmissing-on-host\n" % (d.line, d.lineno))
            d = next(dev_it, None)
        else:
            line = tally.check(d, col, h[1])
            if diffs is not None:
                diffs.write(line + "\n")
            h = next(host, None)
            d = next(dev_it, None)


def _report(out, tally, dev_name, source, lat, h0):
    w = out.write
    w("tinygeo compare: device table %s against a host replay of %s\n" % (dev_name, source))
    w("column: lat_deg=%s start_height_m=%s\n" % (_num(lat), _num(h0)))
    w("readings compared: %d\n" % tally.compared)
    w("largest |device - host|:\n")
    for f in FIELDS:
        v, line = tally.maxima[f]
        w("  %-9s %10s   tolerance %-6g %s\n" % (f, _num(v), tally.tol[f],
                                                  "" if line is None else "(line %d)" % line))
    w("flags/events differing: %d%s\n" % (tally.mismatched_events,
                                          " (ignored)" if tally.ignore_events else ""))
    w("readings on one side only: %d\n" % tally.unmatched)
    w("offending readings: %d\n" % tally.offending)
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
