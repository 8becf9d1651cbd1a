#!/usr/bin/env python3
"""Outside checks of the fields written on request (issue 8, parts 2 and 7):
h5py reads the files, SymPy (an outside computer-algebra system) builds the
closed forms with its own derivatives, numpy gives the Gauss-Legendre nodes.

Usage:
  extra_fields_check.py points POINTS.json
      the background's state at points (written by tests/extra_fields.rs)
      against SymPy's -dPhi/dz and -(1/rho) dP/dz (and the radial ones)
  extra_fields_check.py balance FILE.h5 [RULE]
      a vertically isothermal disk around a point mass: in the file,
      gravity + pressure-gradient acceleration + centrifugal term = 0 in
      the grid's own components, and each acceleration against SymPy
  extra_fields_check.py diagnostics FILE.h5 RULE
      a power-law disk on a polar grid: vorticity, specific angular
      momentum, Bernoulli function, entropy, Mach number and epicyclic
      frequency against SymPy's closed forms; RULE is `center` or
      `nodes:N` (Gauss-Legendre, N per axis)
  extra_fields_check.py keplerian FILE.h5
      the same fields of a nearly pressureless disk against textbook
      closed forms of Keplerian rotation: kappa = Omega (Binney & Tremaine
      2008, Galactic Dynamics, 2nd ed., eq. 3.80, from memory) and
      vertical vorticity Omega/2 (kappa^2/(2 Omega), the same section,
      from memory)

The closed forms (design.md section 2, written here independently):
  vertically isothermal disk (Nelson, Gressel & Umurhan 2013, MNRAS 435,
  2610, section 2): Phi = -GM/sqrt(R^2 + z^2),
  rho = rho0 (R/R0)^p exp(-(Phi - Phi(R, 0))/c^2(R)), P = rho c^2,
  v_phi^2 = R (dPhi/dR + (1/rho) dP/dR);
  power-law disk: Sigma = sigma0 (R/R0)^-p, c^2 = cs2_0 (R/R0)^-q,
  v_phi^2 = R (dPhi/dR + (1/Sigma) d(Sigma c^2)/dR).
Exits non-zero on any disagreement.
"""
import json
import sys

import h5py
import numpy as np
import sympy as sp

R = sp.Symbol("R", positive=True)
z = sp.Symbol("z", real=True)
G = M = R0 = rho0 = 1


def vertical_disk(p=sp.Rational(-3, 2), q=-1, h0=sp.Rational(1, 20)):
    """The stratified disk of tests/extra_fields.rs (DISK)."""
    cs2 = h0**2 * G * M / R0 * (R / R0) ** q
    phi = -G * M / sp.sqrt(R**2 + z**2)
    phi_mid = phi.subs(z, 0)
    rho = rho0 * (R / R0) ** p * sp.exp(-(phi - phi_mid) / cs2)
    P = rho * cs2
    v2 = sp.simplify(R * (sp.diff(phi, R) + sp.diff(P, R) / rho))
    return phi, rho, P, v2


def fn(e):
    return sp.lambdify((R, z), e, "numpy")


def close(what, got, want, tol, scale=None):
    got, want = np.asarray(got, float), np.broadcast_to(np.asarray(want, float), np.shape(got))
    if scale is None:
        scale = np.max(np.abs(want))
    scale = max(scale, 1e-300)
    err = np.max(np.abs(got - want)) / scale
    print(f"{what}: max |difference| / max |value| = {err:.3e} (tolerance {tol:g})")
    if not err <= tol:
        sys.exit(f"FAIL {what}")


def points(path):
    data = json.load(open(path))
    phi, rho, P, v2 = vertical_disk()
    g_R, g_z = fn(-sp.diff(phi, R)), fn(-sp.diff(phi, z))
    a_R, a_z = fn(-sp.diff(P, R) / rho), fn(-sp.diff(P, z) / rho)
    x = np.array(data["R"]), np.array(data["z"])
    close("gravity_z (point state)", data["g_z"], g_z(*x), 1e-13)
    close("pressure_accel_z (point state)", data["a_z"], a_z(*x), 1e-12)
    close("gravity_R (point state)", data["g_R"], g_R(*x), 1e-13)
    close("pressure_accel_R (point state)", data["a_R"], a_R(*x), 1e-12)


