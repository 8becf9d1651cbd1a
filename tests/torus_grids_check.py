#!/usr/bin/env python3
"""Checks a torus file on a meridional or 3D grid against the closed form of
Papaloizou & Pringle 1984 (MNRAS 208, 721, section 2): GM = 1, constant
specific angular momentum l, Bernoulli constant C fixed by the inner edge,

    h = C + 1/sqrt(R^2 + z^2) - l^2/(2 R^2),   rho = ((Gamma-1) h/(Gamma K))^(1/(Gamma-1)),

with the edges the roots of C R^2 + R - l^2/2 = 0 on the midplane and the
density maximum at R = l^2 (h = C + 1/(2 l^2)).

Usage: torus_grids_check.py FILE AXES K=.. Gam=.. l=.. R_in=.. rho_floor=..
AXES is the grid's axis order (R,z / r,theta / R,phi,z / r,theta,phi /
x,y,z). Read with h5py: the recorded edges, maximum and Bernoulli constant
against the closed form (1e-12); with rule "center", density and the
velocity in the grid's own components at every cell centre (density 1e-11 relative, h cancels near the edges;
velocity 1e-12 of the largest v_phi; v_phi = l/R inside, at rest in the floor; x, y components
-v_phi sin(phi), v_phi cos(phi)); with rule "average" (spherical [r, theta]
only), a few cells wholly inside against mpmath.quad (tanh-sinh, 20 digits) of
rho r^2 sin(theta) over the cell, divided by its volume (1e-9).
Exits non-zero on any disagreement.
"""
import sys

import h5py
import numpy as np
import mpmath as mp

mp.mp.dps = 20


def main():
    path, axes = sys.argv[1], sys.argv[2].split(",")
    par = {k: float(v) for k, v in (a.split("=") for a in sys.argv[3:])}
    K, gam, l, r_in, floor = par["K"], par["Gam"], par["l"], par["R_in"], par["rho_floor"]
    C = -1.0 / r_in + l**2 / (2 * r_in**2)
    disc = np.sqrt(1 + 2 * C * l**2)
    edges = sorted([(-1 + disc) / (2 * C), (-1 - disc) / (2 * C)])
    rho_max = ((gam - 1) * (C + 1 / (2 * l**2)) / (gam * K)) ** (1 / (gam - 1))
    bad = []

    def close(name, got, want, tol):
        e = abs(got / want - 1)
        print(f"{name}: {got!r} vs {want!r} ({e:.2e})")
        if not e <= tol:
            bad.append(name)

    def rho_of(R, z):
        h = C + 1 / np.sqrt(R**2 + z**2) - l**2 / (2 * R**2)
        return np.where(h > 0, ((gam - 1) * np.maximum(h, 0) / (gam * K)) ** (1 / (gam - 1)), floor)

    with h5py.File(path, "r") as f:
        attr = lambda n: float(f.attrs[n])
        close("inner edge", attr("torus_inner_edge"), edges[0], 1e-12)
        close("outer edge", attr("torus_outer_edge"), edges[1], 1e-12)
        close("density maximum", attr("torus_density_max"), rho_max, 1e-12)
        close("Bernoulli constant", attr("torus_bernoulli_constant"), C, 1e-12)
        rule = "average" if str(f.attrs["sampling"]).startswith("cell averages") else "center"
        cen = [f[f"grid/{a}_centers"][...] for a in axes]
        edg = [f[f"grid/{a}_edges"][...] for a in axes]
        rho = f["background/density"][...]
        vel = {a: f[f"background/velocity_{a}"][...] for a in axes + (["phi"] if "phi" not in axes and "x" not in axes else [])}
    mesh = dict(zip(axes, np.meshgrid(*cen, indexing="ij")))
    if "R" in mesh:
        R, z, phi = mesh["R"], mesh["z"], mesh.get("phi")
    elif "r" in mesh:
        R, z, phi = mesh["r"] * np.sin(mesh["theta"]), mesh["r"] * np.cos(mesh["theta"]), mesh.get("phi")
    else:
        R, z = np.hypot(mesh["x"], mesh["y"]), mesh["z"]
        phi = np.arctan2(mesh["y"], mesh["x"])
    ref = rho_of(R, z)
    inside = ref > floor
    print(f"sampling {rule}; {inside.sum()} of {inside.size} cells inside the torus")
    if inside.sum() < 10:
        bad.append("too few cells inside")
    if "center" in rule:
        e = np.max(np.abs(rho[inside] / ref[inside] - 1))
        print(f"density at cell centres: largest relative error {e:.2e}")
        # 1e-11: near the edges h = C + 1/r - l^2/(2R^2) cancels to a few digits.
        if not e <= 1e-11:
            bad.append("density")
        if not np.all(np.abs(rho[~inside] / floor - 1) < 1e-12):
            bad.append("floor")
        vphi = np.where(inside, l / R, 0.0)
        if "x" in axes:
            want = {"x": -vphi * np.sin(phi), "y": vphi * np.cos(phi), "z": 0 * R}
        else:
            want = {a: (vphi if a == "phi" else 0 * R) for a in vel}
        for a, w in want.items():
            e = np.max(np.abs(vel[a] - w)) / np.max(np.abs(vphi))
            print(f"velocity_{a}: largest error {e:.2e} of max v_phi")
            if not e <= 1e-12:
                bad.append(f"velocity_{a}")
    else:
        # Averages over cells wholly inside: r^2 sin(theta) dr dtheta.
        assert axes == ["r", "theta"], axes
        checked = 0
        for i in range(len(cen[0])):
            for j in range(len(cen[1])):
                r0, r1 = edg[0][i], edg[0][i + 1]
                t0, t1 = edg[1][j], edg[1][j + 1]
                corners = [rho_of(a * np.sin(b), a * np.cos(b)) for a in (r0, r1) for b in (t0, t1)]
                if min(corners) <= floor * 10 or (i + j) % 3:
                    continue
                def f_(r, t):
                    R, z = r * mp.sin(t), r * mp.cos(t)
                    h = C + 1 / mp.sqrt(R**2 + z**2) - l**2 / (2 * R**2)
                    return ((gam - 1) * h / (gam * K)) ** (1 / (gam - 1)) * r * r * mp.sin(t)
                num = mp.quad(f_, [r0, r1], [t0, t1])
                vol = (mp.mpf(r1) ** 3 - r0**3) / 3 * (mp.cos(t0) - mp.cos(t1))
                num = float(num)
                vol = float(vol)
                e = abs(rho[i, j] / (num / vol) - 1)
                checked += 1
                if not e <= 1e-9:
                    print(f"cell ({i}, {j}): {rho[i, j]!r} vs {num / vol!r} ({e:.2e})")
                    bad.append(f"average ({i}, {j})")
        print(f"cell averages: {checked} cells against mpmath.quad")
        if checked < 5:
            bad.append("too few averaged cells")
    print("torus grids: " + ("ok" if not bad else "disagreements: " + ", ".join(bad)))
    sys.exit(1 if bad else 0)


if __name__ == "__main__":
    main()
