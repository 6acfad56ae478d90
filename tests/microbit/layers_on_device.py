"""tinygeo.layers itself on the emulated micro:bit, compared with floatemu.

The micro:bit has a flat file system and about 8 KB of heap, so the package
cannot be imported there as it is. Instead the statements of
tinygeo/errors.py, tinygeo/constants.py and tinygeo/layers.py (in that order)
are sent one group at a time into the raw REPL's single global namespace,
with docstrings dropped, the relative ``from .x import ...`` lines dropped
(the names they import are already globals there) and the functions in SKIP
left out; every other statement, function body included, is the module's own
code (re-printed by ``ast.unparse``, which does not change its meaning). Then ln_ratio and
layer_thickness run on random inputs and print float32 bit patterns, and the
same functions of ``floatemu.load_module(mode, "tinygeo.layers")`` run on the
same inputs.

    python tests/microbit/layers_on_device.py [N]     # prints agreement per mode
"""
import ast
import os
import random
import struct
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
sys.path[:0] = [HERE, os.path.dirname(HERE)]

import floatemu  # noqa: E402
import mb_run  # noqa: E402

MODULES = ("errors", "constants", "layers")
SKIP = ("layer_thickness_lapse", "pressure_across_layer", "layer_mean_tv", "check_lat", "check_rh")
"""Definitions left out: not used by ln_ratio and layer_thickness, and the
heap cannot hold them all (layer_thickness_lapse also needs math.expm1, which
this firmware lacks)."""


def _is_doc(node):
    return (isinstance(node, ast.Expr) and isinstance(node.value, ast.Constant)
            and isinstance(node.value.value, str))


def statements(max_len=300):
    """The module statements as a list of scripts of at most about max_len
    bytes, each starting with a garbage collection (the heap is tiny)."""
    scripts, cur = [], ""
    for name in MODULES:
        with open(os.path.join(ROOT, "tinygeo", name + ".py")) as f:
            tree = ast.parse(f.read())
        for node in ast.walk(tree):
            body = getattr(node, "body", None)
            if isinstance(body, list) and body and _is_doc(body[0]):
                node.body = body[1:] or [ast.Pass()]
        for node in tree.body:
            if _is_doc(node) or (isinstance(node, ast.ImportFrom) and node.level > 0):
                continue
            if isinstance(node, ast.FunctionDef) and node.name in SKIP:
                continue
            text = ast.unparse(node) + "\n"
            if cur and len(cur) + len(text) > max_len:
                scripts.append(cur)
                cur = ""
            cur += text
    scripts.append(cur)
    return ["import gc\ngc.collect()\n" + sc for sc in scripts]


PROBE = ["""import gc
gc.collect()
import ustruct
def _h(x):
    return '%08x' % ustruct.unpack('<I', ustruct.pack('<f', x))[0]
def _f(w):
    return ustruct.unpack('<f', ustruct.pack('<I', w))[0]
def _run(D):
    for i in range(0, len(D), 4):
        a = _f(D[i]); b = _f(D[i + 1]); t1 = _f(D[i + 2]); t2 = _f(D[i + 3])
        print('C', _h(ln_ratio(a, b)), _h(layer_thickness(a, b, t1, t2)))
""", """gc.collect()
print('K', FLOAT32, _h(RD), _h(G0), _h(HALF_RG))
for c in LN_C:
    print('K', _h(c))
print('M', gc.mem_free())
"""]

CALLS = """gc.collect()
_run((%s))
"""


def inputs(seed, n):
    """n input rows (p1, p2, tv1, tv2) as float32 words: thin and thick layers."""
    rng = random.Random(seed)
    rows = []
    for i in range(n):
        p1 = rng.uniform(500.0, 105000.0)
        kind = i % 3
        p2 = p1 - rng.uniform(0.5, 20.0) if kind == 0 else p1 * rng.uniform(0.7, 0.95) if kind == 1 \
            else p1 * rng.uniform(0.05, 0.6)
        rows.append([floatemu.f32_bits(v) for v in (p1, p2, rng.uniform(200.0, 310.0),
                                                    rng.uniform(200.0, 310.0))])
    return rows


