"""What every ``tinygeo`` command shares: exit codes, errors, safe input and
output files, the column mapping options and the column set-up.

The host's modules form one way: ``tinygeo.record`` (the device-side record
format) -> ``options`` (this module) -> ``table``, ``logread`` -> ``replay``,
``stationlog``, ``simulate`` -> ``compare``, ``plot`` -> ``cli`` (argparse and
dispatch). No
module imports one to its right, and none reads another module's ``_private``
names.

Files:

* Inputs are read as UTF-8, line by line, at most MAX_LINE_CHARS characters
  per line (:class:`TextLines`): a line that is not UTF-8 (a UTF-16 log, a
  binary file), holds NUL bytes or a CR before its end (line ends of CR
  alone) or is longer stops the command with one message naming the file
  and the line (exit 2), in bounded memory.
* No output may be one of the inputs (:func:`check_paths`: the same file,
  links and hard links included, or stdin redirected from it): exit 2 before
  anything is opened for writing.
* An output file is written under a temporary name in its directory and
  renamed over the final name at the end (:class:`OutFile`), so an
  interrupted or failed run leaves no half-written file under that name (an
  existing file keeps its old contents). An output named by a symbolic link
  is written to the file the link points to (the link stays). An existing
  output file that is read-only (no write permission for its owner) is not
  replaced: exit 4 before anything is written, saying to make it writable or
  delete it (:func:`replace_target`). Devices and pipes (``/dev/null``,
  ``/dev/full``, a FIFO) are written directly. A write that fails (a full
  disk, a closed standard output) stops the command with exit 4 naming the
  file.
"""
import errno
import inspect
import io
import os
import stat
import tempfile

from tinygeo.errors import TinygeoError

EXIT_OK = 0
EXIT_COMPARE_FAILED = 1
EXIT_INPUT = 2
EXIT_MISSING_EXTRA = 3
EXIT_OUTPUT = 4
EXIT_INTERRUPTED = 130

MAX_LINE_CHARS = 1 << 20
"""Longest input line read, characters (1 MiB of ASCII): a longer line stops
the command (exit 2) instead of filling memory."""

ANCHOR_HPA_MIN = 100.0    # --anchor-pressure range, hPa
ANCHOR_HPA_MAX = 1100.0


class UsageError(TinygeoError):
    """Bad command-line use; exit status 2."""


class InputError(TinygeoError):
    """An input cannot be used as given; the message says where and what to
    do. Exit status 2."""


class OutputError(TinygeoError):
    """An output cannot be written (full disk, closed stream...); exit status 4."""


def one_line(text):
    """``text`` with every character that would break or hide a line
    (control characters, line and paragraph separators) shown escaped, so
    that a message quoting the input stays one line."""
    if text.isprintable():
        return text
    return "".join(c if c.isprintable() else repr(c)[1:-1] for c in text)


TIME_WORDS = ("time_s=", "reading's ")
"""A number after one of these words in a column's or a station's message is
a time stamp: round_numbers keeps it whole."""


def stamp_text(x):
    """A time stamp, seconds, as whole digits (``1774714200.0`` ->
    ``1774714200``; ``12.25`` -> ``12.25``, at most 3 decimals)."""
    if x == int(x):
        return "%d" % x
    return ("%.3f" % x).rstrip("0").rstrip(".")


