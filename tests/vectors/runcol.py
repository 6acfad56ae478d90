"""Run the shared stream vectors of the column: plain Python that runs
unchanged under CPython and MicroPython (ports/c/column_vec.c reads the same
files).

A stream vector file (``tests/vectors/column/*.txt``) is one column fed with
a fixed list of readings, and what must happen. One item per line; ``#``
starts a comment; every ``expect`` line carries ``# source`` (where the
expected value comes from: a published definition, the truth the readings
were made from, or "constructed" for a case built by hand)::

    setting <name> <value>        a Column keyword: a number, none, true or false
    reading <p_pa> <t_k> <rh_pct> <time_s> <gps_m>
                                  one feed; "-" is None, "nan" is nan; a time
                                  written without "." or "e" is an int
    expect accept                 the reading above was accepted
    expect reject <reason>        ... raised ReadingError with this reason
    expect flag <FL_NAME>         ... and the latest accepted reading has this flag
    expect value <attribute> <number> <tol>
                                  the column's attribute is within tol of number
    expect event <word> <first> <last>
                                  (anywhere in the file) the event is reported
                                  exactly once, by the feed of a reading whose
                                  number (0-based, in file order) lies in
                                  first..last; <word> is launch, level<hPa>,
                                  tropopause, burst, landed or float
    expect no_event <word>        never reported

Settings come first; the file is read one line at a time. Usage: ``python tests/vectors/runcol.py FILE...`` (or
``micropython``): prints one line per failed check and ``streams N checks M
failed K``; exit status 1 when any check failed. ``run_file(path)`` returns
(checks, failures) for the pytest wrapper.
"""
import sys

NAMES = {"launch": 16, "tropopause": 2, "burst": 4, "landed": 8, "float": 32}
FLAGS = {"FL_DRY": 1, "FL_HELD_MIXING": 2, "FL_NO_TIME": 4, "FL_DESCENT": 8, "FL_SAME_P": 16,
         "FL_NO_GPS": 32, "FL_CAPPED": 64, "FL_REPLACED": 128, "FL_TAKEOVER": 256,
         "FL_SAME_TIME": 512}


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
    # (lineno, words, source) of every item line, read one at a time (a board
    # or a small heap holds no list of them)
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


def _words(bits, col):
    # the event words of one feed's bits (the level word with its pressure)
    out = []
    for name in NAMES:
        if bits & NAMES[name]:
            out.append(name)
    if bits & 1:
        out.append("level%d" % int(col.level_p_pa / 100 + 0.5))
    return out


def run_file(path):
    """Feed the file's readings; return (number of checks, list of failure texts)."""
    from tinygeo.column import Column
    from tinygeo.errors import ReadingError
    kw = {}
    lat = None
    for lineno, w, source in _lines(path):
        if w[0] != "setting":
            break
        if w[1] == "lat_deg":
            lat = _value(w[2])
        else:
            kw[w[1]] = _value(w[2])
    seen = []                    # (word, reading number) of every event reported
    number = [-1]

    def on_event(col, bits):
        for word in _words(bits, col):
            seen.append((word, number[0]))
    kw["on_event"] = on_event
    col = Column(lat, **kw)
    last = None                  # "ok" or the reason of the latest reading
    checks = 0
    fails = []
    pending = []                 # (lineno, words) of event expectations, checked at the end
    for lineno, w, source in _lines(path):
        if w[0] == "setting":
            continue
        if w[0] == "reading":
            if len(w) != 6:
                raise ValueError("%s:%d: a reading has 5 values" % (path, lineno))
            number[0] += 1
            try:
                col.feed(_value(w[1]), _value(w[2]), _value(w[3]), _value(w[4]), _value(w[5]))
                last = "ok"
            except ReadingError as e:
                last = e.reason
            continue
        if w[0] != "expect" or not source:
            raise ValueError("%s:%d: expected 'expect ... # source'" % (path, lineno))
        what = w[1]
        if what in ("event", "no_event"):
            pending.append((lineno, w[1:]))
            continue
        checks += 1
        got = last
        if what == "accept":
            ok = last == "ok"
        elif what == "reject":
            ok = last == w[2]
        elif what == "flag":
            got = col.flags
            ok = bool(col.flags & FLAGS[w[2]])
        elif what == "value":
            got = getattr(col, w[2])
            ok = abs(got - float(w[3])) <= float(w[4])
        else:
            raise ValueError("%s:%d: unknown expectation %r" % (path, lineno, what))
        if not ok:
            fails.append("%s:%d %s: got %r after reading %d (%s)"
                         % (path, lineno, " ".join(w), got, number[0], source))
    for lineno, w in pending:
        checks += 1
        at = [k for (word, k) in seen if word == w[1]]
        if w[0] == "no_event":
            ok = not at
        else:
            ok = len(at) == 1 and int(w[2]) <= at[0] <= int(w[3])
        if not ok:
            fails.append("%s:%d expect %s: reported by readings %r" % (path, lineno, " ".join(w), at))
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
    print("streams %d checks %d failed %d" % (len(paths), n, bad))
    return bad


if __name__ == "__main__":
    if main(sys.argv[1:]):
        sys.exit(1)
