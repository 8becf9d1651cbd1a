#!/usr/bin/env python3
"""Reads files built by the new core with h5py (an outside HDF5 reader).

Usage:
  core_check.py samples REFERENCE.json DIR
      every bundled profile's /background datasets in DIR/<profile>.h5 match
      the samples taken from files built before the core was redesigned, to
      1e-13 of each field's largest sampled value (round-off), with the same
      shapes;
  core_check.py links FILE
      every /state/<field> is a soft link to /background/<field> and reads
      back as the background's values;
  core_check.py same FILE FILE...
      every dataset of the first file has the same shape, type and bytes in
      each other file.
Exits 1 on any disagreement, naming it.
"""
import json
import sys

import h5py
import numpy as np


def samples(reference, folder):
    ref = json.load(open(reference))
    bad = []
    for profile, fields in ref.items():
        with h5py.File(f"{folder}/{profile}.h5", "r") as f:
            for name, d in fields.items():
                ds = f["background"][name]
                if list(ds.shape) != d["shape"]:
                    bad.append(f"{profile}/{name}: shape {ds.shape} != {d['shape']}")
                    continue
                got = np.asarray(ds[...], dtype=np.float64).ravel()[d["index"]]
                want = np.array([float.fromhex(v) for v in d["values"]])
                scale = max(np.abs(want).max(), 1e-300)
                err = np.abs(got - want).max() / scale
                if not err <= 1e-13:
                    bad.append(f"{profile}/{name}: relative difference {err:.3e}")
    return bad


def links(path):
    bad = []
    with h5py.File(path, "r") as f:
        for name in f["background"]:
            link = f["state"].get(name, getlink=True)
            if not isinstance(link, h5py.SoftLink) or link.path != f"/background/{name}":
                bad.append(f"state/{name} is {link!r}, not a soft link to /background/{name}")
                continue
            a, b = f["state"][name][...], f["background"][name][...]
            if a.tobytes() != b.tobytes():
                bad.append(f"state/{name} does not read back as background/{name}")
    return bad


def same(paths):
    bad = []
    first, rest = paths[0], paths[1:]
    with h5py.File(first, "r") as f0:
        names = []
        f0.visititems(lambda n, o: names.append(n) if isinstance(o, h5py.Dataset) else None)
        for other in rest:
            with h5py.File(other, "r") as f1:
                for n in names:
                    a, b = f0[n], f1[n]
                    if a.shape != b.shape or a.dtype != b.dtype or a[...].tobytes() != b[...].tobytes():
                        bad.append(f"{other}: {n} differs from {first}")
    return bad


def main():
    verb, args = sys.argv[1], sys.argv[2:]
    bad = {"samples": lambda: samples(*args), "links": lambda: links(*args), "same": lambda: same(args)}[verb]()
    for b in bad:
        print(b)
    print(f"{verb}: {'FAIL' if bad else 'ok'}")
    sys.exit(1 if bad else 0)


main()
