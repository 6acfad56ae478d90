"""Generate ports/c/tg_tables.h: every numeric literal of the tinygeo core
modules, copied digit for digit from the Python sources.

Usage (from the repository root):
    python ports/c/gen_tables.py            rewrite ports/c/tg_tables.h
    python ports/c/gen_tables.py --check    exit 1 (and say what differs) if it is stale
    ... [--root DIR]                        read DIR/tinygeo/ instead of this checkout's

What is copied: module-level assignments whose value is a number, a
negation, an arithmetic expression of numbers only (e.g. 1.0 / 298.257223563),
or a (nested) tuple of those; a string of number literals with rows
separated by ";" (potential's series tables), as a tuple of tuples would be;
the keyword arguments of the ``Ellipsoid(...)``
calls of constants.py; strings and bytes (as C strings); and tuples of
strings (the checkpoint layout of column.py) as X-macro lists,
NAME(X) -> X(a) X(b) ..., with the leading underscore of each name dropped. Names that depend on other names
(RD = R_STAR / M0_KG_MOL, _DEG = math.pi / 180.0, ...) are written by hand in
the C sources with the same expression. The source text of each literal is kept
as written, so a reader can grep the same digits in both languages.

Output: one macro per value, TGPY_<MODULE>_<NAME> (the Python name upper-cased,
leading underscores kept), each number wrapped in TG_L(...) so that the float
build rounds the double literal once. A tuple becomes a brace initializer plus
TGPY_..._N (its length); a tuple of tuples becomes a rectangular initializer
padded with zeros plus TGPY_..._LENS (the row lengths).

The Column settings (column_settings below): the default of every parameter
of ``Column.__init__`` in tinygeo/column.py and the range its check there
accepts, as TGPY_COLUMN_SET_<NAME>_DEF/_LO/_HI, plus TGPY_COLUMN_SET_N (the
number of parameters); column.c takes its defaults and ranges from these
only. A new setting checked with ``check_range("name", name, lo, hi, ...)``
is picked up as it is; a setting checked any other way stops the generator
with its name (see column_settings for the forms it reads).
--check also runs check_citations: every Python name the C comments cite
(column.py, Column.feed, potential.gph_series, ...) must exist in the module
it names (the rules are in its docstring).
tests/test_c_port.py runs --check.
"""
import ast
import os
import re
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
OUT = os.path.join(HERE, "tg_tables.h")
MODULES = ("constants", "gravity", "potential", "moisture", "layers", "standard", "sealevel", "highsite",
           "column", "record", "station")
SETTINGS = {"column": ("Column", "_count_setting"), "station": ("Station", "_count")}
"""The modules whose class's settings are generated (column_settings): the
class and the name of the module's int-setting check."""


class NotLiteral(Exception):
    pass


def _is_number_expr(node):
    if isinstance(node, ast.Constant):
        return isinstance(node.value, (int, float)) and not isinstance(node.value, bool)
    if isinstance(node, ast.UnaryOp) and isinstance(node.op, (ast.USub, ast.UAdd)):
        return _is_number_expr(node.operand)
    if isinstance(node, ast.BinOp) and isinstance(node.op, (ast.Add, ast.Sub, ast.Mult, ast.Div)):
        return _is_number_expr(node.left) and _is_number_expr(node.right)
    return False


_LINES = {}


def _segment(src, node):
    # ast.get_source_segment re-splits the whole source on every call; same
    # result, lines split once per module
    lines = _LINES.get(id(src))
    if lines is None or lines[0] is not src:
        lines = _LINES[id(src)] = (src, src.splitlines(True))
    lines = lines[1]
    l0, l1 = node.lineno - 1, node.end_lineno - 1
    enc = [ln.encode("utf-8") for ln in lines[l0:l1 + 1]]
    if l0 == l1:
        return enc[0][node.col_offset:node.end_col_offset].decode("utf-8")
    parts = [enc[0][node.col_offset:]] + enc[1:-1] + [enc[-1][:node.end_col_offset]]
    return b"".join(parts).decode("utf-8")


