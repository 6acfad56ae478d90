"""Run the unmodified tinygeo modules with every float result rounded as a
32-bit or 30-bit MicroPython would round it, side by side with float64.

CPython only (uses ``ast``); a test tool, never imported by tinygeo itself.

Usage::

    import floatemu
    emu = floatemu.load("f32")        # the tinygeo package, emulated
    emu.layer_thickness(...)          # package-level names, as in tinygeo
    emu.layers.layer_thickness(...)   # submodules load on first use
    floatemu.load_module("f32", "tinygeo.layers")   # a submodule even if shadowed
    ref = floatemu.load("f64")        # same transformer, no rounding (self-check)
    floatemu.r32(0.1)                 # 0.10000000149011612

Modes
-----
``"f64"``   no rounding; the transformed code must give bit-identical results
            to the plain import (used to check the transformer itself).
``"f32"``   IEEE 754 binary32, round to nearest, ties to even: the boards with
            ``MICROPY_FLOAT_IMPL_FLOAT`` and ``MICROPY_OBJ_REPR_A`` (rp2, esp32,
            most stm32).
``"r30t"``  ``MICROPY_OBJ_REPR_C`` as in MicroPython before v1.26 (e.g. the
            micro:bit firmware 1.9.2): the float32 result of an operation is
            stored in a tagged word with its 2 low mantissa bits cleared
            (truncation towards zero), and read back as stored.
``"r30f"``  ``MICROPY_OBJ_REPR_C`` from v1.26: stored as in ``r30t``; when the
            object is read (unboxed) the 2 missing bits are refilled from the 2
            bits above them (mantissa bits 2-3 copied into bits 0-1).

What is emulated, exactly
-------------------------
Every value a float object holds is represented here by the value the device
would *read* from it (for ``r30f`` that is the refilled value; for the other
modes the stored value). ``store_read(x)`` maps any double to that domain:
round to float32 (nearest-even), clear the 2 low bits (r30), refill (r30f). It
is idempotent on values already in the domain, so a value that passes through
several objects is unchanged, exactly as on the device.

The source of each module is parsed with ``ast`` and rewritten before it is
compiled (the files on disk are not touched):

* float literals are replaced by ``store_read(literal)`` at load time (the
  literal parsed correctly rounded to double, then rounded to float32 -- a
  device parses the decimal string itself; MicroPython's parser is not always
  correctly rounded, see tests/microbit/observed.txt);
* every ``+ - * / // % **`` (``BinOp`` and ``AugAssign``) and unary ``-``/``+``
  becomes a call of a helper that, when an operand is a float: reads each float
  operand (``store_read``, a no-op on domain values; it also converts stray
  doubles passed in from outside), converts an int operand to float32 by
  round-to-nearest (as the C cast ``(mp_float_t)int`` does; not truncated,
  because it is never boxed), computes the operation in double and rounds the
  result with ``store_read``. For ``+ - * /`` and square root of float32
  operands, double then float32 rounding equals direct float32 rounding
  (53 >= 2*24+2), so results are bit-identical to float32 hardware. int-int
  operations stay ints, except true division and negative powers, which go
  through float32 as on the device. Other operand types (str % tuple, lists,
  objects) are left to Python. ``x op= y`` becomes ``x = x op y`` (in-place
  for non-numbers via ``operator.i*``); the target expression is evaluated
  twice, which matters only for subscripts with side effects;
* ``float(x)`` calls return ``store_read(float(x))``;
* ``import math`` (and ``from math import ...``) inside the emulated modules
  gets a wrapper: float arguments are read, the real function is computed in
  double and a float result (or floats inside a tuple result) is rounded with
  ``store_read``. This is a *correctly rounded* float32 libm (except when the
  double result lies within one double ulp of a float32 rounding boundary,
  about 1 case in 10^8). A device's libm (MicroPython's lib/libm, newlib,
  the RP2040 ROM) can be 1-2 float32 ulp worse for log/exp/pow/trig;
  ``math.pi`` and ``math.e`` are rounded constants. Int arguments of math
  functions are passed unchanged (exact in double; differs only for |int| > 2**24);
* ``import struct``: ``unpack``/``unpack_from``/``iter_unpack`` return
  rounded floats (the device boxes them); ``pack`` gets domain values, so
  ``'<f'`` packs exactly the value the device would read;
* builtins ``sum``, ``pow``, ``divmod`` and ``round(x, n)`` round like the
  operations above; ``abs``, ``min``, ``max`` are exact and left alone;
* ``import micropython`` / ``ustruct`` behave as under CPython (ImportError,
  so guarded imports take their CPython branch);
* imports of ``tinygeo`` and relative imports resolve inside the emulated
  package; every other import is the normal CPython one;
* exception classes defined by an emulated module are replaced by the classes
  of the same name in the real module, so ``pytest.raises(RangeError)`` and
  ``except TinygeoError`` work across real and emulated code.

Evidence (tests/test_floatemu.py, tests/microbit/observed.txt)
----------------------------------------------------------------
f32, r30t and r30f agree bit for bit with numpy.float32 arithmetic (with the
storing rule applied through numpy bit operations) on + - * / sqrt, chains,
Horner and sums; the math wrappers equal mpmath rounded to 24 bits. Against
a real 30-bit runtime (MicroPython 1.9.2 on an emulated micro:bit) mode r30t
agrees bit for bit on all arithmetic (+ - * /, int operands, chains, sums,
sqrt) and on tinygeo.layers' own ln_ratio/layer_thickness code except where
the device's libm (logf, powf, sinf, atan2f) or its decimal parser is off by
one 30-bit step; r30f and f32 do not match that firmware (it predates v1.26).
r30f is checked against numpy only: no v1.26+ REPR_C runtime was available.

Not emulated (documented limits)
--------------------------------
* comparisons are done on the domain values (exact on the device too; the
  refill is monotonic, so r30f orders values as the stored words do);
  float-int comparisons use the exact int, not (float)int;
* device-specific libm errors (see above), the device's decimal parser and
  float printing, subnormal flushing (e.g. RP2040 ROM float routines flush
  subnormals to zero, from memory), float32 overflow raising an error in
  math functions (here it silently gives inf, as the arithmetic does);
* compile-time constant folding of float expressions by newer MicroPython
  compilers (here every operation is rounded as if done at run time);
* ``type(x) is float`` and ``isinstance`` are unaffected (floats stay Python
  floats); ``float`` used as a value (not called) is the real type.
"""
import ast
import builtins
import copy
import math
import operator
import os
import struct
import types

