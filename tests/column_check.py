#!/usr/bin/env python3
"""Checks a disk with a warm surface layer (temperature varying with height)
against an independent evaluation in mpmath at 30 digits.

Usage: column_check.py FILE.h5 KEY=VALUE ...   (M h0 p q A zt dzt rho0 R0)

The disk (G = 1): Phi = -M/sqrt(R^2 + z^2), rho_mid = rho0 (R/R0)^p,
c^2 = cs2_0 (R/R0)^q [1 + (A - 1)/2 (1 + tanh((|z|/(h0 R) - zt)/dzt))],
cs2_0 = h0^2 M/R0. The vertical balance dP/dz = -rho dPhi/dz with P = rho c^2
gives ln P = ln(rho_mid c^2(R, 0)) - int_0^z (dPhi/dz)/c^2 dz', evaluated
here with mpmath.quad (tanh-sinh, split at the layer), and the radial balance
v_phi^2 = R (dPhi/dR + (1/rho) dP/dR), with dP/dR by mpmath.diff of that
quadrature (a high-precision numerical derivative: independent of the
derivative under the integral sign that stillpoint takes).

Compares rho and v_phi at scattered cell centres of the file (point values,
read with h5py), including cells high in the surface layer; exits non-zero
when a relative error exceeds 1e-10, or the error of the pressure support
v_phi^2 - R dPhi/dR relative to itself exceeds 1e-9.
"""
import sys

import h5py
import mpmath as mp
import numpy as np

mp.mp.dps = 30


def main():
    path = sys.argv[1]
    par = {k: mp.mpf(v) for k, v in (a.split("=") for a in sys.argv[2:])}
    M, h0, p, q = par["M"], par["h0"], par["p"], par["q"]
    A, zt, dzt, rho0, R0 = par["A"], par["zt"], par["dzt"], par["rho0"], par["R0"]
    cs2_0 = h0**2 * M / R0

    def c2(R, z):
        layer = (A - 1) / 2 * (1 + mp.tanh((abs(z) / (h0 * R) - zt) / dzt))
        return cs2_0 * (R / R0) ** q * (1 + layer)

    def ln_p(R, z):
        g = lambda s: M * s / (R**2 + s**2) ** mp.mpf(1.5) / c2(R, s)
        knots = [mp.mpf(0)]
        zl = zt * h0 * R
        if abs(z) > zl:
            knots.append(mp.sign(z) * zl)
        knots.append(z)
        L = mp.quad(g, knots)
        return mp.log(rho0 * (R / R0) ** p * c2(R, 0)) - L

    with h5py.File(path, "r") as f:
        Rc = f["grid/R_centers"][...]
        zc = f["grid/z_centers"][...]
        rho = f["state/density"][...]
        v = f["state/velocity_phi"][...]
    rng = np.random.default_rng(7)
    cells = [(int(i), int(j)) for i, j in zip(rng.integers(0, len(Rc), 24), rng.integers(0, len(zc), 24))]
    # High in the surface layer: the top and bottom rows, inner and outer radii.
    cells += [(0, len(zc) - 1), (0, 0), (len(Rc) - 1, len(zc) - 1), (len(Rc) // 2, len(zc) - 1)]
    worst = [0.0, 0.0]
    worst_support = [0.0]
    for i, j in cells:
        R, z = mp.mpf(float(Rc[i])), mp.mpf(float(zc[j]))
        lp = ln_p(R, z)
        rho_ref = mp.exp(lp) / c2(R, z)
        dlnp = mp.diff(lambda r: ln_p(r, z), R)
        phi_r = M * R / (R**2 + z**2) ** mp.mpf(1.5)
        v2 = R * (phi_r + c2(R, z) * dlnp)
        v_ref = mp.sqrt(v2)
        e_rho = float(abs(mp.mpf(float(rho[i, j])) / rho_ref - 1))
        e_v = float(abs(mp.mpf(float(v[i, j])) / v_ref - 1))
        # The pressure support alone, v_phi^2 - R dPhi/dR, relative to itself:
        # a stricter measure of the R-derivative (informative).
        support = v2 - R * phi_r
        e_s = float(abs((mp.mpf(float(v[i, j])) ** 2 - v2) / support))
        worst[0] = max(worst[0], e_rho)
        worst[1] = max(worst[1], e_v)
        worst_support[0] = max(worst_support[0], e_s)
        height = float(z / (h0 * R))
        print(f"R={float(R):.4f} z={float(z):+.4f} (z/H={height:+.2f}) rho {e_rho:.2e} v_phi {e_v:.2e}")
    print(f"largest relative error: rho {worst[0]:.3e}, v_phi {worst[1]:.3e} (limit 1e-10)")
    print(f"largest error of the pressure support v_phi^2 - R dPhi/dR, relative to it: {worst_support[0]:.3e}")
    sys.exit(0 if max(worst) <= 1e-10 and worst_support[0] <= 1e-9 else 1)


if __name__ == "__main__":
    main()
