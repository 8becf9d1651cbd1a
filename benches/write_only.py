#!/usr/bin/env python3
"""Writing a grid's datasets to HDF5 from memory, and nothing else.

The yardstick of benchmark B′ (issue 11, the `disk-sphere-3d` case of
benches/cases.py): for a profile's grid it holds NAMES field arrays of the
grid's cell shape in memory (filled before the clock matters little: a
constant fill is one pass over memory) and writes them with h5py as float64
datasets under /background, with /state soft links and the /grid axes and
node positions the same shapes as stillpoint writes, so that both files hold
the same bytes of datasets, then flushes the file to the disk (os.fsync),
as stillpoint does before it renames a finished file into place. Nothing is
computed: the time is the writing.

Usage: python3 benches/write_only.py PROFILE -o OUT.h5 --fields N
"""

import argparse
import json
import os

import h5py
import numpy as np


def cells(prof):
    return [int(a["cells"]) for a in prof["grid"].values()]


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("profile")
    ap.add_argument("-o", "--output", required=True)
    ap.add_argument("--fields", type=int, required=True, help="number of field datasets")
    args = ap.parse_args()
    with open(args.profile) as f:
        prof = json.load(f)
    shape = tuple(cells(prof))
    nodes = tuple(n + 1 for n in shape)
    with h5py.File(args.output, "w") as f:
        grid = f.create_group("grid")
        for name, n in zip(prof["grid"].keys(), shape):
            grid[f"{name}_centers"] = np.linspace(0.0, 1.0, n)
            grid[f"{name}_edges"] = np.linspace(0.0, 1.0, n + 1)
        for name in ("node_x", "node_y", "node_z"):
            grid[name] = np.full(nodes, 1.0)
        background = f.create_group("background")
        state = f.create_group("state")
        for k in range(args.fields):
            background[f"field_{k}"] = np.full(shape, 1.0 + k)
            state[f"field_{k}"] = h5py.SoftLink(f"/background/field_{k}")
    fd = os.open(args.output, os.O_RDONLY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


if __name__ == "__main__":
    main()
