"""The ``tinygeo`` command line (also ``python -m tinygeo``).

Commands: ``replay`` a recorded log through the column, ``simulate`` an
invented flight, ``compare`` a device's table with a host replay, ``plot`` a
replayed profile. :func:`main` returns the exit status instead of exiting, so
tests can call it in-process.
"""
import argparse
import io
import os
import sys

from tinygeo.errors import TinygeoError

EXIT_OK = 0
EXIT_COMPARE_FAILED = 1
EXIT_INPUT = 2
EXIT_MISSING_EXTRA = 3
EXIT_INTERRUPTED = 130

ANCHOR_HPA_MIN = 100.0    # --anchor-pressure range, hPa
ANCHOR_HPA_MAX = 1100.0

EXIT_TEXT = """exit status:
  0   success (compare: every reading within the tolerances)
  1   compare found a reading outside the tolerances (or a missing one)
  2   usage or input error: bad option, unreadable file, empty log, no header,
      unknown column, a unit the values contradict (a time column in s or ms
      whose first move gives an impossible vertical speed), nothing accepted,
      more than half of the readings rejected for one reason (rate, time,
      pressure, temperature, humidity, number, gps; counted from the 100th
      reading on)
  3   plot: matplotlib is not installed (pip install 'tinygeo[plot]')
  130 interrupted (Ctrl-C)"""

MAPPING_HELP = """column mapping (default: from the header names):
  NAME is a header name or a column number (1 = first); :UNIT is optional
  when the header name ends in a unit word (pressure_hpa, temp_c, time_s).
  Recognised by default: p/pressure/press/baro, t/temp/temperature,
  rh/humidity, td/dewpoint/dew_point, time/elapsed/timestamp/utc, gps/gps_alt,
  each optionally followed by a unit (pa hpa mbar kpa, k c degc, pct, s ms,
  m). Comment lines (#) before the header may set lat_deg=, start_height_m=,
  sigma_p_pa=, sigma_t_k=, sigma_rh_pct=, bias_p_pa=, bias_t_k=, bias_rh_pct=
  (as 'tinygeo simulate' writes); options given here take precedence."""


class UsageError(TinygeoError):
    """Bad command-line use; exit status 2."""


class _Parser(argparse.ArgumentParser):
    def error(self, message):
        raise UsageError("%s: %s (see '%s --help')" % (self.prog, message, self.prog))


def _add_mapping(p):
    g = p.add_argument_group("column mapping", MAPPING_HELP)
    g.add_argument("--pressure", metavar="NAME[:Pa|hPa|kPa]", help="pressure column")
    g.add_argument("--temperature", metavar="NAME[:K|C]", help="air temperature column")
    g.add_argument("--humidity", metavar="NAME", help="relative humidity column, %% (over water)")
    g.add_argument("--dew-point", dest="dewpoint", metavar="NAME[:K|C]",
                   help="dew point column, instead of --humidity")
    g.add_argument("--time", metavar="NAME[:s|ms|iso]",
                   help="time column: seconds, or ISO-8601 timestamps (e.g. 2026-05-04T09:30:00Z)")
    g.add_argument("--gps", metavar="NAME", help="GPS height column, m above mean sea level")
    g.add_argument("--delimiter", metavar="CHAR",
                   help="field separator (',', ';', '|', tab, space); default: taken from the header")


def _column_default(keyword):
    """The Column constructor's default for ``keyword``, as help text."""
    from tinygeo.host.replay import column_default
    return "%g" % column_default(keyword)


def _sensor_help(text, keyword):
    return "%s (default: %s= in the input's comment lines, else %s)" % (
        text, keyword, _column_default(keyword))