def _c_number(src, node):
    text = _segment(src, node)
    text = " ".join(text.split())
    if isinstance(node, ast.Constant) and isinstance(node.value, int):
        # an int literal in the Python source: keep it an integer in C too
        return text, True
    # every float constant in the expression: make sure C reads it as double
    if isinstance(node, ast.Constant):
        return text, False
    return "(" + text + ")", False


def _is_str(node):
    return isinstance(node, ast.Constant) and isinstance(node.value, (str, bytes))


def _number_rows(node):
    # a string of number literals, rows separated by ";" (potential's series
    # tables, kept as text there so that they take no RAM on a board): the
    # rows as lists of literal texts, or None
    if not (isinstance(node, ast.Constant) and isinstance(node.value, str) and ";" in node.value):
        return None
    rows = []
    for r in node.value.split(";"):
        row = []
        for text in r.split():
            try:
                expr = ast.parse(text, mode="eval").body
            except SyntaxError:
                return None
            if not _is_number_expr(expr):
                return None
            # as _c_number writes the same literal in a tuple: (-x)
            row.append(text if isinstance(expr, ast.Constant) else "(" + text + ")")
        rows.append(row)
    return rows


def _emit_rows(name, rows, lines):
    width = max(len(r) for r in rows)
    out = []
    for r in rows:
        items = ["TG_L(%s)" % x for x in r] + ["TG_L(0.0)"] * (width - len(r))
        out.append("{ " + ", ".join(items) + " }")
    lines.append("#define %s_ROWS %d" % (name, len(out)))
    lines.append("#define %s_WIDTH %d" % (name, width))
    lines.append("#define %s_LENS { %s }" % (name, ", ".join(str(len(r)) for r in rows)))
    lines.append("#define %s { \\\n    %s }" % (name, ", \\\n    ".join(out)))


def _c_string(text):
    # a C string literal of printable ASCII text and tabs
    assert all((32 <= ord(ch) < 127 and ch not in '"\\') or ch == "\t" for ch in text), text
    return '"%s"' % text.replace("\t", "\\t")


def _joined(node, tuples):
    # '"sep".join(NAME)' of a module-level tuple of strings (record.HEADER): the text
    if (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute) and node.func.attr == "join"
            and _is_str(node.func.value) and len(node.args) == 1 and isinstance(node.args[0], ast.Name)
            and node.args[0].id in tuples):
        return node.func.value.value.join(tuples[node.args[0].id])
    return None


C_KEYWORDS = ("auto", "break", "case", "char", "const", "continue", "default", "do", "double",
              "else", "enum", "extern", "float", "for", "goto", "if", "inline", "int", "long",
              "register", "restrict", "return", "short", "signed", "sizeof", "static", "struct",
              "switch", "typedef", "union", "unsigned", "void", "volatile", "while")


def c_member(name):
    """The C struct member of a Python attribute name: the leading underscores
    dropped, and a trailing one added to a C keyword (Station._int -> int_;
    checkpoint.c's tg__check_values applies the same rule to the specs)."""
    m = name.lstrip("_")
    return m + "_" if m in C_KEYWORDS else m


