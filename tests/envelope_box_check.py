#!/usr/bin/env python3
"""Checks a polytropic envelope on a 3D Cartesian grid, read with h5py,
against the Bernoulli relation h(rho) + Phi = const (the standard textbook
result for a barotropic gas at rest: grad P/rho = grad h,
h = Gamma K rho^(Gamma-1)/(Gamma-1); from memory), solved in closed form
with the surface (rho = 0) at r_out and the Plummer-softened point mass
Phi = -G M/sqrt(r^2 + eps^2), G = 1:

    rho = ((Gamma-1)/(Gamma K) (Phi(r_out) - Phi(r)))^(1/(Gamma-1)).

Usage: envelope_box_check.py FILE M=.. eps=.. r_out=.. K=.. Gam=..
At every cell centre (rule "center"): density against the closed form
(1e-12 relative), P = K rho^Gamma, h(rho) + Phi from the file's own density
and potential datasets constant to 1e-12 of |Phi(r_out)|, every velocity
component zero. Exits non-zero on any disagreement.
"""
import sys

import h5py
import numpy as np


def main():
    path = sys.argv[1]
    par = {k: float(v) for k, v in (a.split("=") for a in sys.argv[2:])}
    M, eps, r_out, K, gam = par["M"], par["eps"], par["r_out"], par["K"], par["Gam"]
    phi = lambda r: -M / np.sqrt(r * r + eps * eps)
    with h5py.File(path, "r") as f:
        x, y, z = (f[f"grid/{a}_centers"][...] for a in "xyz")
        rho = f["background/density"][...]
        p = f["background/pressure"][...]
        pot = f["background/potential"][...]
        vel = [f[f"background/velocity_{a}"][...] for a in "xyz"]
    X, Y, Z = np.meshgrid(x, y, z, indexing="ij")
    r = np.sqrt(X * X + Y * Y + Z * Z)
    ref = ((gam - 1) / (gam * K) * (phi(r_out) - phi(r))) ** (1 / (gam - 1))
    bad = []
    e = np.max(np.abs(rho / ref - 1))
    print(f"density against the closed form: {e:.2e}")
    bad += ["density"] if not e <= 1e-12 else []
    e = np.max(np.abs(p / (K * rho**gam) - 1))
    print(f"P = K rho^Gamma: {e:.2e}")
    bad += ["pressure"] if not e <= 1e-12 else []
    e = np.max(np.abs(pot / phi(r) - 1))
    print(f"potential: {e:.2e}")
    bad += ["potential"] if not e <= 1e-12 else []
    bern = gam * K * rho ** (gam - 1) / (gam - 1) + pot
    e = (bern.max() - bern.min()) / abs(phi(r_out))
    print(f"h(rho) + Phi: {bern.min()!r} to {bern.max()!r}, spread {e:.2e} of |Phi(r_out)| = {abs(phi(r_out))!r}")
    bad += ["Bernoulli"] if not (e <= 1e-12 and abs(bern.mean() / phi(r_out) - 1) <= 1e-12) else []
    if any(np.any(v != 0) for v in vel):
        bad.append("velocity")
    print("envelope box: " + ("ok" if not bad else "disagreements: " + ", ".join(bad)))
    sys.exit(1 if bad else 0)


if __name__ == "__main__":
    main()