__all__ = ["MODES", "load", "load_module", "load_source", "rounder", "r32", "r30t", "r30f",
           "f32_bits", "ulp32", "ulps32"]

MODES = ("f64", "f32", "r30t", "r30f")

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
"""Repository root: the directory that holds the ``tinygeo`` package."""

_F = struct.Struct("<f")
_I = struct.Struct("<I")
_pf, _uf, _pI, _uI = _F.pack, _F.unpack, _I.pack, _I.unpack
_INF = float("inf")


def _pack32(x):
    try:
        return _pf(x)
    except OverflowError:  # round-to-nearest overflow gives a signed infinity
        return _pf(math.copysign(_INF, x))


def r32(x):
    """x rounded to IEEE binary32, nearest-even (overflow gives +-inf)."""
    return _uf(_pack32(x))[0]


def r30t(x):
    """x rounded to float32, then its 2 low mantissa bits cleared (REPR_C store,
    MicroPython before v1.26; also what those versions read back)."""
    return _uf(_pI(_uI(_pack32(x))[0] & 0xFFFFFFFC))[0]


def r30f(x):
    """x as a v1.26+ REPR_C device reads it back after storing it: float32,
    2 low bits cleared, then refilled from mantissa bits 2-3."""
    u = _uI(_pack32(x))[0] & 0xFFFFFFFC
    return _uf(_pI(u | ((u >> 2) & 3)))[0]


def _ident(x):
    return x


_ROUNDERS = {"f64": _ident, "f32": r32, "r30t": r30t, "r30f": r30f}


def rounder(mode):
    """The ``store_read`` function of a mode: double -> value read back from a
    float object on that runtime."""
    try:
        return _ROUNDERS[mode]
    except KeyError:
        raise ValueError("mode=%r unknown; use one of %s" % (mode, ", ".join(MODES)))


def f32_bits(x):
    """The IEEE binary32 bit pattern of x (rounded to float32 first) as an int."""
    return _uI(_pack32(x))[0]


def ulp32(x):
    """Spacing of float32 numbers at |x| (2**-149 for zero/subnormals)."""
    x = abs(r32(x))
    if x == 0.0 or x < 2.0 ** -126:
        return 2.0 ** -149
    m, e = math.frexp(x)
    return 2.0 ** (e - 24)


def ulps32(a, b):
    """Distance between the float32 values a and b in float32 steps (signed,
    b - a), counted on the ordered integer line of bit patterns."""
    def key(v):
        u = f32_bits(v)
        return u if u < 0x80000000 else 0x80000000 - u
    return key(b) - key(a)