def coordinates(f, rule):
    """Grid coordinates of every value (broadcast), for centres or nodes."""
    # h5py lists the grid's datasets in name order, which is the grid's
    # axis order for every grid used here ([R, z], [r, theta], [x, y, z],
    # [R, phi]).
    axes = [n[: -len("_centers")] for n in f["grid"] if n.endswith("_centers")]
    if rule.startswith("nodes:"):
        n = int(rule.split(":")[1])
        x, _ = np.polynomial.legendre.leggauss(n)
        per = []
        for a in axes:
            e = f[f"grid/{a}_edges"][:]
            mid, half = 0.5 * (e[1:] + e[:-1]), 0.5 * (e[1:] - e[:-1])
            per.append(mid[:, None] + half[:, None] * x[None, :])
        nd = len(axes)
        out = []
        for k, c in enumerate(per):
            shape = [1] * (2 * nd)
            shape[k], shape[nd + k] = c.shape
            out.append(c.reshape(shape))
        return axes, out
    cs = [f[f"grid/{a}_centers"][:] for a in axes]
    return axes, list(np.meshgrid(*cs, indexing="ij"))


def balance(path, rule="center"):
    f = h5py.File(path, "r")
    b = f["background"]
    axes, xs = coordinates(f, rule)
    c = dict(zip(axes, xs))
    if "R" in c:
        Rv, zv = c["R"], c.get("z", 0.0 * c["R"])
    elif "r" in c:
        Rv, zv = c["r"] * np.sin(c["theta"]), c["r"] * np.cos(c["theta"])
    else:
        Rv, zv = np.hypot(c["x"], c["y"]), c["z"]
    comps = [n[len("gravity_"):] for n in b if n.startswith("gravity_")]
    v2 = sum(b[f"velocity_{k}"][...] ** 2 for k in comps)
    om2 = v2 / Rv**2
    # The centrifugal acceleration Omega^2 R e_R in the grid's components.
    if "R" in c:
        cen = {"R": om2 * Rv, "z": 0 * Rv, "phi": 0 * Rv}
    elif "r" in c:
        t = c["theta"]
        cen = {"r": om2 * Rv * np.sin(t), "theta": om2 * Rv * np.cos(t), "phi": 0 * Rv}
    else:
        cen = {"x": om2 * c["x"], "y": om2 * c["y"], "z": 0 * Rv}
    phi, rho, P, _ = vertical_disk()
    g = {"R": fn(-sp.diff(phi, R)), "z": fn(-sp.diff(phi, z))}
    a = {"R": fn(-sp.diff(P, R) / rho), "z": fn(-sp.diff(P, z) / rho)}
    gR, gz, aR, az = g["R"](Rv, zv), g["z"](Rv, zv), a["R"](Rv, zv), a["z"](Rv, zv)
    if "R" in c:
        want_g = {"R": gR, "z": gz, "phi": 0 * Rv}
        want_a = {"R": aR, "z": az, "phi": 0 * Rv}
    elif "r" in c:
        s, co = np.sin(c["theta"]), np.cos(c["theta"])
        want_g = {"r": gR * s + gz * co, "theta": gR * co - gz * s, "phi": 0 * Rv}
        want_a = {"r": aR * s + az * co, "theta": aR * co - az * s, "phi": 0 * Rv}
    else:
        want_g = {"x": gR * c["x"] / Rv, "y": gR * c["y"] / Rv, "z": gz}
        want_a = {"x": aR * c["x"] / Rv, "y": aR * c["y"] / Rv, "z": az}
    # Each component relative to the largest of the vector (a component
    # that is zero up to round-off has no scale of its own).
    scale = max(np.max(np.abs(b[f"gravity_{k}"][...])) for k in comps)
    for k in comps:
        gk, ak = b[f"gravity_{k}"][...], b[f"pressure_acceleration_{k}"][...]
        close(f"{path}: gravity_{k} vs SymPy", gk, want_g[k] + 0 * gk, 1e-13, scale)
        close(f"{path}: pressure_acceleration_{k} vs SymPy", ak, want_a[k] + 0 * ak, 1e-12, scale)
        res = np.max(np.abs(gk + ak + cen[k])) / scale
        print(f"{path}: balance along {k}: max |g + a + Omega^2 R e_R| / max |g| = {res:.3e}")
        if not res <= 1e-12:
            sys.exit(f"FAIL balance along {k}")
        for d in (f"gravity_{k}", f"pressure_acceleration_{k}"):
            if "units" not in b[d].attrs or "sampling" not in b[d].attrs:
                sys.exit(f"FAIL {d} has no units or sampling attribute")


