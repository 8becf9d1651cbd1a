"""Open a file built by stillpoint with h5py and plot a slice with matplotlib.

    stillpoint build powerlaw-disk            # writes powerlaw-disk.h5
    python3 examples/h5py_slice.py powerlaw-disk.h5 -o slice.png [--field density]

2D files: the field over the grid in its real shape (a polar grid is drawn
as an annulus from the Cartesian node positions /grid/node_x, /grid/node_y;
a Cartesian grid stored x fastest, which has none, from its edges).
1D files: the field against the coordinate. Units come from the datasets'
`units` attributes; cautions stored in the file are printed.
"""

import argparse

import h5py
import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("file")
    ap.add_argument("-o", "--output", default="slice.png")
    ap.add_argument("--field", default="density")
    a = ap.parse_args()
    with h5py.File(a.file, "r") as f:
        ds = f["state"][a.field]
        values, unit = ds[...], ds.attrs["units"]
        for c in filter(None, f.attrs["cautions"].split("\n")):
            print("caution:", c)
        fig, ax = plt.subplots(figsize=(6, 5))
        if values.ndim == 1:
            axis = [k[: -len("_centers")] for k in f["grid"] if k.endswith("_centers")][0]
            x = f["grid"][f"{axis}_centers"]
            ax.plot(x[...], values)
            ax.set_xlabel(f"{axis} [{x.attrs['units']}]")
            ax.set_ylabel(f"{a.field} [{unit}]")
        elif "grid/node_x" in f:
            x, y = f["grid/node_x"][...], f["grid/node_y"][...]
            if values.ndim > 2:  # 3D: the middle plane of the last axis
                k = values.shape[-1] // 2
                x, y, values = x[..., k], y[..., k], values[..., k]
            m = ax.pcolormesh(x, y, values, cmap="viridis", shading="flat")
            ax.set_aspect("equal")
            ax.set_xlabel(f"x [{f['grid/node_x'].attrs['units']}]")
            ax.set_ylabel(f"y [{f['grid/node_y'].attrs['units']}]")
        else:
            # A Cartesian grid stored x fastest (grid.nesting ["y", "x"] or
            # ["z", "y", "x"]) has no node positions: its edges suffice.
            if values.ndim > 2:  # 3D: the middle plane of z, the first axis
                values = values[values.shape[0] // 2]
            x, y = f["grid/x_edges"], f["grid/y_edges"]
            m = ax.pcolormesh(x[...], y[...], values, cmap="viridis", shading="flat")
            ax.set_aspect("equal")
            ax.set_xlabel(f"x [{x.attrs['units']}]")
            ax.set_ylabel(f"y [{y.attrs['units']}]")
            fig.colorbar(m, label=f"{a.field} [{unit}]")
        ax.set_title(f"{a.file}: {a.field}")
        fig.savefig(a.output, dpi=120, bbox_inches="tight")
    print("wrote", a.output)


main()
