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
]
