"""Read a recorded log of readings (CSV/TSV with a header), one line at a time.

A log is text: optional ``#`` comment lines, one header line naming the
columns, then one reading per line. The delimiter (comma, tab, semicolon,
``|`` or blanks) is taken from the header unless given. Comment lines before
the header may carry ``key=value`` words; ``lat_deg``, ``start_height_m``,
``sigma_p_pa``, ``sigma_t_k``, ``sigma_rh_pct`` (sensor noise) and
``bias_p_pa``, ``bias_t_k``, ``bias_rh_pct`` (calibration uncertainty) are
used as defaults for the replay (``tinygeo simulate`` writes them).

Columns are mapped to quantities by the user (``--pressure NAME:hPa`` ...) or,
by default, from the header names: a name is lower-cased, ``%`` becomes
``pct``, any other run of non-letters/digits becomes ``_``, and a trailing
unit word is split off (``Temp (degC)`` -> ``temp`` + ``degc``). Recognised
names are listed in ``NAMES`` and units in ``UNITS``. A quantity whose unit is
neither given nor in its header name gets it from the first value read
(pressure >= 1200 is Pa, else hPa; temperature >= 100 is K, else degC;
a time that is not a number is an ISO-8601 timestamp), and a note says so.

Numbers may use a decimal comma when the delimiter is not a comma.

Problems with the log as a whole (no header, unknown column, a declared unit
the values contradict...) raise :class:`InputError` (exit status 2); problems
with one line raise :class:`tinygeo.errors.ReadingError` with a ``reason``
(``number``, ``fields``, ``missing``, ``time``) and the line is skipped.
"""
import datetime

from tinygeo.errors import ReadingError, TinygeoError

QUANTITIES = ("pressure", "temperature", "humidity", "dewpoint", "time", "gps")

# unit word (normalised) -> canonical unit, per quantity
UNITS = {
    "pressure": {"pa": "Pa", "hpa": "hPa", "mbar": "hPa", "mb": "hPa", "kpa": "kPa"},
    "temperature": {"k": "K", "c": "C", "degc": "C", "celsius": "C", "kelvin": "K"},
    "dewpoint": {"k": "K", "c": "C", "degc": "C", "celsius": "C", "kelvin": "K"},
    "humidity": {"pct": "%", "percent": "%"},
    "time": {"s": "s", "sec": "s", "seconds": "s", "ms": "ms", "iso": "iso"},
    "gps": {"m": "m"},
}
# factor and offset to SI (Pa, K, %, s, m): si = value * factor + offset
TO_SI = {"Pa": (1.0, 0.0), "hPa": (100.0, 0.0), "kPa": (1000.0, 0.0),
         "K": (1.0, 0.0), "C": (1.0, 273.15), "%": (1.0, 0.0),
         "s": (1.0, 0.0), "ms": (0.001, 0.0), "m": (1.0, 0.0)}

# normalised header name (without unit word) -> quantity
NAMES = {}
for _q, _names in (
        ("pressure", "p pres press pressure baro air_pressure p_air barometer"),
        ("temperature", "t temp temperature air_temp air_temperature ta tair"),
        ("humidity", "rh hum humidity relative_humidity u"),
        ("dewpoint", "td dew dewpoint dew_point dp dew_temp"),
        ("time", "time elapsed seconds timestamp utc datetime date_time clock t_s"),
        ("gps", "gps gps_alt gps_height gps_altitude alt_gps gnss gnss_alt gnss_height")):
    for _n in _names.split():
        NAMES[_n] = _q

META_KEYS = ("lat_deg", "start_height_m", "sigma_p_pa", "sigma_t_k", "sigma_rh_pct",
             "bias_p_pa", "bias_t_k", "bias_rh_pct")
DELIMITERS = (",", "\t", ";", "|")


class InputError(TinygeoError):
    """The log cannot be replayed as given; the message says where and what to do."""


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
            quantity.replace("dewpoint", "dew-point"), spec, word,
            ", ".join(sorted(set(UNITS[quantity].values())))))
    return name.strip(), unit


def _parse_float(text):
    x = float(text)
    if x != x or x in (float("inf"), float("-inf")):
        raise ValueError("not finite")
    return x


