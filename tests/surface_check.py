#!/usr/bin/env python3
"""Integrates the written density of a stratified disk normalised to a
surface density over each column (h5py, an outside HDF5 reader) and compares
with the Sigma(R) the profile gives.

Usage: surface_check.py COARSE.h5 FINE.h5 SIGMA0 R0 SLOPE
(meridional [R, z] files of cell-centre values; FINE has twice the z cells;
Sigma = SIGMA0 (R/R0)^SLOPE; the column runs over the grid's heights)

The column integral of cell-centre values is the midpoint rule, second order
in the cell height (common practice, no source): the largest relative error
over R must fall by about 4 from COARSE to FINE and be below 1e-3 in FINE.
Exits non-zero otherwise.
"""
import sys

import h5py
import numpy as np


def error(path, sigma0, r0, slope):
    with h5py.File(path, "r") as f:
        R = f["grid/R_centers"][...]
        ze = f["grid/z_edges"][...]
        rho = f["state/density"][...]
    sigma = (rho * np.diff(ze)[None, :]).sum(axis=1)
    want = sigma0 * (R / r0) ** slope
    return np.max(np.abs(sigma / want - 1))


def main():
    sigma0, r0, slope = (float(a) for a in sys.argv[3:6])
    c, f = (error(p, sigma0, r0, slope) for p in sys.argv[1:3])
    order = np.log2(c / f)
    print(f"column integral vs Sigma: {c:.3e} -> {f:.3e}, order {order:.2f}")
    sys.exit(0 if order > 1.8 and f < 1e-3 else 1)


if __name__ == "__main__":
    main()
