"""The ``tinygeo`` command line (also ``python -m tinygeo``): argparse and
dispatch only.

Commands: ``replay`` a recorded log through the column, ``station`` a
station or buoy log through the station, ``simulate`` an invented flight,
``compare`` a device's table with a host replay, ``plot`` a replayed profile
or a station table; each lives in its module (``command`` / ``run``).
:func:`main` returns the exit status instead of exiting, so tests can call it
in-process; every error becomes one line on stderr and an exit status of
EXIT_TEXT, never a traceback.
"""
import argparse
import io
import os
import sys

from tinygeo.errors import TinygeoError
from tinygeo.host.options import (EXIT_INPUT, EXIT_INTERRUPTED, EXIT_OK, EXIT_OUTPUT,
                                  ANCHOR_HPA_MAX, ANCHOR_HPA_MIN, OutputError, UsageError,
                                  column_default, number_or_none, one_line)

EXIT_TEXT = """exit status:
  0   success (compare: every reading within the tolerances); also when the
      reader of standard output stops early ('| head')
  1   compare found a reading outside the tolerances, a reading on one side
      only, or a device table cut short (no end record, rows missing)
  2   usage or input error: bad option, unreadable file (not UTF-8, a NUL
      character, a line over 1 MiB), an output that would overwrite an
      input, empty log, no header, unknown column, two columns for one
      quantity, a unit the values contradict or do not confirm (pressure at
      the start height, surface temperature, the lapse rate of the first
      climb; a time column in s or ms whose first move gives an impossible
      vertical speed, or whose log rises 2000 m above its first reading
      with no launch, or slower than 0.5 m/s from the launch: a balloon
      climbs at 1 to 8 m/s; with --time NAME:s or :ms given this is a
      warning, on stderr and as the summary's first record, time_unit_doubt),
      a start height left at 0 that the first reading or the first GPS fix
      on the pad contradicts, nothing accepted, more than half of the readings
      rejected for one reason (rate, time, pressure, temperature, humidity,
      number, gps; counted from the 100th reading on)
  3   plot: matplotlib is not installed (pip install 'tinygeo[plot]')
  4   an output could not be written (full disk, closed standard output, an
      existing read-only file: make it writable or delete it...); the
      message names it, and no half-written file is left under its name (an
      output named by a symbolic link is written to the file it points to)
  130 interrupted (Ctrl-C)"""

STATION_EXIT_TEXT = """exit status:
  0   success; also when the reader of standard output stops early ('| head')
  2   usage or input error: bad option or station setting (--average must
      divide 3 hours), the station's height or latitude not known,
      unreadable file (not UTF-8, a NUL character, a line over 1 MiB), an
      output that would overwrite an input, empty log, no header, no time
      column, unknown column, two columns for one quantity, a unit the
      values contradict or do not confirm (a pressure within --guard of the
      station's height, a surface temperature), nothing accepted in the
      first 50 readings, more than half of the readings rejected for one
      reason (pressure, temperature, humidity, number, time; counted from
      the 100th reading on)
  4   an output could not be written (full disk, closed standard output, an
      existing read-only file: make it writable or delete it...); the
      message names it, and no half-written file is left under its name (an
      output named by a symbolic link is written to the file it points to)
  130 interrupted (Ctrl-C)"""

MAPPING_HELP = """column mapping (default: from the header names):
  NAME is a header name or a column number (1 = first); :UNIT is optional
  when the header name ends in a unit word (pressure_hpa, temp_c, time_s).
  Recognised by default: p/pressure/press/baro, t/temp/temperature,
  rh/humidity, td/dewpoint/dew_point, time/elapsed/timestamp/utc/uptime,
  gps/gps_alt, each optionally followed by a unit (pa hpa mbar kpa, k c degc
  f degf, pct fraction, s ms, m). Two columns for one quantity are an error
  (a device clock and UTC stamps too): choose with the option. A unit not
  stated is inferred from the values and must be confirmed by them
  (pressure near the start height, a surface temperature, at most 10 K/km of
  cooling over the first 1500 m of climb, humidity above 1 in one of the
  first 10 readings: else a 0..1 fraction), else the replay stops and asks
  for it. In a GPS column an empty cell (or nan) means no fix (flag 32).
  Lines must end in LF or CR LF. Comment lines (#) before the header may set
  lat_deg=, start_height_m=, sigma_p_pa=, sigma_t_k=, sigma_rh_pct=,
  bias_p_pa=, bias_t_k=, bias_rh_pct= (as 'tinygeo simulate' writes);
  options given here take precedence."""