def round_numbers(message, times=None):
    """``message`` with its long decimal numbers rounded to 6 significant
    digits (``p_pa=96447.00000000001`` -> ``p_pa=96447``), for messages that
    quote a value computed from a log's text. A time stamp (a number after a
    word of TIME_WORDS) is kept whole (stamp_text), or given as
    ``times(seconds)`` when that function is passed (a station's UTC text)."""
    out = []
    i = 0
    n = len(message)
    while i < n:
        c = message[i]
        if c.isdigit() or (c == "-" and i + 1 < n and message[i + 1].isdigit()):
            j = i + 1
            while j < n and (message[j].isdigit() or message[j] in ".eE" or
                             (message[j] in "+-" and message[j - 1] in "eE")):
                j += 1
            word = message[i:j].rstrip(".")
            j = i + len(word)
            if message.endswith(TIME_WORDS, 0, i):
                try:
                    x = float(word)
                except ValueError:
                    x = None
                if x is not None and x - x == 0.0:
                    word = times(x) if times is not None else stamp_text(x)
            elif "." in word and len(word.split(".")[1].rstrip("eE+-0123456789")) == 0 and \
                    len(word) > 9:
                try:
                    word = "%.6g" % float(word)
                except ValueError:
                    pass
            out.append(word)
            i = j
        else:
            out.append(c)
            i += 1
    return "".join(out)


# --- inputs --------------------------------------------------------------------
class TextLines:
    """The lines of a text input, decoded as UTF-8 one line at a time.

    ``stream`` is a binary stream (a file opened 'rb', ``sys.stdin.buffer``)
    or a text stream (``io.StringIO`` in tests). Iterating (or
    :meth:`readline`) gives each line as text with its line end, '' at the
    end; ``lineno`` is the number of the line last read. Raises InputError
    naming ``name`` and the line for a line that is not UTF-8, holds a NUL
    character, holds a CR before its line end (a file whose lines end in CR
    alone), or is longer than MAX_LINE_CHARS; memory stays within one line
    of that size. (The replay's hot loop reads the stream itself and checks
    the length and NUL only: the header and the lines read ahead come
    through here.)"""

    def __init__(self, stream, name):
        self.stream = stream
        self.name = name
        self.lineno = 0
        self.binary = not isinstance(stream, io.TextIOBase)

    def readline(self):
        """The next line ('' at the end)."""
        try:
            raw = self.stream.readline(MAX_LINE_CHARS + 1)
        except OSError as e:
            raise self.read_error(e)
        except UnicodeDecodeError as e:     # a text stream decoding strictly
            raise self.not_utf8(self.lineno + 1, e)
        if not raw:
            return ""
        self.lineno += 1
        if self.binary:
            try:
                raw = raw.decode("utf-8")
            except UnicodeDecodeError as e:
                raise self.not_utf8(self.lineno, e, raw)
        if len(raw) >= MAX_LINE_CHARS or "\x00" in raw:
            self.check(raw, self.lineno)
        if "\r" in raw and "\r" in raw.rstrip("\r\n"):
            raise InputError("%s line %d: a CR (carriage return) inside the line: the file's "
                             "lines seem to end in CR alone (old Mac line ends), so it reads as "
                             "one line; convert the line ends to LF (e.g. tr '\\r' '\\n' < IN "
                             "> OUT)" % (self.name, self.lineno))
        return raw

    def check(self, text, lineno):
        """Raise InputError if the decoded line ``text`` (line ``lineno``) is
        longer than MAX_LINE_CHARS or holds a NUL character."""
        if len(text) > MAX_LINE_CHARS or (len(text) == MAX_LINE_CHARS and text[-1] != "\n"):
            hint = ""
            if "\r" in text:
                hint = " (its lines seem to end in CR alone: convert the line ends to LF)"
            raise InputError("%s line %d: longer than %d characters%s; is this a log of "
                             "readings, one per line?" % (self.name, lineno, MAX_LINE_CHARS, hint))
        if "\x00" in text:
            raise InputError("%s line %d: holds NUL characters: the file is not UTF-8 text "
                             "(UTF-16? binary?); convert it to UTF-8" % (self.name, lineno))

    def read_error(self, e):
        """The InputError for an OSError while reading."""
        return InputError("cannot read %s after line %d: %s"
                          % (self.name, self.lineno, e.strerror or e))

    def not_utf8(self, lineno, e, raw=b""):
        """The InputError for line ``lineno`` that failed to decode (``e``)."""
        what = ""
        if lineno == 1 and raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
            what = " (it starts with a UTF-16 byte order mark)"
        return InputError("%s line %d: not UTF-8 text%s: byte 0x%02x at character %d cannot be "
                          "decoded; convert the file to UTF-8"
                          % (self.name, lineno, what, e.object[e.start], e.start + 1))

    def __iter__(self):
        readline = self.readline
        while True:
            line = readline()
            if not line:
                return
            yield line


