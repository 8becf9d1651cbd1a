#!/usr/bin/env python3
"""Reads meridional [R, z] files of a stratified disk with h5py (an outside
HDF5 reader) and recomputes both balances from the file's own numbers.

Usage: vertical_check.py COARSE.h5 FINE.h5 [ZMAX]
(FINE has twice the cells per axis; ZMAX, default 0.1, bounds |z| of the region)

At the cell centres (point values), with second-order centred differences
(common practice, no source):
  radial:   v_phi^2/R - dPhi/dR - (1/rho) dP/dR
  vertical:          - dPhi/dz - (1/rho) dP/dz
the radial one relative to the largest term at the point, the vertical one
(whose terms vanish at the midplane) relative to the largest |dPhi/dz| of
the region; both over the same region, R in [1.0, 2.3] and |z| <= 0.1, in
both files (ZMAX instead of 0.1 when given). Both must be small and fall by about 4 when the cells halve
(second order): exits non-zero otherwise.
"""
import sys

import h5py
import numpy as np


def residuals(path, zmax):
    with h5py.File(path, "r") as f:
        R = f["grid/R_centers"][...]
        z = f["grid/z_centers"][...]
        rho = f["state/density"][...]
        P = f["state/pressure"][...]
        phi = f["state/potential"][...]
        v = f["state/velocity_phi"][...]
    RR = R[:, None]
    dR = R[2:] - R[:-2]
    dz = z[2:] - z[:-2]
    inner = (slice(1, -1), slice(1, -1))
    P_R = (P[2:, 1:-1] - P[:-2, 1:-1]) / dR[:, None]
    phi_R = (phi[2:, 1:-1] - phi[:-2, 1:-1]) / dR[:, None]
    P_z = (P[1:-1, 2:] - P[1:-1, :-2]) / dz[None, :]
    phi_z = (phi[1:-1, 2:] - phi[1:-1, :-2]) / dz[None, :]
    r = rho[inner]
    cen = v[inner] ** 2 / RR[1:-1]
    rad = cen - phi_R - P_R / r
    rad_scale = np.maximum.reduce([abs(cen), abs(phi_R), abs(P_R / r)])
    ver = -phi_z - P_z / r
    region = (RR[1:-1] >= 1.0) & (RR[1:-1] <= 2.3) & (abs(z[None, 1:-1]) <= zmax)
    ver_scale = abs(phi_z[region]).max()
    return (abs(rad) / rad_scale)[region].max(), abs(ver[region]).max() / ver_scale


def main():
    zmax = float(sys.argv[3]) if len(sys.argv) > 3 else 0.1
    coarse, fine = (residuals(p, zmax) for p in sys.argv[1:3])
    ok = True
    for name, c, f in zip(("radial", "vertical"), coarse, fine):
        order = np.log2(c / f)
        print(f"{name}: {c:.3e} -> {f:.3e}, order {order:.2f}")
        if not (order > 1.8 and f < 1e-2):
            ok = False
    sys.exit(0 if ok else 1)


if __name__ == "__main__":
    main()
