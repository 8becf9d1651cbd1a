"""Outside readers check stillpoint's files (issue 10). Run from tests/formats.rs.

    python3 formats_check.py xdmf FILE.xmf ...
    python3 formats_check.py arrays FILE.h5 NPY_DIR RAW_DIR ...
    python3 formats_check.py csv FILE.csv FILE.h5
    python3 formats_check.py nesting NATURAL.h5 NESTED.h5 x,y,z z,y,x

xdmf: VTK's XDMF reader (vtkXdmfReader, the reader ParaView uses; VTK from PyPI)
opens each XDMF file; the mesh has one cell per grid cell, its points are the
Cartesian node positions computed here with NumPy from the HDF5 file's
/grid/<axis>_edges (x = R cos phi, y = R sin phi: the textbook cylindrical to
Cartesian map), and every cell array equals the HDF5 dataset it names, bit for
bit, with h5py reading the HDF5 side. A rectilinear mesh (a Cartesian grid
declared with x fastest) is read by VTK as a vtkRectilinearGrid: its
coordinate arrays and points equal the edges to the bit.

nesting: a grid declared in another nesting holds the natural build's
numbers transposed (numpy.transpose), to the bit.

arrays: numpy.load reads each .npy file and numpy.fromfile, with the dtype,
shape and order that metadata.json gives, reads each raw file; both equal the
HDF5 datasets (/state/<field>, /grid/<axis>_centers and _edges) to the bit
(after the same conversion to float32 when the raw dtype is float32).

csv: numpy.genfromtxt(names=True), pandas.read_csv and
astropy.table.Table.read(format="csv") read the table; the columns equal the
HDF5 datasets to the bit, and the units in the header parse with astropy.units
and equal the datasets' `units` attributes.

Prints one line per disagreement and exits 1 if there is any.
"""

import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import h5py
import numpy as np


def nodes_from_edges(f):
    """Cartesian node positions from the axes' edges, independently of the writer."""
    names = [n[: -len("_edges")] for n in f["grid"] if n.endswith("_edges")]
    # Axis order is the order of the dataset dimensions: take it from the shape.
    order = list(f["grid/node_x"].shape)
    by_len = {}
    for n in names:
        by_len.setdefault(len(f[f"grid/{n}_edges"]), []).append(n)
    axes = []
    for length in order:
        axes.append(by_len[length].pop(0))
    edges = [f[f"grid/{a}_edges"][...] for a in axes]
    mesh = dict(zip(axes, np.meshgrid(*edges, indexing="ij")))
    zero = np.zeros(order)
    if "x" in mesh or "y" in mesh:
        return mesh.get("x", zero), mesh.get("y", zero), mesh.get("z", zero)
    if "r" in mesh:
        r = mesh["r"]
        if "theta" in mesh:
            cyl, z = r * np.sin(mesh["theta"]), r * np.cos(mesh["theta"])
        else:
            cyl, z = r, zero
    else:
        cyl, z = mesh.get("R", zero), mesh.get("z", zero)
    if "phi" in mesh:
        return cyl * np.cos(mesh["phi"]), cyl * np.sin(mesh["phi"]), z
    return cyl, zero, z


def xdmf(paths):
    import vtkmodules.vtkIOXdmf2 as vtkxdmf
    from vtkmodules.util.numpy_support import vtk_to_numpy

    bad = []
    for p in paths:
        p = Path(p)
        tree = ET.parse(p)
        wanted = {a.get("Name"): a.find("DataItem").text.strip() for a in tree.iter("Attribute")}
        if not wanted:
            bad.append(f"{p}: no fields described")
        reader = vtkxdmf.vtkXdmfReader()
        reader.SetFileName(str(p))
        reader.Update()
        mesh = reader.GetOutputDataObject(0)
        h5name = next(iter(wanted.values())).split(":")[0]
        with h5py.File(p.parent / h5name, "r") as f:
            cells = int(np.prod(f["state/density"].shape))
            if mesh.GetNumberOfCells() != cells:
                bad.append(f"{p}: {mesh.GetNumberOfCells()} cells in the mesh, {cells} in the file")
            topology = tree.find(".//Topology").get("TopologyType")
            if topology.endswith("RectMesh"):
                bad += rectilinear(p, f, mesh, topology)
            else:
                pts = vtk_to_numpy(mesh.GetPoints().GetData())
                want = np.stack([c.ravel() for c in nodes_from_edges(f)], axis=1)
                scale = max(1.0, float(np.abs(want).max()))
                err = float(np.abs(pts - want).max()) / scale
                if pts.shape != want.shape or err > 4e-16:
                    bad.append(f"{p}: node positions differ from the edges' (relative {err:.2e})")
                for k in range(3):
                    if f[f"grid/node_{'xyz'[k]}"][...].ravel().tobytes() != pts[:, k].tobytes():
                        bad.append(f"{p}: /grid/node_{'xyz'[k]} differs from the mesh VTK read")
            data = mesh.GetCellData()
            for name, ref in wanted.items():
                arr = data.GetArray(name)
                if arr is None:
                    bad.append(f"{p}: VTK finds no cell array {name}")
                    continue
                got = vtk_to_numpy(arr)
                ds = f[ref.split(":", 1)[1]][...]
                if got.dtype != ds.dtype or got.tobytes() != ds.ravel().tobytes():
                    bad.append(f"{p}: {name} read by VTK differs from {ref}")
                state = f"state/{name}"
                if state in f and f[state][...].tobytes() != ds.tobytes():
                    bad.append(f"{p}: {name} is not the file's /{state}")
    return bad


