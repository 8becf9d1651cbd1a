"""Run a Python module written by `stillpoint emit` with NumPy.

Usage: emit_check.py MODULE.py FUNCTION POINTS

POINTS holds one point a line (the frame's coordinates, space separated).
All points are evaluated in ONE call with arrays (the emitted function must
be vectorised), then a line per point is printed: density, pressure,
potential, the three velocity, gravity and pressure-gradient components,
each as repr() (exact round trip). Called by tests/emit.rs.
"""
import importlib.util
import sys

import numpy as np


def main():
    path, name, points = sys.argv[1:4]
    spec = importlib.util.spec_from_file_location("emitted", path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    pts = np.loadtxt(points, ndmin=2)
    fn = getattr(mod, name)
    out = fn(*[pts[:, k] for k in range(pts.shape[1])])
    cols = [out["density"], out["pressure"], out["potential"]]
    for v in ("velocity", "gravity", "pressure_accel"):
        cols.extend(out[v])
    for c in cols:
        assert np.shape(c) == (len(pts),), np.shape(c)
    for i in range(len(pts)):
        print(" ".join(repr(float(c[i])) for c in cols))


if __name__ == "__main__":
    main()
