"""Read a recorded log of readings (CSV/TSV with a header), one line at a time.

A log is text: optional ``#`` comment lines, one header line naming the
columns, then one reading per line. The delimiter (comma, tab, semicolon,
``|`` or blanks) is taken from the header unless given. Comment lines before
the header may carry ``key=value`` words; ``lat_deg``, ``start_height_m``,
``sigma_p_pa``, ``sigma_t_k``, ``sigma_rh_pct`` (sensor noise) and
``bias_p_pa``, ``bias_t_k``, ``bias_rh_pct`` (calibration uncertainty) are
used as defaults for the replay (``tinygeo simulate`` writes them);
``height_m`` (the barometer's height above mean sea level of a fixed
station or buoy) for ``tinygeo station``.

Columns are mapped to quantities by the user (``--pressure NAME:hPa`` ...) or,
by default, from the header names: a name is lower-cased, ``%`` becomes
``pct``, any other run of non-letters/digits becomes ``_``, and a trailing
unit word is split off (``Temp (degC)`` -> ``temp`` + ``degc``). Recognised
names are listed in ``NAMES`` and units in ``UNITS``. Two header columns that
both look like one quantity (``temp`` and ``temperature``) are an error that
names both: choose one with its option.

Units. A unit in the header name or the option is a statement, checked
against the first reading (a pressure in Pa declared hPa, a Celsius
temperature declared K: exit 2 naming the unit it looks like). A unit that
is not stated is inferred from the values and must be confirmed by
plausibility over the first readings (:meth:`LogReader.settle`), else the
log stops with exit 2 asking for the unit:

* pressure: the unit (Pa, hPa or kPa) that puts the first reading within
  START_WINDOW_M of the start height (pressure altitude of the U.S. Standard
  Atmosphere 1976, tinygeo.standard; for a station log, within the station's
  guard_m of the barometer's height), or, when no start height is given,
  between SURFACE_MIN_M and SURFACE_MAX_M (the surface of the inhabited
  world, common practice). The three units are 16 km or more apart, so at
  most one fits.
* temperature (and dew point): K when the first value is 100 or more, else
  degC; confirmed when the first value is a surface air temperature in that
  unit (SURFACE_T_K, the recorded extremes, common practice) and, when the
  log climbs CLIMB_M within LOOKAHEAD_LINES lines, the mean lapse rate over
  that climb is at most MAX_LAPSE_K_KM (the dry adiabatic lapse rate
  g0/cp = 9.8 K/km bounds any layer that deep; Wallace and Hobbs 2006
  sec. 3.3; a margin for sensor noise). A temperature in degF read as degC
  is 1.8 times too steep and usually far too hot at the surface.
* time: seconds when the values are numbers, ISO-8601 otherwise (the
  replay's TimeUnitCheck confirms seconds against the first climb, and its
  climb_doubt against the whole rise).
* humidity: percent, or a 0..1 fraction when stated (``--humidity
  NAME:fraction``, a header name ending in ``fraction``). Unless the unit was
  given with the option, the first RH_PROBES humidity values (read ahead;
  with a unit in the header name, the values of the lines read ahead
  anyway, at least the first reading's) must not all be at or below
  RH_FRACTION_MAX (1.0): relative humidity at or below 1 % in every one of
  the first readings near the surface is not seen in surface air (common
  practice, from memory), a 0..1 fraction is, and read as percent it is
  taken for air 100 times too dry (measured: heights 36.9 m low at 12 km in
  the warm humid atmosphere of tests/streams.py). A header-stated fraction
  whose values exceed 1 is refused the same way.

Time stamps: numbers (seconds, or ms), or ISO-8601 text; text without a
UTC offset (no ``Z``, no ``+01:00``) is taken as UTC, and a note says so
once (a clock on local time steps by an hour at each daylight-saving
change).

The start height: when none was given (it defaulted to 0 m) and the first
reading's pressure altitude lies more than START_PA_M from 0, or the first
GPS fix on the pad more than START_GPS_M, the log stops with exit 2 naming
the height and ``--start-height``. The fix on the pad is the first among the
first START_GPS_READINGS readings while the pressure altitude stays within
START_GPS_STILL_M of the first reading's (a receiver has often no fix yet
on the first line); the lines are read ahead for it.

Numbers may use a decimal comma (``12,5``) in a field without a '.'; a
pressure stated in Pa may group thousands with commas (``96,512``).

GPS: in a log with a GPS column an empty (or ``nan``, ``NA`` ...) cell is "no
fix" and reads as nan, which the column takes as no fix (FL_NO_GPS); a log
without a GPS column gives None.

Problems with the log as a whole raise :class:`InputError` (exit status 2);
problems with one line give a :class:`tinygeo.errors.ReadingError` with a
``reason`` (``number``, ``fields``, ``missing``, ``time``, ``humidity``) and
the line is skipped.
"""
import datetime

from tinygeo.errors import ReadingError
from tinygeo.host.options import MAX_LINE_CHARS, InputError, TextLines

# bytes read and decoded at a time by the readings' loop (LogReader._chunks)
CHUNK_BYTES = 1 << 16
# lines shorter than this hold no number that overflows a float: 299 digits
# are below 1e299, times 1000 (kPa to Pa, the largest unit factor) 1e302
CLEAN_MAX_CHARS = 300

QUANTITIES = ("pressure", "temperature", "humidity", "dewpoint", "time", "gps")

# unit word (normalised) -> canonical unit, per quantity
_T_UNITS = {"k": "K", "c": "C", "degc": "C", "celsius": "C", "kelvin": "K",
            "f": "F", "degf": "F", "fahrenheit": "F"}
