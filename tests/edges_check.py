#!/usr/bin/env python3
"""Checks that a file built with balance.edges holds the tapered law, read
with h5py, against the closed form (G = M = R0 = sigma0 = 1, p = 1):

    law(R) = R^-1 * (1 + tanh((R - Rc)/wc))/2 * (1 - tanh((R - Rr)/wr))/2 + floor

Usage: edges_check.py LINE.h5 STRAT.h5 Rc wc Rr wr floor h0
LINE.h5: a vertically integrated disk on an R line, density = law(R) at the
cell centres (1e-13 relative). STRAT.h5: a vertically isothermal stratified
disk on [R, z], c^2 = h0^2/R, whose density is the exact closed form
rho = law(R) exp(-(Phi(R, z) - Phi(R, 0))/c^2), Phi = -1/sqrt(R^2 + z^2)
(Nelson, Gressel & Umurhan 2013, MNRAS 435, 2610, their density; from
memory), at the cell centres (1e-12 relative). Exits non-zero on any
disagreement.
"""
import sys

import h5py
import numpy as np


def main():
    line, strat = sys.argv[1], sys.argv[2]
    rc, wc, rr, wr, floor, h0 = (float(a) for a in sys.argv[3:9])
    law = lambda R: R**-1 * 0.5 * (1 + np.tanh((R - rc) / wc)) * 0.5 * (1 - np.tanh((R - rr) / wr)) + floor
    bad = []
    with h5py.File(line, "r") as f:
        R = f["grid/R_centers"][...]
        rho = f["background/density"][...]
    e = np.max(np.abs(rho / law(R) - 1))
    print(f"line: density against the tapered law {e:.2e} (floor reached: min {rho.min():.3e})")
    bad += ["line"] if not e <= 1e-13 else []
    with h5py.File(strat, "r") as f:
        R = f["grid/R_centers"][...][:, None]
        z = f["grid/z_centers"][...][None, :]
        rho = f["background/density"][...]
    phi = lambda R, z: -1 / np.sqrt(R * R + z * z)
    ref = law(R) * np.exp(-(phi(R, z) - phi(R, 0)) / (h0 * h0 / R))
    e = np.max(np.abs(rho / ref - 1))
    print(f"stratified: density against the closed form {e:.2e}")
    bad += ["stratified"] if not e <= 1e-12 else []
    print("edges: " + ("ok" if not bad else "disagreements: " + ", ".join(bad)))
    sys.exit(1 if bad else 0)


if __name__ == "__main__":
    main()
