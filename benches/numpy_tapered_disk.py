#!/usr/bin/env python3
"""The tapered Cartesian disk built by hand with NumPy and h5py.

This is the script a user would write instead of running stillpoint: the
competitor of the `tapered-disk-2d` benchmark case (benches/cases.py). It
builds the bundled profile profiles/tapered-disk-cartesian.json (or a copy of
it with other cell counts) and writes the same datasets as `stillpoint build`,
in float64.

Physics (code units, G = 1), a vertically integrated disk around a
Plummer-softened point mass, with s = R² + ε² and u = s/R0²:

    Φ    = −GM/√s,                 ∂Φ/∂R = GM R/s^(3/2)
    Σ    = σ0 u^(−p/2) exp(−(R/R_t)^k)
    c²   = c0² u^(−q/2),           P = Σ c²
    v_φ² = R (∂Φ/∂R + (1/Σ) ∂(Σc²)/∂R)
         = R ∂Φ/∂R + c² (−(p + q) R²/s − k (R/R_t)^k),

the last line from ∂ln Σ/∂R = −p R/s − k (R/R_t)^k/R and ∂ln c²/∂R = −q R/s,
written out by hand. The rotation is prograde, v = v_φ (−y/R, x/R).

Cell averages use the tensor 3-point Gauss–Legendre rule per axis
(numpy.polynomial.legendre.leggauss), vectorised over the whole grid for each
of the 3 × 3 node pairs: density, pressure, potential, momentum ⟨Σ v⟩,
energy ⟨P/(γ−1) + ½Σ|v|²⟩ and sound speed ⟨√(P/Σ)⟩ = ⟨c⟩ are averages of the
pointwise values, and velocity = ⟨Σ v⟩/⟨Σ⟩.

Layout: /grid/{x,y}_{centers,edges}, /background/<field>, and /state/<field>
as HDF5 soft links to /background/<field> (stillpoint's planned layout; today
stillpoint writes a second copy instead). No attributes are written.

Usage: python3 benches/numpy_tapered_disk.py PROFILE -o OUT.h5
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
    "momentum_x",
    "momentum_y",
    "energy",
    "sound_speed",
    "potential",
)


def point_values(x, y, par):
    """Pointwise Σ, P, Φ, momentum, energy and c at (x, y), broadcast."""
    G, M, eps, R0 = 1.0, par["M"], par["eps"], par["R0"]
    p, q, k = par["p"], par["q"], par["k_taper"]
    R2 = x * x + y * y
    R = np.sqrt(R2)
    s = R2 + eps**2
    u = s / R0**2
    potential = -G * M / np.sqrt(s)
    dphi_dR = G * M * R / s**1.5
    taper = (R / par["R_taper"]) ** k
    sigma = par["sigma0"] * u ** (-p / 2) * np.exp(-taper)
    c2 = par["cs2_0"] * u ** (-q / 2)
    pressure = sigma * c2
    vphi2 = R * dphi_dR + c2 * (-(p + q) * R2 / s - k * taper)
    vphi = np.sqrt(vphi2)
    return {
        "density": sigma,
        "pressure": pressure,
        "momentum_x": sigma * (-vphi * y / R),
        "momentum_y": sigma * (vphi * x / R),
        "energy": pressure / (par["gamma"] - 1) + 0.5 * sigma * vphi2,
        "sound_speed": np.sqrt(c2),
        "potential": potential,
    }


def read_profile(path):
    """Parameters, edges and the number of Gauss points from the profile."""
    with open(path) as f:
        prof = json.load(f)
    raw = prof["parameters"]
    par = {k: float(raw[k]) for k in ("M", "eps", "R0", "sigma0", "p", "q", "h0", "R_taper")}
    par["k_taper"] = float(raw["k_taper"])
    # The profile gives c0² as the formula "h0^2*G*M/R0" (G = 1 in code units).
    par["cs2_0"] = par["h0"] ** 2 * 1.0 * par["M"] / par["R0"]
    par["gamma"] = float(prof["gas"]["gamma"])
    edges = [
        np.linspace(float(a["from"]), float(a["to"]), int(a["cells"]) + 1)
        for a in (prof["grid"]["x"], prof["grid"]["y"])
    ]
    return par, edges, int(prof["sampling"]["points"])


def cell_averages(par, x_edges, y_edges, points):
    """The averaged fields on the (x, y) grid, C order, x first."""
    nodes, weights = leggauss(points)
    weights = weights / 2  # normalised: the average over [-1, 1]
    xm, xh = 0.5 * (x_edges[:-1] + x_edges[1:]), 0.5 * np.diff(x_edges)
    ym, yh = 0.5 * (y_edges[:-1] + y_edges[1:]), 0.5 * np.diff(y_edges)
    shape = (xm.size, ym.size)
    sums = {}
    for xi, wi in zip(nodes, weights):
        x = (xm + xh * xi)[:, None]
        for yj, wj in zip(nodes, weights):
            y = (ym + yh * yj)[None, :]
            for name, values in point_values(x, y, par).items():
                if name not in sums:
                    sums[name] = np.zeros(shape)
                sums[name] += (wi * wj) * values
    sums["velocity_x"] = sums["momentum_x"] / sums["density"]
    sums["velocity_y"] = sums["momentum_y"] / sums["density"]
    return sums


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("profile", help="tapered-disk-cartesian.json or a copy with other cells")
    ap.add_argument("-o", "--output", required=True, help="HDF5 file to write")
    args = ap.parse_args()
    par, (x_edges, y_edges), points = read_profile(args.profile)
    fields = cell_averages(par, x_edges, y_edges, points)
    with h5py.File(args.output, "w") as f:
        grid = f.create_group("grid")
        for axis, edges in (("x", x_edges), ("y", y_edges)):
            grid[f"{axis}_centers"] = 0.5 * (edges[:-1] + edges[1:])
            grid[f"{axis}_edges"] = edges
        background = f.create_group("background")
        state = f.create_group("state")
        for name in FIELDS:
            background[name] = fields[name]
            state[name] = h5py.SoftLink(f"/background/{name}")


if __name__ == "__main__":
    main()
