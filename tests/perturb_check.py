#!/usr/bin/env python3
"""Reads files with perturbations with h5py (an outside HDF5 reader).

Usage:
  perturb_check.py sum FILE
      /state is a group of its own (no soft links), /perturbation exists,
      and /state = /background + /perturbation for density and pressure to
      round-off (1e-15 of the background); the root attributes
      `perturbations` (JSON) and `perturbation_peaks` are present;
  perturb_check.py wave FILE A K PHASE GAMMA G CS2 P0
      a sound wave on the isothermal slab rho = (P0/cs2) exp(-G z/cs2)
      (the barometric law): the cell averages of drho, dP and dv agree with
      a 16-point Gauss-Legendre average (numpy's nodes) of
      drho = A rho cos(k z + phase), dP = gamma (P/rho) drho and
      dv = A c cos(k z + phase), c^2 = gamma P/rho (the linear acoustic
      eigenfunction, e.g. Landau & Lifshitz, Fluid Mechanics, section 64),
      and the peak of drho/rho is A to the cell-averaging factor.
  perturb_check.py alone FILE INDEX FIELD PEAK
      the root attribute `perturbations_alone` (JSON) holds one entry per
      perturbation; entry INDEX has peaks[FIELD] = PEAK to 1e-3, `largest`
      is the largest of its peaks, and `standing` is "larger" or "smaller"
      as `largest` is above `discrete_imbalance` or not; a perturbation
      below it appears among the `cautions`.
  perturb_check.py uniform FILE A FIELD...
      each FIELD (a velocity component) of /perturbation, over the sound
      speed c = sqrt(gamma) * /background/sound_speed, is uniform noise on
      [-A, A]: every value within A (to the cell-averaging factor, 1e-2),
      the mean within 5 standard errors of 0 and the variance within 5
      standard errors of A^2/3 (the uniform distribution's moments:
      mean 0, variance A^2/3, fourth central moment A^4/5, so the variance
      of the sample variance is (A^4/5 - A^4/9)/N; e.g. Johnson, Kotz &
      Balakrishnan, Continuous Univariate Distributions, vol. 2, ch. 26),
      and the fields are uncorrelated (|correlation| < 5/sqrt(N)).
Exits 1 on any disagreement, naming it.
"""
import json
import sys

import h5py
import numpy as np


def sum_check(path):
    bad = []
    with h5py.File(path, "r") as f:
        for name in ("state", "perturbation"):
            if name not in f:
                bad.append(f"no /{name} group")
        if bad:
            return bad
        for name in f["state"]:
            link = f["state"].get(name, getlink=True)
            if not isinstance(link, h5py.HardLink):
                bad.append(f"state/{name} is a link, not a dataset of its own")
        for name in ("density", "pressure"):
            b = f["background"][name][...]
            s = f["state"][name][...]
            p = f["perturbation"][name][...]
            err = np.abs(s - (b + p)).max() / np.abs(b).max()
            if not err <= 1e-15:
                bad.append(f"state/{name} - background - perturbation = {err:.3e} of the background")
        for attr in ("perturbations", "perturbation_peaks"):
            if attr not in f.attrs:
                bad.append(f"no root attribute {attr}")
        json.loads(f.attrs["perturbations"])
    return bad


