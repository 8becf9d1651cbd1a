#!/usr/bin/env python3
"""Checks the unit record of stillpoint HDF5 files against astropy.

Usage: h5_scales_check.py FILE...

Each file's /scales group (read with h5py) names its `system` and holds one
group per base dimension with `symbol`, `cgs` and `si`. Each value is
compared with astropy.units / astropy.constants (Astropy Collaboration 2022,
ApJ 935, 167): the au is the IAU 2012 B2 value, the solar mass the IAU 2015
B3 nominal (GM)sun over CODATA 2018 G, the year the Julian year. `G` on
/scales is compared with CODATA 2018 in the file's units. Exits non-zero on
any disagreement.
"""
import sys

import h5py

try:
    from astropy import units as u
    from astropy.constants import codata2018 as cd
    from astropy.constants import iau2015 as ia
except ImportError:
    sys.exit("astropy is missing: .ci/run installs it with `pip install astropy`")

UNITS = {
    "m": u.m, "cm": u.cm, "au": ia.au, "kg": u.kg, "g": u.g,
    "M_sun": ia.M_sun, "s": u.s, "yr": u.yr, "K": u.K,
}
CGS = {"length": u.cm, "mass": u.g, "time": u.s, "temperature": u.K}
SI = {"length": u.m, "mass": u.kg, "time": u.s, "temperature": u.K}


def text(value):
    return value.decode() if isinstance(value, bytes) else str(value)


def close(a, b):
    return abs(a - b) <= 1e-14 * abs(b)


def check(path, failures):
    with h5py.File(path, "r") as h5:
        scales = h5["scales"]
        system = text(scales.attrs["system"])
        base = {}
        for dim in ("length", "mass", "time", "temperature"):
            if system == "code":
                if dim in scales:
                    failures.append(f"{path}: code units carry a /scales/{dim} group")
                continue
            g = scales[dim]
            symbol = text(g.attrs["symbol"])
            unit = UNITS[symbol]
            base[dim] = unit
            want_cgs = (1 * unit).to(CGS[dim]).value
            want_si = (1 * unit).to(SI[dim]).value
            for name, got, want in (("cgs", g.attrs["cgs"], want_cgs), ("si", g.attrs["si"], want_si)):
                ok = close(float(got), want)
                print(f"{path}: {system} {dim} [{symbol}] {name} {float(got):.16e} astropy {want:.16e} {'ok' if ok else 'DIFFERS'}")
                if not ok:
                    failures.append(f"{path}: /scales/{dim} {name} differs from astropy")
        got = float(scales.attrs["G"])
        if system == "code":
            want = 1.0
        else:
            want = cd.G.to(base["length"] ** 3 / base["mass"] / base["time"] ** 2).value
        ok = close(got, want)
        print(f"{path}: {system} G {got:.16e} want {want:.16e} {'ok' if ok else 'DIFFERS'}")
        if not ok:
            failures.append(f"{path}: /scales G differs")


def main(paths):
    failures = []
    for p in paths:
        check(p, failures)
    for f in failures:
        print("FAIL:", f)
    print("all checks passed" if not failures else f"{len(failures)} check(s) failed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