# --------------------------------------------------------------------------
# run-time helpers injected into each emulated module
# --------------------------------------------------------------------------

def _make_runtime(mode):
    S = rounder(mode)
    if mode == "f64":
        def I(i):
            return float(i)
    else:
        def I(i):
            return r32(float(i))

    def binop(fn, ifn=None, int_float=False):
        # fn: the operation; ifn: in-place variant for non-numbers;
        # int_float: int op int may give a float (truediv, pow) -> float32
        other = ifn or fn

        def op(a, b):
            ta = type(a)
            tb = type(b)
            if ta is float or tb is float:
                if ta is float:
                    a = S(a)
                elif ta is int or ta is bool:
                    a = I(a)
                else:
                    return other(a, b)
                if tb is float:
                    b = S(b)
                elif tb is int or tb is bool:
                    b = I(b)
                else:
                    return other(a, b)
                r = fn(a, b)
                return S(r) if type(r) is float else r
            if int_float and (ta is int or ta is bool) and (tb is int or tb is bool):
                r = fn(a, b)
                if type(r) is float:
                    r = fn(I(a), I(b))
                    return S(r) if type(r) is float else r
                return r
            return other(a, b)
        return op

    def unop(fn):
        def op(a):
            if type(a) is float:
                return S(fn(S(a)))
            return fn(a)
        return op

    rt = {
        "_fe__add": binop(operator.add),
        "_fe__sub": binop(operator.sub),
        "_fe__mul": binop(operator.mul),
        "_fe__truediv": binop(operator.truediv, int_float=True),
        "_fe__floordiv": binop(operator.floordiv),
        "_fe__mod": binop(operator.mod),
        "_fe__pow": binop(operator.pow, int_float=True),
        "_fe__iadd": binop(operator.add, operator.iadd),
        "_fe__isub": binop(operator.sub, operator.isub),
        "_fe__imul": binop(operator.mul, operator.imul),
        "_fe__itruediv": binop(operator.truediv, operator.itruediv, int_float=True),
        "_fe__ifloordiv": binop(operator.floordiv, operator.ifloordiv),
        "_fe__imod": binop(operator.mod, operator.imod),
        "_fe__ipow": binop(operator.pow, operator.ipow, int_float=True),
        "_fe__neg": unop(operator.neg),
        "_fe__pos": unop(operator.pos),
    }

    def float_(*args):
        # float(x) of a float object returns that object (a domain value, so
        # S is a no-op); of an int or a string, a new rounded float
        return S(float(*args))
    rt["_fe__float"] = float_
    return rt, S, I


def _round_result(S, r):
    t = type(r)
    if t is float:
        return S(r)
    if t is tuple:
        return tuple(S(e) if type(e) is float else e for e in r)
    return r


def _make_math(S, mode):
    m = types.ModuleType("math")
    m.__doc__ = "math, every float result rounded for mode %r (floatemu)" % mode
    for name in dir(math):
        if name.startswith("__"):
            continue
        obj = getattr(math, name)
        if callable(obj):
            def wrap(fn):
                def f(*args):
                    args = tuple(S(a) if type(a) is float else a for a in args)
                    return _round_result(S, fn(*args))
                f.__name__ = fn.__name__
                return f
            setattr(m, name, wrap(obj))
        elif type(obj) is float:
            setattr(m, name, S(obj))
        else:
            setattr(m, name, obj)
    return m


def _make_struct(S, mode):
    m = types.ModuleType("struct")
    m.__doc__ = "struct, unpacked floats rounded for mode %r (floatemu)" % mode
    for name in dir(struct):
        if not name.startswith("__"):
            setattr(m, name, getattr(struct, name))

    def unpack(fmt, buf):
        return _round_result(S, struct.unpack(fmt, buf))

    def unpack_from(fmt, buf, offset=0):
        return _round_result(S, struct.unpack_from(fmt, buf, offset))

    def iter_unpack(fmt, buf):
        for t in struct.iter_unpack(fmt, buf):
            yield _round_result(S, t)
    m.unpack, m.unpack_from, m.iter_unpack = unpack, unpack_from, iter_unpack
    return m