def vertical_diagnostics(path):
    """Vorticity and kappa^2 of the stratified disk on its meridional grid,
    against SymPy's derivatives of v_phi = sqrt(v_phi^2)(R, z)."""
    f = h5py.File(path, "r")
    b = f["background"]
    if "vorticity_R" not in b:
        return
    Rv, zv = np.meshgrid(f["grid/R_centers"][:], f["grid/z_centers"][:], indexing="ij")
    _, _, _, v2 = vertical_disk()
    v = sp.sqrt(v2)
    w_R = fn(-sp.diff(v, z))(Rv, zv)
    w_z = fn(sp.diff(R * v, R) / R)(Rv, zv)
    k2 = fn(sp.diff(R**2 * v2, R) / R**3)(Rv, zv)
    scale = max(np.max(np.abs(w_R)), np.max(np.abs(w_z)))
    close(f"{path}: vorticity_R vs SymPy", b["vorticity_R"][...], w_R, 1e-12, scale)
    close(f"{path}: vorticity_z vs SymPy", b["vorticity_z"][...], w_z, 1e-12, scale)
    close(f"{path}: vorticity_phi = 0", b["vorticity_phi"][...], 0.0, 1e-300, scale)
    close(f"{path}: epicyclic_frequency_sq vs SymPy", b["epicyclic_frequency_sq"][...], k2, 1e-12)


def powerlaw(h0):
    p, q = 1, sp.Rational(1, 2)
    cs2 = h0**2 * G * M / R0 * (R / R0) ** (-q)
    sigma = (R / R0) ** (-p)
    phi = -G * M / R
    v2 = sp.simplify(R * (sp.diff(phi, R) + sp.diff(sigma * cs2, R) / sigma))
    return phi, sigma, sigma * cs2, v2


def diagnostics(path, rule, h0=sp.Rational(1, 20), gamma=sp.Rational(7, 5)):
    f = h5py.File(path, "r")
    b = f["background"]
    axes, xs = coordinates(f, rule)
    Rv = dict(zip(axes, xs))["R"]
    phi, sigma, P, v2 = powerlaw(h0)
    v = sp.sqrt(v2)
    shape = b["mach_number"].shape
    want = {
        "vorticity_z": sp.diff(R * v, R) / R,
        "specific_angular_momentum": R * v,
        "epicyclic_frequency_sq": sp.diff(R**4 * (v2 / R**2), R) / R**3,
        "bernoulli": v2 / 2 + gamma / (gamma - 1) * P / sigma + phi,
        "entropy": sp.log(P) - gamma * sp.log(sigma),
        "mach_number": v / sp.sqrt(P / sigma),
    }
    for name, e in want.items():
        w = np.broadcast_to(fn(sp.simplify(e))(Rv, 0.0 * Rv), shape)
        close(f"{path} ({rule}): {name} vs SymPy", b[name][...], w, 1e-12)
    # In-plane vorticity of a rotation that does not vary with height: 0.
    for k in ("R", "phi"):
        if np.max(np.abs(b[f"vorticity_{k}"][...])) != 0.0:
            sys.exit(f"FAIL vorticity_{k} is not zero")
    # Consistency of the laws in the file: kappa^2 = 2 Omega omega_z.
    om = b["velocity_phi"][...] / np.broadcast_to(Rv, shape)
    close("kappa^2 = 2 Omega omega_z", b["epicyclic_frequency_sq"][...],
          2 * om * b["vorticity_z"][...], 1e-12)
    close("l = R v_phi", b["specific_angular_momentum"][...],
          np.broadcast_to(Rv, shape) * b["velocity_phi"][...], 1e-14)


def keplerian(path):
    f = h5py.File(path, "r")
    b = f["background"]
    Rv = f["grid/R_centers"][:][:, None]
    om_k = Rv**-1.5  # G M = 1
    # kappa = Omega_K (Binney & Tremaine 2008, eq. 3.80, from memory) for
    # Keplerian rotation; the disk's pressure shifts it by O(h^2) = 1e-8.
    close("kappa^2 / Omega_K^2 (Keplerian: 1)", b["epicyclic_frequency_sq"][...] / om_k**2,
          1.0, 1e-6)
    close("omega_z / (Omega_K / 2) (Keplerian: 1)", b["vorticity_z"][...] / (om_k / 2), 1.0, 1e-6)
    close("l / sqrt(G M R) (Keplerian: 1)", b["specific_angular_momentum"][...] / np.sqrt(Rv),
          1.0, 1e-6)


def main():
    mode = sys.argv[1]
    if mode == "points":
        points(sys.argv[2])
    elif mode == "balance":
        balance(sys.argv[2], sys.argv[3] if len(sys.argv) > 3 else "center")
        if len(sys.argv) <= 3 or sys.argv[3] == "center":
            vertical_diagnostics(sys.argv[2])
    elif mode == "diagnostics":
        diagnostics(sys.argv[2], sys.argv[3])
    elif mode == "keplerian":
        keplerian(sys.argv[2])
    else:
        sys.exit(f"unknown mode {mode}")
    print("ok")


if __name__ == "__main__":
    main()
