#!/usr/bin/env python3
"""Check stillpoint's barotropic closed forms with SymPy.

Reference: SymPy (Meurer et al. 2017, PeerJ Comput. Sci. 3:e103) for the
symbolic derivatives; mpmath (its arbitrary-precision evaluation) for the
values.

Input: a JSON list written by tests/barotropic.rs, one case per profile, with
our printed formulas for rho, P, Phi (and v_phi^2 for a disk), the
parameter values and the grid range. For each case this script, on its own:

  * differentiates our P and Phi with SymPy and forms the balance residual:
    hydrostatic  P'/rho + Phi'              (slab, envelope)
    disk         v_phi^2/R - Phi_R - P_R/rho
    and evaluates it relative to its largest term at 40 points, 50 digits;
  * checks P = K rho^Gamma;
  * compares rho with the textbook closed form typed here independently:
    slab      rho = ((Gam-1) g0 (ztop - z)/(Gam K))^(1/(Gam-1))
              (polytropic slab, P ~ (1 - z/ztop)^(Gam/(Gam-1)))
    envelope  rho = ((Gam-1) G Mp (1/r - 1/rout)/(Gam K))^(1/(Gam-1))
              (Bernoulli h(rho) + Phi = const with rho(rout) = 0)
    disk      rho is the given law, and v_phi^2 = G M/R - p K Gam rho0^(Gam-1) R^(-p(Gam-1)).

Prints `barotropic: N cases, K disagreements` and exits non-zero on any.
"""

import json
import sys

import sympy
from sympy.parsing.sympy_parser import parse_expr, standard_transformations

TOL = 1e-30
DIGITS = 50


def read(text, names):
    local = {n: sympy.Symbol(n) for n in names}
    return parse_expr(text.replace("^", "**"), local_dict=local,
                      transformations=standard_transformations)


def main(path):
    cases = json.load(open(path))
    bad = 0
    for case in cases:
        kind, s = case["kind"], case["coordinate"]
        params = case["parameters"]
        names = list(params) + [s]
        x = sympy.Symbol(s)
        sub = {sympy.Symbol(n): sympy.nsimplify(v) if isinstance(v, int) else sympy.Float(v, DIGITS)
               for n, v in params.items()}
        phi = read(case["phi"], names).xreplace(sub)
        rho = read(case["rho"] or case["density_law"], names).xreplace(sub)
        p = read(case["P"], names).xreplace(sub)
        P = {n: sympy.Float(v, DIGITS) for n, v in params.items()}
        K, Gam = P["K"], P["Gam"]
        if kind == "disk":
            v2 = read(case["v_phi^2"], names).xreplace(sub)
            terms = [v2 / x, sympy.diff(phi, x), sympy.diff(p, x) / rho]
            res = terms[0] - terms[1] - terms[2]
            ref_v2 = P["G"] * P["M"] / x - P["p"] * K * Gam * P["rho0"] ** (Gam - 1) * x ** (-P["p"] * (Gam - 1))
            ref_rho = read(case["density_law"], names).xreplace(sub)
        else:
            terms = [sympy.diff(p, x) / rho, sympy.diff(phi, x)]
            res = terms[0] + terms[1]
            ref_v2 = None
            if kind == "slab":
                ref_rho = ((Gam - 1) * P["g0"] * (P["ztop"] - x) / (Gam * K)) ** (1 / (Gam - 1))
            else:
                ref_rho = ((Gam - 1) * P["G"] * P["Mp"] * (1 / x - 1 / P["rout"]) / (Gam * K)) ** (1 / (Gam - 1))
        lo, hi = case["range"]
        worst = {"residual": 0.0, "eos": 0.0, "rho": 0.0, "v2": 0.0}
        for i in range(40):
            xv = sympy.Float(lo + (hi - lo) * (i + 0.5) / 40, DIGITS)
            at = {x: xv}
            scale = max(abs(t.xreplace(at).evalf(DIGITS)) for t in terms)
            worst["residual"] = max(worst["residual"], abs(res.xreplace(at).evalf(DIGITS)) / scale)
            r = rho.xreplace(at).evalf(DIGITS)
            worst["eos"] = max(worst["eos"], abs(p.xreplace(at).evalf(DIGITS) / (K * r ** Gam) - 1))
            # Our printed rho carries parameters as printed (17 digits): 1e-14.
            worst["rho"] = max(worst["rho"], abs(r / ref_rho.xreplace(at).evalf(DIGITS) - 1))
            if ref_v2 is not None:
                v = v2.xreplace(at).evalf(DIGITS)
                worst["v2"] = max(worst["v2"], abs(v / ref_v2.xreplace(at).evalf(DIGITS) - 1))
        ok = worst["residual"] < TOL and worst["eos"] < 1e-14 and worst["rho"] < 1e-13 and worst["v2"] < 1e-13
        print(f"{kind}: residual {float(worst['residual']):.2e}, P/(K rho^Gam) - 1 {float(worst['eos']):.2e}, "
              f"rho vs closed form {float(worst['rho']):.2e}, v_phi^2 vs closed form {float(worst['v2']):.2e}"
              f" {'ok' if ok else 'DISAGREES'}")
        bad += not ok
    print(f"barotropic: {len(cases)} cases, {bad} disagreements")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1]))