def _make_builtins(rt, S, importer):
    b = dict(vars(builtins))
    add = rt["_fe__add"]

    def sum_(iterable, start=0):
        acc = start
        for x in iterable:
            acc = add(acc, x)
        return acc

    def pow_(a, b, mod=None):
        if mod is None:
            return rt["_fe__pow"](a, b)
        return pow(a, b, mod)

    def divmod_(a, b):
        if type(a) is float or type(b) is float:
            return (rt["_fe__floordiv"](a, b), rt["_fe__mod"](a, b))
        return divmod(a, b)

    def round_(x, *nd):
        r = round(S(x) if type(x) is float else x, *nd)
        return S(r) if type(r) is float else r
    b.update(sum=sum_, pow=pow_, divmod=divmod_, round=round_, __import__=importer)
    return b


# --------------------------------------------------------------------------
# the source rewriter
# --------------------------------------------------------------------------

_BIN = {ast.Add: "add", ast.Sub: "sub", ast.Mult: "mul", ast.Div: "truediv",
        ast.FloorDiv: "floordiv", ast.Mod: "mod", ast.Pow: "pow"}


def _call(name, args, like):
    node = ast.Call(func=ast.Name(id=name, ctx=ast.Load()), args=args, keywords=[])
    return ast.copy_location(node, like)


def _as_load(target):
    """A Load-context copy of an assignment target (Name/Attribute/Subscript)."""
    node = copy.deepcopy(target)
    for n in ast.walk(node):
        if hasattr(n, "ctx"):
            n.ctx = ast.Load()
    return ast.copy_location(node, target)


class _Rewriter(ast.NodeTransformer):
    def __init__(self, S):
        self.S = S

    def visit_Constant(self, node):
        if type(node.value) is float:
            return ast.copy_location(ast.Constant(value=self.S(node.value)), node)
        return node

    def visit_BinOp(self, node):
        self.generic_visit(node)
        name = _BIN.get(type(node.op))
        if name is None:
            return node
        return _call("_fe__" + name, [node.left, node.right], node)

    def visit_UnaryOp(self, node):
        self.generic_visit(node)
        if isinstance(node.op, ast.USub):
            return _call("_fe__neg", [node.operand], node)
        if isinstance(node.op, ast.UAdd):
            return _call("_fe__pos", [node.operand], node)
        return node

    def visit_AugAssign(self, node):
        self.generic_visit(node)
        name = _BIN.get(type(node.op))
        if name is None:
            return node
        value = _call("_fe__i" + name, [_as_load(node.target), node.value], node)
        return ast.copy_location(ast.Assign(targets=[node.target], value=value), node)

    def visit_Call(self, node):
        self.generic_visit(node)
        if isinstance(node.func, ast.Name) and node.func.id == "float":
            node.func = ast.copy_location(ast.Name(id="_fe__float", ctx=ast.Load()), node.func)
        return node


def _rewrite(source, filename, S):
    tree = ast.parse(source, filename)
    tree = _Rewriter(S).visit(tree)
    ast.fix_missing_locations(tree)
    return compile(tree, filename, "exec")


# --------------------------------------------------------------------------
# the emulated package
# --------------------------------------------------------------------------