def _stdin_or_fail(stdin):
    if stdin is None:
        raise InputError("standard input is closed; give a file name instead of '-'")
    return stdin


def open_text(path, stdin):
    """Open an input: ``path`` or, for '-', ``stdin``. Returns (TextLines,
    display name, close function)."""
    if path == "-":
        stdin = _stdin_or_fail(stdin)
        raw = getattr(stdin, "buffer", stdin)
        return TextLines(raw, "stdin"), "stdin", lambda: None
    if os.path.isdir(path):
        raise UsageError("%s is a directory; give a log file" % path)
    try:
        f = open(path, "rb")
    except OSError as e:
        raise UsageError("cannot read %s: %s" % (path, e.strerror or e))
    return TextLines(f, path), path, f.close


def _identity(path, stdin):
    # (st_dev, st_ino) of an input or output, or None when it does not exist
    if path == "-":
        try:
            st = os.fstat(stdin.fileno())
        except (AttributeError, OSError, ValueError):
            return None
    else:
        try:
            st = os.stat(path)
        except OSError:
            return None
    if not stat.S_ISREG(st.st_mode):
        return None     # a terminal, a pipe, /dev/null: cannot be destroyed by writing
    return (st.st_dev, st.st_ino)


def check_paths(inputs, outputs, stdin=None):
    """Refuse (UsageError, exit 2) before anything is written when an output
    is one of the inputs or two outputs are one file.

    ``inputs`` and ``outputs`` are lists of (option, path) pairs (path '-'
    for stdin / stdout, None for an option not given). A file is the same
    when the paths resolve to one (symbolic links) or name one file (hard
    links, stdin redirected from it)."""
    seen = []
    for opt, path in inputs:
        if path is None:
            continue
        ident = _identity(path, stdin)
        real = None if path == "-" else os.path.realpath(path)
        seen.append((opt, path, ident, real))
    for opt, path in outputs:
        if path is None or path == "-":
            continue
        ident = _identity(path, None)
        real = os.path.realpath(path)
        for o2, p2, i2, r2 in seen:
            if (ident is not None and ident == i2) or (real is not None and real == r2):
                if p2 == "-":
                    what = "the input: standard input reads from it"
                elif o2 in ("log", "input", "device"):
                    what = "the input %s" % p2
                else:
                    what = "%s %s" % (o2, p2)
                raise UsageError("%s %s would overwrite %s; write to another file"
                                 % (opt, path, what))
        seen.append((opt, path, ident, real))


def replace_target(path):
    """The file that writing ``path`` by renaming a new file over it must
    replace: ``path`` itself, or, when ``path`` is a symbolic link, the file
    it points to (so the link stays a link and its target gets the new
    contents; a dangling link's target is created). Raises OutputError when
    that file exists and is read-only (no write bit for its owner, whoever
    runs: a rename would go around the protection)."""
    target = os.path.realpath(path) if os.path.islink(path) else path
    try:
        st = os.stat(target)
    except OSError:
        return target
    if stat.S_ISREG(st.st_mode) and not st.st_mode & stat.S_IWUSR:
        raise OutputError("cannot write %s: it is read-only (mode %04o)%s; make it writable "
                          "(chmod u+w) or delete it, to replace it"
                          % (path, stat.S_IMODE(st.st_mode),
                             "" if target == path else " (the file the link points to, %s)"
                             % target))
    return target