def _flags_text():
    from tinygeo import column
    names = sorted((getattr(column, n), n) for n in dir(column) if n.startswith("FL_"))
    words = {
        "FL_DRY": "no humidity: dry air assumed",
        "FL_HELD_MIXING": "no humidity: the last mixing ratio held",
        "FL_NO_TIME": "no time stamp",
        "FL_DESCENT": "pressure rose: integrating downwards",
        "FL_SAME_P": "pressure repeated: nothing added",
        "FL_NO_GPS": "GPS field nan (no fix): ignored",
        "FL_CAPPED": "the held mixing ratio was capped at saturation",
        "FL_REPLACED": "this reading replaced the previous row's, which the readings "
                       "contradicted (that row was taken back)",
        "FL_TAKEOVER": "the column followed a run of readings that contradicted it",
        "FL_SAME_TIME": "time stamp repeated: no rate check for this step",
    }
    lines = ["flags (the table's flags column: a sum of these bits):"]
    for bit, name in names:
        lines.append("  %-4d %s" % (bit, words.get(name, name)))
    return "\n".join(lines)


class _Parser(argparse.ArgumentParser):
    def error(self, message):
        raise UsageError("%s: %s (see '%s --help')" % (self.prog, message, self.prog))


def _add_mapping(p, gps=True, text=MAPPING_HELP):
    g = p.add_argument_group("column mapping", text)
    g.add_argument("--pressure", metavar="NAME[:Pa|hPa|kPa]", help="pressure column")
    g.add_argument("--temperature", metavar="NAME[:K|C|F]", help="air temperature column")
    g.add_argument("--humidity", metavar="NAME[:pct|fraction]",
                   help="relative humidity column, %% (over water), or a 0..1 fraction")
    g.add_argument("--dew-point", dest="dewpoint", metavar="NAME[:K|C|F]",
                   help="dew point column, instead of --humidity")
    g.add_argument("--time", metavar="NAME[:s|ms|iso]",
                   help="time column: seconds, or ISO-8601 timestamps (e.g. 2026-05-04T09:30:00Z; "
                        "without an offset: taken as UTC, with a note)")
    if gps:
        g.add_argument("--gps", metavar="NAME", help="GPS height column, m above mean sea level")
    g.add_argument("--delimiter", metavar="CHAR",
                   help="field separator (',', ';', '|', tab, space); default: taken from the header")


def _sensor_help(text, keyword):
    return "%s (default: %s= in the input's comment lines, else %g)" % (
        text, keyword, column_default(keyword))


def _limit(text):
    try:
        return number_or_none(text)
    except ValueError:
        raise argparse.ArgumentTypeError("%r is not a number (or 'none')" % text)


def _add_site(p):
    g = p.add_argument_group("site and column set-up")
    g.add_argument("--lat", type=float, metavar="DEG",
                   help="launch latitude, degrees north (default: lat_deg= in the log's comments)")
    g.add_argument("--start-height", type=float, metavar="M",
                   help="height of the first reading above mean sea level, m "
                        "(default: start_height_m= in the log's comments, else 0; the replay "
                        "then stops asking for this when the first reading's pressure altitude "
                        "is more than 500 m from 0, or the first GPS fix on the pad more than "
                        "300 m: the first fix among the first 300 readings while the pressure "
                        "altitude stays within 100 m of the first reading's, read ahead, as a "
                        "receiver often has no fix on the first line)")
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
    g.add_argument("--max-rate", type=_limit, metavar="M_S",
                   help="fastest believable vertical speed, m/s; faster readings are rejected "
                        "(default %g); 'none': no check" % column_default("max_rate_m_s"))
    g.add_argument("--max-t-step", type=_limit, metavar="K",
                   help="temperature step allowed between readings, K, before time and climb "
                        "add to it (default %g; 'none': no temperature-step check)"
                        % column_default("max_t_step_k"))
    g.add_argument("--max-t-rate", type=float, metavar="K_S",
                   help="temperature step allowed per second between readings, K/s (default %g)"
                        % column_default("max_t_rate_k_s"))
    g.add_argument("--max-t-gradient", type=float, metavar="K_GPM",
                   help="temperature step allowed per gpm of height change, K/gpm (default %g)"
                        % column_default("max_t_gradient_k_gpm"))
    g.add_argument("--ice", action="store_true", help="humidity is over ice below 0 degC")
    g.add_argument("--dry", action="store_true",
                   help="assume dry air when humidity is missing (the default when there is "
                        "no humidity column)")


