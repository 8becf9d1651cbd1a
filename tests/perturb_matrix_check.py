#!/usr/bin/env python3
"""Reads the files of the perturbation matrix (tests/perturb_matrix.rs) with
h5py, an outside HDF5 reader.

Usage: perturb_matrix_check.py MANIFEST
  MANIFEST is a JSON list of {"file", "target", "extra"}. Every file holds
  one perturbation sampled at the cell centres, and:
  - /perturbation = /state - /background for density, pressure and
    potential (to 1e-15 of the background's largest value) and for each
    velocity component (to 1e-13 of the largest speed);
  - the root attribute `perturbation_peaks` gives the largest |drho|/rho,
    |dP|/P and |dv|/c (c^2 = gamma P/rho, gamma from the root attribute,
    P/rho the square of the `sound_speed` field) of the data, to its printed
    four digits, and `perturbations_alone` the same peaks to 1e-12 (one
    perturbation, sampled at the cell centres like the file);
  - something changed (the largest peak is positive; a planet's potential
    is not zero and, asked `in_potential`, is the perturbation's potential);
  - "target" velocity_c: the other velocity components of the
    perturbation are below 1e-12 of it (the direction is right);
  - "extra" "wave": dP = c^2 drho and sum of dv_c^2 = c^2 (drho/rho)^2 at
    every cell (the linear acoustic wave, e.g. Landau & Lifshitz, Fluid
    Mechanics, section 64; the grid's components are orthonormal).
  - "extra" "mode": drho/rho = A exp(-(R - 1.2)^2/0.2) cos(m phi - phase)
    at every cell centre (A = 1e-3, m = 2, phase = 0.5, the profile's
    formula; R and phi from the file's own cell-centre coordinates, with
    the tool's documented defaults for coordinates a grid leaves out:
    phi = 0, z = 0 on an R line, theta = pi/2 on a radius).
  - "extra" "band": band-limited noise (m = 1..3) on a Cartesian grid,
    keyed per ring of width the smallest x/y cell and per cell of the other
    axes: in each ring (and z cell) with at least 12 cells, drho/rho is a
    combination of cos m phi and sin m phi, m = 1..3, to 1e-12 of the
    amplitude (least squares with numpy.linalg.lstsq).
Exits 1 naming every disagreement.
"""
import json
import re
import sys

import h5py
import numpy as np


def big(a):
    return float(np.abs(a).max()) if a.size else 0.0


def check(entry):
    bad = []
    path = entry["file"]
    with h5py.File(path, "r") as f:
        b, s, p = f["background"], f["state"], f["perturbation"]
        gamma = float(f.attrs["gamma"])
        for name in ("density", "pressure", "potential"):
            err = big(s[name][...] - b[name][...] - p[name][...])
            if not err <= 1e-15 * max(big(b[name][...]), 1e-300):
                bad.append(f"{path}: state - background - perturbation of {name} = {err:.3e}")
        comps = [n for n in p if n.startswith("velocity_")]
        speed = max([big(s[n][...]) for n in comps] + [big(b["sound_speed"][...])])
        for n in comps:
            err = big(s[n][...] - b[n][...] - p[n][...])
            if not err <= 1e-13 * speed:
                bad.append(f"{path}: state - background - perturbation of {n} = {err:.3e} (speed {speed:.3e})")
        c = np.sqrt(gamma) * b["sound_speed"][...]
        data = {
            "density": big(p["density"][...] / b["density"][...]),
            "pressure": big(p["pressure"][...] / b["pressure"][...]),
        }
        for n in comps:
            data[n] = big(p[n][...] / c)
        phi_max = big(b["potential"][...])
        for n in ("potential", "planet_potential"):
            if n in p and big(p[n][...]) > 0:
                data[n] = big(p[n][...]) / phi_max
        text = f.attrs["perturbation_peaks"]
        recorded = {m.group(1): float(m.group(2))
                    for m in re.finditer(r"\b(density|pressure|potential|planet_potential|velocity_\w+) ([-+0-9.e]+)", text)}
        for n, v in data.items():
            got = recorded.get(n)
            if got is None or not abs(got - v) <= 1e-3 * v:
                bad.append(f"{path}: perturbation_peaks says {n} {got}, the data {v:.6e} ({text})")
        alone = json.loads(f.attrs["perturbations_alone"])
        if len(alone) != 1:
            bad.append(f"{path}: {len(alone)} entries in perturbations_alone")
        else:
            for n, v in data.items():
                got = alone[0]["peaks"].get(n)
                if got is None or not abs(got - v) <= 1e-12 * v:
                    bad.append(f"{path}: perturbations_alone says {n} {got}, the data {v:.17e}")
        if entry["extra"] == "planet":
            pp = p["planet_potential"][...]
            if not big(pp) > 0:
                bad.append(f"{path}: the planet's potential is zero")
            if big(p["potential"][...] - pp) > 1e-15 * big(pp):
                bad.append(f"{path}: in_potential, but the potential change is not the planet's")
        elif not max(data.values()) > 0:
            bad.append(f"{path}: nothing changed ({data})")
        t = entry["target"]
        if t:
            top = big(p[t][...])
            for n in comps:
                if n != t and not big(p[n][...]) <= 1e-12 * top:
                    bad.append(f"{path}: {t} perturbed, but {n} changed by {big(p[n][...]):.3e} (of {top:.3e})")
        if entry["extra"] == "wave":
            drho, dp = p["density"][...], p["pressure"][...]
            rho, cs = b["density"][...], b["sound_speed"][...]
            c2 = gamma * cs ** 2
            err = big(dp - c2 * drho)
            if not err <= 1e-12 * big(dp):
                bad.append(f"{path}: dP - c^2 drho = {err:.3e} of {big(dp):.3e}")
            v2 = sum(p[n][...] ** 2 for n in comps)
            want = c2 * (drho / rho) ** 2
            err = big(v2 - want)
            if not err <= 1e-9 * big(want):
                bad.append(f"{path}: |dv|^2 - c^2 (drho/rho)^2 = {err:.3e} of {big(want):.3e}")
        if entry["extra"] == "mode":
            R, phi = centre_R_phi(f)
            want = 1e-3 * np.exp(-((R - 1.2) ** 2) / 0.2) * np.cos(2 * phi - 0.5)
            got = p["density"][...] / b["density"][...]
            err = big(got - want)
            if not err <= 1e-14:
                bad.append(f"{path}: drho/rho differs from the mode's formula by {err:.3e}")
        if entry["extra"] == "band":
            bad += band_check(f, path, p["density"][...] / b["density"][...])
    return bad