class OutFile:
    """An output: ``path`` written under a temporary name in the same
    directory and renamed over ``path`` by :meth:`commit`; or ``stdout`` for
    None/'-'; or the device/pipe ``path`` written directly.

    ``write`` and ``flush`` raise OutputError (exit 4) naming the file when
    the system refuses (a full disk, a closed stream); a hot loop may write
    to ``f`` itself and turn an OSError into that error with :meth:`error`.
    :meth:`discard` removes the temporary file (an error or an
    interruption)."""

    def __init__(self, path, stdout):
        self.path = path
        self.target = path          # the file replaced at commit (a link's target)
        self.name = "stdout" if path in (None, "-") else path
        self.temp = None
        self._own = False
        if path in (None, "-"):
            if stdout is None:
                raise OutputError("standard output is closed; give -o FILE")
            self.f = stdout
            return
        try:
            st = os.stat(path)
        except OSError:
            st = None
        try:
            if st is not None and not stat.S_ISREG(st.st_mode):
                if stat.S_ISDIR(st.st_mode):
                    raise UsageError("%s is a directory; give a file name" % path)
                self.f = open(path, "w", encoding="utf-8", newline="\n")
            else:
                self.target = replace_target(path)
                d = os.path.dirname(os.path.abspath(self.target))
                fd, self.temp = tempfile.mkstemp(dir=d, prefix="." + os.path.basename(path) + ".",
                                                 suffix=".part")
                mode = 0o666 & ~_umask() if st is None else stat.S_IMODE(st.st_mode)
                os.fchmod(fd, mode)
                self.f = os.fdopen(fd, "w", encoding="utf-8", newline="\n")
        except OSError as e:
            raise OutputError("cannot write %s: %s" % (path, e.strerror or e))
        self._own = True

    def write(self, text):
        try:
            self.f.write(text)
        except BrokenPipeError:
            raise
        except (OSError, ValueError) as e:
            raise self.error(e)

    def flush(self):
        try:
            self.f.flush()
        except BrokenPipeError:
            raise
        except (OSError, ValueError) as e:
            raise self.error(e)

    def error(self, e):
        """The OutputError for an OSError/ValueError of a write (the
        temporary file is discarded)."""
        self.discard()
        why = getattr(e, "strerror", None) or str(e)
        if isinstance(e, ValueError) or getattr(e, "errno", None) == errno.EBADF:
            why = "the stream is closed"
        return OutputError("cannot write %s: %s" % (self.name, why))

    def commit(self):
        """Close the file and move it into place; stdout is flushed."""
        if not self._own:
            self.flush()
            return
        try:
            self.f.close()
        except OSError as e:
            raise self.error(e)
        self._own = False
        if self.temp is not None:
            try:
                os.replace(self.temp, self.target)
            except OSError as e:
                self.discard()
                raise OutputError("cannot write %s: %s" % (self.path, e.strerror or e))
            self.temp = None

    def discard(self):
        """Close and remove the temporary file (nothing under the final name)."""
        if self._own:
            self._own = False
            try:
                self.f.close()
            except OSError:
                pass
        if self.temp is not None:
            try:
                os.unlink(self.temp)
            except OSError:
                pass
            self.temp = None


def _umask():
    m = os.umask(0o022)
    os.umask(m)
    return m


class Outputs:
    """The outputs of one command: opened with :meth:`open`, all moved into
    place by :meth:`commit` at the end, all discarded on an error (use as a
    context manager)."""

    def __init__(self, stdout):
        self.stdout = stdout
        self.files = []

    def open(self, path):
        f = OutFile(path, self.stdout)
        self.files.append(f)
        return f

    def commit(self):
        for f in self.files:
            f.commit()
        self.files = []

    def finish(self, records, summary_path, out_path):
        """The end of a table command: the summary records to the
        ``--summary`` file (if any), all outputs committed, then the records
        to standard output too when the table went to a file."""
        if summary_path:
            s = self.open(summary_path)
            for line in records:
                s.write(line + "\n")
        self.commit()
        if out_path not in (None, "-"):
            o = self.open(None)
            for line in records:
                o.write(line + "\n")
            self.commit()

    def __enter__(self):
        return self

    def __exit__(self, kind, value, tb):
        for f in self.files:
            f.discard()
        self.files = []
        return False