def _emit_value(src, name, node, lines):
    rows = _number_rows(node)
    if rows is not None:
        _emit_rows(name, rows, lines)
        return True
    if _is_str(node):
        text = node.value.decode("ascii") if isinstance(node.value, bytes) else node.value
        lines.append('#define %s %s' % (name, _c_string(text)))
        return True
    if isinstance(node, ast.Tuple) and node.elts and all(
            isinstance(e, ast.Tuple) and len(e.elts) == 2 and isinstance(e.elts[0], ast.Constant)
            and type(e.elts[0].value) is int and _is_str(e.elts[1]) for e in node.elts):
        # a tuple of (int, string) pairs (record.EVENT_WORDS): an X-macro list
        # NAME(X) -> X(int, "string") ...
        lines.append("#define %s_N %d" % (name, len(node.elts)))
        lines.append("#define %s(X) \\\n    %s" % (name, " \\\n    ".join(
            "X(%d, %s)" % (e.elts[0].value, _c_string(e.elts[1].value)) for e in node.elts)))
        return True
    if isinstance(node, ast.Tuple) and node.elts and all(_is_str(e) for e in node.elts):
        # a tuple of attribute names (checkpoint layout): an X-macro list, the
        # leading underscore of private names dropped (C struct member names)
        names = [c_member(e.value) for e in node.elts]
        lines.append("#define %s_N %d" % (name, len(names)))
        lines.append("#define %s(X) \\\n    %s" % (name, " \\\n    ".join("X(%s)" % n for n in names)))
        return True
    if _is_number_expr(node):
        text, is_int = _c_number(src, node)
        if is_int and not any(isinstance(n, ast.BinOp) for n in ast.walk(node)):
            lines.append("#define %s %s" % (name, text))
        else:
            lines.append("#define %s TG_L(%s)" % (name, text))
        return True
    if isinstance(node, ast.Tuple) and node.elts:
        if all(_is_number_expr(e) for e in node.elts):
            items = ["TG_L(%s)" % _c_number(src, e)[0] for e in node.elts]
            lines.append("#define %s_N %d" % (name, len(items)))
            lines.append("#define %s { \\\n    %s }" % (name, ", \\\n    ".join(items)))
            return True
        if all(isinstance(e, ast.Tuple) and e.elts and all(_is_number_expr(x) for x in e.elts)
               for e in node.elts):
            _emit_rows(name, [[_c_number(src, x)[0] for x in e.elts] for e in node.elts], lines)
            return True
    return False


class SettingError(Exception):
    """A Column.__init__ parameter whose check the generator does not read."""


def _is_name(node, name):
    return isinstance(node, ast.Name) and node.id == name


def _bound(node, constants, what):
    # a check's bound: a number literal (C: TG_L(text)) or a module-level
    # number of the module, or one the constructor imports from a sibling
    # module (C: its TGPY_<MODULE>_ macro; constants maps the name to it)
    if _is_number_expr(node):
        return node
    if isinstance(node, ast.Name) and node.id in constants:
        return node
    raise SettingError("%s: bound %s is neither a number literal nor a module-level number of "
                       "the module" % (what, ast.dump(node)))


def _int_range(test, name):
    # "not isinstance(name, int) or name < LO or name > HI": (LO, HI) nodes, or None
    if not (isinstance(test, ast.BoolOp) and isinstance(test.op, ast.Or) and len(test.values) == 3):
        return None
    inst, low, high = test.values
    if not (isinstance(inst, ast.UnaryOp) and isinstance(inst.op, ast.Not)
            and isinstance(inst.operand, ast.Call) and _is_name(inst.operand.func, "isinstance")
            and len(inst.operand.args) == 2 and _is_name(inst.operand.args[0], name)
            and _is_name(inst.operand.args[1], "int")):
        return None
    out = []
    for cmp_, op in ((low, ast.Lt), (high, ast.Gt)):
        if not (isinstance(cmp_, ast.Compare) and _is_name(cmp_.left, name) and len(cmp_.ops) == 1
                and isinstance(cmp_.ops[0], op)):
            return None
        c = cmp_.comparators[0]
        if not (isinstance(c, ast.Constant) and type(c.value) is int):
            return None
        out.append(c)
    return tuple(out)


def column_settings(src, tree, cls="Column", count_fn="_count_setting", module="column"):
    try:
        return _settings(src, tree, cls, count_fn, module)
    except SettingError as e:
        # the messages name Column.__init__ and _count_setting: the class's own
        raise SettingError(str(e).replace("Column.__init__", cls + ".__init__")
                           .replace("_count_setting", count_fn))


