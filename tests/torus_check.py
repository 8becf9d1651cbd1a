#!/usr/bin/env python3
"""Check stillpoint's barotropic torus with SymPy.

Reference: SymPy (Meurer et al. 2017, PeerJ Comput. Sci. 3:e103); the
analytic torus of Papaloizou & Pringle 1984 (MNRAS 208, 721, section 2):
with GM = 1, R0 = 1 and l^2 = GM R0,
    h = 1/r - 1/(2 R^2) - 1/(2 d),  rho = ((Gamma-1) h/(Gamma K))^(1/(Gamma-1)).

Input: a JSON file from tests/torus.rs with our printed formulas rho, P, v,
phi (in R and z) and the parameter values. SymPy differentiates P and phi
itself and evaluates, at 60 points inside the torus, 50 digits:
    radial    v^2/R - dphi/dR - (1/rho) dP/dR
    vertical  -dphi/dz - (1/rho) dP/dz
each relative to its largest term, and rho against the closed form above.
The torus's formulas carry K, Gamma and C as numbers printed to 17 digits
(Gamma - 1 and 1/(Gamma - 1) rounded apart), so agreement is to round-off
of those digits: 1e-13 relative.

Prints `torus: K disagreements` and exits non-zero on any.
"""

import json
import sys

import sympy
from sympy.parsing.sympy_parser import parse_expr, standard_transformations

DIGITS = 50


def main(path):
    data = json.load(open(path))
    R, z = sympy.symbols("R z")
    local = {"R": R, "z": z}
    local.update({n: sympy.Float(v, DIGITS) for n, v in data["names"].items()})

    def read(name):
        return parse_expr(data["formulas"][name].replace("^", "**"), local_dict=local,
                          transformations=standard_transformations)

    rho, p, v, phi = read("rho"), read("P"), read("v"), read("phi")
    radial = [v ** 2 / R, sympy.diff(phi, R), sympy.diff(p, R) / rho]
    vertical = [sympy.diff(phi, z), sympy.diff(p, z) / rho]
    d, k, gam = (sympy.Float(data[n], DIGITS) for n in ("d", "K", "Gamma"))
    h = 1 / sympy.sqrt(R ** 2 + z ** 2) - 1 / (2 * R ** 2) - 1 / (2 * d)
    ref = ((gam - 1) * h / (gam * k)) ** (1 / (gam - 1))
    worst = [0.0, 0.0, 0.0]
    n = 0
    for i in range(12):
        for j in range(5):
            at = {R: sympy.Float(0.8 + 0.8 * i / 11, DIGITS), z: sympy.Float(-0.2 + 0.1 * j, DIGITS)}
            if h.xreplace(at) <= 0:
                continue
            n += 1
            tr = [abs(t.xreplace(at).evalf(DIGITS)) for t in radial]
            rr = abs((radial[0] - radial[1] - radial[2]).xreplace(at).evalf(DIGITS)) / max(tr)
            tz = [abs(t.xreplace(at).evalf(DIGITS)) for t in vertical]
            rz = abs((vertical[0] + vertical[1]).xreplace(at).evalf(DIGITS)) / max(max(tz), 1e-300)
            rd = abs(rho.xreplace(at).evalf(DIGITS) / ref.xreplace(at).evalf(DIGITS) - 1)
            worst = [max(worst[0], rr), max(worst[1], rz), max(worst[2], rd)]
    ok = n >= 20 and worst[0] < 1e-13 and worst[1] < 1e-13 and worst[2] < 1e-13
    print(f"torus: {n} points inside, radial residual {float(worst[0]):.2e}, vertical residual "
          f"{float(worst[1]):.2e}, rho vs Papaloizou & Pringle 1984 {float(worst[2]):.2e}")
    print(f"torus: {0 if ok else 1} disagreements")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main(sys.argv[1]))
