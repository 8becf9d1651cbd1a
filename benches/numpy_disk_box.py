#!/usr/bin/env python3
"""The softened vertically isothermal disk in a 3D Cartesian box, built by
hand with NumPy and h5py.

The script a user would write instead of running stillpoint: the competitor
of the `disk-box-3d` benchmark case (benches/cases.py, issue 11 benchmark B).
It builds profiles/softened-disk-box.json (or a copy with other cell counts
and sampling points) and writes the datasets the case keeps, float64.

Physics (code units, G = 1), with s = R² + ε², u = s/R0², a Plummer-softened
point mass Φ(R, z) = −GM/√(s + z²), Φ0(R) = Φ(R, 0):

    ρ_mid = ρ_floor + ρ0 u^(−p/2) (1 − e^(−(R/R_cav)⁴)) e^(−(R/R_edge)²)
    c²    = c0² u^(−q/2)
    ρ     = ρ_mid exp(−(Φ − Φ0)/c²)          (vertical balance, c² free of z)
    P     = ρ c²
    v_φ²  = R (dΦ0/dR + c² dln ρ_mid/dR + dc²/dR + (Φ − Φ0) dln c²/dR)

the last from R Ω² = ∂Φ/∂R + (1/ρ) ∂P/∂R with ln P = ln ρ_mid + ln c² −
(Φ − Φ0)/c², differentiated by hand (dln c²/dR = −qR/s,
dΦ0/dR = GM R/s^(3/2)). The rotation is prograde, v = v_φ (−y/R, x/R, 0).

Cell averages: the tensor Gauss–Legendre rule (numpy.polynomial.legendre.
leggauss) with n points per axis, vectorised over the whole grid for each of
the n³ node triples; momentum and energy P/(γ−1) + ½ρ|v|² are averages of
the pointwise values, velocity = ⟨ρv⟩/⟨ρ⟩.

Usage: python3 benches/numpy_disk_box.py PROFILE -o OUT.h5
"""

import argparse
import json

import h5py
import numpy as np
from numpy.polynomial.legendre import leggauss

FIELDS = (
    "density",
    "pressure",
    "velocity_x",
    "velocity_y",
    "velocity_z",
    "momentum_x",
    "momentum_y",
    "momentum_z",
    "energy",
)


def point_values(x, y, z, par):
    """Pointwise ρ, P, momentum and energy at (x, y, z), broadcast."""
    GM, eps, R0 = par["M"], par["eps"], par["R0"]
    p, q = par["p"], par["q"]
    R2 = x * x + y * y
    R = np.sqrt(R2)
    s = R2 + eps**2
    u = s / R0**2
    phi0 = -GM / np.sqrt(s)
    phi = -GM / np.sqrt(s + z * z)
    a = u ** (-p / 2)
    e_cav = np.exp(-((R / par["R_cav"]) ** 4))
    b = 1 - e_cav
    c = np.exp(-((R / par["R_edge"]) ** 2))
    core = par["rho0"] * a * b * c
    rho_mid = par["rho_floor"] + core
    dcore = par["rho0"] * (
        a * (-p * R / s) * b * c
        + a * e_cav * 4 * R**3 / par["R_cav"] ** 4 * c
        + a * b * c * (-2 * R / par["R_edge"] ** 2)
    )
    c2 = par["cs2_0"] * u ** (-q / 2)
    dlnc2 = -q * R / s
    dphi = phi - phi0
    rho = rho_mid * np.exp(-dphi / c2)
    pressure = rho * c2
    vphi2 = R * (GM * R / s**1.5 + c2 * dcore / rho_mid + c2 * dlnc2 + dphi * dlnc2)
    vphi = np.sqrt(vphi2)
    zero = np.zeros_like(rho)
    return {
        "density": rho,
        "pressure": pressure,
        "momentum_x": rho * (-vphi * y / R),
        "momentum_y": rho * (vphi * x / R),
        "momentum_z": zero,
        "energy": pressure / (par["gamma"] - 1) + 0.5 * rho * vphi2,
    }


def read_profile(path):
    """Parameters, edges and the number of Gauss points from the profile."""
    with open(path) as f:
        prof = json.load(f)
    raw = prof["parameters"]
    names = ("M", "eps", "R0", "rho0", "rho_floor", "p", "q", "h0", "R_cav", "R_edge")
    par = {k: float(raw[k]) for k in names}
    # The profile gives c0² as the formula "h0^2*G*M/R0" (G = 1 in code units).
    par["cs2_0"] = par["h0"] ** 2 * par["M"] / par["R0"]
    par["gamma"] = float(prof["gas"]["gamma"])
    edges = [
        np.linspace(float(a["from"]), float(a["to"]), int(a["cells"]) + 1)
        for a in (prof["grid"]["x"], prof["grid"]["y"], prof["grid"]["z"])
    ]
    return par, edges, int(prof["sampling"]["points"])


def cell_averages(par, edges, points):
    """The averaged fields on the (x, y, z) grid, C order."""
    nodes, weights = leggauss(points)
    weights = weights / 2
    mids = [0.5 * (e[:-1] + e[1:]) for e in edges]
    halves = [0.5 * np.diff(e) for e in edges]
    shape = tuple(m.size for m in mids)
    sums = {}
    for xi, wi in zip(nodes, weights):
        x = (mids[0] + halves[0] * xi)[:, None, None]
        for yj, wj in zip(nodes, weights):
            y = (mids[1] + halves[1] * yj)[None, :, None]
            for zk, wk in zip(nodes, weights):
                z = (mids[2] + halves[2] * zk)[None, None, :]
                for name, values in point_values(x, y, z, par).items():
                    if name not in sums:
                        sums[name] = np.zeros(shape)
                    sums[name] += (wi * wj * wk) * values
    for axis in "xyz":
        sums[f"velocity_{axis}"] = sums[f"momentum_{axis}"] / sums["density"]
    return sums


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("profile", help="softened-disk-box.json or a copy with other cells")
    ap.add_argument("-o", "--output", required=True, help="HDF5 file to write")
    args = ap.parse_args()
    par, edges, points = read_profile(args.profile)
    fields = cell_averages(par, edges, points)
    with h5py.File(args.output, "w") as f:
        grid = f.create_group("grid")
        for axis, e in zip("xyz", edges):
            grid[f"{axis}_centers"] = 0.5 * (e[:-1] + e[1:])
            grid[f"{axis}_edges"] = e
        background = f.create_group("background")
        state = f.create_group("state")
        for name in FIELDS:
            background[name] = fields[name]
            state[name] = h5py.SoftLink(f"/background/{name}")


if __name__ == "__main__":
    main()