def _settings(src, tree, cls, count_fn, module):
    """The parameters of Column.__init__ (tinygeo/column.py; or of another
    class of another module: Station.__init__ of station.py with its _count):
    a list of (name, kind, default node or None, lo node, hi node), and the
    {name: C macro} of the named bounds. The forms read:

    * ``check_range("name", name, lo, hi, unit, ...)`` (the string is the
      parameter's name; exactly one such call): kind "range", a number
      setting. Its default is a number, or None when the call is guarded by
      ``if name is None:``, ``if name is not None:`` or is the else branch of
      ``None if name is None else check_range(...)`` (C: NaN for None). lo
      and hi are number literals or module-level numbers of column.py.
    * ``_count_setting("name", name, LO, HI)`` or ``if not isinstance(name,
      int) or name < LO or name > HI:`` (int literals): kind "int", an
      integer setting with an int default.
    * ``check_flag("name", name)`` or ``bool(name)``: kind "flag", default
      True or False (C: 1 or 0).
    * ``check_lat(name)``: kind "lat", no default (errors.check_lat's range,
      tg__check_lat in C).
    * ``check_ellipsoid(name)`` with a module-level default (``WGS84``):
      kind "ellipsoid" (C: a pointer to tg_wgs84 or tg_grs80).
    * another default that is a module-level name: kind "object" (C: a
      pointer), not a number.
    * default None and the parameter only stored (``self.x = name``): kind
      "passthrough" (a callback; C: a function pointer and its context).

    Any other parameter raises SettingError naming it: a range checked by
    hand would otherwise be copied into C by hand, and forgotten."""
    constants = {}
    init = None
    for stmt in tree.body:
        if isinstance(stmt, ast.Assign) and len(stmt.targets) == 1 and \
                isinstance(stmt.targets[0], ast.Name) and _is_number_expr(stmt.value):
            constants[stmt.targets[0].id] = "TGPY_%s_%s" % (module.upper(), stmt.targets[0].id.upper())
        if isinstance(stmt, ast.ClassDef) and stmt.name == cls:
            for f in stmt.body:
                if isinstance(f, ast.FunctionDef) and f.name == "__init__":
                    init = f
    if init is None:
        raise SettingError("%s.py has no %s.__init__" % (module, cls))
    for node in ast.walk(init):
        # "from .sealevel import HEIGHT_MIN_M" in the constructor
        if isinstance(node, ast.ImportFrom) and node.level == 1 and node.module in MODULES:
            for a in node.names:
                constants.setdefault(a.asname or a.name,
                                     "TGPY_%s_%s" % (node.module.upper(), a.name.upper()))
    a = init.args
    params = a.args[1:] + a.kwonlyargs
    defaults = [None] * (len(a.args) - 1 - len(a.defaults)) + list(a.defaults) + list(a.kw_defaults)
    if a.vararg or a.kwarg:
        raise SettingError("Column.__init__ takes *args/**kwargs: settings must be named parameters")
    ranges, ints, flags, lats, ells, none_guarded, uses = {}, {}, set(), set(), set(), set(), {}

    def _label(label, name, fn):
        if not (isinstance(label, ast.Constant) and label.value == name):
            raise SettingError("%s(%s, %s, ...) in Column.__init__: the first argument must be the "
                               "string %r" % (fn, ast.dump(label), name, name))
    for node in ast.walk(init):
        if isinstance(node, ast.Call) and isinstance(node.func, ast.Name):
            fn = node.func.id
            if fn == "check_range" and len(node.args) >= 4 and isinstance(node.args[1], ast.Name):
                name = node.args[1].id
                label = node.args[0]
                if not (isinstance(label, ast.Constant) and label.value == name):
                    raise SettingError("check_range(%s, %s, ...) in Column.__init__: the first "
                                       "argument must be the string %r"
                                       % (ast.dump(label), name, name))
                if name in ranges:
                    raise SettingError("Column.__init__ checks %s with check_range twice" % name)
                what = "Column.__init__ check_range(%r, ...)" % name
                ranges[name] = (_bound(node.args[2], constants, what),
                                _bound(node.args[3], constants, what))
            elif fn == "bool" and len(node.args) == 1 and isinstance(node.args[0], ast.Name):
                flags.add(node.args[0].id)
            elif fn == "check_flag" and len(node.args) == 2 and isinstance(node.args[1], ast.Name):
                _label(node.args[0], node.args[1].id, fn)
                flags.add(node.args[1].id)
            elif fn == count_fn and len(node.args) == 4 and isinstance(node.args[1], ast.Name):
                name = node.args[1].id
                _label(node.args[0], name, fn)
                bounds = node.args[2:4]
                if not all(isinstance(b, ast.Constant) and type(b.value) is int for b in bounds):
                    raise SettingError("_count_setting(%r, ...) in Column.__init__: the bounds must be "
                                       "int literals" % name)
                ints[name] = tuple(bounds)
            elif fn == "check_ellipsoid" and len(node.args) == 1 and isinstance(node.args[0], ast.Name):
                ells.add(node.args[0].id)
            elif fn == "check_lat" and node.args and isinstance(node.args[0], ast.Name):
                lats.add(node.args[0].id)
        elif isinstance(node, (ast.If, ast.IfExp)):
            # "if name is None:", "if name is not None:" and
            # "None if name is None else check_range(...)"
            t = node.test
            if (isinstance(t, ast.Compare) and isinstance(t.left, ast.Name) and len(t.ops) == 1
                    and isinstance(t.ops[0], (ast.Is, ast.IsNot))
                    and isinstance(t.comparators[0], ast.Constant) and t.comparators[0].value is None):
                none_guarded.add(t.left.id)
            for p in params:
                r = _int_range(t, p.arg)
                if r is not None:
                    ints[p.arg] = r
        elif isinstance(node, ast.Name) and isinstance(node.ctx, ast.Load):
            uses.setdefault(node.id, []).append(node)
    stored = {}
    for node in ast.walk(init):
        if (isinstance(node, ast.Assign) and len(node.targets) == 1 and isinstance(node.value, ast.Name)
                and isinstance(node.targets[0], ast.Attribute) and _is_name(node.targets[0].value, "self")):
            stored[node.value.id] = stored.get(node.value.id, 0) + 1
    out = []
    _settings.bounds = constants      # {name: C macro} of the named bounds, for _emit_settings
    for p, d in zip(params, defaults):
        name = p.arg
        where = "Column.__init__ parameter %r" % name
        forms = [k for k, hit in (("range", name in ranges), ("int", name in ints),
                                  ("flag", name in flags), ("lat", name in lats),
                                  ("ellipsoid", name in ells)) if hit]
        if len(forms) > 1:
            raise SettingError("%s is checked in several ways (%s)" % (where, ", ".join(forms)))
        is_none = isinstance(d, ast.Constant) and d.value is None
        if forms == ["range"]:
            if d is None:           # a required parameter (Station's height_m): no default
                out.append((name, "range", None, ranges[name][0], ranges[name][1]))
                continue
            if not (_is_number_expr(d) or (is_none and name in none_guarded)):
                raise SettingError("%s: default %s is not a number (or None with an "
                                   "'if %s is None:' branch)" % (where, ast.dump(d), name))
            out.append((name, "range", d, ranges[name][0], ranges[name][1]))
        elif forms == ["int"]:
            if not (isinstance(d, ast.Constant) and type(d.value) is int):
                raise SettingError("%s: default %s is not an int" % (where, ast.dump(d)))
            out.append((name, "int", d, ints[name][0], ints[name][1]))
        elif forms == ["flag"]:
            if not (isinstance(d, ast.Constant) and isinstance(d.value, bool)):
                raise SettingError("%s: bool() of a default %s that is not True/False"
                                   % (where, ast.dump(d)))
            out.append((name, "flag", d, None, None))
        elif forms == ["lat"]:
            if d is not None:
                raise SettingError("%s: the latitude has a default" % where)
            out.append((name, "lat", None, None, None))
        elif forms == ["ellipsoid"]:
            if not isinstance(d, ast.Name):
                raise SettingError("%s: the default ellipsoid is not a module-level name" % where)
            out.append((name, "ellipsoid", d, None, None))
        elif isinstance(d, ast.Name):
            out.append((name, "object", d, None, None))
        elif is_none and stored.get(name, 0) == len(uses.get(name, ())) == 1:
            out.append((name, "passthrough", d, None, None))
        else:
            raise SettingError(
                "%s: no range check that gen_tables.py reads (check_range(%r, %s, lo, hi, unit), "
                "_count_setting(%r, %s, LO, HI), 'if not isinstance(%s, int) or %s < LO or %s > HI', "
                "check_flag(%r, %s), bool(%s), check_lat(%s), check_ellipsoid(%s)); write its check "
                "in one of these forms so that ports/c/column.c gets its default and range from "
                "tg_tables.h" % (where, name, name, name, name, name, name, name, name, name, name,
                                 name, name))
    return out


