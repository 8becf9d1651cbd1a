"""Cell averages of a smooth law against mpmath quadrature.

Reads a JSON file {"params": {...}, "edges": [...], "density": [...]} written
by tests/highorder.rs: a 1D radial grid (volume element R dR) and the tool's
cell averages of rho(R) = rho0 (R/R0)^(-p) (1 + A exp(-(R - Rr)^2/(2 w^2))).
Each average is recomputed as  int rho R dR / int R dR  with mpmath.quad
(tanh-sinh, 30 digits; mpmath documentation, "Numerical integration") and
compared to relative 1e-13. Exits non-zero on any disagreement.
"""
import json
import sys

import mpmath as mp

mp.mp.dps = 30
data = json.load(open(sys.argv[1]))
p = {k: mp.mpf(v) for k, v in data["params"].items()}


def rho(r):
    return p["rho0"] * (r / p["R0"]) ** (-p["p"]) * (
        1 + p["A"] * mp.exp(-((r - p["Rr"]) ** 2) / (2 * p["w"] ** 2))
    )


worst = 0
edges = [mp.mpf(e) for e in data["edges"]]
for i, got in enumerate(data["density"]):
    a, b = edges[i], edges[i + 1]
    exact = mp.quad(lambda r: rho(r) * r, [a, b]) / ((b * b - a * a) / 2)
    err = abs(mp.mpf(got) / exact - 1)
    worst = max(worst, err)
    if err > 1e-13:
        print(f"cell {i}: {got!r} vs mpmath {mp.nstr(exact, 20)} (relative {mp.nstr(err, 3)})")
        sys.exit(1)
print(f"{len(data['density'])} cells agree with mpmath to {mp.nstr(worst, 3)} relative")