def _add_site(p):
    g = p.add_argument_group("site and column set-up")
    g.add_argument("--lat", type=float, metavar="DEG",
                   help="launch latitude, degrees north (default: lat_deg= in the log's comments)")
    g.add_argument("--start-height", type=float, metavar="M",
                   help="height of the first reading above mean sea level, m "
                        "(default: start_height_m= in the log's comments, else 0)")
    g.add_argument("--anchor-pressure", type=float, metavar="HPA",
                   help="the start height is that of this pressure (hPa, %g..%g), not of the "
                        "first reading" % (ANCHOR_HPA_MIN, ANCHOR_HPA_MAX))
    g.add_argument("--sigma-p", type=float, metavar="PA",
                   help=_sensor_help("pressure sensor 1-sigma noise, Pa", "sigma_p_pa"))
    g.add_argument("--sigma-t", type=float, metavar="K",
                   help=_sensor_help("temperature sensor 1-sigma noise, K", "sigma_t_k"))
    g.add_argument("--sigma-rh", type=float, metavar="PCT",
                   help=_sensor_help("humidity sensor 1-sigma noise, %%", "sigma_rh_pct"))
    g.add_argument("--bias-p", type=float, metavar="PA",
                   help=_sensor_help("pressure sensor 1-sigma calibration uncertainty, Pa",
                                     "bias_p_pa"))
    g.add_argument("--bias-t", type=float, metavar="K",
                   help=_sensor_help("temperature sensor 1-sigma calibration uncertainty, K",
                                     "bias_t_k"))
    g.add_argument("--bias-rh", type=float, metavar="PCT",
                   help=_sensor_help("humidity sensor 1-sigma calibration uncertainty, %%",
                                     "bias_rh_pct"))
    g.add_argument("--max-rate", type=float, metavar="M_S",
                   help="fastest believable vertical speed, m/s; faster readings are rejected "
                        "(default %s)" % _column_default("max_rate_m_s"))
    g.add_argument("--ice", action="store_true", help="humidity is over ice below 0 degC")
    g.add_argument("--dry", action="store_true",
                   help="assume dry air when humidity is missing (the default when there is "
                        "no humidity column)")