def _emit_settings(src, tree, lines, module="column"):
    cls, count_fn = SETTINGS[module]
    sets = column_settings(src, tree, cls, count_fn, module)
    bounds = _settings.bounds
    pre = "TGPY_%s_SET_" % module.upper()
    lines.append("/* %s.__init__: %d parameters; per setting its default (_DEF; None -> TG_NAN,"
                 % (cls, len(sets)))
    lines.append(" * as %s stores NaN for None; True/False -> 1/0) and the range its check" % cls)
    lines.append(" * accepts (_LO, _HI). Read by gen_tables.column_settings. */")
    lines.append("#define %sN %d" % (pre, len(sets)))
    others = ["%s (%s)" % (name, kind) for name, kind, _, _, _ in sets
              if kind not in ("range", "int", "flag")]
    if others:
        lines.append("/* the other parameters (kinds of gen_tables.column_settings): %s */"
                     % ", ".join(others))
    for name, kind, d, lo, hi in sets:
        base = pre + name.upper()
        if kind == "range":
            if d is None:
                pass                # required: no default
            elif isinstance(d, ast.Constant) and d.value is None:
                lines.append("#define %s_DEF TG_NAN   /* None */" % base)
            else:
                lines.append("#define %s_DEF TG_L(%s)" % (base, _c_number(src, d)[0]))
            for suffix, b in (("LO", lo), ("HI", hi)):
                if isinstance(b, ast.Name):
                    lines.append("#define %s_%s %s" % (base, suffix, bounds[b.id]))
                else:
                    lines.append("#define %s_%s TG_L(%s)" % (base, suffix, _c_number(src, b)[0]))
        elif kind == "int":
            lines.append("#define %s_DEF %d" % (base, d.value))
            lines.append("#define %s_LO %d" % (base, lo.value))
            lines.append("#define %s_HI %d" % (base, hi.value))
        elif kind == "flag":
            lines.append("#define %s_DEF %d   /* %s */" % (base, int(d.value), d.value))