def wave(path, a, k, phase, gamma, g, cs2, p0):
    bad = []
    x, w = np.polynomial.legendre.leggauss(16)
    with h5py.File(path, "r") as f:
        edges = f["grid"]["z_edges"][...]
        lo, hi = edges[:-1, None], edges[1:, None]
        z = 0.5 * (lo + hi) + 0.5 * (hi - lo) * x[None, :]
        rho = p0 / cs2 * np.exp(-g * z / cs2)
        c = np.sqrt(gamma * cs2)
        cosine = np.cos(k * z + phase)
        avg = lambda q: (q * w[None, :]).sum(axis=1) / 2.0
        want = {
            "density": avg(a * rho * cosine),
            "pressure": avg(gamma * cs2 * a * rho * cosine),
        }
        for name, expect in want.items():
            got = f["perturbation"][name][...]
            err = np.abs(got - expect).max() / np.abs(expect).max()
            if not err <= 1e-9:
                bad.append(f"perturbation/{name}: relative difference {err:.3e}")
        # The mass-weighted velocity: avg((rho + drho)(v)) / avg(rho + drho).
        mom = avg((rho + a * rho * cosine) * a * c * cosine)
        v = mom / avg(rho + a * rho * cosine)
        got = f["perturbation"]["velocity_z"][...]
        err = np.abs(got - v).max() / np.abs(v).max()
        if not err <= 1e-8:
            bad.append(f"perturbation/velocity_z: relative difference {err:.3e}")
        ratio = (f["perturbation"]["density"][...] / f["background"]["density"][...])
        h = edges[1] - edges[0]
        factor = np.sinc(k * h / 2 / np.pi)  # the cell average of a cosine
        peak = np.abs(ratio).max()
        if not abs(peak / (a * factor) - 1) < 1e-2:
            bad.append(f"peak drho/rho {peak:.6e}, chosen {a:.6e} (x {factor:.6f} for the cell average)")
    return bad


def alone(path, index, field, peak):
    bad = []
    with h5py.File(path, "r") as f:
        entries = json.loads(f.attrs["perturbations_alone"])
        count = len(json.loads(f.attrs["perturbations"]))
        cautions = f.attrs["cautions"]
        cautions = cautions if isinstance(cautions, str) else " ".join(map(str, cautions))
    if len(entries) != count:
        bad.append(f"{len(entries)} entries for {count} perturbations")
    e = entries[int(index)]
    got = e["peaks"].get(field)
    if got is None or not abs(got / peak - 1) < 1e-3:
        bad.append(f"peaks[{field}] = {got}, expected {peak}")
    largest = max(e["peaks"].values())
    if largest != e["largest"]:
        bad.append(f"largest {e['largest']} is not the largest peak {largest}")
    x = e["discrete_imbalance"]
    want = "larger" if largest > x else "smaller"
    if e["standing"] != want:
        bad.append(f"standing {e['standing']}, expected {want} ({largest} vs {x})")
    if want == "smaller" and e["origin"] not in cautions:
        bad.append(f"no caution for {e['origin']} below the imbalance")
    return bad


def uniform(path, a, fields):
    bad = []
    with h5py.File(path, "r") as f:
        c = np.sqrt(float(f.attrs["gamma"])) * f["background"]["sound_speed"][...]
        xs = [(f["perturbation"][n][...] / c).ravel() for n in fields]
    for n, x in zip(fields, xs):
        size = x.size
        if not np.abs(x).max() <= a * 1.01:
            bad.append(f"{n}: |dv|/c reaches {np.abs(x).max():.4e} > A = {a}")
        if not abs(x.mean()) < 5 * np.sqrt(a * a / 3 / size):
            bad.append(f"{n}: mean {x.mean():.3e} is not 0 within 5 standard errors")
        var, want = x.var(), a * a / 3
        if not abs(var - want) < 5 * np.sqrt((a ** 4 / 5 - a ** 4 / 9) / size):
            bad.append(f"{n}: variance {var:.4e}, the uniform distribution's {want:.4e}")
    for i in range(len(xs)):
        for j in range(i + 1, len(xs)):
            r = np.corrcoef(xs[i], xs[j])[0, 1]
            if not abs(r) < 5 / np.sqrt(xs[i].size):
                bad.append(f"{fields[i]} and {fields[j]} correlate: {r:.3e}")
    return bad


def main():
    verb = sys.argv[1]
    if verb == "sum":
        bad = sum_check(sys.argv[2])
    elif verb == "uniform":
        bad = uniform(sys.argv[2], float(sys.argv[3]), sys.argv[4:])
    elif verb == "alone":
        bad = alone(sys.argv[2], sys.argv[3], sys.argv[4], float(sys.argv[5]))
    elif verb == "wave":
        bad = wave(sys.argv[2], *map(float, sys.argv[3:]))
    else:
        bad = [f"unknown verb {verb}"]
    for b in bad:
        print(b)
    sys.exit(1 if bad else 0)


if __name__ == "__main__":
    main()
