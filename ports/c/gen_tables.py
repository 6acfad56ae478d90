"""Generate ports/c/tg_tables.h: every numeric literal of the tinygeo core
modules, copied digit for digit from the Python sources.

Usage (from the repository root):
    python ports/c/gen_tables.py            rewrite ports/c/tg_tables.h
    python ports/c/gen_tables.py --check    exit 1 (and say what differs) if it is stale

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
tests/test_c_port.py runs --check.
"""
import ast
import os
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
OUT = os.path.join(HERE, "tg_tables.h")
MODULES = ("constants", "gravity", "potential", "moisture", "layers", "standard", "sealevel",
           "column")


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


def _emit_value(src, name, node, lines):
    rows = _number_rows(node)
    if rows is not None:
        _emit_rows(name, rows, lines)
        return True
    if _is_str(node):
        text = node.value.decode("ascii") if isinstance(node.value, bytes) else node.value
        assert all(32 <= ord(ch) < 127 and ch not in '"\\' for ch in text), text
        lines.append('#define %s "%s"' % (name, text))
        return True
    if isinstance(node, ast.Tuple) and node.elts and all(_is_str(e) for e in node.elts):
        # a tuple of attribute names (checkpoint layout): an X-macro list, the
        # leading underscore of private names dropped (C struct member names)
        names = [e.value.lstrip("_") for e in node.elts]
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


def generate():
    out = ["/* tg_tables.h -- GENERATED by ports/c/gen_tables.py from tinygeo/ modules; do not edit.",
           " * Every number is the literal of the Python source, digit for digit; the",
           " * source of each (standard, table) is named beside it in the Python module.",
           " * Regenerate: python ports/c/gen_tables.py; tests/test_c_port.py fails when stale. */",
           "#ifndef TG_TABLES_H", "#define TG_TABLES_H", ""]
    for mod in MODULES:
        path = os.path.join(ROOT, "tinygeo", mod + ".py")
        with open(path) as f:
            src = f.read()
        tree = ast.parse(src)
        out.append("/* ---- tinygeo/%s.py ---- */" % mod)
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
            _emit_value(src, base, val, out)
        out.append("")
    out.append("#endif /* TG_TABLES_H */")
    return "\n".join(out) + "\n"


def main(argv):
    text = generate()
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
        return 0
    with open(OUT, "w") as f:
        f.write(text)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