def build_parser():
    """Return the argparse parser of the ``tinygeo`` command."""
    top = _Parser(
        prog="tinygeo",
        description="Heights from a stream of pressure, temperature and humidity: replay a log, "
                    "simulate a flight, compare a device with the host, plot a profile.",
        epilog=EXIT_TEXT + "\n\nfirst try:  tinygeo replay examples/schoolfield_flight.csv --every 100",
        formatter_class=argparse.RawDescriptionHelpFormatter)
    from tinygeo import __version__
    top.add_argument("--version", action="version", version="tinygeo %s" % __version__)
    sub = top.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    r = sub.add_parser(
        "replay", help="replay a recorded log through the column, writing a table and a summary",
        description="Replay a log (CSV/TSV with a header, or '-' for stdin, read line by line) "
                    "through the column; write one row per accepted reading and a summary "
                    "(mandatory levels, tropopause, burst, highest point, landing, counts). "
                    "Rejected readings are reported on stderr with their line number.",
        epilog="table layout: see 'tinygeo.host.table'.\n\n" + EXIT_TEXT,
        formatter_class=argparse.RawDescriptionHelpFormatter)
    r.add_argument("log", help="log file, or - for standard input")
    _add_mapping(r)
    _add_site(r)
    o = r.add_argument_group("output")
    o.add_argument("-o", "--out", metavar="FILE",
                   help="write the table to FILE (the summary is then also printed on stdout)")
    o.add_argument("--summary", metavar="FILE", help="also write the summary lines to FILE")
    o.add_argument("--every", type=int, default=1, metavar="N",
                   help="write only every N-th accepted reading plus every reading with an event "
                        "(default 1: all)")
    o.add_argument("--flush", action="store_true",
                   help="flush after each row (automatic when reading stdin)")
    o.add_argument("--quiet", action="store_true", help="do not report rejected readings one by one")

    s = sub.add_parser(
        "simulate", help="invent a flight as a log that replay reads (seeded, reproducible)",
        description="Invent a balloon flight for firmware tests (made-up data): standard "
                    "atmosphere with seeded perturbations, ascent, burst, parachute descent, "
                    "sensor noise, quantisation, dropouts, spikes and clock jitter.",
        epilog=EXIT_TEXT, formatter_class=argparse.RawDescriptionHelpFormatter)
    s.add_argument("-o", "--out", metavar="FILE", help="log file (default: stdout)")
    s.add_argument("--truth", metavar="FILE", help="also write the true values per log line (CSV)")
    s.add_argument("--seed", type=int, default=1, help="random seed (default 1)")
    s.add_argument("--lat", type=float, default=47.3, metavar="DEG", help="site latitude (47.3)")
    s.add_argument("--elevation", type=float, default=420.0, metavar="M",
                   help="site height above mean sea level, m (420)")
    s.add_argument("--ascent-rate", type=float, default=5.0, metavar="M_S", help="m/s (5)")
    s.add_argument("--burst", type=float, default=24000.0, metavar="M",
                   help="burst height above mean sea level, m (24000)")
    s.add_argument("--descent-rate", type=float, default=5.5, metavar="M_S",
                   help="parachute descent rate at sea-level density, m/s (5.5)")
    s.add_argument("--interval", type=float, default=2.0, metavar="S", help="s between readings (2)")
    s.add_argument("--wait", type=float, default=60.0, metavar="S", help="s on the ground before launch (60)")
    s.add_argument("--ground", type=float, default=120.0, metavar="S", help="s logged after landing (120)")
    s.add_argument("--perturb", type=float, default=2.0, metavar="K",
                   help="size of the temperature perturbation, K (2)")
    s.add_argument("--rh-surface", type=float, default=70.0, metavar="PCT", help="surface humidity, %% (70)")
    s.add_argument("--sigma-p", type=float, default=3.0, metavar="PA", help="pressure noise, Pa (3)")
    s.add_argument("--sigma-t", type=float, default=0.15, metavar="K", help="temperature noise, K (0.15)")
    s.add_argument("--sigma-rh", type=float, default=1.5, metavar="PCT", help="humidity noise, %% (1.5)")
    s.add_argument("--bias-p", type=float, default=20.0, metavar="PA",
                   help="1-sigma of the pressure calibration offset drawn for the flight, Pa (20)")
    s.add_argument("--bias-t", type=float, default=0.1, metavar="K",
                   help="1-sigma of the temperature calibration offset, K (0.1)")
    s.add_argument("--bias-rh", type=float, default=2.0, metavar="PCT",
                   help="1-sigma of the humidity calibration offset, %% (2)")
    s.add_argument("--sigma-gps", type=float, default=4.0, metavar="M", help="GPS height noise, m (4)")
    s.add_argument("--dropout", type=float, default=0.002, metavar="P",
                   help="probability that a line is lost (0.002)")
    s.add_argument("--spikes", type=float, default=0.002, metavar="P",
                   help="probability of a spike in pressure or temperature (0.002)")
    s.add_argument("--jitter", type=float, default=0.02, metavar="S", help="clock jitter, s (0.02)")
    s.add_argument("--clean", action="store_true",
                   help="no offsets, noise, dropouts, spikes or jitter (quantisation stays)")
    s.add_argument("--no-gps", action="store_true", help="leave out the GPS column")
    s.add_argument("--dew-point", action="store_true", help="write dew point instead of humidity")
    s.add_argument("--start", metavar="ISO",
                   help="write ISO-8601 timestamps from this launch-day time (e.g. 2026-05-04T09:30:00Z) "
                        "instead of seconds")
    s.add_argument("--tsv", action="store_true", help="tab-separated instead of comma-separated")

    c = sub.add_parser(
        "compare", help="compare a device's table with a host replay of the same readings",
        description="Compare a table written by a device (same layout as 'tinygeo replay' writes) "
                    "with a host replay. By default the host re-feeds the inputs found in the "
                    "device table (time_s p_pa t_k rh_pct gps_m) to a column set up from its "
                    "'# site' line; with --log the host replays the raw log instead and matches "
                    "rows by line number.",
        epilog=EXIT_TEXT, formatter_class=argparse.RawDescriptionHelpFormatter)
    c.add_argument("device", help="table written by the device")
    c.add_argument("--log", metavar="FILE", help="raw log the device was fed (replayed on the host)")
    _add_mapping(c)
    _add_site(c)
    t = c.add_argument_group("tolerances")
    t.add_argument("--tol-height", type=float, default=0.5, metavar="M",
                   help="gph_m and height_m, m (0.5)")
    t.add_argument("--tol-rate", type=float, default=0.05, metavar="M_S", help="rate_m_s, m/s (0.05)")
    t.add_argument("--tol-sigma", type=float, default=0.5, metavar="M", help="sigma_m, m (0.5)")
    t.add_argument("--ignore-events", action="store_true", help="do not require equal flags and events")
    c.add_argument("--diffs", metavar="FILE", help="write the per-reading differences to FILE")
    c.add_argument("--show", type=int, default=10, metavar="N",
                   help="list up to N offending readings (10)")

    pl = sub.add_parser(
        "plot", help="draw a replayed profile to PNG or SVG (needs matplotlib)",
        description="Draw height against time, temperature and dew point against height, "
                    "vertical rate and uncertainty, with mandatory levels, tropopause and burst "
                    "marked. INPUT is a table from 'tinygeo replay' or a raw log (replayed on "
                    "the fly with the mapping options).",
        epilog=EXIT_TEXT, formatter_class=argparse.RawDescriptionHelpFormatter)
    pl.add_argument("input", help="replay table or raw log")
    pl.add_argument("-o", "--out", metavar="FILE", required=True, help="image file, .png or .svg")
    pl.add_argument("--title", help="figure title (default: the input's name)")
    pl.add_argument("--dpi", type=int, default=100, help="PNG resolution, dots per inch (100)")
    _add_mapping(pl)
    _add_site(pl)
    return top