def generate(root=ROOT):
    out = ["/* tg_tables.h -- GENERATED by ports/c/gen_tables.py from tinygeo/ modules; do not edit.",
           " * Every number is the literal of the Python source, digit for digit; the",
           " * source of each (standard, table) is named beside it in the Python module.",
           " * Regenerate: python ports/c/gen_tables.py; tests/test_c_port.py fails when stale. */",
           "#ifndef TG_TABLES_H", "#define TG_TABLES_H", ""]
    for mod in MODULES:
        path = os.path.join(root, "tinygeo", mod + ".py")
        with open(path) as f:
            src = f.read()
        tree = ast.parse(src)
        out.append("/* ---- tinygeo/%s.py ---- */" % mod)
        tuples = {}
        for stmt in tree.body:
            if not isinstance(stmt, ast.Assign) or len(stmt.targets) != 1:
                continue
            tgt = stmt.targets[0]
            if not isinstance(tgt, ast.Name):
                continue
            base = "TGPY_%s_%s" % (mod.upper(), tgt.id.upper())
            val = stmt.value
            if (isinstance(val, ast.Call) and isinstance(val.func, ast.Name)
                    and val.func.id == "Ellipsoid"):
                for kw in val.keywords:
                    _emit_value(src, "%s_%s" % (base, kw.arg.upper()), kw.value, out)
                continue
            if isinstance(val, ast.Tuple) and val.elts and all(_is_str(e) for e in val.elts):
                tuples[tgt.id] = [e.value for e in val.elts]
            text = _joined(val, tuples)
            if text is not None:
                out.append("#define %s %s" % (base, _c_string(text)))
                continue
            _emit_value(src, base, val, out)
        if mod in SETTINGS:
            _emit_settings(src, tree, out, mod)
        out.append("")
    out.append("#endif /* TG_TABLES_H */")
    return "\n".join(out) + "\n"


