#!/usr/bin/env python3
"""Check stillpoint's formula engine against SymPy.

Reference: SymPy (Meurer et al. 2017, PeerJ Comput. Sci. 3:e103).

Input: a JSON file written by tests/sympy_agreement.rs with, per formula, the
original text, the variable, our simplified text, our derivative text and
values at random points (our f and f' evaluated in extended precision). For
each formula this script parses the original and our printed texts with
SymPy, differentiates the original with SymPy and compares numerically:

  * our simplified formula   vs the original      (SymPy evaluates both)
  * our derivative formula   vs SymPy's derivative (SymPy evaluates both)
  * our values f, f'         vs SymPy's values
  * our resolved parameters  vs SymPy evaluating their definitions

Our conditional `a if c else b` is Python's conditional expression and
becomes SymPy's Piecewise((a, c), (b, True)); `and`, `or`, `not` become
And, Or, Not, and a chained comparison `a < b <= c` becomes
And(a < b, b <= c), as Python defines it. A point marked `fixed` (see
tests/data/formulas.txt) takes SymPy's values as limits from above in the
variable, so a removable 0/0 in SymPy's own form does not count.

Prints `sympy: N formulas, K disagreements` and exits non-zero on any
disagreement (or any formula SymPy cannot read).
"""

import ast
import json
import sys

import sympy
from sympy.parsing.sympy_parser import parse_expr, standard_transformations

REL_TOL = 1e-9
DIGITS = 40


def _if(cond, a, b):
    return sympy.Piecewise((a, cond), (b, True))


FUNCS = {
    "sqrt": sympy.sqrt,
    "exp": sympy.exp,
    "log": sympy.log,
    "log10": lambda u: sympy.log(u, 10),
    "sin": sympy.sin,
    "cos": sympy.cos,
    "tan": sympy.tan,
    "asin": sympy.asin,
    "acos": sympy.acos,
    "atan": sympy.atan,
    "atan2": sympy.atan2,
    "sinh": sympy.sinh,
    "cosh": sympy.cosh,
    "tanh": sympy.tanh,
    "abs": sympy.Abs,
    "min": sympy.Min,
    "max": sympy.Max,
    "pi": sympy.pi,
    "_if": _if,
    "_and": sympy.And,
    "_or": sympy.Or,
    "_not": sympy.Not,
    "_lt": sympy.Lt,
    "_le": sympy.Le,
    "_gt": sympy.Gt,
    "_ge": sympy.Ge,
    "_eq": sympy.Eq,
    "_ne": sympy.Ne,
}

CMP_NAMES = {
    ast.Lt: "_lt",
    ast.LtE: "_le",
    ast.Gt: "_gt",
    ast.GtE: "_ge",
    ast.Eq: "_eq",
    ast.NotEq: "_ne",
}


def _call(name, args):
    return ast.Call(func=ast.Name(id=name, ctx=ast.Load()), args=args, keywords=[])


class _Conditions(ast.NodeTransformer):
    """Rewrite Python's conditional expression, `and`/`or`/`not` and
    comparisons into SymPy calls, so that parse_expr builds Piecewise and
    relationals instead of evaluating truth values."""

    def visit_IfExp(self, node):
        self.generic_visit(node)
        return _call("_if", [node.test, node.body, node.orelse])

    def visit_BoolOp(self, node):
        self.generic_visit(node)
        return _call("_and" if isinstance(node.op, ast.And) else "_or", node.values)

    def visit_UnaryOp(self, node):
        self.generic_visit(node)
        if isinstance(node.op, ast.Not):
            return _call("_not", [node.operand])
        return node

    def visit_Compare(self, node):
        self.generic_visit(node)
        # a < b <= c is a < b and b <= c (Python Language Reference, 6.10).
        operands = [node.left, *node.comparators]
        links = [
            _call(CMP_NAMES[type(op)], [operands[i], operands[i + 1]])
            for i, op in enumerate(node.ops)
        ]
        return links[0] if len(links) == 1 else _call("_and", links)


def to_sympy(text, names):
    """Our formula text to a SymPy expression."""
    py = text.replace("^", "**")
    tree = _Conditions().visit(ast.parse(py, mode="eval"))
    py = ast.unparse(ast.fix_missing_locations(tree))
    local = dict(FUNCS)
    for n in names:
        local[n] = sympy.Symbol(n, real=True)
    return parse_expr(py, local_dict=local, transformations=standard_transformations)


def value(expr, point, limit_in=None):
    """The value at a point; with `limit_in`, the limit from above in that
    variable (the others substituted first)."""
    subs = {
        sympy.Symbol(n, real=True): sympy.Float(v, DIGITS)
        for n, v in point.items()
        if n != limit_in
    }
    expr = expr.xreplace(subs)
    if limit_in is not None:
        expr = sympy.limit(expr, sympy.Symbol(limit_in, real=True), point[limit_in], "+")
    v = sympy.N(expr, DIGITS)
    v = complex(v)
    if abs(v.imag) > 1e-30 * max(1.0, abs(v.real)):
        raise ValueError(f"complex value {v}")
    return v.real


def agree(a, b):
    return abs(a - b) <= REL_TOL * max(abs(a), abs(b)) + 1e-13


def main(path):
    with open(path) as fh:
        data = json.load(fh)
    problems = []

    for p in data.get("parameters", []):
        names = list(p["env"].keys())
        try:
            want = value(to_sympy(p["formula"], names), p["env"])
        except Exception as err:  # noqa: BLE001 - report any failure to read
            problems.append(f"parameter {p['name']} = {p['formula']}: SymPy failed: {err}")
            continue
        if not agree(want, p["value"]):
            problems.append(f"parameter {p['name']} = {p['formula']}: ours {p['value']}, SymPy {want}")

    for f in data["formulas"]:
        names, var = f["names"], f["var"]
        label = f"d/d{var} {f['formula']}"
        try:
            orig = to_sympy(f["formula"], names)
            ours_simpl = to_sympy(f["simplified"], names)
            ours_deriv = to_sympy(f["derivative"], names)
            their_deriv = sympy.diff(orig, sympy.Symbol(var, real=True))
        except Exception as err:  # noqa: BLE001
            problems.append(f"{label}: SymPy could not read it: {err}")
            continue
        if not f["points"]:
            problems.append(f"{label}: no points were evaluated")
        for pt in f["points"]:
            env = pt["values"]
            at = var if pt.get("fixed") else None
            try:
                fv = value(orig, env, at)
                dv = value(their_deriv, env, at)
                checks = [
                    ("simplified", value(ours_simpl, env), fv),
                    ("derivative", value(ours_deriv, env), dv),
                    ("value f", pt["f"], fv),
                    ("value f'", pt["df"], dv),
                ]
            except Exception as err:  # noqa: BLE001
                problems.append(f"{label} at {env}: SymPy evaluation failed: {err}")
                continue
            for what, ours, theirs in checks:
                if not agree(ours, theirs):
                    problems.append(f"{label} at {env}: {what}: ours {ours!r}, SymPy {theirs!r}")

    for p in problems:
        print("DISAGREEMENT:", p)
    print(f"sympy: {len(data['formulas'])} formulas, {len(problems)} disagreements")
    return 1 if problems else 0


if __name__ == "__main__":
    if len(sys.argv) != 2:
        print("usage: sympy_check.py RESULTS.json", file=sys.stderr)
        sys.exit(2)
    sys.exit(main(sys.argv[1]))
