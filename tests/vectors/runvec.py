"""Run the shared test vectors; plain Python that runs unchanged under
CPython and MicroPython (no pytest, no typing, no dict order assumptions).

Vector files (``tests/vectors/*.txt``) hold one case per line::

    <function> <arg> <arg> ... = <expected> <abs|rel> <tol>  # source

``<function>`` is a public name of the ``tinygeo`` package; every argument is a
float literal (booleans as 0 or 1). ``<expected>`` is the published or
high-precision reference value and ``<tol>`` the tolerance: for a printed value
what its digits allow, for a high-precision reference a little above the error
measured on the double-precision runtimes (each file's header says what was
measured and what the goal is). Blank lines and lines
starting with ``#`` are ignored. The ``# source`` part is mandatory: it names
where the expected value comes from.

Usage: ``python tests/vectors/runvec.py FILE...`` (or ``micropython``) prints one
line per case: ``<file>:<line> <function> <got> <expected> <ok|FAIL>`` and a
final ``cases N failed M`` line; the exit status is 1 when any case failed.
``load(path)`` and ``run_case(case)`` are used by the pytest wrapper.
"""
import sys


def load(path):
    """Return the list of cases in ``path`` as tuples
    (lineno, func, args, expected, kind, tol, source)."""
    cases = []
    f = open(path)
    try:
        lineno = 0
        for line in f:
            lineno += 1
            s = line.strip()
            if not s or s[0] == "#":
                continue
            if "#" not in s:
                raise ValueError("%s:%d: case has no '# source'" % (path, lineno))
            body, source = s.split("#", 1)
            left, right = body.split("=")
            words = left.split()
            func = words[0]
            args = [float(w) for w in words[1:]]
            r = right.split()
            if len(r) != 3 or r[1] not in ("abs", "rel"):
                raise ValueError("%s:%d: expected '= <value> abs|rel <tol>'" % (path, lineno))
            cases.append((lineno, func, args, float(r[0]), r[1], float(r[2]), source.strip()))
    finally:
        f.close()
    return cases


def run_case(case):
    """Evaluate one case; return (got, ok)."""
    import tinygeo
    lineno, func, args, expected, kind, tol, source = case
    got = getattr(tinygeo, func)(*args)
    err = abs(got - expected)
    if kind == "rel":
        err = err / abs(expected)
    return got, err <= tol


def main(paths):
    n = 0
    bad = 0
    for path in paths:
        for case in load(path):
            got, ok = run_case(case)
            n += 1
            if not ok:
                bad += 1
            print("%s:%d %s %r %r %s" % (path, case[0], case[1], got, case[3], "ok" if ok else "FAIL"))
    print("cases %d failed %d" % (n, bad))
    return bad


if __name__ == "__main__":
    if main(sys.argv[1:]):
        sys.exit(1)
