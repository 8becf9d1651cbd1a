"""h5py reads every dataset and attribute of a built file and checks the
values against the tool's own `table` output (issue 10).

    python3 h5_table_check.py STILLPOINT PROFILE.json FILE.h5

The profile must sample cell-centre point values (sampling.rule `center`),
so each cell holds the state at its centre. h5py (https://www.h5py.org)
walks the whole file — every group, dataset and attribute, the /state link
followed — reads each one in full and checks its shape, type and units;
then runs `STILLPOINT table PROFILE --at <the file's centres along the
balance coordinate> --csv` and compares, on the cells of the balance line
(the midplane z = 0 of a 3D disk, every azimuth of an axisymmetric grid):

    density = rho, pressure = P, sound_speed = sqrt(c^2),
    temperature = T, velocity_phi = v_phi, momentum_phi = rho v_phi,
    energy = P/(gamma - 1) + rho |v|^2 / 2 (design.md §2, the ideal-gas
    total energy density), other velocity and momentum components = 0,

to a relative 1e-14 (the file and the table evaluate one background, the
file over blocks and the table point by point; DEVELOPERS.md says the two
agree to the bit, a few ulps are allowed here). The potential is checked
against the textbook closed forms of the profile's gravity: a point mass
Phi = -G M / sqrt(R^2 + z^2) (Newton) and a uniform field Phi = g z.
Cell centres are checked as the midpoints of the edges (design.md §6).

Prints what it read and exits 1 on the first disagreement.
"""

import io
import json
import subprocess
import sys

import h5py
import numpy as np

RTOL = 1e-14


def fail(msg):
    print(f"FAIL: {msg}")
    sys.exit(1)


def close(a, b, what, rtol=RTOL):
    a, b = np.asarray(a, float), np.asarray(b, float)
    scale = np.maximum(np.abs(b), np.finfo(float).tiny)
    bad = np.abs(a - b) > rtol * scale
    # A value that is zero in both is equal.
    bad &= ~((a == 0) & (b == 0))
    if bad.any():
        i = np.argmax(bad)
        fail(f"{what}: {a.flat[i]!r} != {b.flat[i]!r} (flat index {i})")


def walk(f):
    """Every dataset and attribute, read in full; returns counts."""
    seen = {"datasets": 0, "attributes": 0}

    def attrs(obj, name):
        for k in obj.attrs:
            v = obj.attrs[k]
            if isinstance(v, bytes):
                v = v.decode()
            if isinstance(v, str) and k not in ("cautions",) and v == "":
                fail(f"{name}@{k} is empty")
            seen["attributes"] += 1

    attrs(f, "/")

    def visit(name, obj):
        attrs(obj, name)
        if isinstance(obj, h5py.Dataset):
            data = obj[...]
            if data.dtype.kind != "f":
                fail(f"{name}: dtype {data.dtype}")
            if not np.isfinite(data).all():
                fail(f"{name}: values that are not finite")
            if "units" not in obj.attrs:
                fail(f"{name}: no units attribute")
            seen["datasets"] += 1

    f.visititems(visit)
    # /state is a link to /background when nothing perturbs the state: read
    # it through the link too.
    for name, obj in f["state"].items():
        visit(f"state/{name}", obj)
        if not np.array_equal(obj[...], f["background"][name][...]):
            fail(f"state/{name} differs from background/{name}")
    return seen