UNITS = {
    "pressure": {"pa": "Pa", "hpa": "hPa", "mbar": "hPa", "mb": "hPa", "kpa": "kPa"},
    "temperature": _T_UNITS,
    "dewpoint": _T_UNITS,
    "humidity": {"pct": "%", "percent": "%", "fraction": "fraction", "frac": "fraction"},
    "time": {"s": "s", "sec": "s", "seconds": "s", "ms": "ms", "iso": "iso"},
    "gps": {"m": "m"},
}
# factor and offset to SI (Pa, K, %, s, m): si = value * factor + offset.
# degF: K = (F + 459.67) 5/9 (the definition of the Fahrenheit scale, NIST
# SP 811 (2008) appendix B.8)
TO_SI = {"Pa": (1.0, 0.0), "hPa": (100.0, 0.0), "kPa": (1000.0, 0.0),
         "K": (1.0, 0.0), "C": (1.0, 273.15), "F": (5.0 / 9.0, 459.67 * 5.0 / 9.0),
         "%": (1.0, 0.0), "fraction": (100.0, 0.0), "s": (1.0, 0.0), "ms": (0.001, 0.0),
         "m": (1.0, 0.0)}

# normalised header name (without unit word) -> quantity
NAMES = {}
for _q, _names in (
        ("pressure", "p pres press pressure baro air_pressure p_air barometer"),
        ("temperature", "t temp temperature air_temp air_temperature ta tair"),
        ("humidity", "rh hum humidity relative_humidity u"),
        ("dewpoint", "td dew dewpoint dew_point dp dew_temp"),
        ("time", "time elapsed seconds timestamp utc datetime date_time clock t_s uptime"),
        ("gps", "gps gps_alt gps_height gps_altitude alt_gps gnss gnss_alt gnss_height")):
    for _n in _names.split():
        NAMES[_n] = _q

META_KEYS = ("lat_deg", "start_height_m", "sigma_p_pa", "sigma_t_k", "sigma_rh_pct",
             "bias_p_pa", "bias_t_k", "bias_rh_pct", "height_m")
DELIMITERS = (",", "\t", ";", "|")

# plausibility of inferred units and of the start height (see the module docstring)
START_WINDOW_M = 3000.0       # the column's start_guard_m default
SURFACE_MIN_M = -1000.0       # pressure altitude of a surface: the lowest land (-430 m) in a high
SURFACE_MAX_M = 6000.0        # ... and the highest inhabited places in a low (common practice)
SURFACE_T_K = {"C": (-93.0, 50.0), "K": (180.0, 335.0), "F": (-135.0, 122.0)}
# recorded surface air extremes -89.2 degC (Vostok) and +56.7 degC (Death
# Valley) (WMO archive of weather extremes, from memory); degC is capped at 50
# so that degF values of a mild day (60 degF) are not taken as degC
CLIMB_M = 1500.0              # climb over which the lapse rate is judged, gpm
CLIMB_READINGS = 5            # readings in a row beyond CLIMB_M (a spike is one)
MAX_LAPSE_K_KM = 10.0         # dry adiabatic 9.8 K/km (Wallace and Hobbs 2006 sec. 3.3) + margin
LOOKAHEAD_LINES = 5000        # lines read ahead, at most, to confirm a unit
LOOKAHEAD_CHARS = 4 << 20     # ... and characters
START_PA_M = 500.0            # start height defaulted to 0: pressure altitude allowed (weather)
START_GPS_M = 300.0           # ... GPS height allowed, of the first fix on the pad:
START_GPS_READINGS = 300      # ... among the first readings (a cold start takes minutes:
                              # common practice)
START_GPS_STILL_M = 100.0     # ... while the pressure altitude is this close to the first's
RH_PROBES = 10                # humidity values read ahead to tell percent from a fraction
RH_FRACTION_MAX = 1.0         # ... all at or below this: a 0..1 fraction (common practice,
                              # from memory)


def normalise(name):
    """Return a header name in the form the name tables use.

    Example: ``normalise('Temp (°C)') == 'temp_c'``, ``normalise('RH %') == 'rh_pct'``."""
    s = name.strip().lower().replace("%", " pct ").replace("\u00b0", "")
    out = []
    sep = False
    for ch in s:
        if ("a" <= ch <= "z") or ("0" <= ch <= "9"):
            if sep and out:
                out.append("_")
            out.append(ch)
            sep = False
        else:
            sep = True
    return "".join(out)


def classify(name):
    """Return ``(quantity, unit)`` for a header name, or ``(None, None)``.

    The unit is None when the name carries none. Example:
    ``classify('pressure_hpa') == ('pressure', 'hPa')``."""
    n = normalise(name)
    if n in NAMES:
        return NAMES[n], None
    base, _, word = n.rpartition("_")
    if base in NAMES:
        q = NAMES[base]
        unit = UNITS[q].get(word)
        if unit is not None:
            return q, unit
    return None, None


def split_spec(quantity, spec):
    """Split a ``NAME[:UNIT]`` mapping option into (name, unit or None).

    Raises InputError for a unit the quantity does not know."""
    name, sep, word = spec.rpartition(":")
    if not sep:
        return spec.strip(), None
    unit = UNITS[quantity].get(normalise(word))
    if unit is None:
        raise InputError("--%s %s: unknown unit %r; use one of %s" % (
            _opt(quantity), spec, word, ", ".join(sorted(set(UNITS[quantity].values())))))
    return name.strip(), unit


def to_float(text, thousands=False):
    """A finite number from a field, or None: a decimal point or, in a field
    without one, a decimal comma (``12,5``); with ``thousands`` commas group
    thousands instead (``96,512``)."""
    try:
        x = float(text)
    except ValueError:
        x = None
        if "," in text and "." not in text:
            if thousands and _grouped(text):
                t = text.replace(",", "")
            elif text.count(",") == 1:
                t = text.replace(",", ".")
            else:
                return None
            try:
                x = float(t)
            except ValueError:
                return None
    if x is None or x - x != 0.0:
        return None
    return x