# -- shared helpers -----------------------------------------------------------
def _mapping(a):
    return {q: getattr(a, q) for q in ("pressure", "temperature", "humidity", "dewpoint", "time", "gps")
            if getattr(a, q, None)}


def _open_text(path, stdin):
    if path == "-":
        if hasattr(stdin, "reconfigure"):
            try:
                stdin.reconfigure(errors="replace")
            except (ValueError, io.UnsupportedOperation):
                pass
        return stdin, "stdin", False
    if os.path.isdir(path):
        raise UsageError("%s is a directory; give a log file" % path)
    try:
        f = open(path, "r", encoding="utf-8", errors="replace", newline="")
    except OSError as e:
        raise UsageError("cannot read %s: %s" % (path, e.strerror or e))
    return f, path, True


def _open_out(path, stdout):
    if path is None or path == "-":
        return stdout, False
    try:
        return open(path, "w", encoding="utf-8", newline="\n"), True
    except OSError as e:
        raise UsageError("cannot write %s: %s" % (path, e.strerror or e))


def sensor_options(a):
    """(column keyword, option value) pairs of the sensor error options."""
    return (("sigma_p_pa", a.sigma_p), ("sigma_t_k", a.sigma_t), ("sigma_rh_pct", a.sigma_rh),
            ("bias_p_pa", a.bias_p), ("bias_t_k", a.bias_t), ("bias_rh_pct", a.bias_rh))


def anchor_p_pa(hpa):
    """Return the --anchor-pressure value (hPa) in Pa, or raise UsageError
    when it is outside ANCHOR_HPA_MIN..ANCHOR_HPA_MAX hPa, with a hint in hPa
    terms (a value in Pa or kPa is the likely slip)."""
    if hpa == hpa and ANCHOR_HPA_MIN <= hpa <= ANCHOR_HPA_MAX:
        return hpa * 100.0
    if not hpa == hpa or hpa in (float("inf"), float("-inf")):
        hint = "give a finite number of hPa (e.g. 1013.25)"
    elif ANCHOR_HPA_MIN * 100.0 <= hpa <= ANCHOR_HPA_MAX * 100.0:
        hint = "Pa passed? divide by 100: --anchor-pressure %g" % (hpa / 100.0)
    elif ANCHOR_HPA_MIN / 10.0 <= hpa <= ANCHOR_HPA_MAX / 10.0:
        hint = "kPa passed? multiply by 10: --anchor-pressure %g" % (hpa * 10.0)
    else:
        hint = "give the pressure of the start height in hPa (e.g. 1013.25)"
    raise UsageError("--anchor-pressure %g is outside %g..%g hPa; %s"
                     % (hpa, ANCHOR_HPA_MIN, ANCHOR_HPA_MAX, hint))