def rectilinear(p, f, mesh, topology):
    """A rectilinear mesh as VTK reads it (a vtkRectilinearGrid): its x, y
    (and z) coordinate arrays are the HDF5 file's /grid/<axis>_edges to the
    bit, its points (x fastest, VTK's point numbering) those edges combined,
    no node-position datasets are stored, and the fields' array shape is
    (z, y, x) or (y, x): x fastest, as the XDMF rectilinear mesh requires."""
    from vtkmodules.util.numpy_support import vtk_to_numpy
    from vtkmodules.vtkCommonCore import vtkPoints

    bad = []
    if not mesh.IsA("vtkRectilinearGrid"):
        return [f"{p}: {topology} read by VTK as {mesh.GetClassName()}, not a rectilinear grid"]
    three = topology == "3DRectMesh"
    names = ["x", "y", "z"] if three else ["x", "y"]
    edges = [f[f"grid/{a}_edges"][...] for a in names]
    got = [vtk_to_numpy(c) for c in (mesh.GetXCoordinates(), mesh.GetYCoordinates(), mesh.GetZCoordinates())]
    for a, e, g in zip(names, edges, got):
        if g.tobytes() != e.tobytes():
            bad.append(f"{p}: VTK's {a} coordinates differ from /grid/{a}_edges")
    if not three and (len(got[2]) != 1 or got[2][0] != 0.0):
        bad.append(f"{p}: a 2D rectilinear mesh has z coordinates {got[2]}")
    shape = f["state/density"].shape
    if tuple(shape) != tuple(len(e) - 1 for e in reversed(edges)):
        bad.append(f"{p}: fields of shape {shape} do not store x fastest")
    if any(f"grid/node_{c}" in f for c in "xyz"):
        bad.append(f"{p}: node positions stored for a rectilinear mesh")
    try:
        points = mesh.GetPoints()  # VTK 9.4 and later
    except TypeError:
        points = vtkPoints()
        mesh.GetPoints(points)
    pts = vtk_to_numpy(points.GetData())
    full = edges + ([] if three else [np.zeros(1)])
    grids = np.meshgrid(*reversed(full), indexing="ij")[::-1]
    want = np.stack([g.ravel() for g in grids], axis=1)
    if pts.shape != want.shape or pts.tobytes() != want.tobytes():
        bad.append(f"{p}: VTK's points differ from the edges combined (x fastest)")
    return bad


def nesting(args):
    """A grid stored in a declared nesting holds the same numbers as the
    natural one, transposed (numpy.transpose), to the bit: every dataset of
    /background, /state and /perturbation, and the axes' edges and centres."""
    natural, nested, nat_order, order = args[0], args[1], args[2].split(","), args[3].split(",")
    perm = [nat_order.index(a) for a in order]
    bad = []
    with h5py.File(natural, "r") as a, h5py.File(nested, "r") as b:
        for axis in nat_order:
            for part in ("edges", "centers"):
                n = f"grid/{axis}_{part}"
                if a[n][...].tobytes() != b[n][...].tobytes():
                    bad.append(f"{nested}: /{n} differs")
        count = 0
        for group in ("background", "state", "perturbation"):
            if group not in a:
                continue
            if sorted(a[group]) != sorted(b[group]):
                bad.append(f"{nested}: /{group} holds {sorted(b[group])}, not {sorted(a[group])}")
                continue
            for name in a[group]:
                x, y = a[f"{group}/{name}"][...], b[f"{group}/{name}"][...]
                want = np.ascontiguousarray(np.transpose(x, perm))
                if y.shape != want.shape or y.tobytes() != want.tobytes():
                    bad.append(f"{nested}: /{group}/{name} is not /{group}/{name} of {natural} transposed")
                count += 1
        if count == 0:
            bad.append(f"{nested}: no fields compared")
    return bad


