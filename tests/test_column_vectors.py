"""The column's shared stream vectors (tests/vectors/column/*.txt, format in
tests/vectors/runcol.py) under CPython, the 64-bit MicroPython unix runtime
and the 32-bit MicroPython (WebAssembly port); the C port runs the same files
in tests/test_c_port.py. The expected values in the files come from the truth
of tests/streams.py (U.S. Standard Atmosphere 1976 and invented flights),
written by tests/vectors/gen_column.py; a test fails when they are stale.
"""
import sys

import pytest

from conftest import ROOT, VECTORS, MICROPYTHON, require_micropython, require_wasm32, run_script, \
    run_wasm32

COLDIR = VECTORS / "column"
FILES = sorted(COLDIR.glob("*.txt"))
RUNCOL = VECTORS / "runcol.py"


def test_vector_files_are_current():
    sys.path.insert(0, str(VECTORS))
    try:
        import gen_column
    finally:
        sys.path.remove(str(VECTORS))
    docs = gen_column.documents()
    assert sorted(docs) == [p.name for p in FILES]
    for p in FILES:
        assert p.read_text() == docs[p.name], "%s is stale: run python tests/vectors/gen_column.py" % p


@pytest.mark.parametrize("path", FILES, ids=lambda p: p.name)
def test_cpython(path):
    out = run_script(sys.executable, [RUNCOL, path])
    assert out.strip().endswith("failed 0"), out


@pytest.mark.parametrize("path", FILES, ids=lambda p: p.name)
def test_micropython_64_bit(path):
    require_micropython()
    out = run_script(MICROPYTHON, [RUNCOL, path])
    assert out.strip().endswith("failed 0"), out


def test_micropython_32_bit():
    require_wasm32()
    out = run_wasm32(RUNCOL, ["/c/" + p.name for p in FILES], copies=[(COLDIR, "/c")], timeout=600)
    assert out.strip().endswith("failed 0") and "streams %d " % len(FILES) in out, out


def test_a_wrong_expectation_fails(tmp_path):
    # the runner can fail: an expected GPS height 1000 m off is reported
    import os
    import subprocess
    text = (COLDIR / "gps_nofix.txt").read_text().replace("expect value gps_m ", "expect value gps_m 1")
    bad = tmp_path / "bad.txt"
    bad.write_text(text)
    p = subprocess.run([sys.executable, str(RUNCOL), str(bad)], capture_output=True, text=True,
                       cwd=str(ROOT), env=dict(os.environ, PYTHONPATH=str(ROOT)))
    assert p.returncode == 1 and "failed 1" in p.stdout, p.stdout