def column_setup(a, reader):
    """Return (lat_deg, start_height_m, column keyword options, site pairs)."""
    meta = reader.meta if reader is not None else {}
    lat = a.lat if a.lat is not None else meta.get("lat_deg")
    if lat is None:
        raise UsageError("the latitude is not known: pass --lat DEG (degrees north), or put "
                         "'# lat_deg=..' in a comment line before the header")
    h0 = a.start_height if a.start_height is not None else meta.get("start_height_m", 0.0)
    opts = {}
    if a.anchor_pressure is not None:
        opts["anchor_p_pa"] = anchor_p_pa(a.anchor_pressure)
    for key, arg in sensor_options(a):
        v = arg if arg is not None else meta.get(key)
        if v is not None:
            opts[key] = v
    if a.max_rate is not None:
        opts["max_rate_m_s"] = a.max_rate
    if a.ice:
        opts["ice"] = True
    if a.dry or (reader is not None and "humidity" not in reader.columns
                 and "dewpoint" not in reader.columns):
        opts["dry_fallback"] = True
    site = [("lat_deg", float(lat)), ("start_height_m", float(h0))]
    for k in sorted(opts):
        site.append((k, opts[k] if not isinstance(opts[k], bool) else (1 if opts[k] else 0)))
    return float(lat), float(h0), opts, site


def new_column(lat, h0, opts):
    from tinygeo.host import replay as rp
    try:
        return rp.make_column(lat, h0, opts)
    except TypeError as e:
        raise UsageError("the column does not take these settings (%s)" % e)
    except ValueError as e:
        raise UsageError("column set-up rejected: %s" % e)


# -- commands -----------------------------------------------------------------
def cmd_replay(a, stdin, stdout, stderr):
    from tinygeo.host import logread, replay as rp
    if a.every < 1:
        raise UsageError("--every %d: give a whole number >= 1" % a.every)
    f, name, close = _open_text(a.log, stdin)
    out = None
    close_out = False
    try:
        reader = logread.LogReader(f, _mapping(a), a.delimiter, name)
        lat, h0, opts, site = column_setup(a, reader)
        col = new_column(lat, h0, opts)
        out, close_out = _open_out(a.out, stdout)
        live = a.log == "-" or a.flush
        err = _NullReports(stderr) if a.quiet else stderr
        target = out if a.every == 1 else _Thinning(out, a.every)
        summary = rp.replay(reader, col, target, lat, site, name, flush=live, err=err,
                            progress=_isatty(stderr) and a.log != "-")
        if summary.accepted == 0:
            raise logread.InputError(
                "%s: no reading was accepted (%d rejected%s); check the column mapping and units"
                % (name, summary.rejected,
                   "; first: " + summary.first_rejection if summary.first_rejection else
                   ", no data lines after the header"))
        lines = summary.lines(lat)
        if close_out:
            for line in lines:
                stdout.write(line + "\n")
        if a.summary:
            s, c = _open_out(a.summary, stdout)
            for line in lines:
                s.write(line + "\n")
            if c:
                s.close()
        return EXIT_OK
    except rp.ReplayAbort as e:
        raise logread.InputError(str(e))
    finally:
        if close:
            f.close()
        if close_out and out is not None:
            out.close()


class _NullReports:
    """stderr stand-in for --quiet: drops per-reading reports, keeps notes."""

    def __init__(self, stream):
        self.stream = stream

    def write(self, text):
        if "rejected" not in text and "further" not in text:
            self.stream.write(text)

    def flush(self):
        self.stream.flush()


class _Thinning:
    """Output filter for --every N: passes comments, the header, rows with an
    event and every N-th row."""

    def __init__(self, out, every):
        self.out = out
        self.every = every
        self.n = 0

    def write(self, text):
        if text.startswith("#") or text.startswith("line\t"):
            self.out.write(text)
            return
        if self.n % self.every == 0 or not text.rstrip("\n").endswith("\t-"):
            self.out.write(text)
        self.n += 1

    def flush(self):
        self.out.flush()


