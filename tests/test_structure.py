"""The package's structure, checked from its source (ast): imports run one way
along the declared graph (DEVELOPERS.md, "Imports run one way"), with no
cycle, function-level imports included; no module reads another module's
_private names; each formula module marks its kernels; the device package
imports only what MicroPython has. A consistency check of the code against
its own declared design (no outside reference is involved).
"""
import ast
import pathlib

import pytest

from conftest import ROOT

PKG = ROOT / "tinygeo"

# The declared graph: a module may import only modules of a LOWER layer
# (DEVELOPERS.md shows the same picture). Device package first, then host.
LAYERS = {
    "tinygeo.errors": 0,
    "tinygeo.cpyslots": 0,        # CPython only (not in the device package): names, no imports
    "tinygeo.constants": 1,
    "tinygeo.checkpoint": 1,
    "tinygeo.record": 1,
    "tinygeo.stationrecord": 1,
    "tinygeo.gravity": 2,
    "tinygeo.potential": 2,
    "tinygeo.moisture": 2,
    "tinygeo.layers": 2,
    "tinygeo.standard": 2,
    "tinygeo.sealevel": 3,
    "tinygeo.highsite": 4,
    "tinygeo.column": 5,
    "tinygeo.station": 5,
    "tinygeo": 6,                 # the package __init__ (lazy: imports nothing itself)
    "tinygeo.host": 7,
    "tinygeo.host.table": 7,
    "tinygeo.host.options": 8,
    "tinygeo.host.logread": 9,
    "tinygeo.host.simulate": 9,
    "tinygeo.host.replay": 10,
    "tinygeo.host.stationlog": 10,
    "tinygeo.host.compare": 11,
    "tinygeo.host.plot": 11,
    "tinygeo.host.cli": 12,
    "tinygeo.__main__": 13,
}
DEVICE_ALLOWED = {"math", "struct", "binascii", "array", "micropython", "sys", "gc"}