def _grouped(text):
    # digits grouped by commas in threes: 96,512 or -1,013,250
    s = text.strip().lstrip("+-")
    parts = s.split(",")
    return (1 <= len(parts[0]) <= 3 and parts[0].isdigit()
            and all(len(p) == 3 and p.isdigit() for p in parts[1:]))


def _iso_seconds(text):
    """(seconds since 1970 (UTC), naive) of an ISO-8601 timestamp; naive
    (no offset, no Z) means UTC."""
    s = text.strip()
    if s.endswith("Z") or s.endswith("z"):
        s = s[:-1] + "+00:00"
    dt = datetime.datetime.fromisoformat(s)
    naive = dt.tzinfo is None
    if naive:
        dt = dt.replace(tzinfo=datetime.timezone.utc)
    return dt.timestamp(), naive


NAN = float("nan")


def _missing(text):
    return text == "" or text.lower() in ("na", "n/a", "nan", "-", "null", "none")


class LogReader:
    """Read a log from ``lines`` (a :class:`tinygeo.host.options.TextLines`);
    iterate for readings.

    ``mapping`` maps quantity names (see QUANTITIES) to ``NAME[:UNIT]``
    strings from the command line (missing = by header name). Each item of
    the iteration is ``(lineno, p_pa, t_k, rh_pct, time_s, gps_m)`` with None
    for an optional quantity that is absent or empty, except an empty GPS
    cell in a GPS column: nan ("no fix"); a bad line yields a
    ReadingError instance (with ``lineno`` set on it) instead of a tuple.
    Call :meth:`settle` before iterating (iterating settles with no start
    height otherwise).

    After construction: ``meta`` (comment key=value defaults), ``columns``
    (quantity -> (index, header name, unit or None, stated)), ``notes``
    (list of strings to show the user), ``delimiter``; after the first
    reading ``time_origin`` (ISO text of the first timestamp when times are
    ISO, else None) and ``time_origin_s`` (that timestamp in seconds since
    1970-01-01T00:00:00Z, else None; the readings' time_s count from it);
    ``option_units`` (the quantities whose unit was given in the mapping
    option, ``NAME:UNIT``)."""

    def __init__(self, lines, mapping=None, delimiter=None, name="input"):
        self.stream = lines
        self.name = name
        self.lineno = 0
        self.meta = {}
        self.notes = []
        self.time_origin = None
        self.time_origin_s = None
        self._t0 = None
        self._naive_noted = False
        self.option_units = set()
        self.settled = False
        self.first = None         # the first reading that parsed (probe): (lineno, p_pa, t_k, gps_m)
        self._ahead = []          # (lineno, text) read ahead by settle
        header = self._read_header()
        if delimiter is None:
            delimiter = self._sniff(header)
        elif delimiter in ("\\t", "tab", "TAB"):
            delimiter = "\t"
        elif delimiter in ("space", "blank", "whitespace"):
            delimiter = None
        self.delimiter = delimiter
        names = self._split(header)
        self.header = names
        self.nfields = len(names)
        if all(to_float(n) is not None for n in names):
            raise InputError(
                "%s line %d: no header: the first line holds numbers. Add a header line "
                "naming the columns (e.g. time_s,pressure_hpa,temp_c,rh_pct)" % (name, self.lineno))
        self.header_line = self.lineno
        self.columns = self._resolve(names, mapping or {})

    # -- header -------------------------------------------------------------
    def _readline(self):
        raw = self.stream.readline()
        if raw:
            self.lineno += 1
        return raw

    def _read_header(self):
        while True:
            raw = self._readline()
            if not raw:
                if self.lineno == 0:
                    raise InputError("%s: empty input: no header and no readings. Give a log "
                                     "with a header line and one reading per line" % self.name)
                raise InputError("%s: only comments or blank lines (%d lines), no header; add a "
                                 "header line naming the columns" % (self.name, self.lineno))
            line = raw.strip().lstrip("\ufeff")
            if not line:
                continue
            if line.startswith("#"):
                for w in line[1:].split():
                    k, sep, v = w.partition("=")
                    if sep and k in META_KEYS:
                        x = to_float(v)
                        if x is None:
                            raise InputError("%s line %d: %s=%r in the comment is not a number; "
                                             "fix or remove it" % (self.name, self.lineno, k, v))
                        self.meta[k] = x
                continue
            return line

    def _sniff(self, header):
        best, count = None, 0
        for d in DELIMITERS:
            c = header.count(d)
            if c > count:
                best, count = d, c
        return best  # None: split on blanks

    def _split(self, line):
        d = self.delimiter
        if d is None:
            return line.split()
        if '"' in line:
            import csv
            try:
                fields = next(csv.reader([line], delimiter=d))
            except (csv.Error, StopIteration):
                fields = line.split(d)
        else:
            fields = line.split(d)
        return [f.strip() for f in fields]

    def _find(self, names, quantity, spec):
        name, unit = split_spec(quantity, spec)
        if name.isdigit():
            i = int(name) - 1
            if not 0 <= i < len(names):
                raise InputError("--%s %s: column number out of range 1..%d" % (
                    _opt(quantity), spec, len(names)))
            return i, unit
        for i, n in enumerate(names):
            if n == name:
                return i, unit
        low = [n.lower() for n in names]
        if name.lower() in low:
            return low.index(name.lower()), unit
        raise InputError("--%s %s: no column named %r in the header (line %d); columns are: %s"
                         % (_opt(quantity), spec, name, self.lineno, ", ".join(names)))

    def _resolve(self, names, mapping):
        cols = {}
        used = set()
        for q in QUANTITIES:
            spec = mapping.get(q)
            if spec:
                i, unit = self._find(names, q, spec)
                if unit is not None:
                    self.option_units.add(q)
                elif classify(names[i])[0] == q:
                    unit = classify(names[i])[1]
                cols[q] = (i, names[i], unit, unit is not None)
                used.add(i)
        if "humidity" in cols and "dewpoint" in cols:
            raise InputError("give either --humidity or --dew-point, not both")
        found = {}
        for i, n in enumerate(names):
            q, unit = classify(n)
            if q is None or q in cols or i in used:
                continue
            found.setdefault(q, []).append((i, n, unit))
        for q in QUANTITIES:
            m = found.get(q)
            if not m:
                continue
            if len(m) > 1:
                raise InputError(
                    "%s line %d: %s both look like the %s; choose one with --%s NAME%s"
                    % (self.name, self.lineno,
                       " and ".join("column %d %r" % (i + 1, n) for i, n, _ in m),
                       _what(q), _opt(q),
                       " (to compare with a device: the clock it fed its column)"
                       if q == "time" else ""))
            i, n, unit = m[0]
            if q == "dewpoint" and "humidity" in cols:
                self.notes.append("column %r (dew point) not used: the humidity comes from "
                                  "column %r; give --dew-point %s to use it instead"
                                  % (n, cols["humidity"][1], n))
                continue
            if q == "humidity" and "dewpoint" in cols:
                self.notes.append("column %r (humidity) not used: the dew point comes from "
                                  "column %r" % (n, cols["dewpoint"][1]))
                continue
            cols[q] = (i, n, unit, unit is not None)
        for q, opt in (("pressure", "--pressure NAME:hPa"), ("temperature", "--temperature NAME:C")):
            if q not in cols:
                raise InputError("%s line %d: no %s column found among: %s. Name it with %s "
                                 "(NAME = header name or column number)"
                                 % (self.name, self.lineno, q, ", ".join(names), opt))
        return cols

    # -- units and the start: read ahead ----------------------------------------
    def settle(self, start_height_m=0.0, start_given=True, station_window_m=None):
        """Read ahead as far as needed to decide and confirm the units that
        are not stated, check the stated ones, and check a start height that
        defaulted to 0 (``start_given`` False) against the first reading.
        ``station_window_m``: the log is a station's, ``start_height_m`` the
        barometer's height, and a pressure unit must put the first reading
        within this many metres of it (the station's guard_m, --guard).
        Raises InputError (exit 2) naming the line, the value and the option
        to give. The lines read are replayed by the iteration."""
        if self.settled:
            return
        self.settled = True
        cols = self.columns
        need_climb = any(q in cols and cols[q][2] is None for q in ("temperature", "dewpoint"))
        check_rh = "humidity" in cols and "humidity" not in self.option_units
        # read ahead for it only when the header states no unit (a live
        # stream with a stated unit shows its rows as they come)
        need_rh = check_rh and cols["humidity"][2] is None
        rh_values = []
        probes = []
        chars = 0
        climb = None
        # a start height left at 0 is checked against the first GPS fix on
        # the pad (a cold receiver has none on the first line)
        need_gps = not start_given and "gps" in cols
        gps_fix = None
        while len(self._ahead) < LOOKAHEAD_LINES and chars < LOOKAHEAD_CHARS:
            raw = self._readline()
            if not raw:
                break
            self._ahead.append((self.lineno, raw))
            chars += len(raw)
            pr = self._probe(raw, self.lineno)
            if pr is None:
                continue
            probes.append(pr)
            if pr[7] is not None and len(rh_values) < RH_PROBES:
                rh_values.append((pr[7], pr[0]))
            if len(probes) == 1:
                self._pressure_unit(pr, start_height_m, start_given, station_window_m)
                self._time_unit(raw)
                pr[5] = _altitude(pr[1] * TO_SI[cols["pressure"][2]][0])
            elif need_climb and climb is None:
                climb = self._climb(probes)
            if need_gps:
                gps_fix, need_gps = self._pad_fix(probes)
            if (not need_climb or climb is not None) and \
                    (not need_rh or len(rh_values) >= RH_PROBES) and not need_gps:
                break
        if not probes:
            return        # nothing to judge: the iteration reports the lines
        self.first = probes[0]
        for q in ("temperature", "dewpoint"):
            if q in cols:
                self._temperature_unit(q, probes, climb)
        if check_rh and rh_values:
            self._humidity_unit(rh_values)
        if not start_given:
            self._start_check(probes[0], gps_fix)

    def _humidity_unit(self, values):
        # percent or a 0..1 fraction, from the first humidity values
        # ((value, line) pairs, at most RH_PROBES; see the module docstring)
        i, name, unit, stated = self.columns["humidity"]
        top, line = max(values)
        lines = "line %d" % values[0][1] if len(values) == 1 else \
            "lines %d..%d" % (values[0][1], values[-1][1])
        if unit == "fraction":
            if top > RH_FRACTION_MAX:
                raise InputError(
                    "%s line %d: column %r is declared a 0..1 fraction but holds %s: percent? "
                    "give --humidity %s:pct (or %s:fraction if it really is a fraction)"
                    % (self.name, line, name, _short(top), name, name))
            return
        if top <= RH_FRACTION_MAX:
            raise InputError(
                "%s %s: the humidity column %r holds no value above %g in %s "
                "(%s): a 0..1 fraction, not percent? Read as percent it would be air 100 times "
                "too dry. Give --humidity %s:fraction, or --humidity %s:pct if it really is "
                "percent" % (self.name, lines, name, RH_FRACTION_MAX,
                             "its first reading" if len(values) == 1 else
                             "its first %d readings" % len(values),
                             "largest %s" % _short(top), name, name))

    def _probe(self, raw, lineno):
        # the raw numbers of pressure, temperature, dew point and GPS of one
        # line (no unit applied), or None when the line does not parse
        line = raw.strip()
        if not line or line.startswith("#"):
            return None
        fields = self._split(line)
        if len(fields) != self.nfields:
            return None
        cols = self.columns
        out = [lineno]
        for q in ("pressure", "temperature", "dewpoint", "gps"):
            if q not in cols:
                out.append(None)
                continue
            x = to_float(fields[cols[q][0]],
                         thousands=q == "pressure" and cols[q][2] == "Pa")
            if x is None and q in ("pressure", "temperature"):
                return None
            out.append(x)
        out.append(None)                                    # [5] pressure altitude, set later
        out.append(fields[cols["pressure"][0]].strip())    # [6] the pressure as written
        out.append(to_float(fields[cols["humidity"][0]]) if "humidity" in cols else None)  # [7]
        return out          # [lineno, p, t, td, gps, z, p text, rh]

    def _pressure_unit(self, pr, h0, given, station_window_m=None):
        i, name, unit, stated = self.columns["pressure"]
        x = pr[1]
        fits = []
        window = START_WINDOW_M if station_window_m is None else station_window_m
        for u in ("Pa", "hPa", "kPa"):
            z = _altitude(x * TO_SI[u][0])
            if z is None:
                continue
            if given:
                ok = abs(z - h0) <= window
            else:
                ok = SURFACE_MIN_M <= z <= SURFACE_MAX_M
            if ok:
                fits.append((u, z))
        if station_window_m is not None:
            where = "within %.0f m of the station's height %g m" % (window, h0)
        elif given:
            where = "within %.0f m of the start height %.0f m" % (window, h0)
        else:
            where = "at a surface (pressure altitude %.0f..%.0f m)" % (SURFACE_MIN_M,
                                                                       SURFACE_MAX_M)
        if unit is not None:
            if fits and unit not in [u for u, _ in fits]:
                raise InputError(
                    "%s line %d: column %r is declared in %s but its value %s looks like %s "
                    "(%s); declare it with --pressure %s:%s" % (
                        self.name, pr[0], name, unit, _short(x), fits[0][0], where, name,
                        fits[0][0]))
            return
        if len(fits) != 1:
            raise InputError(
                "%s line %d: column %r has no pressure unit and its first value %s is not a "
                "pressure %s in Pa, hPa or kPa; give the unit with --pressure %s:UNIT (Pa, hPa, "
                "kPa; a Pa value may group thousands with commas)%s"
                % (self.name, pr[0], name, _short(x), where, name,
                   "" if given else ", or the start height with --start-height M"))
        u, z = fits[0]
        text = pr[6]
        if u == "kPa" and _grouped(text.replace(".", ",")):
            raise InputError(
                "%s line %d: column %r has no pressure unit and its first value %r reads as %s "
                "kPa, or as %s Pa with its thousands grouped by %r; give the unit: --pressure "
                "%s:kPa, or --pressure %s:Pa%s" % (
                    self.name, pr[0], name, text, _short(x), text.replace(",", "").replace(".", ""),
                    "," if "," in text else ".", name, name,
                    "" if "," in text else " after removing the '.' grouping"))
        self.columns["pressure"] = (i, name, u, False)
        self.notes.append("column %r taken as pressure in %s: its first value %s (line %d) is "
                          "then %.0f m pressure altitude, %s; give --pressure %s:UNIT to choose"
                          % (name, u, _short(x), pr[0], z, where, name))

    def _time_unit(self, raw):
        # a time column without a unit: seconds if its first value is a number,
        # else ISO-8601 timestamps
        tc = self.columns.get("time")
        if tc is None or tc[2] is not None:
            return
        fields = self._split(raw.strip())
        text = fields[tc[0]]
        if text:
            self.columns["time"] = (tc[0], tc[1], "s" if to_float(text) is not None else "iso",
                                    False)

    def _climb(self, probes):
        # (index of the first reading of the climb, mean lapse in raw units
        # per km) once CLIMB_READINGS readings in a row lie CLIMB_M above the
        # first reading, else None
        f = TO_SI[self.columns["pressure"][2]][0]
        last = probes[-1]
        last[5] = _altitude(last[1] * f)            # pressure altitude, gpm (None: out of range)
        if len(probes) < CLIMB_READINGS + 1:
            return None
        z0 = probes[0][5]
        tail = probes[-CLIMB_READINGS:]
        zs = [p[5] for p in tail]
        if z0 is None or any(z is None or z - z0 < CLIMB_M for z in zs):
            return None
        # the ends: median temperature of the first readings within 50 m of the
        # first, and of the readings of the climb (a spike is one reading)
        start = [p for p in probes[:CLIMB_READINGS] if p[5] is not None and abs(p[5] - z0) < 50.0]
        t0 = _median([p[2] for p in start])
        t1 = _median([p[2] for p in tail])
        dz = (_median(zs) - z0) / 1000.0
        return (len(probes) - CLIMB_READINGS, (t0 - t1) / dz, tail[0][0])

    def _temperature_unit(self, q, probes, climb):
        i, name, unit, stated = self.columns[q]
        k = 2 if q == "temperature" else 3
        first = next((p for p in probes if p[k] is not None), None)
        if first is None:
            return
        x = first[k]
        guess = "K" if x >= 100.0 else "C"
        if unit is not None:
            if (unit == "K") != (guess == "K"):
                raise InputError(
                    "%s line %d: column %r is declared in %s but its value %s looks like %s; "
                    "declare it with --%s %s:%s" % (
                        self.name, first[0], name, _unit_word(unit), _short(x),
                        _unit_word(guess), _opt(q), name, guess))
            return
        lo, hi = SURFACE_T_K[guess]
        ask = ("give the unit with --%s %s:UNIT (C for degC, F for degF, K)" % (_opt(q), name))
        if not lo <= x <= hi:
            more = ""
            if guess == "C" and x > hi:
                more = " (degF?)"
            raise InputError(
                "%s line %d: column %r has no unit and its first value %s is no surface air "
                "temperature in %s (%g..%g)%s; %s" % (
                    self.name, first[0], name, _short(x), _unit_word(guess), lo, hi, more, ask))
        why = "a surface air temperature"
        if q == "temperature" and climb is not None:
            lapse = climb[1]
            if lapse > MAX_LAPSE_K_KM:
                raise InputError(
                    "%s line %d: column %r has no unit; read in %s it cools by %.1f K/km over "
                    "the first %.0f m of climb (lines %d..%d), steeper than the dry adiabatic "
                    "%.1f K/km: a temperature in degF? %s" % (
                        self.name, climb[2], name, _unit_word(guess), lapse, CLIMB_M,
                        probes[0][0], climb[2], 9.8, ask))
            why += ", cooling %.1f K/km over the first %.0f m of climb" % (lapse, CLIMB_M)
        if q == "dewpoint":
            t_unit = self.columns["temperature"][2]
            if first[2] is not None and t_unit is not None:
                t_k = first[2] * TO_SI[t_unit][0] + TO_SI[t_unit][1]
                td_k = x * TO_SI[guess][0] + TO_SI[guess][1]
                if td_k > t_k + 1.0:
                    raise InputError(
                        "%s line %d: column %r has no unit; read in %s its first value %s is a "
                        "dew point %.1f K above the air temperature; %s" % (
                            self.name, first[0], name, _unit_word(guess), _short(x),
                            td_k - t_k, ask))
        self.columns[q] = (i, name, guess, False)
        self.notes.append("column %r taken as %s in %s (first value %s on line %d: %s); give "
                          "--%s %s:UNIT to choose" % (name, q, _unit_word(guess), _short(x),
                                                      first[0], why, _opt(q), name))

    def _pad_fix(self, probes):
        # (the first GPS fix on the pad or None, still looking): a fix among
        # the first START_GPS_READINGS readings whose pressure altitude is
        # within START_GPS_STILL_M of the first reading's (before the launch)
        pr = probes[-1]
        if len(probes) > START_GPS_READINGS:
            return None, False
        f = TO_SI[self.columns["pressure"][2]][0]
        z0 = _altitude(probes[0][1] * f)
        z = _altitude(pr[1] * f)
        if z0 is None or z is None:
            return None, len(probes) > 1       # out of range: the first line decides
        if abs(z - z0) > START_GPS_STILL_M:
            return None, False                  # launched without a fix
        gps = pr[4]
        if gps is not None and gps == gps:
            return pr, False
        return None, True

    def _start_check(self, pr, fix=None):
        f = TO_SI[self.columns["pressure"][2]][0]
        z = _altitude(pr[1] * f)
        gps = fix[4] if fix is not None else None
        parts = []
        own = fix is None or fix is pr
        if gps is not None and abs(gps) > START_GPS_M:
            parts.append("its GPS height is %.0f m" % gps if own else
                         "the first GPS fix on the pad (line %d, pressure altitude within %.0f m "
                         "of the first reading's) is %.0f m" % (fix[0], START_GPS_STILL_M, gps))
        if z is not None and abs(z) > START_PA_M:
            parts.append("%s pressure altitude is %.0f m" % ("its" if own else
                                                             "the first reading's", z))
        if not parts:
            return
        guess = gps if gps is not None and abs(gps) > START_GPS_M else z
        raise InputError(
            "%s line %d: no start height was given (it would be 0 m), but the %s says "
            "otherwise: %s. Give the height of the first reading above mean sea level with "
            "--start-height M (about --start-height %.0f here; --start-height 0 if it really is "
            "at sea level), or put '# start_height_m=..' before the header"
            % (self.name, pr[0], "first reading" if own else "log", " and ".join(parts), guess))

    # -- rows ---------------------------------------------------------------
    def __iter__(self):
        if not self.settled:
            self.settle()
        ahead = self._ahead
        self._ahead = []
        cols = self.columns
        d = self.delimiter
        nf = self.nfields
        ip, fp, op = self._conv("pressure")
        it, ft, ot = self._conv("temperature")
        ih = cols["humidity"][0] if "humidity" in cols else -1
        fh = TO_SI[cols["humidity"][2] or "%"][0] if ih >= 0 else 1.0
        ig = cols["gps"][0] if "gps" in cols else -1
        tcol = cols.get("time")
        # the fast path: numbers with a decimal point, humidity (not dew
        # point), time in s or ms or none; anything else goes to parse()
        fast = "dewpoint" not in cols and (tcol is None or tcol[2] in ("s", "ms"))
        itm = tcol[0] if tcol is not None else -1
        ftm = 0.001 if tcol is not None and tcol[2] == "ms" else 1.0
        parse = self.parse
        lineno = self.lineno
        has_rh = ih >= 0
        has_t = itm >= 0
        has_g = ig >= 0
        try:
            for first, chunk, clean in self._chunks(ahead):
                lineno = first - 1
                # a clean chunk has no '"', no '#', no letter of nan, inf or an
                # exponent and no number of hundreds of digits: its numbers
                # are finite, no line needs the tests
                quick = fast and clean
                for raw in chunk:
                    lineno += 1
                    if quick or fast and '"' not in raw and "#" not in raw:
                        fields = raw.split(d)
                        if len(fields) == nf:
                            try:
                                p = float(fields[ip]) * fp + op
                                t = float(fields[it]) * ft + ot
                                rh = float(fields[ih]) * fh if has_rh else 0.0
                                ts = float(fields[itm]) * ftm if has_t else 0.0
                                g = float(fields[ig]) if has_g else 0.0
                            except ValueError:
                                pass
                            else:
                                # all finite (nan or inf times 0 is nan)
                                if quick or (p + t + rh + ts + g) * 0.0 == 0.0:
                                    yield (lineno, p, t, rh if has_rh else None,
                                           ts if has_t else None, g if has_g else None)
                                    continue
                    self.lineno = lineno
                    line = raw.rstrip("\r\n")
                    stripped = line.strip()
                    if not stripped or stripped.startswith("#"):
                        continue
                    if d not in ("\t", " "):
                        line = stripped
                    try:
                        yield parse(line, lineno)
                    except ReadingError as e:
                        yield e
        except OSError as e:
            raise InputError("cannot read %s after line %d: %s"
                             % (self.name, lineno, e.strerror or e))
        finally:
            self.lineno = lineno
            if isinstance(self.stream, TextLines):
                self.stream.lineno = lineno

    def _chunks(self, ahead):
        # the lines after the header as (number of the first, list of lines,
        # clean: True when they hold no '"' or '#' (a comment line), none of
        # the letters n N i I e E and no line of CLEAN_MAX_CHARS or more, so
        # every number in them is finite):
        # the lines settle read ahead, then a binary stream's lines a block
        # at a time (one read and one decode per CHUNK_BYTES: the replay's
        # hot loop, bench/replay_bench.py), else one line at a time. A line
        # comes without its LF. A line that is not UTF-8, holds a NUL or is
        # MAX_LINE_CHARS long or longer raises InputError as TextLines does,
        # after the lines before it (as reading line by line would); memory
        # stays within one such line (at most 4 bytes a character) and one
        # block.
        src = self.stream
        lineno = self.lineno        # the last line read (settle's read-ahead included)
        if ahead:
            yield ahead[0][0], [raw for _, raw in ahead], False
        read = getattr(getattr(src, "stream", None), "read1", None)
        if not isinstance(src, TextLines) or not src.binary or read is None:
            readline = src.readline
            while True:
                raw = readline()
                if not raw:
                    return
                lineno += 1
                yield lineno, [raw], False
        tail = b""
        while True:
            block = read(CHUNK_BYTES)
            if not block:
                if tail:
                    lines, clean, err = self._decode(tail, lineno)
                    if lines:
                        yield lineno + 1, lines, False
                    if err is not None:
                        raise err
                return
            end = block.rfind(b"\n")
            if end < 0:
                tail += block
                if len(tail) >= MAX_LINE_CHARS:
                    err = self._bad_line(tail, lineno + 1, False)
                    if err is not None:
                        raise err
                continue
            lines, clean, err = self._decode(tail + block[:end], lineno)
            if lines:
                yield lineno + 1, lines, clean
            if err is not None:
                raise err
            tail = block[end + 1:]
            lineno += len(lines)

    def _decode(self, data, lineno):
        # (lines, clean, error): the lines of ``data`` (whole lines after
        # line ``lineno``, without the LF that ends the last one) up to the
        # first that is not UTF-8, holds a NUL or is too long, the InputError
        # for that one (None if none is), and whether the lines are clean
        # (see _chunks)
        src = self.stream
        err = None
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError as e:
            start = data.rfind(b"\n", 0, e.start) + 1      # the line that fails
            stop = data.find(b"\n", e.start)
            err = self._bad_line(data[start:] if stop < 0 else data[start:stop],
                                 lineno + data.count(b"\n", 0, start) + 1, True)
            if not start:
                return [], False, err
            text = data[:start - 1].decode("utf-8")
        lines = text.split("\n")
        if len(text) >= MAX_LINE_CHARS or "\x00" in text:
            for k, raw in enumerate(lines):
                if len(raw) >= MAX_LINE_CHARS or "\x00" in raw:
                    try:
                        src.check(raw if len(raw) >= MAX_LINE_CHARS else raw + "\n",
                                  lineno + k + 1)
                    except InputError as e:
                        return lines[:k], False, e
        # (a number of CLEAN_MAX_CHARS digits or more overflows to inf without
        # a letter: a block with so long a line is not clean)
        clean = err is None and not (
            '"' in text or "#" in text or "n" in text or "N" in text or "i" in text or
            "I" in text or "e" in text or "E" in text) and max(map(len, lines)) < CLEAN_MAX_CHARS
        return lines, clean, err

    def _bad_line(self, raw, lineno, whole):
        # the InputError for the line ``raw`` (bytes, line ``lineno``; all
        # of it when ``whole``, else the start of a line MAX_LINE_CHARS bytes
        # or longer) when it is not UTF-8 or MAX_LINE_CHARS characters or
        # longer, else None (a line read on is never more than 4 bytes a
        # character). As TextLines: an undecodable byte is named when it is
        # among the first MAX_LINE_CHARS + 1 bytes or before MAX_LINE_CHARS
        # characters, else the line is too long.
        src = self.stream
        try:
            text = raw.decode("utf-8")
        except UnicodeDecodeError as e:
            text = raw[:e.start].decode("utf-8")
            if (whole or e.end < len(raw)) and \
                    (e.start <= MAX_LINE_CHARS or len(text) < MAX_LINE_CHARS):
                return src.not_utf8(lineno, e, raw)
            # (else a character the next block ends, or a line too long anyway)
        try:
            src.check(text, lineno)
        except InputError as e:
            return e
        return None

    def _conv(self, q):
        i, name, unit, stated = self.columns[q]
        if unit is None:
            unit = "hPa" if q == "pressure" else "C"
        f, o = TO_SI[unit]
        return i, f, o

    def parse(self, line, lineno):
        """Parse one data line; return a reading tuple or raise ReadingError."""
        fields = self._split(line)
        if len(fields) != self.nfields:
            raise _bad("line %d: %d fields, expected %d as in the header (%s)"
                       % (lineno, len(fields), self.nfields, self._hdr()), "fields", lineno)
        cols = self.columns
        p = self._number(fields, "pressure", lineno, True)
        t = self._number(fields, "temperature", lineno, True)
        rh = None
        if "humidity" in cols:
            rh = self._number(fields, "humidity", lineno, False)
        elif "dewpoint" in cols:
            td = self._number(fields, "dewpoint", lineno, False)
            if td is not None:
                rh = _rh_from_dew_point(t, td, lineno)
        time_s = None
        if "time" in cols:
            time_s = self._time(fields, lineno)
        gps = None
        if "gps" in cols:
            gps = self._number(fields, "gps", lineno, False)
            if gps is None:
                gps = NAN       # an empty GPS cell: no fix (the column's FL_NO_GPS)
        return (lineno, p, t, rh, time_s, gps)

    def _hdr(self):
        s = ",".join(self.header)
        return s if len(s) < 60 else s[:57] + "..."

    def _number(self, fields, q, lineno, required):
        i, name, unit, stated = self.columns[q]
        text = fields[i]
        if _missing(text):
            if required:
                raise _bad("line %d: %s is missing in column %r" % (lineno, q, name), "missing", lineno)
            return None
        x = to_float(text, thousands=q == "pressure" and unit == "Pa")
        if x is None:
            raise _bad("line %d: %s %r in column %r is not a number" % (
                lineno, q, text[:30], name), "number", lineno)
        if unit is None:
            unit = "hPa" if q == "pressure" else "C" if q in ("temperature", "dewpoint") else \
                "%" if q == "humidity" else "m"
        f, o = TO_SI[unit]
        return x * f + o

    def _time(self, fields, lineno):
        i, name, unit, stated = self.columns["time"]
        text = fields[i]
        if text == "":
            return None
        if unit is None:
            unit = "s" if to_float(text) is not None else "iso"
            self.columns["time"] = (i, name, unit, False)
        if unit == "iso":
            try:
                s, naive = _iso_seconds(text)
            except (ValueError, OverflowError, OSError):
                raise _bad("line %d: time %r in column %r is not an ISO-8601 timestamp "
                           "(e.g. 2026-05-04T09:30:00Z)" % (lineno, text[:40], name), "time", lineno)
            if naive and not self._naive_noted:
                self._naive_noted = True
                self.notes.append(
                    "column %r holds time stamps without a UTC offset (%r, line %d): taken as "
                    "UTC. A clock kept on local time steps by an hour at each daylight-saving "
                    "change, which is then read as a clock step (a gap, or a clock set back); "
                    "write the stamps in UTC (Z) or with their offset (+01:00)"
                    % (name, text.strip()[:40], lineno))
            if self._t0 is None:
                self._t0 = s
                self.time_origin = text.strip()
                self.time_origin_s = s
            return s - self._t0
        x = to_float(text)
        if x is None:
            raise _bad("line %d: time %r in column %r is not a number of seconds; "
                       "use --time %s:iso for timestamps" % (lineno, text[:30], name, name),
                       "time", lineno)
        f, o = TO_SI[unit]
        return x * f + o

    def describe(self):
        """Return ``quantity=name:unit`` words describing the mapping."""
        words = []
        for q in QUANTITIES:
            if q in self.columns:
                i, name, unit, stated = self.columns[q]
                words.append("%s=%s:%s" % (q, normalise(name) or str(i + 1), unit or "auto"))
        return " ".join(words)


