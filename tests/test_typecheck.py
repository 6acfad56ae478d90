"""The core type-checks against MicroPython's stdlib stubs (no CPython-only names).

The stubs (micropython-rp2-stubs, which pulls micropython-stdlib-stubs) are
installed by .ci/run into .typings/mp; see DEVELOPERS.md. The check is known to
catch ``math.log1p``, ``math.fsum``, ``math.hypot``, ``functools`` and
``dataclasses`` (tests/test_typecheck.py::test_check_catches_cpython_only_names).
"""
import subprocess
import sys

import pytest

from conftest import IN_CI, ROOT

STUBS = ROOT / ".typings" / "mp"
CORE = sorted(p for p in (ROOT / "tinygeo").glob("*.py") if p.name != "__main__.py")


def _mypy(files, cwd=ROOT):
    if not (STUBS / "math.pyi").exists():
        if IN_CI:
            pytest.fail("MicroPython stubs missing in .typings/mp; .ci/run installs them")
        pytest.skip("MicroPython stubs not installed: pip install --target .typings/mp micropython-rp2-stubs")
    cmd = [sys.executable, "-m", "mypy", "--config-file", str(ROOT / "mypy-micropython.ini"),
           "--no-incremental", "--cache-dir", "/dev/null"] + [str(f) for f in files]
    return subprocess.run(cmd, capture_output=True, text=True, cwd=str(cwd), timeout=300)


# Error codes that mean "this name or call does not exist on MicroPython". Other
# mypy findings (inferred-type disagreements in untyped code) are not about the
# runtime and are reported but do not fail this check.
MISSING = ("[attr-defined]", "[name-defined]", "[import-not-found]", "[import]",
           "[import-untyped]", "[call-arg]", "[misc]")


def missing_names(stdout):
    return [line for line in stdout.splitlines() if line.rstrip().endswith(MISSING)]


def test_core_uses_only_micropython_names():
    p = _mypy(CORE)
    assert "error:" in p.stdout or p.returncode == 0, p.stdout + p.stderr
    bad = missing_names(p.stdout)
    assert not bad, "\n".join(bad)


def test_check_catches_cpython_only_names(tmp_path):
    # A deliberately bad module proves the check can fail (common practice: a
    # check that cannot fail proves nothing).
    bad = tmp_path / "probe.py"
    bad.write_text("import math\n\ndef f(x):\n    return math.log1p(x) + math.fsum([x])\n")
    p = _mypy([bad])
    assert p.returncode != 0
    bad = missing_names(p.stdout)
    assert len(bad) == 2 and "log1p" in bad[0] and "fsum" in bad[1], p.stdout