STATION_MAPPING_HELP = """column mapping (default: from the header names):
  as for 'tinygeo replay' (see 'tinygeo replay --help'): NAME is a header
  name or a column number, :UNIT optional when the header name ends in a
  unit word (pressure_hpa, temp_c, time_s); a unit not stated is inferred
  from the values and must be confirmed by them (the pressure near the
  station's height, a surface temperature). A time column is required: the
  averages are aligned to its clock (ISO-8601 stamps: to UTC; stamps
  without an offset are taken as UTC, with a note: a clock on local time
  steps at each daylight-saving change; give Z or +01:00). Comment lines
  (#) before the header may set height_m= and lat_deg=; options given here
  take precedence."""

STATION_NOTES_TEXT = """tend_code: the characteristic of pressure tendency, WMO code table 0200
  (0..8, '-' when unknown); the rule is in tinygeo/station.py.

Not for aviation: qnh_pa is computed for the barometer's height with the
standard atmosphere; altimeter settings come from an aerodrome's certified
instruments and its met service. Follow your met service's practice."""


def _station_flags_text():
    # every FL_* bit of tinygeo.station with its sentence (stationlog.FLAG_TEXT)
    import textwrap
    from tinygeo.host.stationlog import FLAG_TEXT
    lines = ["flags (the table's flags column: a sum of these bits):"]
    for bit, text in FLAG_TEXT:
        lines.extend(textwrap.wrap(text, 76, initial_indent="  %-5d" % bit,
                                   subsequent_indent=" " * 7))
    return "\n".join(lines) + "\n" + STATION_NOTES_TEXT


def _station_limit(text):
    try:
        return number_or_none(text)
    except ValueError:
        raise argparse.ArgumentTypeError("%r is not a number (or 'none')" % text)


def _add_station(p):
    from tinygeo.host.options import station_default as d
    g = p.add_argument_group("station")
    g.add_argument("--height", type=float, metavar="M",
                   help="the barometer's height, m, above mean sea level (a sea buoy: above the "
                        "water line; a lake or river: the water's elevation above sea level plus "
                        "the mast); required (default: height_m= in the log's comments)")
    g.add_argument("--lat", type=float, metavar="DEG",
                   help="latitude, degrees north (default: lat_deg= in the log's comments)")
    g.add_argument("--average", type=float, metavar="S",
                   help="length of an average, s, dividing 3 hours: 60, 120, 300, 600, 900, "
                        "1800, 3600 ... (default %g)" % d("average_s"))
    g.add_argument("--min-readings", type=float, metavar="N",
                   help="readings an average needs, else that quantity is nan in it "
                        "(default %d)" % d("min_readings"))
    g.add_argument("--mean12", action="store_true",
                   help="reduce to sea level with the mean of the temperature now and 12 hours "
                        "earlier (high stations)")
    g.add_argument("--iso-surface", type=float, metavar="HPA",
                   help="report the geopotential height of this standard isobaric surface, hPa "
                        "(default: 850, 700 or 500 hPa for stations at 800 m and above, none "
                        "below)")
    g.add_argument("--ice", action="store_true", help="humidity is over ice below 0 degC")
    q = p.add_argument_group(
        "quality control", "a reading that steps beyond step + rate x (the time since the latest\n"
                           "accepted reading) is rejected; 'none' switches off a step check,\n"
                           "--guard or --stuck")
    q.add_argument("--max-p-step", type=_station_limit, metavar="PA",
                   help="pressure step, Pa (default %g)" % d("max_p_step_pa"))
    q.add_argument("--max-p-rate", type=float, metavar="PA_S",
                   help="pressure rate, Pa/s (default %g)" % d("max_p_rate_pa_s"))
    q.add_argument("--max-t-step", type=_station_limit, metavar="K",
                   help="temperature step, K (default %g)" % d("max_t_step_k"))
    q.add_argument("--max-t-rate", type=float, metavar="K_S",
                   help="temperature rate, K/s (default %g)" % d("max_t_rate_k_s"))
    q.add_argument("--max-rh-step", type=_station_limit, metavar="PCT",
                   help="humidity step, %%%% (default %g)" % d("max_rh_step_pct"))
    q.add_argument("--max-rh-rate", type=float, metavar="PCT_S",
                   help="humidity rate, %%%%/s (default %g)" % d("max_rh_rate_pct_s"))
    q.add_argument("--guard", type=_station_limit, metavar="M",
                   help="a pressure whose pressure altitude lies farther than this from the "
                        "station's height is rejected, m (default %g)" % d("guard_m"))
    q.add_argument("--stuck", type=_station_limit, metavar="N",
                   help="a value repeated in this many readings in a row is stuck and taken "
                        "out of the average (default %d)" % d("stuck_readings"))
    q.add_argument("--takeover", type=float, metavar="N",
                   help="readings in a row that contradict the station and agree with each "
                        "other are followed after this many (default %d)" % d("takeover_readings"))
    q.add_argument("--steady", type=float, metavar="PA",
                   help="a part of the 3-hour trace within this change is steady, for the "
                        "characteristic's shape (halves, peaks, troughs), Pa (default %g); the "
                        "net change counts as 'same' within 5 Pa whatever this is"
                        % d("steady_pa"))
    q.add_argument("--max-gap", type=float, metavar="S",
                   help="the longest gap inside the 3 hours for which the characteristic is "
                        "still given, s (default %g)" % d("max_gap_s"))