def _altitude(p_pa):
    # pressure altitude, gpm (U.S. Standard Atmosphere 1976, tinygeo.standard),
    # or None outside the standard's range
    from tinygeo import standard
    try:
        return standard.pressure_altitude(p_pa)
    except ValueError:
        return None


def _median(values):
    v = sorted(values)
    n = len(v)
    return v[n // 2] if n % 2 else 0.5 * (v[n // 2 - 1] + v[n // 2])


def _rh_from_dew_point(t_k, td_k, lineno):
    """Relative humidity (%) from dew point: 100 e_s(td) / e_s(t), both over
    water, with the core's saturation vapour pressure (WMO-No. 8, Annex 4.B);
    the enhancement factor cancels in the ratio."""
    from tinygeo import moisture
    try:
        return 100.0 * moisture.saturation_vapour_pressure(td_k) / \
            moisture.saturation_vapour_pressure(t_k)
    except ValueError as e:
        raise _bad("line %d: dew point %.2f K with temperature %.2f K: %s" % (lineno, td_k, t_k, e),
                   "humidity", lineno)


def _bad(message, reason, lineno):
    e = ReadingError(message, reason)
    e.lineno = lineno
    return e


def _short(x):
    return ("%.6g" % x)


def _unit_word(unit):
    return {"C": "degC", "K": "K", "F": "degF", "Pa": "Pa", "hPa": "hPa", "kPa": "kPa"}.get(unit, unit)


def _what(q):
    return {"dewpoint": "dew point", "gps": "GPS height"}.get(q, q)


def _opt(q):
    return {"dewpoint": "dew-point"}.get(q, q)
