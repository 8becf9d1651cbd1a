"""Outside checks of dataset checksums (issue 12, part 6), with h5py and
Python's hashlib (SHA-256 as NIST FIPS 180-4 specifies it; hashlib wraps
OpenSSL's implementation, independent of the Rust one in the tool).

  sums FILE...     every field dataset (hard links of every group but /grid
                   and /scales) records `checksum` = "sha256:" + the SHA-256
                   of its values in C order, little-endian, as stored
  spoil FILE PATH  changes one value of dataset PATH by one unit in the last
                   place (numpy.nextafter), in place
"""
import hashlib
import sys

import h5py
import numpy as np


def field_datasets(f):
    for g in sorted(f.keys()):
        if g in ("grid", "scales"):
            continue
        grp = f[g]
        for name in sorted(grp.keys()):
            link = grp.get(name, getlink=True)
            if isinstance(link, h5py.HardLink):
                yield f"/{g}/{name}", grp[name]


def sums(paths):
    n = 0
    for p in paths:
        with h5py.File(p, "r") as f:
            for path, ds in field_datasets(f):
                data = np.ascontiguousarray(ds[()], dtype=ds.dtype.newbyteorder("<"))
                want = "sha256:" + hashlib.sha256(data.tobytes()).hexdigest()
                got = ds.attrs["checksum"]
                got = got.decode() if isinstance(got, bytes) else got
                assert got == want, f"{p}{path}: recorded {got}, hashlib {want}"
                n += 1
    assert n > 0, "no field datasets"
    print(f"sums: ok ({n} datasets)")


def spoil(path, name):
    with h5py.File(path, "r+") as f:
        ds = f[name]
        a = ds[()]
        flat = a.reshape(-1)
        i = flat.size // 2
        flat[i] = np.nextafter(flat[i], np.inf, dtype=a.dtype)
        ds[...] = a
    print("spoil: ok")


if __name__ == "__main__":
    verb = sys.argv[1]
    if verb == "sums":
        sums(sys.argv[2:])
    elif verb == "spoil":
        spoil(sys.argv[2], sys.argv[3])
    else:
        raise SystemExit(f"unknown verb {verb}")