def build_parser():
    """Return the argparse parser of the ``tinygeo`` command."""
    epilog = EXIT_TEXT + "\n\n" + _flags_text()
    top = _Parser(
        prog="tinygeo",
        description="Heights from a stream of pressure, temperature and humidity: replay a log, "
                    "simulate a flight, compare a device with the host, plot a profile.",
        epilog=epilog + "\n\nfirst try:  tinygeo replay examples/schoolfield_flight.csv --every 100",
        formatter_class=argparse.RawDescriptionHelpFormatter)
    from tinygeo import __version__
    top.add_argument("--version", action="version", version="tinygeo %s" % __version__)
    sub = top.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    r = sub.add_parser(
        "replay", help="replay a recorded log through the column, writing a table and a summary",
        description="Replay a log (CSV/TSV with a header, or '-' for stdin, read line by line) "
                    "through the column; write one row per accepted reading and a summary "
                    "(surface, launch, mandatory levels with temperature and dew point, "
                    "tropopause and the layer it is resolved to, float, burst, highest point, "
                    "landing with the touchdown it implies, where humidity went missing, GPS "
                    "difference, counts: rejected by the column, as the end record says, and "
                    "lines that could not be read). Rejected readings are reported on stderr "
                    "with their line number. Event words stand on the row where the column "
                    "decided (one reading after the reading that completed the event, the "
                    "tropopause 2 km above it); the summary says where each happened. Launch "
                    "and landing are the times the column detected them: lift-off is earlier, "
                    "touchdown landing_s (60 s) earlier.",
        epilog="table layout: see tinygeo/record.py.\n\n" + epilog,
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

    sp = sub.add_parser(
        "station", help="run a station or buoy log through the station: averages, sea-level "
                        "pressure, tendency, quality control",
        description="Run a log of a fixed barometer (a weather station, a moored buoy; "
                    "CSV/TSV with a header, or '-' for stdin, read line by line) through "
                    "tinygeo.Station; write one row per completed average (time_s: its end; "
                    "station pressure, sea-level pressure, QNH, 3-hour tendency and its "
                    "characteristic, 24-hour change, temperature, humidity, dew point, flags, "
                    "readings) and a summary (highest and lowest sea-level pressure, the largest "
                    "3-hour fall, rejected readings by reason, averages per flag, restarts). "
                    "Rejected readings are reported on stderr with their line number. Draw "
                    "the table with 'tinygeo plot TABLE -o FILE'.",
        epilog="table layout: see tinygeo/stationrecord.py.\n\n" + STATION_EXIT_TEXT + "\n\n" +
               _station_flags_text() + "\n\nfirst try:  tinygeo station examples/buoy_day.csv",
        formatter_class=argparse.RawDescriptionHelpFormatter)
    sp.add_argument("log", help="log file, or - for standard input")
    _add_mapping(sp, gps=False, text=STATION_MAPPING_HELP)
    _add_station(sp)
    o = sp.add_argument_group("output")
    o.add_argument("-o", "--out", metavar="FILE",
                   help="write the table to FILE (the summary is then also printed on stdout)")
    o.add_argument("--summary", metavar="FILE", help="also write the summary lines to FILE")
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
        description="Compare a table written by a device (tinygeo/record.py: 'line' or 'time_s' "
                    "and any of the value columns; a column that is nan in every row is not "
                    "computed and skipped, a nan where the column holds numbers elsewhere fails "
                    "when the host has a number) with a host replay. By default the host "
                    "re-feeds the inputs found in the device table (time_s p_pa t_k rh_pct "
                    "gps_m) to a column set up from its '# site' line (anywhere before the "
                    "first row), and the table must end with its end record ('#: end rows=N', "
                    "tinygeo.record.end_line): a table cut short fails, and so do extra rows. "
                    "Rows whose flags differ only because the table prints p_pa to 0.01 Pa "
                    "(FL_SAME_P on the host where the device had FL_DESCENT or nothing, the "
                    "printed pressure repeated) are counted as 'rounded', not failed. A "
                    "logger that resumed from a checkpoint writes '#: resume line=N whole' "
                    "(tinygeo.record.resume_line): the earlier rows from line N on, and a row "
                    "torn by the power cut, are dropped; a resume record torn while it was "
                    "written (no final 'whole') voids nothing and is reported. With --log the host replays the raw "
                    "log instead and matches rows by line number (or time_s); readings on one "
                    "side only fail, rows missing at the end too.",
        epilog=epilog, formatter_class=argparse.RawDescriptionHelpFormatter)
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
        "plot", help="draw a replayed profile or a station table to PNG, SVG or PDF (needs "
                     "matplotlib)",
        description="A station table (from 'tinygeo station LOG -o TABLE') is drawn as station "
                    "and sea-level pressure, the 3-hour tendency with its characteristic, "
                    "temperature and dew point against time, with the flagged averages and the "
                    "extremes marked (the mapping and site options are not used then). "
                    "Otherwise: draw height (barometric and GPS) against time (UTC when the log has "
                    "ISO-8601 stamps), temperature and dew point against height, the vertical "
                    "rate (raw and the column's smoothed rate) and the uncertainty, with "
                    "mandatory levels, tropopause, float and burst marked; the curves after the "
                    "burst in their own colours. INPUT is a table from 'tinygeo replay' (its "
                    "inputs are fed to a column again) or a raw log (replayed with the mapping "
                    "options).",
        epilog=EXIT_TEXT, formatter_class=argparse.RawDescriptionHelpFormatter)
    pl.add_argument("input", help="replay table, raw log, or station table")
    pl.add_argument("-o", "--out", metavar="FILE", required=True,
                    help="image file, .png, .svg or .pdf")
    pl.add_argument("--title", help="figure title (default: the input's name; for a station "
                                    "table the log it was made from)")
    pl.add_argument("--dpi", type=int, default=100, help="PNG resolution, dots per inch (100)")
    _add_mapping(pl)
    _add_site(pl)
    return top


