"""Compare the datasets of HDF5 files byte for byte (h5py, following soft
links): every file must hold the same datasets, of the same type and shape,
with identical bytes and the same `checksum` attribute (SHA-256 of the
values; a parallel build computes it by reading the file back, a serial one
as it writes). Used by tests/mpi.rs: builds across MPI ranks against
a serial build. Exit 1 on any difference."""
import sys

import h5py
import numpy as np


def datasets(path):
    out = {}
    with h5py.File(path, "r") as f:
        def visit(name, obj):
            if isinstance(obj, h5py.Dataset):
                out[name] = (
                    obj.dtype.str,
                    obj.shape,
                    np.ascontiguousarray(obj[()]).tobytes(),
                    obj.attrs.get("checksum"),
                )
        # visititems does not follow soft links: walk the groups by name.
        def walk(group, prefix):
            for key in group:
                obj = group[key]  # follows soft links
                name = f"{prefix}{key}"
                if isinstance(obj, h5py.Group):
                    walk(obj, name + "/")
                else:
                    visit(name, obj)
        walk(f, "")
    return out


def main():
    ref_path, *others = sys.argv[1:]
    ref = datasets(ref_path)
    if not any(k.startswith("background/") for k in ref):
        print(f"{ref_path}: no /background datasets")
        return 1
    bad = 0
    for name, entry in ref.items():
        if name.startswith("background/") and entry[3] is None:
            print(f"{ref_path}:/{name}: no checksum attribute")
            bad += 1
    for path in others:
        got = datasets(path)
        if sorted(got) != sorted(ref):
            print(f"{path}: datasets {sorted(got)} differ from {sorted(ref)}")
            bad += 1
            continue
        for name, (dtype, shape, data, _) in ref.items():
            g = got[name]
            if g[0] != dtype or g[1] != shape:
                print(f"{path}:/{name}: {g[0]} {g[1]} against {dtype} {shape}")
                bad += 1
            elif g[2] != data:
                a = np.frombuffer(data, dtype=dtype)
                b = np.frombuffer(g[2], dtype=dtype)
                n = int(np.count_nonzero(a != b))
                print(f"{path}:/{name}: {n} values differ")
                bad += 1
            elif g[3] != ref[name][3]:
                print(f"{path}:/{name}: checksum {g[3]} against {ref[name][3]}")
                bad += 1
        print(f"{path}: {len(ref)} datasets identical to {ref_path}" if not bad else "")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
