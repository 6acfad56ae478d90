"""Run the shared stream vectors of the station: plain Python that runs
unchanged under CPython and MicroPython (a C port of Station is meant to
read the same files).

A station vector file (``tests/vectors/station/*.txt``) is one Station fed
with a fixed list of readings, and what must happen. One item per line;
``#`` starts a comment; every ``expect`` line carries ``# source`` (where
the expected value comes from: a published formula evaluated with mpmath, the
truth the readings were made from, a definition, or "constructed" for a case
built by hand)::

    setting <name> <value>        a Station keyword (height_m and lat_deg too):
                                  a number, none, true or false
    reading <p_pa> <t_k> <rh_pct> <time_s>
                                  one feed; "-" is None, "nan" is nan; a time
                                  written without "." or "e" is an int
    expect accept                 the reading above was accepted
    expect reject <reason>        ... raised ReadingError with this reason
    expect bits <n>               the latest accepted reading's feed returned n
    expect flag <FL_NAME>         the station's flags have this bit
    expect noflag <FL_NAME>       ... and not this one
    expect value <attribute> <number> <tol>
                                  the attribute is within tol of number; a
                                  number "nan" expects nan
    expect code <n>               tendency_code is n (0..8), or "none"

Settings come first; the file is read one line at a time. Usage:
``python tests/vectors/runsta.py FILE...`` (or ``micropython``): prints one
line per failed check and ``stations N checks M failed K``; exit status 1
when any check failed. ``run_file(path)`` returns (checks, failures).
"""
import sys

FLAGS = {"FL_STUCK_P": 1, "FL_STUCK_T": 2, "FL_STUCK_RH": 4, "FL_GAP": 8, "FL_TREND_GAP": 16,
         "FL_NO_T12": 32, "FL_FEW": 64, "FL_TAKEOVER": 128,
         "FL_CLOCK_HELD": 256}


def _value(w):
    if w == "-" or w == "none":
        return None
    if w == "true":
        return True
    if w == "false":
        return False
    if w == "nan":
        return float("nan")
    if "." in w or "e" in w or "E" in w or "inf" in w:
        return float(w)
    return int(w)


def _lines(path):
    # (lineno, words, source) of every item line, read one at a time
    f = open(path)
    try:
        lineno = 0
        for line in f:
            lineno += 1
            s = line.strip()
            if not s or s[0] == "#":
                continue
            source = ""
            if "#" in s:
                s, source = s.split("#", 1)
                source = source.strip()
            yield lineno, s.split(), source
    finally:
        f.close()


def run_file(path):
    """Feed the file's readings; return (number of checks, list of failure texts)."""
    from tinygeo.station import Station
    from tinygeo.errors import ReadingError
    kw = {}
    for lineno, w, source in _lines(path):
        if w[0] != "setting":
            break
        kw[w[1]] = _value(w[2])
    height = kw.pop("height_m")
    lat = kw.pop("lat_deg")
    st = Station(height, lat, **kw)
    last = None                  # "ok" or the reason of the latest reading
    bits = 0                     # bits of the latest accepted feed
    number = -1
    checks = 0
    fails = []
    for lineno, w, source in _lines(path):
        if w[0] == "setting":
            continue
        if w[0] == "reading":
            if len(w) != 5:
                raise ValueError("%s:%d: a reading has 4 values" % (path, lineno))
            number += 1
            try:
                bits = st.feed(_value(w[1]), _value(w[2]), _value(w[3]), _value(w[4]))
                last = "ok"
            except ReadingError as e:
                last = e.reason
            continue
        if w[0] != "expect" or not source:
            raise ValueError("%s:%d: expected 'expect ... # source'" % (path, lineno))
        what = w[1]
        checks += 1
        got = last
        if what == "accept":
            ok = last == "ok"
        elif what == "reject":
            ok = last == w[2]
        elif what == "bits":
            got = bits
            ok = bits == int(w[2])
        elif what == "flag":
            got = st.flags
            ok = bool(st.flags & FLAGS[w[2]])
        elif what == "noflag":
            got = st.flags
            ok = not st.flags & FLAGS[w[2]]
        elif what == "value":
            got = getattr(st, w[2])
            want = float(w[3])
            if want != want:
                ok = got != got
            else:
                ok = abs(got - want) <= float(w[4])
        elif what == "code":
            got = st.tendency_code
            ok = got == _value(w[2])
        else:
            raise ValueError("%s:%d: unknown expectation %r" % (path, lineno, what))
        if not ok:
            fails.append("%s:%d %s: got %r after reading %d (%s)"
                         % (path, lineno, " ".join(w), got, number, source))
    return checks, fails


def main(paths):
    n = 0
    bad = 0
    for path in paths:
        checks, fails = run_file(path)
        n += checks
        bad += len(fails)
        for f in fails:
            print(f)
    print("stations %d checks %d failed %d" % (len(paths), n, bad))
    return bad


if __name__ == "__main__":
    if main(sys.argv[1:]):
        sys.exit(1)