def temp_path_for(path):
    """A temporary name in ``path``'s directory (for writers that need a
    path, such as matplotlib); the caller renames it over ``path``."""
    d = os.path.dirname(os.path.abspath(path))
    fd, tmp = tempfile.mkstemp(dir=d, prefix="." + os.path.basename(path) + ".",
                               suffix=".part")
    os.close(fd)
    os.chmod(tmp, 0o666 & ~_umask())
    return tmp


# --- the column mapping and set-up -------------------------------------------------
QUANTITY_OPTIONS = ("pressure", "temperature", "humidity", "dewpoint", "time", "gps")


def mapping(a):
    """The column mapping options given (quantity -> 'NAME[:UNIT]')."""
    return dict((q, getattr(a, q)) for q in QUANTITY_OPTIONS if getattr(a, q, None))


def column_default(name):
    """The default of the Column constructor's keyword ``name`` (read from its
    signature, so the host tools never repeat the column's numbers)."""
    from tinygeo.column import Column
    return inspect.signature(Column.__init__).parameters[name].default


def station_default(name):
    """The default of the Station constructor's keyword ``name`` (read from
    its signature, so the host tools never repeat the station's numbers)."""
    from tinygeo.station import Station
    return inspect.signature(Station.__init__).parameters[name].default


def column_keywords():
    """The names of the Column constructor's keywords (lat_deg included)."""
    from tinygeo.column import Column
    return tuple(n for n in inspect.signature(Column.__init__).parameters if n != "self")


def sensor_options(a):
    """(column keyword, option value) pairs of the sensor and check options."""
    return (("sigma_p_pa", a.sigma_p), ("sigma_t_k", a.sigma_t), ("sigma_rh_pct", a.sigma_rh),
            ("bias_p_pa", a.bias_p), ("bias_t_k", a.bias_t), ("bias_rh_pct", a.bias_rh))


def check_options(a):
    """(column keyword, value) of the check options given: the rate and
    temperature-step limits; 'none' gives None (no check)."""
    out = []
    for key, opt in (("max_rate_m_s", "max_rate"), ("max_t_step_k", "max_t_step"),
                     ("max_t_rate_k_s", "max_t_rate"), ("max_t_gradient_k_gpm", "max_t_gradient")):
        v = getattr(a, opt, None)
        if v is not None:
            out.append((key, None if v == "none" else v))
    return out


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


class Setup:
    """A column set-up: ``lat_deg``, ``start_height_m``, ``options`` (the
    keywords given, the column's defaults apply to the rest),
    ``start_given`` (False when the start height defaulted to 0)."""

    def __init__(self, lat_deg, start_height_m, options, start_given):
        self.lat_deg = lat_deg
        self.start_height_m = start_height_m
        self.options = options
        self.start_given = start_given

    def site(self):
        """(key, value) pairs for the table's ``# site`` line: the latitude,
        the start height, and every keyword set."""
        out = [("lat_deg", self.lat_deg), ("start_height_m", self.start_height_m)]
        for k in sorted(self.options):
            v = self.options[k]
            if v is None:
                v = "none"
            elif isinstance(v, bool):
                v = 1 if v else 0
            out.append((k, v))
        return out