def _iso_seconds(text):
    """Seconds since 1970 (UTC) of an ISO-8601 timestamp; naive means UTC."""
    s = text.strip()
    if s.endswith("Z") or s.endswith("z"):
        s = s[:-1] + "+00:00"
    dt = datetime.datetime.fromisoformat(s)
    if dt.tzinfo is None:
        dt = dt.replace(tzinfo=datetime.timezone.utc)
    return dt.timestamp()


class LogReader:
    """Read a log from a text stream; iterate for readings.

    ``mapping`` maps quantity names (see QUANTITIES) to ``NAME[:UNIT]``
    strings from the command line (missing = by header name). Each item of
    the iteration is ``(lineno, p_pa, t_k, rh_pct, time_s, gps_m)`` with None
    for an optional quantity that is absent or empty; a bad line yields a
    ReadingError instance (with ``lineno`` set on it) instead of a tuple.

    After construction: ``meta`` (comment key=value defaults), ``columns``
    (quantity -> (index, header name, unit)), ``notes`` (list of strings to
    show the user), ``delimiter``, ``time_origin`` (ISO text of the first
    timestamp when times are ISO, else None), ``option_units`` (the
    quantities whose unit was given in the mapping option, ``NAME:UNIT``)."""

    def __init__(self, stream, mapping=None, delimiter=None, name="input"):
        self.stream = stream
        self.name = name
        self.lineno = 0
        self.meta = {}
        self.notes = []
        self.time_origin = None
        self._t0 = None
        self._checked = set()
        self.option_units = set()
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
        if all(_is_number(n) for n in names):
            raise InputError(
                "%s line %d: no header: the first line holds numbers. Add a header line "
                "naming the columns (e.g. time_s,pressure_hpa,temp_c,rh_pct)" % (name, self.lineno))
        self.header_line = self.lineno
        self.columns = self._resolve(names, mapping or {})

    # -- header -------------------------------------------------------------
    def _read_header(self):
        while True:
            raw = self.stream.readline()
            if not raw:
                if self.lineno == 0:
                    raise InputError("%s: empty input: no header and no readings. Give a log "
                                     "with a header line and one reading per line" % self.name)
                raise InputError("%s: only comments or blank lines (%d lines), no header; add a "
                                 "header line naming the columns" % (self.name, self.lineno))
            self.lineno += 1
            line = raw.strip().lstrip("\ufeff")
            if not line:
                continue
            if line.startswith("#"):
                for w in line[1:].split():
                    k, sep, v = w.partition("=")
                    if sep and k in META_KEYS:
                        try:
                            self.meta[k] = _parse_float(v)
                        except ValueError:
                            raise InputError("%s line %d: %s=%r in the comment is not a number; "
                                             "fix or remove it" % (self.name, self.lineno, k, v))
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
        for q in QUANTITIES:
            spec = mapping.get(q)
            if spec:
                i, unit = self._find(names, q, spec)
                if unit is not None:
                    self.option_units.add(q)
                if unit is None:
                    unit = classify(names[i])[1] if classify(names[i])[0] == q else None
                cols[q] = (i, names[i], unit, True)
        for i, n in enumerate(names):
            q, unit = classify(n)
            if q is None or q in cols or (q in ("humidity", "dewpoint") and
                                          ("humidity" in cols or "dewpoint" in cols)):
                continue
            if i in [c[0] for c in cols.values()]:
                continue
            cols[q] = (i, n, unit, unit is not None)
        for q, opt in (("pressure", "--pressure NAME:hPa"), ("temperature", "--temperature NAME:C")):
            if q not in cols:
                raise InputError("%s line %d: no %s column found among: %s. Name it with %s "
                                 "(NAME = header name or column number)"
                                 % (self.name, self.lineno, q, ", ".join(names), opt))
        if "humidity" in cols and "dewpoint" in cols:
            raise InputError("give either --humidity or --dew-point, not both")
        return cols

    # -- rows ---------------------------------------------------------------
    def __iter__(self):
        readline = self.stream.readline
        while True:
            raw = readline()
            if not raw:
                return
            self.lineno += 1
            # keep a trailing delimiter: a tab-separated line may end in an empty field
            line = raw.rstrip("\r\n")
            stripped = line.strip()
            if not stripped or stripped.startswith("#"):
                continue
            if self.delimiter not in ("\t", " "):
                line = stripped
            try:
                yield self.parse(line, self.lineno)
            except ReadingError as e:
                yield e

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
                rh = _rh_from_dew_point(t, td, p, lineno)
        time_s = None
        if "time" in cols:
            time_s = self._time(fields, lineno)
        gps = None
        if "gps" in cols:
            gps = self._number(fields, "gps", lineno, False)
        return (lineno, p, t, rh, time_s, gps)

    def _hdr(self):
        s = ",".join(self.header)
        return s if len(s) < 60 else s[:57] + "..."

    def _number(self, fields, q, lineno, required):
        i, name, unit, declared = self.columns[q]
        text = fields[i]
        if text == "" or text.lower() in ("na", "n/a", "nan", "-", "null", "none"):
            if required:
                raise _bad("line %d: %s is missing in column %r" % (lineno, q, name), "missing", lineno)
            return None
        try:
            x = _parse_float(text)
        except ValueError:
            if "," in text and self.delimiter != ",":
                try:   # a decimal comma (12,5) in a log not separated by commas
                    x = _parse_float(text.replace(",", "."))
                except ValueError:
                    x = None
            else:
                x = None
            if x is None:
                raise _bad("line %d: %s %r in column %r is not a number" % (
                    lineno, q, text[:30], name), "number", lineno)
        if q not in self._checked:
            unit = self._check_unit(q, x, lineno)
        f, o = TO_SI[unit]
        return x * f + o

    def _check_unit(self, q, x, lineno):
        """Fix an unknown unit from the first value, or check a declared one."""
        i, name, unit, declared = self.columns[q]
        self._checked.add(q)
        guess = None
        if q == "pressure":
            guess = "Pa" if x >= 1200.0 else "hPa"
        elif q in ("temperature", "dewpoint"):
            guess = "K" if x >= 100.0 else "C"
        elif q == "humidity":
            guess = "%"
        elif q == "gps":
            guess = "m"
        if unit is None:
            self.columns[q] = (i, name, guess, False)
            if q in ("pressure", "temperature", "dewpoint"):
                self.notes.append("column %r taken as %s in %s (first value %s on line %d); "
                                  "give --%s %s:UNIT to choose" % (
                                      name, q, _unit_word(guess), _short(x), lineno, _opt(q), name))
            return guess
        if q in ("pressure", "temperature", "dewpoint") and guess != unit and \
                not (q == "pressure" and unit == "kPa" and x < 120.0):
            raise InputError(
                "%s line %d: column %r is declared in %s but its value %s looks like %s; "
                "declare it with --%s %s:%s" % (
                    self.name, lineno, name, _unit_word(unit), _short(x), _unit_word(guess),
                    _opt(q), name, guess))
        return unit

    def _time(self, fields, lineno):
        i, name, unit, declared = self.columns["time"]
        text = fields[i]
        if text == "":
            return None
        if unit is None:
            unit = "s" if _is_number(text) else "iso"
            self.columns["time"] = (i, name, unit, False)
        if unit == "iso":
            try:
                s = _iso_seconds(text)
            except (ValueError, OverflowError, OSError):
                raise _bad("line %d: time %r in column %r is not an ISO-8601 timestamp "
                           "(e.g. 2026-05-04T09:30:00Z)" % (lineno, text[:40], name), "time", lineno)
            if self._t0 is None:
                self._t0 = s
                self.time_origin = text.strip()
            return s - self._t0
        try:
            x = _parse_float(text)
        except ValueError:
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
                i, name, unit, declared = self.columns[q]
                words.append("%s=%s:%s" % (q, normalise(name) or str(i + 1), unit or "auto"))
        return " ".join(words)


def _rh_from_dew_point(t_k, td_k, p_pa, lineno):
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


def _is_number(text):
    try:
        float(text)
        return True
    except ValueError:
        return False


def _short(x):
    return ("%.6g" % x)


def _unit_word(unit):
    return {"C": "degC", "K": "K", "Pa": "Pa", "hPa": "hPa", "kPa": "kPa"}.get(unit, unit)


def _opt(q):
    return {"dewpoint": "dew-point", "humidity": "humidity"}.get(q, q)