def main():
    exe, profile, path = sys.argv[1:4]
    f = h5py.File(path, "r")
    seen = walk(f)
    prof = json.loads(f.attrs["profile"])
    gamma = float(f.attrs["gamma"])
    if gamma != float(prof["gas"]["gamma"]):
        fail(f"gamma attribute {gamma} != profile {prof['gas']['gamma']}")
    if "build" not in f.attrs["command_line"]:
        fail("command_line attribute")
    if not f.attrs["generator"].startswith("stillpoint"):
        fail("generator attribute")
    if f.attrs["sampling"] != "cell-centre point values":
        fail(f"sampling attribute {f.attrs['sampling']!r}: the check needs rule center")
    axes = list(prof["grid"].keys())
    shape = tuple(len(f[f"grid/{a}_centers"]) for a in axes)
    for a in axes:
        e, c = f[f"grid/{a}_edges"][...], f[f"grid/{a}_centers"][...]
        if len(e) != len(c) + 1:
            fail(f"grid/{a}: {len(e)} edges for {len(c)} centres")
        close(c, 0.5 * (e[1:] + e[:-1]), f"grid/{a}_centers")
    bg = f["background"]
    for name, d in bg.items():
        if d.shape != shape:
            fail(f"background/{name}: shape {d.shape}, grid {shape}")

    # The balance line: its coordinate and the cells on it.
    shape_key = prof["balance"]["shape"]
    s = {"slab": "z", "sphere": "r"}.get(shape_key, "R")
    line = axes.index(s)
    centres = f[f"grid/{s}_centers"][...]
    index = [slice(None)] * len(axes)
    z_line = 0.0
    kept = line  # the line's axis among those left after fixing z
    if "z" in axes and s != "z":
        zc = f["grid/z_centers"][...]
        k = int(np.argmin(np.abs(zc)))
        if abs(zc[k]) > 1e-12:
            fail("no cell centre on the midplane z = 0")
        index[axes.index("z")] = k
        z_line = zc[k]
        kept -= axes.index("z") < line

    def on_line(name):
        """The dataset on the line: axis `line` first, the rest flattened."""
        d = np.moveaxis(bg[name][tuple(index)], kept, 0)
        return d.reshape(len(centres), -1)

    at = ",".join(repr(float(x)) for x in centres)
    out = subprocess.run(
        [exe, "table", profile, "--at", at, "--csv"], capture_output=True, text=True
    )
    if out.returncode != 0:
        fail(f"table: {out.stderr}")
    names = out.stdout.splitlines()[0].split(",")
    cols = [n.split(" [")[0] for n in names]
    table = np.genfromtxt(io.StringIO(out.stdout), delimiter=",", skip_header=1)
    table = table.reshape(len(centres), -1)
    col = {n: table[:, i] for i, n in enumerate(cols)}
    close(col[s], centres, f"table {s} column")

    rho = col["rho"][:, None]
    v_phi = col["v_phi"][:, None] if "v_phi" in col else 0.0 * rho
    expect = {
        "density": rho,
        "pressure": col["P"][:, None],
        "sound_speed": np.sqrt(col["c^2"])[:, None],
    }
    if "T" in col:
        expect["temperature"] = col["T"][:, None]
    if "v_phi" in col:
        expect["velocity_phi"] = v_phi
        expect["momentum_phi"] = rho * v_phi
    if "energy" in bg:
        expect["energy"] = col["P"][:, None] / (gamma - 1) + 0.5 * rho * v_phi**2
    for name in bg:
        if name.startswith(("velocity_", "momentum_")) and name not in expect:
            expect[name] = 0.0 * rho
    compared = []
    for name, want in expect.items():
        if name not in bg:
            fail(f"background/{name} missing")
        got = on_line(name)
        close(got, np.broadcast_to(want, got.shape), f"background/{name} vs table")
        compared.append(name)

    # The potential against its closed form (parameters are numbers here).
    par = prof["parameters"]
    grav = prof["gravity"]
    G = float(f["scales"].attrs.get("G", 1.0))
    x = centres[:, None]
    if "point_mass" in grav:
        M = float(par[grav["point_mass"]])
        if s == "r":
            phi = -G * M / x
        else:
            phi = -G * M / np.sqrt(x**2 + z_line**2)
    elif "uniform" in grav:
        phi = float(par[grav["uniform"]]) * x
    else:
        fail(f"no closed form here for the gravity {grav}")
    got = on_line("potential")
    close(got, np.broadcast_to(phi, got.shape), "background/potential vs closed form", 1e-13)
    compared.append("potential")

    print(
        f"{path}: {seen['datasets']} datasets and {seen['attributes']} attributes read; "
        f"{', '.join(compared)} agree with `table` on {got.size} cells: ok"
    )


if __name__ == "__main__":
    main()