def _modules():
    out = {}
    for path in sorted(PKG.rglob("*.py")):
        rel = path.relative_to(ROOT).with_suffix("")
        parts = list(rel.parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out[".".join(parts)] = path
    return out


MODULES = _modules()


def _resolve(mod, node):
    """The absolute module name of an ImportFrom node's module in ``mod``."""
    if node.level == 0:
        return node.module
    pkg = mod if MODULES[mod].name == "__init__.py" else mod.rsplit(".", 1)[0]
    for _ in range(node.level - 1):
        pkg = pkg.rsplit(".", 1)[0]
    return pkg + ("." + node.module if node.module else "")


def _imports(mod):
    """(imported tinygeo module, names, line, private attribute reads) of a
    module, every import statement anywhere in it."""
    tree = ast.parse(MODULES[mod].read_text())
    edges = []          # (target module, line)
    private = []        # (line, text) of reads of another module's _private names
    aliases = {}        # local name -> tinygeo module bound to it
    others = set()      # top-level names of imports outside tinygeo
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for a in node.names:
                if a.name == "tinygeo" or a.name.startswith("tinygeo."):
                    edges.append((a.name, node.lineno))
                    aliases[(a.asname or a.name).split(".")[0]] = a.name
                else:
                    others.add(a.name.split(".")[0])
        elif isinstance(node, ast.ImportFrom):
            base = _resolve(mod, node)
            if base == "tinygeo" or base.startswith("tinygeo."):
                for a in node.names:
                    sub = base + "." + a.name
                    if sub in MODULES:           # "from . import errors"
                        edges.append((sub, node.lineno))
                        aliases[a.asname or a.name] = sub
                    else:
                        edges.append((base, node.lineno))
                        if a.name.startswith("_") and not a.name.startswith("__") and base != mod:
                            private.append((node.lineno, "from %s import %s" % (base, a.name)))
            else:
                others.add(base.split(".")[0])
    for node in ast.walk(tree):
        if isinstance(node, ast.Attribute) and isinstance(node.value, ast.Name):
            target = aliases.get(node.value.id)
            if target and target != mod and node.attr.startswith("_") \
                    and not node.attr.startswith("__"):
                private.append((node.lineno, "%s.%s" % (node.value.id, node.attr)))
    return edges, private, others


def test_every_module_has_a_declared_layer():
    assert sorted(set(MODULES) - set(LAYERS)) == []


@pytest.mark.parametrize("mod", sorted(MODULES))
def test_imports_run_one_way_and_no_private_names_are_read(mod):
    edges, private, others = _imports(mod)
    for target, line in edges:
        if target == mod:
            continue
        assert target in LAYERS, (mod, line, target)
        assert LAYERS[target] < LAYERS[mod], (
            "%s line %d imports %s: layer %d is not below %d (DEVELOPERS.md)"
            % (mod, line, target, LAYERS[target], LAYERS[mod]))
    assert private == [], (mod, private)
    if not mod.startswith("tinygeo.host") and mod != "tinygeo.__main__":
        assert others <= DEVICE_ALLOWED, (mod, others - DEVICE_ALLOWED)


def test_no_import_cycle():
    # implied by the layers; checked directly too, so a layer mistake cannot
    # hide one
    graph = {m: {t for t, _ in _imports(m)[0] if t != m and t in MODULES} for m in MODULES}
    state = {}

    def visit(m, path):
        state[m] = 1
        for t in graph[m]:
            if state.get(t) == 1:
                raise AssertionError("import cycle: %s" % " -> ".join(path + [m, t]))
            if t not in state:
                visit(t, path + [m])
        state[m] = 2
    for m in sorted(graph):
        if m not in state:
            visit(m, [])


@pytest.mark.parametrize("mod", ["potential", "layers", "moisture", "standard"])
def test_formula_modules_mark_their_kernels(mod):
    text = (PKG / (mod + ".py")).read_text()
    assert "Kernels: arguments not checked" in text and "Checked public functions" in text
    assert text.index("Kernels: arguments not checked") < text.index("Checked public functions")


def test_tests_and_bench_read_no_removed_private_module():
    # the column's rarely used module is gone: its checkpoint code is
    # tinygeo/checkpoint.py; nothing may still import it
    gone = "_column" + "_rare"
    for path in list((ROOT / "tests").rglob("*.py")) + list((ROOT / "bench").glob("*.py")):
        assert gone not in path.read_text(), path


def test_version_in_one_place_license_and_dir():
    # the version is written once (tinygeo/__init__.py); pyproject reads it; the
    # licence is MIT (LICENSE, pyproject, the freeze manifest agree)
    text = (ROOT / "pyproject.toml").read_text()
    assert 'dynamic = ["version"]' in text and 'version = {attr = "tinygeo.__version__"}' in text
    assert '\nversion = "' not in text
    assert 'license = {text = "MIT"}' in text
    assert (ROOT / "LICENSE").read_text().startswith("MIT License")
    assert 'license="MIT"' in (ROOT / "ports" / "micropython" / "manifest.py").read_text()
    # dir(tinygeo) lists the public names without importing the modules
    import subprocess
    import sys
    out = subprocess.run([sys.executable, "-c", "import sys, tinygeo; d = dir(tinygeo); "
                          "print('Column' in d, 'normal_gravity' in d, 'tinygeo.column' in sys.modules)"],
                         capture_output=True, text=True, cwd=str(ROOT), check=True).stdout.split()
    assert out == ["True", "True", "False"]


def test_column_attributes_are_all_in_the_cpython_slots():
    # tinygeo/cpyslots.py lists every attribute a Column and its records set
    # (CPython keeps them in slots: feed's speed, bench/replay_bench.py); one
    # missing would land in the instance __dict__ and only be slower, so this
    # drives a column through the paths that set attributes (every fault kind of
    # tests/streams.py, GPS with a geoid, reanchor_gps, a checkpoint restore, a
    # column without time or humidity) and fails on any name in a __dict__
    import streams
    from tinygeo import cpyslots
    from tinygeo.column import Column
    assert Column.__slots__ == cpyslots.COLUMN and cpyslots.COLUMN[-1] == "__dict__"
    atm = streams.warm_humid()
    flight = streams.balloon_flight(atm, top_gph_m=12000.0)
    base = streams.make_stream(flight, atm, 3, gps=True, gps_nofix=((40, 5),))
    runs = [(base, {}), (streams.hpa_as_pa(base, 0), {}), (streams.time_shifted(base, 50, 1e6), {}),
            (streams.gap(base, 500, 60), {}), (streams.temperature_spike(base, 300, 15.0), {}),
            (streams.pressure_scaled(base, 200, -0.06), {}), (streams.humidity_lost(base, 100), {}),
            (streams.nan_value(base, 70), {}),
            (streams.make_stream(flight, atm, 4, humidity=False, time_format=None), {"dry_fallback": True})]
    for stream, kw in runs:
        col = Column(45.0, 0.0, geoid_undulation_m=20.0, **kw)
        for r in stream.readings:
            if r is None:          # (streams.gap: no reading)
                continue
            try:
                col.feed(*r)
            except ValueError:
                pass
        if col.gps_m == col.gps_m:
            col.reanchor_gps()
        for c in (col, Column.from_bytes(col.to_bytes())):
            assert vars(c) == {}, sorted(vars(c))
            for rec in (c._h, c._b, c._n, c._m, c._k, c._cr):     # (every _Rec a column holds)
                assert vars(rec) == {}, sorted(vars(rec))
