#!/usr/bin/env python3
"""Checks the radial curvature d(v_phi^2)/dR of a column-integrated disk, and
Toomre's Q at its midplane, against an independent evaluation in mpmath at
30 digits (mpmath.quad, tanh-sinh, for the columns; mpmath.diff, numerical
differentiation at raised working precision, for every R-derivative).

Usage: curvature_check.py POINTS MODE KEY=VALUE ...
  MODE warm:  M h0 p q A zt dzt rho0 R0 (the warm-layer disk of column.rs,
              rho_mid = rho0 (R/R0)^p)
  MODE sigma: M h0 q sigma0 zmax R0 (c^2 = h0^2 M/R0 (R/R0)^q, no layer;
              normalised to Sigma = sigma0 (R/R0)^-1 over |z| <= zmax)

The disk (G = 1): Phi = -M/sqrt(R^2 + z^2), P = rho c^2,
ln P = ln(rho_mid c^2(R, 0)) - L, L = int_0^z (dPhi/dz)/c^2 dz'
(with Sigma: ln P = ln(Sigma c^2(R, 0)) - ln I - L, I = int exp(ln(c^2(R,0)/c^2) - L) dz),
v_phi^2 = R (dPhi/dR + c^2 d ln P/dR), and
d(v_phi^2)/dR = v_phi^2/R + R (Phi_RR + dc^2/dR dlnP/dR + c^2 d^2 lnP/dR^2),
kappa^2 = (2 v_phi^2 + R d(v_phi^2)/dR)/R^2, Q = c(R, 0) kappa/(pi G Sigma)
(Toomre 1964, ApJ 139, 1217).

POINTS lines: "v2r R z value" (stillpoint's d(v_phi^2)/dR) and "Q R value".
Exits non-zero when kappa^2 or Q differ by more than 1e-10 (relative), or
the pressure part d(v_phi^2 - R Phi_R)/dR by more than 1e-7 of itself.
"""
import sys

import mpmath as mp

mp.mp.dps = 30


def main():
    path, mode = sys.argv[1], sys.argv[2]
    par = {k: mp.mpf(v) for k, v in (a.split("=") for a in sys.argv[3:])}
    M, h0, q, R0 = par["M"], par["h0"], par["q"], par["R0"]
    cs2_0 = h0**2 * M / R0
    A = par.get("A", mp.mpf(1))
    zt, dzt = par.get("zt", mp.mpf(3)), par.get("dzt", mp.mpf(1))

    def c2(R, z):
        layer = (A - 1) / 2 * (1 + mp.tanh((abs(z) / (h0 * R) - zt) / dzt))
        return cs2_0 * (R / R0) ** q * (1 + layer)

    def phi(R, z):
        return -M / mp.sqrt(R**2 + z**2)

    if mode == "warm":
        rho0, p = par["rho0"], par["p"]

        def ln_p(R, z):
            g = lambda s: M * s / (R**2 + s**2) ** mp.mpf(1.5) / c2(R, s)
            knots = [mp.mpf(0)]
            zl = zt * h0 * R
            if abs(z) > zl:
                knots.append(mp.sign(z) * zl)
            knots.append(z)
            return mp.log(rho0 * (R / R0) ** p * c2(R, 0)) - mp.quad(g, knots)

        sigma = None
    else:
        sigma0, zmax = par["sigma0"], par["zmax"]
        sigma = lambda R: sigma0 * R0 / R

        def ln_p(R, z):
            # c^2 independent of z: L = (Phi(R, z) - Phi(R, 0))/c^2 exactly.
            L = lambda s: (phi(R, s) - phi(R, 0)) / c2(R, 0)
            I = 2 * mp.quad(lambda s: mp.exp(-L(s)), [0, zmax])
            return mp.log(sigma(R) * c2(R, 0)) - mp.log(I) - L(z)

    def curvature(R, z):
        d1 = mp.diff(lambda r: ln_p(r, z), R)
        d2 = mp.diff(lambda r: ln_p(r, z), R, 2)
        phi_r = mp.diff(lambda r: phi(r, z), R)
        phi_rr = mp.diff(lambda r: phi(r, z), R, 2)
        c2_r = mp.diff(lambda r: c2(r, z), R)
        v2 = R * (phi_r + c2(R, z) * d1)
        v2_r = v2 / R + R * (phi_rr + c2_r * d1 + c2(R, z) * d2)
        pressure_r = v2_r - phi_r - R * phi_rr
        return v2, v2_r, pressure_r

    worst = {"kappa^2": 0.0, "pressure": 0.0, "Q": 0.0}
    with open(path) as f:
        for line in f:
            w = line.split()
            if not w:
                continue
            if w[0] == "v2r":
                R, z, val = (mp.mpf(x) for x in w[1:4])
                v2, v2_r, pr = curvature(R, z)
                k2_ref = (2 * v2 + R * v2_r) / R**2
                k2 = (2 * v2 + R * val) / R**2
                e_k = float(abs(k2 / k2_ref - 1))
                phi_r = mp.diff(lambda r: phi(r, z), R)
                phi_rr = mp.diff(lambda r: phi(r, z), R, 2)
                e_p = float(abs((val - phi_r - R * phi_rr) / pr - 1))
                worst["kappa^2"] = max(worst["kappa^2"], e_k)
                worst["pressure"] = max(worst["pressure"], e_p)
                print(f"R={float(R):.4f} z={float(z):+.4f} kappa^2 {float(k2_ref):.10e} err {e_k:.2e}, pressure part err {e_p:.2e}")
            elif w[0] == "Q":
                R, val = mp.mpf(w[1]), mp.mpf(w[2])
                v2, v2_r, _ = curvature(R, mp.mpf(0))
                kappa = mp.sqrt((2 * v2 + R * v2_r) / R**2)
                q_ref = mp.sqrt(c2(R, 0)) * kappa / (mp.pi * sigma(R))
                e = float(abs(val / q_ref - 1))
                worst["Q"] = max(worst["Q"], e)
                print(f"R={float(R):.4f} Q {float(q_ref):.10e} err {e:.2e}")
    print("largest relative errors: " + ", ".join(f"{k} {v:.3e}" for k, v in worst.items()))
    ok = worst["kappa^2"] <= 1e-10 and worst["Q"] <= 1e-10 and worst["pressure"] <= 1e-7
    sys.exit(0 if ok else 1)


if __name__ == "__main__":
    main()
