"""Shared test vectors (tests/vectors/*.txt) checked under CPython, case by case.

Each case carries its source (a published table, a handbook value, or an mpmath
computation of the published formula) beside it in the vector file; see
tests/vectors/runvec.py for the format. The same files run under MicroPython in
tests/test_micropython.py.
"""
import sys

import pytest

from conftest import VECTORS

sys.path.insert(0, str(VECTORS))
import runvec  # noqa: E402

FILES = sorted(VECTORS.glob("*.txt"))
CASES = [(f, c) for f in FILES for c in runvec.load(str(f))]


def test_vector_files_exist():
    # the core topics each ship shared vectors
    names = {f.stem for f in FILES}
    for topic in ("gravity", "moisture", "layers", "standard", "sealevel"):
        assert topic in names, "tests/vectors/%s.txt missing" % topic


@pytest.mark.parametrize("path,case", CASES, ids=lambda x: x.name if hasattr(x, "name") else "%s:%d" % (x[1], x[0]))
def test_vector(path, case):
    got, ok = runvec.run_case(case)
    lineno, func, args, expected, kind, tol, source = case
    assert source, "%s:%d has no source" % (path.name, lineno)
    assert ok, "%s:%d %s%r = %r, expected %r (%s %g) [%s]" % (
        path.name, lineno, func, tuple(args), got, expected, kind, tol, source)
