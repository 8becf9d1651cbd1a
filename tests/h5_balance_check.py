#!/usr/bin/env python3
"""Checks stillpoint HDF5 files against the balance they claim, from their own numbers.

Usage: h5_balance_check.py FILE...

For each file: the root attributes (profile, command_line, generator,
sampling, cautions, created), the unit record /scales with its `system`
attribute, and the per-dataset attributes (units, sampling) must exist; momentum must equal density × velocity; and the
discrete residual of the balance, with numpy second-order central differences
on interior cells, is reported relative to the largest term:

* slab (grid axis z):   dP/dz + ρ dΦ/dz
* disk (grid axis R):   ρ v_φ²/R − ρ dΦ/dR − dP/dR   (every phi column on polar grids)

Files with the same kind, axes and sampling rule are sorted by resolution; the
residual must fall at second order: a ratio above 3.5 for each doubling
(ratio ≈ 4 expected). Prints a summary; exits 1 on any failure.
"""
import sys
from collections import defaultdict

import h5py
import numpy as np

ROOT_ATTRS = ["profile", "command_line", "generator", "sampling", "cautions", "created"]
MIN_RATIO = 3.5


def text(value):
    return value.decode() if isinstance(value, bytes) else str(value)


def central(f, x):
    """Second-order central difference of f along axis 0 at interior points."""
    dx = x[2:] - x[:-2]
    if f.ndim == 2:
        dx = dx[:, None]
    return (f[2:] - f[:-2]) / dx


def check_file(path, failures):
    with h5py.File(path, "r") as h5:
        for name in ROOT_ATTRS:
            if name not in h5.attrs:
                failures.append(f"{path}: root attribute `{name}` missing")
        if "scales" not in h5 or "system" not in h5["scales"].attrs:
            failures.append(f"{path}: the unit record /scales (with `system`) is missing")
        if not text(h5.attrs.get("generator", "")).startswith("stillpoint"):
            failures.append(f"{path}: generator attribute does not name stillpoint")
        for group in ("background", "state"):
            for name, ds in h5[group].items():
                for attr in ("units", "sampling"):
                    if attr not in ds.attrs:
                        failures.append(f"{path}: /{group}/{name} has no `{attr}` attribute")
        for name, ds in h5["grid"].items():
            if "units" not in ds.attrs:
                failures.append(f"{path}: /grid/{name} has no `units` attribute")
        axes = tuple(sorted(k[: -len("_centers")] for k in h5["grid"] if k.endswith("_centers")))
        s = h5["state"]
        rho, p, pot = s["density"][...], s["pressure"][...], s["potential"][...]
        sampling = text(h5.attrs.get("sampling", ""))
        if "z" in axes:
            kind = "slab"
            x = h5["grid/z_centers"][...]
            dp, dpot = central(p, x), central(pot, x)
            terms = [dp, rho[1:-1] * dpot]
            residual = dp + rho[1:-1] * dpot
            momentum_pairs = [("momentum_z", "velocity_z")]
        elif "R" in axes:
            kind = "disk"
            x = h5["grid/R_centers"][...]
            v = s["velocity_phi"][...]
            radius = x[1:-1, None] if rho.ndim == 2 else x[1:-1]
            centrifugal = rho[1:-1] * v[1:-1] ** 2 / radius
            gravity = rho[1:-1] * central(pot, x)
            dp = central(p, x)
            terms = [centrifugal, gravity, dp]
            residual = centrifugal - gravity - dp
            momentum_pairs = [("momentum_R", "velocity_R"), ("momentum_phi", "velocity_phi")]
        else:
            failures.append(f"{path}: no z or R axis in /grid ({axes})")
            return None
        for mom, vel in momentum_pairs:
            m, v = s[mom][...], s[vel][...]
            scale = max(np.max(np.abs(m)), np.finfo(float).tiny)
            if np.max(np.abs(m - rho * v)) > 1e-13 * scale:
                failures.append(f"{path}: {mom} differs from density × {vel}")
        largest = max(np.max(np.abs(t)) for t in terms)
        relative = float(np.max(np.abs(residual)) / largest)
        return (kind, axes, sampling), len(x), relative


def main(paths):
    if not paths:
        print(__doc__)
        return 2
    failures = []
    groups = defaultdict(list)
    for path in paths:
        result = check_file(path, failures)
        if result is not None:
            key, cells, relative = result
            groups[key].append((cells, relative, path))
            print(f"{path}: {key[0]} [{', '.join(key[1])}], {cells} cells: max residual / largest term = {relative:.3e}")
    for (kind, axes, sampling), runs in sorted(groups.items()):
        runs.sort()
        label = f"{kind} [{', '.join(axes)}] ({sampling})"
        if len(runs) < 2:
            failures.append(f"{label}: needs two resolutions to check convergence")
            continue
        for (n1, r1, _), (n2, r2, _) in zip(runs, runs[1:]):
            ratio = r1 / r2 if r2 > 0 else float("inf")
            order = np.log(ratio) / np.log(n2 / n1)
            expected = (n2 / n1) ** 2 * MIN_RATIO / 4
            status = "ok" if ratio > expected else "FAIL"
            print(f"{label}: {n1} -> {n2} cells, residual ratio {ratio:.3f} (order {order:.2f}) {status}")
            if status != "ok":
                failures.append(f"{label}: residual ratio {ratio:.3f} between {n1} and {n2} cells is not second order")
    for f in failures:
        print("FAIL:", f)
    print("all checks passed" if not failures else f"{len(failures)} check(s) failed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
