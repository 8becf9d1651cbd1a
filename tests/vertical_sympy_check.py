#!/usr/bin/env python3
"""SymPy (an outside computer-algebra system) checks the stratified disk's
closed forms as `stillpoint derive` prints them.

Usage: vertical_sympy_check.py DERIVE_OUTPUT.txt  NAME=VALUE...

From the printed Phi(R, z), c^2 and the derived rho(R, z) and v_phi^2(R, z)
it forms, with SymPy's own derivatives,
  radial:   v_phi^2/R - dPhi/dR - (1/rho) d(rho c^2)/dR
  vertical:          - dPhi/dz - (1/rho) d(rho c^2)/dz
and requires each to simplify to 0, or (if simplify cannot decide) to
vanish at 20 random points (R, z) to 1e-40 of its largest term at 60-digit
precision (mpmath). Exits non-zero otherwise.
"""
import random
import sys

import sympy as sp


def main():
    lines = open(sys.argv[1]).read().splitlines()
    values = {}
    for a in sys.argv[2:]:
        k, v = a.split("=")
        values[sp.Symbol(k)] = sp.Rational(v)
    R, z = sp.symbols("R z", positive=True)
    z = sp.Symbol("z", real=True)
    loc = {"R": R, "z": z}

    def law(name, last=False):
        found = [l.split("=", 1)[1] for l in lines if l.startswith(f"  {name} = ")]
        text = found[-1 if last else 0].replace("^", "**")
        return sp.sympify(text, locals=loc).subs(values)

    phi = law("Phi")
    c2 = law("c\\^2".replace("\\", ""))
    rho = law("rho", last=True)
    v2 = law("v_phi\\^2".replace("\\", ""))
    p = rho * c2
    radial = v2 / R - sp.diff(phi, R) - sp.diff(p, R) / rho
    vertical = -sp.diff(phi, z) - sp.diff(p, z) / rho
    ok = True
    rng = random.Random(7)
    for name, res, terms in (
        ("radial", radial, [v2 / R, sp.diff(phi, R), sp.diff(p, R) / rho]),
        ("vertical", vertical, [sp.diff(phi, z), sp.diff(p, z) / rho]),
    ):
        if sp.simplify(res) == 0:
            print(f"{name}: simplifies to 0")
            continue
        worst = 0
        for _ in range(20):
            at = {R: sp.Float(rng.uniform(0.5, 2.5), 60), z: sp.Float(rng.uniform(-0.3, 0.3), 60)}
            r = abs(res.evalf(60, subs=at))
            s = max(abs(t.evalf(60, subs=at)) for t in terms)
            worst = max(worst, r / s)
        print(f"{name}: largest |residual|/|largest term| {float(worst):.1e} at 20 points")
        ok = ok and worst < 1e-40
    sys.exit(0 if ok else 1)


if __name__ == "__main__":
    main()
