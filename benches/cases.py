"""The benchmark cases run by benches/compare.py.

Owns: the list of cases — for each, the stillpoint profile (a bundled
profile or a variant of one), the competing scripts and the targets. Does not
own how anything is run or judged (harness.py).

Adding a case is one entry in CASES:

    Case(
        name="short-name",                     # chosen with --case
        about="what is built, at what size",
        profile=Variant("profiles/NAME.json", {"grid.x.cells": 192}),
        competitors=[Competitor("numpy", "benches/numpy_NAME.py")],
        targets=[
            Faster("stillpoint-2t", than="numpy", factor=5),
            Faster("stillpoint-2t", than="stillpoint-1t", factor=1.7),
            PeakMemory("stillpoint-2t", fraction=0.25, plus_mib=64),
        ],
    )

A competing script is called as `python3 SCRIPT PROFILE -o OUTPUT` (see
Competitor.args to change that) with the case's profile copy, and writes the
datasets it computes under the same paths as stillpoint; every dataset both
files hold is checked to relative 1e-12. A target may name a run of an
earlier case as "case:run", e.g. Within("stillpoint-2t", of="sphere:stillpoint-2t",
factor=1.5).
"""

from harness import Case, Competitor, Faster, PeakMemory, Variant, Within  # noqa: F401 (for new cases)

BOX_FIELDS = (
    "density",
    "pressure",
    "velocity_x",
    "velocity_y",
    "velocity_z",
    "momentum_x",
    "momentum_y",
    "momentum_z",
    "energy",
)
SPHERE_FIELDS = (
    "density",
    "pressure",
    "velocity_r",
    "velocity_theta",
    "velocity_phi",
    "momentum_r",
    "momentum_theta",
    "momentum_phi",
    "energy",
)

# B′ and C: the softened disk's grid replaced by a spherical one, 192 × 96 × 192,
# ±0.3 rad about the midplane.
SPHERE_GRID = {
    "r": {"from": 0.3, "to": 2.4, "cells": 192},
    "theta": {"from": "pi/2 - 0.3", "to": "pi/2 + 0.3", "cells": 96},
    "phi": {"cells": 192},
}

CASES = [
    # Issue 6, item 8: the bundled tapered Cartesian disk, 1024 × 1024
    # cells, 3-point Gauss–Legendre cell averages per axis, float64.
    Case(
        name="tapered-disk-2d",
        about="tapered Cartesian disk, 1024 × 1024 cells, 3-point cell averages, float64",
        profile=Variant(
            "profiles/tapered-disk-cartesian.json",
            {"grid.x.cells": 1024, "grid.y.cells": 1024, "sampling.points": 3},
        ),
        competitors=[Competitor("numpy", "benches/numpy_tapered_disk.py")],
        targets=[
            Faster("stillpoint-2t", than="numpy", factor=3),
            Faster("stillpoint-2t", than="stillpoint-1t", factor=1.7),
            PeakMemory("stillpoint-2t", fraction=0.25, plus_mib=64),
        ],
    ),
    # Issue 11, benchmark B: a vertically isothermal disk around a softened
    # star on a 3D Cartesian grid (every cell its own R and z, nothing
    # separable), 3-point averages per axis, nine fields in float64.
    Case(
        name="disk-box-3d",
        about="softened stratified disk, Cartesian 192 × 192 × 96, 3-point averages, 9 fields, float64",
        profile=Variant(
            "profiles/softened-disk-box.json",
            {
                "grid.x.cells": 192,
                "grid.y.cells": 192,
                "grid.z.cells": 96,
                "sampling.points": 3,
            },
            additions={"output.fields": list(BOX_FIELDS)},
        ),
        competitors=[Competitor("numpy", "benches/numpy_disk_box.py")],
        # The density law's cavity factor 1 − exp(−(R/R_cav)⁴) cancels near
        # the axis ((R/R_cav)⁴ ~ 1e-6 in the central cells): both programs
        # lose about six digits there, and at cell (95, 95, 48) stillpoint's
        # average is 1.2e-12 below and NumPy's 1.7e-12 above the same
        # 3-point rule in 40-digit mpmath (checked by hand, 2026-12-04). The
        # two agree to 3e-12, so the check is at 1e-11 for this case.
        rtol=1e-11,
        targets=[
            Faster("stillpoint-2t", than="numpy", factor=5),
            Faster("stillpoint-2t", than="stillpoint-1t", factor=1.7),
            PeakMemory("stillpoint-2t", fraction=0.25, plus_mib=64),
        ],
    ),
    # Issue 11, benchmark B′: the same disk on a spherical grid (r, θ, φ)
    # 192 × 96 × 192; axisymmetric, so the work is the writing, measured
    # against writing the same number of datasets of the same shape from
    # memory with h5py.
    Case(
        name="disk-sphere-3d",
        about="softened stratified disk, spherical 192 × 96 × 192, 3-point averages, 9 fields, float64",
        profile=Variant(
            "profiles/softened-disk-box.json",
            {
                "grid": SPHERE_GRID,
                "sampling.points": 3,
            },
            additions={"output.fields": list(SPHERE_FIELDS)},
        ),
        competitors=[
            Competitor(
                "write-only",
                "benches/write_only.py",
                args=("{profile}", "-o", "{output}", "--fields", str(len(SPHERE_FIELDS))),
                compare=False,
            )
        ],
        targets=[Within("stillpoint-2t", of="write-only", factor=1.3)],
    ),
    # Issue 11, benchmark C: B′ with a temperature that rises through a warm
    # surface layer (c² doubling above three scale heights), so that the
    # density comes from a vertical quadrature in every column (accurate to
    # 1e-10 relative: tests/column.rs against mpmath).
    Case(
        name="disk-sphere-3d-warm",
        about="B′ with a warm surface layer: vertical quadrature per column, spherical 192 × 96 × 192",
        profile=Variant(
            "profiles/softened-disk-box.json",
            {
                "grid": SPHERE_GRID,
                "sampling.points": 3,
                "gas.sound_speed_sq": "cs2_0*((R^2 + eps^2)/R0^2)^(-q/2)"
                "*(1 + 0.5*(1 + tanh((abs(z)/(h0*R) - 3)/0.3)))",
            },
            additions={"output.fields": list(SPHERE_FIELDS), "balance.vertical": "quadrature"},
        ),
        competitors=[],
        targets=[Within("stillpoint-2t", of="disk-sphere-3d:stillpoint-2t", factor=1.5)],
    ),
]