# ----------------------------------------------------------------------------- comment check
_FILE_EXT = ("py", "c", "h", "md", "txt")
_CHAIN = re.compile(r"(?<![\w./-])([A-Za-z_]\w*(?:\.[A-Za-z_]\w*)+)")
_PATH = re.compile(r"(?<![\w./-])((?:[\w.-]+/)+[\w.-]+\.(?:py|c|h|md|txt))(?![\w*])")
_COMMENT = re.compile(r"/\*.*?\*/|//[^\n]*", re.S)


def _defined_names(body):
    # names a block of statements defines (def, class, assignment), looking
    # into if/try/for/while/with blocks but not into functions and classes;
    # imports do not count
    out = set()
    for st in body:
        if isinstance(st, (ast.FunctionDef, ast.AsyncFunctionDef, ast.ClassDef)):
            out.add(st.name)
        elif isinstance(st, (ast.Assign, ast.AnnAssign, ast.AugAssign)):
            for t in (st.targets if isinstance(st, ast.Assign) else [st.target]):
                for n in ast.walk(t):
                    if isinstance(n, ast.Name):
                        out.add(n.id)
        for field in ("body", "orelse", "finalbody"):
            if not isinstance(st, (ast.FunctionDef, ast.AsyncFunctionDef, ast.ClassDef)):
                out |= _defined_names(getattr(st, field, []) or [])
        for h in getattr(st, "handlers", []) or []:
            out |= _defined_names(h.body)
    return out


def _class_members(cls):
    # methods, class-level names, and every self.<name> a method assigns
    out = _defined_names(cls.body)
    for f in cls.body:
        if not isinstance(f, (ast.FunctionDef, ast.AsyncFunctionDef)):
            continue
        for n in ast.walk(f):
            targets = []
            if isinstance(n, ast.Assign):
                targets = n.targets
            elif isinstance(n, (ast.AugAssign, ast.AnnAssign)):
                targets = [n.target]
            for t in targets:
                for a in ast.walk(t):
                    if isinstance(a, ast.Attribute) and isinstance(a.value, ast.Name) and a.value.id == "self":
                        out.add(a.attr)
    return out


def python_index(root=ROOT):
    """{module: (module-level names, {class: members})} for every tinygeo/*.py."""
    index = {}
    pkg = os.path.join(root, "tinygeo")
    for fn in sorted(os.listdir(pkg)):
        if not fn.endswith(".py"):
            continue
        with open(os.path.join(pkg, fn)) as f:
            tree = ast.parse(f.read())
        classes = dict((c.name, _class_members(c)) for c in tree.body if isinstance(c, ast.ClassDef))
        index[fn[:-3]] = (_defined_names(tree.body), classes)
    return index