def _word_value(w):
    return struct.unpack("<f", struct.pack("<I", w))[0]


def _ulps(x, y):
    return floatemu.ulps32(_word_value(int(x, 16)), _word_value(int(y, 16)))


def emulate(mode, rows):
    m = floatemu.load_module(mode, "tinygeo.layers")
    r = floatemu.rounder(mode)
    out = []
    for row in rows:
        a, b, t1, t2 = (r(_word_value(w)) for w in row)   # the device's unpack stores the value
        out.append(("%08x" % floatemu.f32_bits(m.ln_ratio(a, b)),
                    "%08x" % floatemu.f32_bits(m.layer_thickness(a, b, t1, t2))))
    consts = ("%08x" % floatemu.f32_bits(m.RD), "%08x" % floatemu.f32_bits(m.G0),
              "%08x" % floatemu.f32_bits(m.HALF_RG)) + tuple("%08x" % floatemu.f32_bits(c)
                                                            for c in m.LN_C)
    return m.FLOAT32, consts, out


def run_device(rows, per_script=5):
    scripts = statements() + PROBE
    for i in range(0, len(rows), per_script):
        # ints, not a string: string literals become interned names on this
        # firmware and are never freed
        data = ",".join("0x%08x" % w for row in rows[i:i + per_script] for w in row)
        scripts.append(CALLS % data)
    outs = mb_run.run_session(scripts, timeout=60.0)
    flag, consts, res = None, None, []
    for text in outs:
        for line in text.split("\n"):
            w = line.split()
            if not w:
                continue
            if w[0] == "K" and len(w) > 2:
                flag, consts = w[1] == "True", tuple(w[2:])
            elif w[0] == "K":
                consts += (w[1],)
            elif w[0] == "M":
                print("# device heap free after loading: %s bytes" % w[1])
            elif w[0] == "C":
                res.append((w[1], w[2]))
    return flag, consts, res


def main(argv):
    n = int(argv[1]) if len(argv) > 1 else 30
    why = mb_run.missing()
    if why:
        sys.stderr.write(why + "\n")
        return 2
    rows = inputs(1, n)
    flag, consts, dev = run_device(rows)
    print("# tinygeo.layers (errors, constants, layers statements) on the emulated micro:bit vs floatemu")
    print("# command: python tests/microbit/layers_on_device.py %d" % n)
    print("# device: FLOAT32 = %s; RD, G0, HALF_RG, series coefficients = %s" % (flag, " ".join(consts)))
    for mode in floatemu.MODES:
        eflag, econsts, emu = emulate(mode, rows)
        same_c = sum(x == y for x, y in zip(consts, econsts))
        same_ln = sum(d[0] == e[0] for d, e in zip(dev, emu))
        same_lt = sum(d[1] == e[1] for d, e in zip(dev, emu))
        print("%-5s FLOAT32 %-5s constants %d/%d  ln_ratio %d/%d  layer_thickness %d/%d" % (
            mode, eflag == flag, same_c, len(consts), same_ln, len(dev), same_lt, len(dev)))
        if mode == "r30t":
            for row, d, e in zip(rows, dev, emu):
                if d != e:
                    p1, p2 = _word_value(row[0]), _word_value(row[1])
                    print("#   r30t differs: p1=%.9g p2=%.9g (p1/p2=%.4g, %s branch): device %s %s, "
                          "emulator %s %s (ulps %d, %d)" % (
                              p1, p2, p1 / p2, "series" if abs((p1 - p2) / (p1 + p2)) < 0.25 else "log",
                              d[0], d[1], e[0], e[1], _ulps(d[0], e[0]), _ulps(d[1], e[1])))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