def band_check(f, path, rel):
    axes = list(json.loads(f.attrs["profile"])["grid"])
    R, phi = centre_R_phi(f)
    width = min(np.diff(f[f"grid/{a}_edges"][...]).min() for a in axes if a in ("x", "y"))
    key = np.floor(R / width)
    if "z" in axes:
        iz = np.indices(R.shape)[axes.index("z")]
        key = key * 10_000 + iz
    bad, fitted = [], 0
    for k in np.unique(key):
        sel = key == k
        if sel.sum() < 12:
            continue
        ph = phi[sel]
        basis = np.stack([g(m * ph) for m in (1, 2, 3) for g in (np.cos, np.sin)], axis=1)
        coef, *_ = np.linalg.lstsq(basis, rel[sel], rcond=None)
        err = big(basis @ coef - rel[sel])
        fitted += 1
        if not err <= 1e-12 * 1e-3:
            bad.append(f"{path}: ring {k}: not a band m = 1..3 (residual {err:.3e})")
    if fitted == 0:
        bad.append(f"{path}: no ring with 12 cells to test the band")
    return bad


def centre_R_phi(f):
    """Cylindrical R and azimuth phi of every cell centre, in the file's
    array order, from /grid/<axis>_centers."""
    # The axes in array order: the order of the profile's grid keys (the
    # recorded profile, as the file carries it).
    axes = list(json.loads(f.attrs["profile"])["grid"])
    mesh = np.meshgrid(*[f[f"grid/{a}_centers"][...] for a in axes], indexing="ij")
    c = dict(zip(axes, mesh))
    shape = mesh[0].shape
    zero = np.zeros(shape)
    if "r" in c:
        theta = c.get("theta", zero + np.pi / 2)
        ph = c.get("phi", zero)
        R = c["r"] * np.sin(theta)
        return R, ph
    if "x" in c or "y" in c:
        x, y = c.get("x", zero), c.get("y", zero)
        return np.hypot(x, y), np.arctan2(y, x)
    return c["R"], c.get("phi", zero)


def main():
    bad = []
    entries = json.load(open(sys.argv[1]))
    for e in entries:
        try:
            bad += check(e)
        except Exception as x:  # a missing group or attribute names the file
            bad.append(f"{e['file']}: {type(x).__name__}: {x}")
    for b in bad:
        print(b)
    print(f"{len(entries)} files, {len(bad)} disagreements")
    sys.exit(1 if bad else 0)


if __name__ == "__main__":
    main()
