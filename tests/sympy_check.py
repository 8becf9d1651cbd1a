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

Prints `sympy: N formulas, K disagreements` and exits non-zero on any
disagreement (or any formula SymPy cannot read).
"""

import ast
import json
import re
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


class _Conditions(ast.NodeTransformer):
    """Rewrite Python's `and`/`or`/comparisons into SymPy calls, so that
    parse_expr builds relationals instead of evaluating truth values."""

    def visit_BoolOp(self, node):
        self.generic_visit(node)
        name = "_and" if isinstance(node.op, ast.And) else "_or"
        return ast.Call(func=ast.Name(id=name, ctx=ast.Load()), args=node.values, keywords=[])

    def visit_Compare(self, node):
        self.generic_visit(node)
        if len(node.ops) != 1:
            raise ValueError("chained comparisons are not part of the language")
        name = CMP_NAMES[type(node.ops[0])]
        return ast.Call(
            func=ast.Name(id=name, ctx=ast.Load()),
            args=[node.left, node.comparators[0]],
            keywords=[],
        )


def to_sympy(text, names):
    """Our formula text to a SymPy expression."""
    py = text.replace("^", "**")
    py = re.sub(r"\bif\s*\(", "_if(", py)
    tree = _Conditions().visit(ast.parse(py, mode="eval"))
    py = ast.unparse(ast.fix_missing_locations(tree))
    local = dict(FUNCS)
    for n in names:
        local[n] = sympy.Symbol(n, real=True)
    return parse_expr(py, local_dict=local, transformations=standard_transformations)


def value(expr, point):
    subs = {sympy.Symbol(n, real=True): sympy.Float(v, DIGITS) for n, v in point.items()}
    v = sympy.N(expr.xreplace(subs), DIGITS)
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
            try:
                fv = value(orig, env)
                checks = [
                    ("simplified", value(ours_simpl, env), fv),
                    ("derivative", value(ours_deriv, env), value(their_deriv, env)),
                    ("value f", pt["f"], fv),
                    ("value f'", pt["df"], value(their_deriv, env)),
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