def cmd_simulate(a, stdin, stdout, stderr):
    from tinygeo.host import simulate as sim
    p = sim.Params(
        seed=a.seed, lat_deg=a.lat, site_m=a.elevation, ascent_m_s=a.ascent_rate, burst_m=a.burst,
        descent_m_s=a.descent_rate, interval_s=a.interval, wait_s=a.wait, ground_s=a.ground,
        rh_surface_pct=a.rh_surface, perturb_k=a.perturb, sigma_p_pa=a.sigma_p, sigma_t_k=a.sigma_t,
        sigma_rh_pct=a.sigma_rh, bias_p_pa=a.bias_p, bias_t_k=a.bias_t, bias_rh_pct=a.bias_rh,
        sigma_gps_m=a.sigma_gps, dropout=a.dropout, spikes=a.spikes,
        jitter_s=a.jitter, gps=not a.no_gps, dew_point=a.dew_point, iso_start=a.start,
        delimiter="\t" if a.tsv else ",")
    if a.clean:
        for k in ("sigma_p_pa", "sigma_t_k", "sigma_rh_pct", "bias_p_pa", "bias_t_k", "bias_rh_pct",
                  "sigma_gps_m", "dropout", "spikes", "jitter_s"):
            setattr(p, k, 0.0)
        p.rh_dropout = p.gps_dropout = 0.0
    try:
        sim.check(p)
    except ValueError as e:
        raise UsageError("simulate: %s" % e)
    out, c1 = _open_out(a.out, stdout)
    truth, c2 = (None, False) if not a.truth else _open_out(a.truth, stdout)
    try:
        n = sim.simulate(p, out, truth)
    finally:
        if c1:
            out.close()
        if c2:
            truth.close()
    if a.out:
        stderr.write("tinygeo simulate: %d readings written to %s\n" % (n, a.out))
    return EXIT_OK


def cmd_compare(a, stdin, stdout, stderr):
    from tinygeo.host import compare
    return compare.run(a, stdin, stdout, stderr)


def cmd_plot(a, stdin, stdout, stderr):
    from tinygeo.host import plot
    return plot.run(a, stdin, stdout, stderr)


COMMANDS = {"replay": cmd_replay, "simulate": cmd_simulate, "compare": cmd_compare, "plot": cmd_plot}


def one_line(text):
    """``text`` with every character that would break or hide a line
    (control characters, line and paragraph separators) shown escaped, so
    that a message quoting the input stays one line."""
    if text.isprintable():
        return text
    return "".join(c if c.isprintable() else repr(c)[1:-1] for c in text)


def _isatty(stream):
    try:
        return stream.isatty()
    except (AttributeError, ValueError):
        return False


def main(argv=None, stdin=None, stdout=None, stderr=None):
    """Run the command line; return the exit status (see EXIT_TEXT)."""
    stdin = stdin if stdin is not None else sys.stdin
    stdout = stdout if stdout is not None else sys.stdout
    stderr = stderr if stderr is not None else sys.stderr
    argv = sys.argv[1:] if argv is None else list(argv)
    parser = build_parser()
    try:
        try:
            old = sys.stdout, sys.stderr
            sys.stdout, sys.stderr = stdout, stderr   # argparse prints help/usage there
            try:
                a = parser.parse_args(argv)
            finally:
                sys.stdout, sys.stderr = old
        except SystemExit as e:   # --help
            return e.code if isinstance(e.code, int) else EXIT_INPUT
        if not a.command:
            parser.print_help(stderr)
            return EXIT_INPUT
        return COMMANDS[a.command](a, stdin, stdout, stderr)
    except TinygeoError as e:
        stderr.write("tinygeo: error: %s\n" % one_line(str(e)))
        return EXIT_INPUT
    except KeyboardInterrupt:
        stderr.write("tinygeo: interrupted\n")
        return EXIT_INTERRUPTED
    except UnicodeError as e:
        stderr.write("tinygeo: error: the input is not UTF-8 text (%s); convert it to UTF-8\n" % e)
        return EXIT_INPUT
    except BrokenPipeError:
        # the reader went away (e.g. '| head'); stop quietly
        try:
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        except (OSError, ValueError, AttributeError, io.UnsupportedOperation):
            pass
        return EXIT_OK
    except OSError as e:
        stderr.write("tinygeo: error: %s\n" % e)
        return EXIT_INPUT