class _Emulation:
    """One emulated copy of the ``tinygeo`` package in one mode."""

    def __init__(self, mode, root=ROOT, package="tinygeo"):
        self.mode = mode
        self.root = root
        self.package = package
        self.prefix = "floatemu_%s." % mode
        self.rt, self.S, self.I = _make_runtime(mode)
        self.math = _make_math(self.S, mode)
        self.struct = _make_struct(self.S, mode)
        self.builtins = _make_builtins(self.rt, self.S, self._import)
        self.modules = {}   # real dotted name -> emulated module

    # -- locating sources
    def _path(self, realname):
        parts = realname.split(".")
        base = os.path.join(self.root, *parts)
        if os.path.isdir(base) and os.path.exists(os.path.join(base, "__init__.py")):
            return os.path.join(base, "__init__.py"), True
        if os.path.exists(base + ".py"):
            return base + ".py", False
        return None, False

    def module(self, realname):
        """Load (once) and return the emulated module of dotted name ``realname``."""
        mod = self.modules.get(realname)
        if mod is not None:
            return mod
        path, is_pkg = self._path(realname)
        if path is None:
            raise ImportError("floatemu: no module named %r under %s" % (realname, self.root),
                              name=realname)
        if "." in realname:   # load the parent package first, as Python does
            parent = self.module(realname.rsplit(".", 1)[0])
        else:
            parent = None
        fullname = self.prefix + realname
        mod = types.ModuleType(fullname)
        mod.__file__ = path
        mod.__package__ = fullname if is_pkg else fullname.rsplit(".", 1)[0]
        if is_pkg:
            mod.__path__ = [os.path.dirname(path)]
            emu = self

            def __getattr__(name, _real=realname):
                # submodules load on first attribute access (PEP 562)
                try:
                    return emu.module(_real + "." + name)
                except ImportError:
                    raise AttributeError("module %r has no attribute %r" % (_real, name))
            mod.__getattr__ = __getattr__
        mod.__builtins__ = self._module_builtins(realname)
        mod.__dict__.update(self.rt)
        mod.floatemu_mode = self.mode
        with open(path) as f:
            source = f.read()
        code = _rewrite(source, path, self.S)
        self.modules[realname] = mod
        try:
            exec(code, mod.__dict__)
        except BaseException:
            del self.modules[realname]
            raise
        if parent is not None:
            setattr(parent, realname.rsplit(".", 1)[1], mod)
        return mod

    def _module_builtins(self, realname):
        """The builtins of one emulated module: self.builtins plus a
        ``__build_class__`` that hands back the real module's exception class
        of the same name instead of building a new one, so ``except`` clauses,
        ``pytest.raises`` and default arguments like ``error=RangeError`` all
        see the real classes."""
        b = dict(self.builtins)
        build = builtins.__build_class__
        state = {}

        def build_class(func, name, *bases, **kw):
            cls = build(func, name, *bases, **kw)
            if isinstance(cls, type) and issubclass(cls, BaseException):
                if "real" not in state:
                    import importlib
                    try:
                        state["real"] = importlib.import_module(realname)
                    except ImportError:
                        state["real"] = None
                robj = getattr(state["real"], name, None)
                if isinstance(robj, type) and issubclass(robj, BaseException):
                    return robj
            return cls
        b["__build_class__"] = build_class
        return b

    # -- the import hook of the emulated modules
    def _real_name(self, fullname):
        if fullname.startswith(self.prefix):
            return fullname[len(self.prefix):]
        return fullname

    def _import(self, name, globals=None, locals=None, fromlist=(), level=0):
        if level > 0:
            pkg = self._real_name(globals["__package__"])
            parts = pkg.split(".")
            if level - 1 > len(parts) - 1:
                raise ImportError("attempted relative import beyond top-level package")
            base = ".".join(parts[:len(parts) - (level - 1)])
            target = base + "." + name if name else base
            return self._from(target, fromlist, top=None)
        top = name.split(".", 1)[0]
        if top == self.package:
            return self._from(name, fromlist, top=top)
        if name == "math":
            return self.math
        if name == "struct":
            return self.struct
        return builtins.__import__(name, globals, locals, fromlist, level)

    def _from(self, target, fromlist, top):
        mod = self.module(target)
        if fromlist:
            for item in fromlist:
                if item != "*" and not hasattr(mod, item):
                    try:
                        self.module(target + "." + item)
                    except ImportError:
                        pass   # let the 'from' statement raise its ImportError
            return mod
        if top is not None:
            return self.module(top)
        return mod


_CACHE = {}


def _emulation(mode, root=ROOT):
    rounder(mode)  # validates the mode
    key = (mode, root)
    if key not in _CACHE:
        _CACHE[key] = _Emulation(mode, root)
    return _CACHE[key]


def load(mode, fresh=False, root=ROOT):
    """Return the ``tinygeo`` package loaded with every float operation rounded
    for ``mode`` (one of MODES). The result is cached per mode; ``fresh=True``
    returns a new, uncached copy (its own module state). Submodules load on
    first access: ``load("f32").layers``."""
    if fresh:
        rounder(mode)
        return _Emulation(mode, root).module("tinygeo")
    return _emulation(mode, root).module("tinygeo")


def load_module(mode, name):
    """Return the emulated submodule ``name`` (e.g. ``"tinygeo.layers"``) of
    ``load(mode)``'s package, even when the package re-exports a function of
    the same name (``tinygeo.potential`` as a function vs the module)."""
    emu = _emulation(mode)
    emu.module("tinygeo")
    return emu.module(name)


def load_source(mode, source, name="snippet"):
    """Compile and run ``source`` (the text of a module) with the rounding of
    ``mode`` and return the module. ``import tinygeo`` inside it gets the
    package of ``load(mode)``."""
    emu = _emulation(mode)
    mod = types.ModuleType(emu.prefix + name)
    mod.__file__ = "<floatemu %s>" % name
    mod.__package__ = ""
    mod.__builtins__ = emu.builtins
    mod.__dict__.update(emu.rt)
    mod.floatemu_mode = mode
    exec(_rewrite(source, mod.__file__, emu.S), mod.__dict__)
    return mod