def arrays(args):
    import json

    bad = []
    h5, dirs = args[0], args[1:]
    with h5py.File(h5, "r") as f:
        for d in map(Path, dirs):
            meta = json.loads((d / "metadata.json").read_text())
            kind = meta["format"]["kind"]
            def load(name, shape, dtype, order="C"):
                p = d / name
                if kind == "npy":
                    return np.load(p)
                return np.fromfile(p, dtype=dtype).reshape(shape, order=order)
            for a in meta["axes"]:
                for part in ("centers", "edges"):
                    ref = f[f"grid/{a['name']}_{part}"][...]
                    got = load(a[part], ref.shape, meta["format"].get("axes_dtype"))
                    if got.astype("<f8").tobytes() != ref.astype("<f8").tobytes():
                        bad.append(f"{d}: {a[part]} differs from /grid/{a['name']}_{part}")
            if meta["axis_order"] != [a["name"] for a in meta["axes"]]:
                bad.append(f"{d}: axis_order does not list the axes")
            for fl in meta["fields"]:
                ref = f[f"state/{fl['name']}"][...]
                fmt = meta["format"]
                got = load(fl["file"], tuple(fl["shape"]), fmt.get("fields_dtype"), fmt.get("array_order", "C"))
                want = ref
                if kind == "raw":
                    want = ref.astype(np.dtype(fmt["fields_dtype"]).newbyteorder("="))
                if got.shape != want.shape or np.ascontiguousarray(got).astype(want.dtype).tobytes() != want.tobytes():
                    bad.append(f"{d}: {fl['file']} differs from /state/{fl['name']}")
                if fl["units"] != f[f"state/{fl['name']}"].attrs["units"]:
                    bad.append(f"{d}: units of {fl['name']} differ from the HDF5 attribute")
    return bad


def csv(args):
    import re

    import pandas
    from astropy import units as u
    from astropy.table import Table

    path, h5 = args
    bad = []
    arr = np.genfromtxt(path, delimiter=",", names=True)
    frame = pandas.read_csv(path)
    table = Table.read(path, format="csv")
    with h5py.File(h5, "r") as f:
        for k, col in enumerate(frame.columns):
            m = re.fullmatch(r"(\w+) \[(.*)\]", col)
            if not m:
                bad.append(f"{path}: header `{col}` is not `name [units]`")
                continue
            name, unit = m.groups()
            ds = f[f"grid/{name}_centers"] if k == 0 else f[f"state/{name}"]
            ref = ds[...]
            if unit != ds.attrs["units"]:
                bad.append(f"{path}: {name} has units {unit}, the HDF5 file {ds.attrs['units']}")
            try:
                if f["scales"].attrs["system"] != "code":
                    u.Unit(unit)
            except ValueError as e:
                bad.append(f"{path}: astropy cannot read the unit `{unit}` of {name}: {e}")
            for reader, got in [
                ("numpy.genfromtxt", arr[arr.dtype.names[k]]),
                ("pandas.read_csv", frame[col].to_numpy()),
                ("astropy Table.read", np.asarray(table[col])),
            ]:
                if got.astype("<f8").tobytes() != ref.astype("<f8").tobytes():
                    bad.append(f"{path}: {name} through {reader} differs from the HDF5 file")
    return bad


def subset(args):
    """The file holds exactly the listed fields, with the filters and chunks
    its attributes state (h5py's view of the dataset creation properties), and
    the first axis has the cell count the overridden parameter gave."""
    path, names, filters, cells = args
    bad = []
    with h5py.File(path, "r") as f:
        got = sorted(f["state"])
        if got != sorted(names.split(",")):
            bad.append(f"{path}: fields {got}, wanted {names}")
        for n in got:
            ds = f[f"background/{n}"]
            if ds.attrs["filters"] != filters:
                bad.append(f"{path}: {n} states filters {ds.attrs['filters']!r}")
            if ("deflate" in filters) != (ds.compression == "gzip") or ("shuffle" in filters) != ds.shuffle:
                bad.append(f"{path}: {n} has compression {ds.compression}, shuffle {ds.shuffle}")
            if ds.attrs["chunks"] != " x ".join(map(str, ds.chunks)):
                bad.append(f"{path}: {n} states chunks {ds.attrs['chunks']}, has {ds.chunks}")
            if ds.shape[0] != int(cells):
                bad.append(f"{path}: {n} has {ds.shape[0]} rows, wanted {cells}")
        if "N_R" not in f.attrs["profile"]:
            bad.append(f"{path}: the profile attribute does not record the parameter")
    return bad


def main():
    verb, args = sys.argv[1], sys.argv[2:]
    bad = {"xdmf": xdmf, "arrays": arrays, "csv": csv, "subset": subset, "nesting": nesting}[verb](
        args
    )
    for b in bad:
        print(b)
    print(f"{verb}: {'FAIL' if bad else 'ok'} ({len(args)} files)")
    sys.exit(1 if bad else 0)


main()
