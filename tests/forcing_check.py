"""Issue 8, part 6: the manufactured forcing of an audit, checked with SymPy.

Usage: forcing_check.py FILE.h5 RESIDUAL

FILE.h5 is a build of a profile with `solve_for: nothing` sampled at cell
centres; RESIDUAL is the audited residual `stillpoint check` prints (per
unit mass: v_phi^2/R - dPhi/dR - (1/rho) dP/dR on a disk, (1/rho) dP/ds +
dPhi/ds on a slab). From the profile recorded in the file, SymPy builds the
laws (parameters substituted, G = 1 in code units), differentiates them
itself and checks, after Roache 2002 (Code Verification by the Method of
Manufactured Solutions, J. Fluids Eng. 124, 4):

1. the forcing formula in the file's `forcing` attribute equals SymPy's
   f = dP/ds + rho dPhi/ds - rho v_phi^2/R (disk) or dP/ds + rho dPhi/ds
   (slab): the difference simplifies to 0, or, where the tool printed a
   folded constant as a decimal (1/1.01), vanishes at 20 random points to
   1e-12 relative;
2. adding it back to the audited residual gives zero: the acceleration
   imbalance plus f/rho (disk: RESIDUAL + f/rho; slab: -RESIDUAL + f/rho),
   in the same sense;
3. the file's /forcing/forcing_<s> equals SymPy's f at /grid/<s>_centers to
   1e-12 relative to its largest value.

Exits non-zero on any disagreement.
"""

import json
import random
import sys

import h5py
import numpy as np
import sympy as sp
from sympy.parsing.sympy_parser import convert_xor, parse_expr, standard_transformations

TRANSFORMS = standard_transformations + (convert_xor,)


def parse(text, names):
    return parse_expr(str(text), local_dict=names, transformations=TRANSFORMS)


def main():
    path, residual_text = sys.argv[1], sys.argv[2]
    f = h5py.File(path, "r")
    profile = json.loads(f.attrs["profile"])
    record = json.loads(f.attrs["forcing"])
    shape = profile["balance"]["shape"]
    s = "R" if shape == "disk" else "z"
    x = sp.Symbol(s, positive=True)
    names = {s: x, "G": sp.Integer(1)}
    # Parameters: numbers or formulas of earlier ones (in the order given).
    params = {}
    pending = dict(profile["parameters"])
    while pending:
        before = len(pending)
        for k in list(pending):
            try:
                params[k] = sp.nsimplify(parse(pending[k], {**names, **params}))
                if params[k].free_symbols - {x}:
                    raise NameError
                del pending[k]
            except (NameError, TypeError, sp.SympifyError):
                params.pop(k, None)
        assert len(pending) < before, f"parameters not understood: {pending}"
    scope = {**names, **params}
    rho = parse(profile["balance"]["density"], scope)
    gas = profile["gas"]
    p = parse(gas["pressure"], scope) if "pressure" in gas else rho * parse(gas["sound_speed_sq"], scope)
    grav = profile["gravity"]
    if "point_mass" in grav:
        phi = -parse(grav["point_mass"], scope) / x
    else:
        phi = parse(grav["uniform"], scope) * x
    if shape == "disk":
        v2 = parse(profile["balance"]["rotation"], scope) ** 2
        f_ref = sp.diff(p, x) + rho * sp.diff(phi, x) - rho * v2 / x
    else:
        f_ref = sp.diff(p, x) + rho * sp.diff(phi, x)

    def tool(text):
        # The tool's own formulas keep parameter names: substitute them.
        return parse(text, {**names, **{k: sp.Symbol(k) for k in profile["parameters"]}}).subs(
            {sp.Symbol(k): v for k, v in params.items()}
        )

    f_tool = tool(record["formulas"][s])
    res = tool(residual_text)
    back = res + f_tool / rho if shape == "disk" else -res + f_tool / rho
    rng = random.Random(8)
    lo = float(f["grid"][f"{s}_edges"][0])
    hi = float(f["grid"][f"{s}_edges"][-1])
    points = [rng.uniform(lo, hi) for _ in range(20)]

    def zero(expr, scale, what):
        # Symbolically zero, or (constants the tool folded into decimals,
        # such as 1/1.01, differ from SymPy's rationals in the last digit)
        # zero to 1e-12 of the scale at 20 random points.
        if sp.simplify(expr) == 0:
            return "0"
        worst = max(abs(float(expr.subs(x, at))) / scale(at) for at in points)
        assert worst <= 1e-12, f"{what}: {sp.simplify(expr)} reaches {worst}"
        return f"{worst:.1e}"

    d1 = zero(f_tool - f_ref, lambda at: abs(float(f_ref.subs(x, at))) + 1e-300, "forcing vs SymPy")
    d2 = zero(back, lambda at: abs(float(res.subs(x, at))) + 1e-300, "added back to the residual")
    centres = np.asarray(f["grid"][f"{s}_centers"])
    data = np.asarray(f["forcing"][f"forcing_{s}"])
    ref = sp.lambdify(x, f_ref, "numpy")(centres)
    err = np.max(np.abs(data - ref)) / np.max(np.abs(ref))
    assert err < 1e-12, f"file vs SymPy: {err}"
    assert "energy_source" in record
    print(f"forcing {s}: vs SymPy {d1}, added back to the residual {d2}, file vs SymPy {err:.1e}")
    print("all checks passed")


if __name__ == "__main__":
    main()