def _command(name):
    from tinygeo.host import compare, plot, replay, simulate, stationlog
    return {"replay": replay.command, "simulate": simulate.command, "compare": compare.run,
            "plot": plot.run, "station": stationlog.command}[name]


def _quiet_stdout():
    # the reader of stdout went away: send what is still buffered nowhere, so
    # the interpreter's final flush does not fail again
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError, AttributeError, io.UnsupportedOperation):
        pass


def main(argv=None, stdin=None, stdout=None, stderr=None):
    """Run the command line; return the exit status (see EXIT_TEXT)."""
    stdin = stdin if stdin is not None else sys.stdin
    stdout = stdout if stdout is not None else sys.stdout
    stderr = stderr if stderr is not None else sys.stderr
    if stderr is None:
        stderr = open(os.devnull, "w")
    argv = sys.argv[1:] if argv is None else list(argv)
    parser = build_parser()
    try:
        try:
            old = sys.stdout, sys.stderr
            sys.stdout = stdout if stdout is not None else io.StringIO()
            sys.stderr = stderr   # argparse prints help/usage there
            try:
                a = parser.parse_args(argv)
            finally:
                sys.stdout, sys.stderr = old
        except SystemExit as e:   # --help, --version
            return e.code if isinstance(e.code, int) else EXIT_INPUT
        if not a.command:
            parser.print_help(stderr)
            return EXIT_INPUT
        return _command(a.command)(a, stdin, stdout, stderr)
    except OutputError as e:
        _say(stderr, "tinygeo: error: %s\n" % one_line(str(e)))
        return EXIT_OUTPUT
    except TinygeoError as e:
        _say(stderr, "tinygeo: error: %s\n" % one_line(str(e)))
        return EXIT_INPUT
    except KeyboardInterrupt:
        _say(stderr, "tinygeo: interrupted\n")
        return EXIT_INTERRUPTED
    except BrokenPipeError:
        _quiet_stdout()
        return EXIT_OK
    except OSError as e:
        _say(stderr, "tinygeo: error: %s\n" % one_line(str(e)))
        return EXIT_INPUT


def _say(stream, text):
    try:
        stream.write(text)
        stream.flush()
    except (OSError, ValueError):
        pass