def check_citations(root=ROOT, files=None):
    """Check that every Python name the C port's comments cite exists.

    Read: the comments (/* */ and //) of ports/c/*.c and *.h, and the whole
    text of ports/c/README.md (or the given files). The rules:

    * a dotted name whose first part is a module of tinygeo/ (a file
      tinygeo/<module>.py), ``tinygeo``, or a class defined at module level
      in one of them (Column, Ellipsoid, RangeError, ...) is a citation;
      every other dotted word (cfg.ice, math.pi, e.g.) is left alone;
    * ``<module>.<ext>`` with ext py/c/h/md/txt names a file: <module>.py
      must exist in tinygeo/, <module>.c/.h in ports/c/;
    * ``<module>.<name>``: name is defined at module level in
      tinygeo/<module>.py (def, class, or assignment, also inside if/try
      blocks; a name the module only imports does not count: cite the module
      that defines it); private names (``moisture._ex``) included;
    * ``<module>.<Class>.<member>`` and ``<Class>.<member>``: member is a
      method or a class-level name of the class, or an attribute one of its
      methods assigns (self.<member> = ...); a third part after anything but
      a class (``constants.WGS84.a_m``) is not checked;
    * ``tinygeo.<name>``: a submodule of the package or a module-level name
      of one of its modules (the package gives its public names lazily);
      ``tinygeo.<module>.<name>...`` as ``<module>.<name>...``;
    * a path with a slash and one of those extensions (tinygeo/column.py,
      tests/test_c_port.py) must exist from the repository root; patterns
      with * are left alone.

    root is the checkout whose tinygeo/ is read (default: this one); the
    C files and the other paths are always this checkout's.

    Unqualified names (``_nodes``, ``feed``) are not checked: qualify a
    citation to have it checked. Returns a list of "file:line: problem"."""
    index = python_index(root)
    classes = {}
    for mod, (_, cls) in index.items():
        for name, members in cls.items():
            classes.setdefault(name, members)
    if files is None:   # this port's files (root may be another copy of tinygeo/)
        files = sorted(os.path.join(HERE, f) for f in os.listdir(HERE)
                       if f.endswith((".c", ".h")) or f == "README.md")
    problems = []

    def member(cls_members, name, cite):
        return None if name in cls_members else "%s: no such method or attribute" % cite

    def check(cite):
        parts = cite.split(".")
        head = parts[0]
        if len(parts) == 2 and parts[1] in _FILE_EXT:
            if head in index or head == "tinygeo":
                if parts[1] == "py" and not os.path.exists(os.path.join(root, "tinygeo", cite)):
                    return "%s: no file tinygeo/%s" % (cite, cite)
                if parts[1] in ("c", "h") and not os.path.exists(os.path.join(HERE, cite)):
                    return "%s: no file ports/c/%s" % (cite, cite)
            return None
        if head == "tinygeo":
            if parts[1] in index:
                err = check(".".join(parts[1:])) if len(parts) > 2 else None
                return err and "tinygeo." + err
            if os.path.isdir(os.path.join(root, "tinygeo", parts[1])):
                return None
            if any(parts[1] in names for names, _ in index.values()):
                return None
            return "%s: tinygeo has no module or name %r" % (cite, parts[1])
        if head in index:
            names, cls = index[head]
            if parts[1] not in names:
                return "%s: tinygeo/%s.py defines no %r" % (cite, head, parts[1])
            if len(parts) > 2 and parts[1] in cls:
                return member(cls[parts[1]], parts[2], cite)
            return None
        if head in classes:
            return member(classes[head], parts[1], cite)
        return None

    for path in files:
        with open(path) as f:
            text = f.read()
        if path.endswith(".md"):
            chunks = [(0, text)]
        else:
            chunks = [(m.start(), m.group(0)) for m in _COMMENT.finditer(text)]
        rel = os.path.relpath(path, ROOT)
        for start, chunk in chunks:
            for m in _PATH.finditer(chunk):
                base = root if m.group(1).startswith("tinygeo/") else ROOT
                if not os.path.exists(os.path.join(base, m.group(1))):
                    line = text.count("\n", 0, start + m.start()) + 1
                    problems.append("%s:%d: %s: no such file" % (rel, line, m.group(1)))
            for m in _CHAIN.finditer(chunk):
                cite = m.group(1)
                if cite.split(".")[0] not in index and cite.split(".")[0] not in classes and \
                        not cite.startswith("tinygeo."):
                    continue
                err = check(cite)
                if err:
                    line = text.count("\n", 0, start + m.start()) + 1
                    problems.append("%s:%d: %s" % (rel, line, err))
    return problems


def main(argv):
    root = ROOT
    if "--root" in argv:   # another checkout (tests: an edited copy of tinygeo/)
        root = argv[argv.index("--root") + 1]
    try:
        text = generate(root)
    except SettingError as e:
        print("gen_tables.py: %s" % e)
        return 2
    if "--check" in argv:
        try:
            with open(OUT) as f:
                old = f.read()
        except OSError:
            old = ""
        if old != text:
            import difflib
            sys.stdout.writelines(difflib.unified_diff(old.splitlines(True), text.splitlines(True),
                                                       "tg_tables.h (checked in)", "tg_tables.h (from tinygeo/ modules)"))
            print("ports/c/tg_tables.h is stale: run python ports/c/gen_tables.py")
            return 1
        problems = check_citations(root)
        if problems:
            print("\n".join(problems))
            print("ports/c: comments cite Python names that do not exist (rules: "
                  "gen_tables.check_citations)")
            return 1
        return 0
    with open(OUT, "w") as f:
        f.write(text)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