def column_setup(a, reader):
    """The Setup from the command line ``a``, with the log's comment words
    (``reader.meta``) as defaults."""
    meta = reader.meta if reader is not None else {}
    lat = a.lat if a.lat is not None else meta.get("lat_deg")
    if lat is None:
        raise UsageError("the latitude is not known: pass --lat DEG (degrees north), or put "
                         "'# lat_deg=..' in a comment line before the header")
    given = a.start_height is not None or "start_height_m" in meta
    h0 = a.start_height if a.start_height is not None else meta.get("start_height_m", 0.0)
    opts = {}
    if a.anchor_pressure is not None:
        opts["anchor_p_pa"] = anchor_p_pa(a.anchor_pressure)
    for key, arg in sensor_options(a):
        v = arg if arg is not None else meta.get(key)
        if v is not None:
            opts[key] = v
    for key, v in check_options(a):
        opts[key] = v
    if a.ice:
        opts["ice"] = True
    if a.dry or (reader is not None and "humidity" not in reader.columns
                 and "dewpoint" not in reader.columns):
        opts["dry_fallback"] = True
    return Setup(float(lat), float(h0), opts, given)


def _site_value(key, text):
    # a '# site' word as a Column keyword value
    t = text.strip()
    if t.lower() in ("none", "nan"):
        return None
    try:
        return int(t)
    except ValueError:
        pass
    try:
        return float(t)
    except ValueError:
        raise InputError("the table's %s=%r in the '# site' line is not a number"
                         % (key, text))


def setup_from_site(site, a, meta):
    """The Setup from a table's ``# site`` words (``site``, a dict), overridden by options.

    The raw log's comments (``meta``) only fill in a latitude or start height
    the table lacks: its sensor errors describe the sensor, not what
    the device's column was set up with. time_unit_s is not taken: the table
    holds time_s in seconds."""
    words = dict((k, _site_value(k, v)) for k, v in site.items())
    lat = a.lat if a.lat is not None else words.get("lat_deg", meta.get("lat_deg"))
    if lat is None:
        raise InputError("the latitude is not known: the table has no lat_deg= in a '# site' "
                         "line before its first row; pass --lat DEG")
    h0 = a.start_height if a.start_height is not None else \
        words.get("start_height_m", meta.get("start_height_m"))
    given = h0 is not None
    h0 = 0.0 if h0 is None else h0
    keys = column_keywords()
    opts = {}
    for k, v in words.items():
        if k in keys and k not in ("lat_deg", "start_height_m", "time_unit_s", "on_event",
                                   "ellipsoid"):
            if v is None and k == "anchor_p_pa":
                continue
            opts[k] = v
    if a.anchor_pressure is not None:
        opts["anchor_p_pa"] = anchor_p_pa(a.anchor_pressure)
    for key, arg in sensor_options(a):
        if arg is not None:
            opts[key] = arg
    for key, v in check_options(a):
        opts[key] = v
    if a.ice:
        opts["ice"] = True
    if a.dry:
        opts["dry_fallback"] = True
    return Setup(float(lat), float(h0), opts, given)


class LevelTap:
    """``on_event`` hook of a host column: collects every mandatory level a
    reading crossed (the column calls it once per feed, after the reading is
    committed; col.levels holds every level of this reading, lowest first,
    level_* names the highest). The caller empties ``levels``
    before each feed."""

    def __init__(self):
        self.levels = []

    def __call__(self, col, bits):
        if bits & 1:     # EV_LEVEL (tinygeo.record.EV_LEVEL)
            self.levels.extend(col.levels)


def new_column(setup):
    """A Column for ``setup`` with a LevelTap as its on_event; UsageError
    (exit 2) if the column refuses a setting."""
    from tinygeo.column import Column
    try:
        col = Column(setup.lat_deg, setup.start_height_m, **setup.options)
    except TypeError as e:
        raise UsageError("the column does not take these settings (%s)" % e)
    except ValueError as e:
        raise UsageError("column set-up rejected: %s" % e)
    col.on_event = LevelTap()
    return col


def number_or_none(text):
    """A command-line limit: a number, or 'none' (no check), kept as the text
    'none' so that it differs from an option not given (None)."""
    if text.strip().lower() in ("none", "off"):
        return "none"
    return float(text)
