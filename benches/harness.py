"""Machinery of the benchmark harness: cases, timed child processes,
targets and the agreement check.

Owns: what a case is (a stillpoint profile or variant, competing scripts,
targets), running each command of a case as a child process and measuring
its wall time, peak resident memory (ru_maxrss from os.wait4 in a small
launcher process, kB on Linux) and
output size, judging the targets, and checking that every output holds the
same numbers as stillpoint's. Does not own the list of cases (cases.py) or
the command line (compare.py).
"""

import json
import os
import statistics
import subprocess
import sys
import time
from dataclasses import dataclass, field
from pathlib import Path

import h5py
import numpy as np

ROOT = Path(__file__).resolve().parent.parent
MIB = 1024 * 1024


# ---------------------------------------------------------------- cases


@dataclass
class Variant:
    """A profile of the repository, optionally with keys changed.

    `changes` maps dotted JSON paths to new values, e.g.
    {"grid.x.cells": 1024}. The copy is written to the run's temporary
    folder; `edges_file` entries are made absolute so they still resolve."""

    base: str
    changes: dict = field(default_factory=dict)
    # Keys the base profile does not have, added (dotted paths, as `changes`).
    additions: dict = field(default_factory=dict)

    def write(self, folder: Path, name: str) -> Path:
        base = ROOT / self.base
        profile = json.loads(base.read_text())
        for table, new in ((self.changes, False), (self.additions, True)):
            for dotted, value in table.items():
                *parents, last = dotted.split(".")
                node = profile
                for key in parents:
                    node = node[key]
                if new and last in node:
                    raise KeyError(f"{self.base}: key `{dotted}` exists; change it instead")
                if not new and last not in node:
                    raise KeyError(f"{self.base}: no key `{dotted}` to change")
                node[last] = value
        for axis in profile.get("grid", {}).values():
            if isinstance(axis, dict) and "edges_file" in axis:
                axis["edges_file"] = str((base.parent / axis["edges_file"]).resolve())
        path = folder / f"{name}.json"
        path.write_text(json.dumps(profile, indent=2))
        return path


@dataclass
class Competitor:
    """A script doing the same work as stillpoint, run with `python3`.

    `args` is the argument list after the script, with `{profile}` (the
    case's profile copy) and `{output}` (the HDF5 file to write) filled in.
    Its output is checked against stillpoint's when `compare` is true."""

    name: str
    script: str
    threads: int = 2
    args: tuple = ("{profile}", "-o", "{output}")
    compare: bool = True


@dataclass
class WallRatio:
    """Target on median wall times: median(`num`) / median(`den`) at least
    `bound` (`at_least`) or at most `bound`. Runs of earlier cases are named
    `case:run`. Made by [`Faster`] and [`Within`]."""

    num: str
    den: str
    bound: float
    at_least: bool
    text: str
    slower: str = ""  # the run to call slower when a speed-up is below 1

    def judge(self, results):
        ratio, detail = time_ratio(results, self.num, self.den)
        if ratio is None:
            return self.text, None, None, None
        if self.slower and ratio < 1:
            detail += f"; {self.slower} takes {1 / ratio:.2f}× the time"
        met = ratio >= self.bound if self.at_least else ratio <= self.bound
        return self.text, ratio, detail, met


def Faster(run, than, factor):
    """Target: `run` at least `factor` times faster than `than` (wall)."""
    text = f"{run} ≥ {factor:g}× faster than {than} (wall)"
    return WallRatio(than, run, factor, True, text, slower=run)


def Within(run, of, factor):
    """Target: `run` takes at most `factor` times the wall time of `of`."""
    return WallRatio(run, of, factor, False, f"{run} ≤ {factor:g}× the wall time of {of}")


@dataclass
class PeakMemory:
    """Target: largest peak RSS of `run` ≤ `fraction` × its output file +
    `plus_mib` MiB. The figure shown is peak RSS / that limit."""

    run: str
    fraction: float = 0.25
    plus_mib: float = 64

    def judge(self, results):
        text = (
            f"{self.run} peak RSS ≤ {100 * self.fraction:g} % of its output + {self.plus_mib:g} MiB"
        )
        m = results.get(self.run)
        if m is None:
            return text, None, None, None
        limit = self.fraction * m.size + self.plus_mib * MIB
        ratio = m.peak_rss / limit
        detail = f"{m.peak_rss / MIB:.1f} MiB against {limit / MIB:.1f} MiB"
        return text, ratio, detail, ratio <= 1


@dataclass
class Case:
    """One benchmark: a stillpoint build, its competitors and targets.

    stillpoint runs once per entry of `threads` (RAYON_NUM_THREADS), named
    `stillpoint-<n>t`; the first is the reference every other output is
    checked against, to relative `rtol`."""

    name: str
    about: str
    profile: Variant
    competitors: list
    targets: list
    threads: tuple = (2, 1)
    stillpoint_args: tuple = ()
    rtol: float = 1e-12


@dataclass
class Command:
    """One child process of a case and where it writes."""

    name: str
    threads: int
    argv: list
    env: dict
    output: Path
    compare: bool = True


def commands(case: Case, binary: Path, profile: Path, folder: Path) -> list:
    """The commands of a case, stillpoint first (reference), then the
    competitors."""
    base = dict(os.environ)
    cmds = []
    for n in case.threads:
        out = folder / f"{case.name}-stillpoint-{n}t.h5"
        argv = [str(binary), "build", str(profile), "-o", str(out), "--force"]
        env = dict(base, RAYON_NUM_THREADS=str(n))
        cmds.append(Command(f"stillpoint-{n}t", n, argv + list(case.stillpoint_args), env, out))
    for c in case.competitors:
        out = folder / f"{case.name}-{c.name}.h5"
        fill = {"profile": str(profile), "output": str(out)}
        argv = [sys.executable, str(ROOT / c.script)] + [a.format(**fill) for a in c.args]
        env = dict(base)
        # Some machines set these two as a work-around for old OpenBLAS
        # builds; they slow a current NumPy, so both go together.
        env.pop("OPENBLAS_CORETYPE", None)
        env.pop("OPENBLAS_L2_SIZE", None)
        for var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
            env[var] = str(c.threads)
        cmds.append(Command(c.name, c.threads, argv, env, out, c.compare))
    return cmds


# ---------------------------------------------------------------- timing


@dataclass
class Measured:
    """Every timed run of one command."""

    threads: int
    walls: list = field(default_factory=list)
    cpu: list = field(default_factory=list)  # user + system seconds
    rss_kb: list = field(default_factory=list)
    size: int = 0

    @property
    def median(self):
        return statistics.median(self.walls)

    @property
    def peak_rss(self):
        """Largest peak RSS over the runs, in bytes."""
        return max(self.rss_kb) * 1024


class RunFailed(Exception):
    """A child process exited non-zero."""


# A child's ru_maxrss on Linux includes the memory it inherited at fork
# (and, with vfork, the parent's own): a command forked straight from this
# harness, which holds h5py, numpy and earlier outputs, would be charged
# for them. Each command is therefore started by a fresh small interpreter
# that forks it and reports the command's own rusage: the figure includes
# at most that launcher's few MiB at fork, never the harness's.
LAUNCHER = """
import os, sys
pid = os.fork()
if pid == 0:
    os.execvp(sys.argv[2], sys.argv[2:])
_, status, u = os.wait4(pid, 0)
with open(sys.argv[1], "w") as f:
    f.write(f"{u.ru_utime + u.ru_stime} {u.ru_maxrss}")
sys.exit(os.waitstatus_to_exitcode(status))
"""


def run_once(cmd: Command, folder: Path):
    """Runs `cmd` once on a fresh output: (wall seconds, CPU seconds, peak
    RSS kB), the CPU and memory of the command itself (see LAUNCHER)."""
    cmd.output.unlink(missing_ok=True)
    log = folder / f"{cmd.output.stem}.log"
    usage_file = folder / f"{cmd.output.stem}.rusage"
    with open(log, "w") as sink:
        start = time.perf_counter()
        proc = subprocess.Popen(
            [sys.executable, "-S", "-c", LAUNCHER, str(usage_file), *cmd.argv],
            env=cmd.env,
            cwd=ROOT,
            stdout=sink,
            stderr=sink,
        )
        proc.wait()
        wall = time.perf_counter() - start
    if proc.returncode != 0:
        tail = log.read_text()[-2000:]
        raise RunFailed(f"{cmd.name} exited {proc.returncode}: {' '.join(cmd.argv)}\n{tail}")
    cpu, rss = usage_file.read_text().split()
    return wall, float(cpu), int(rss)


def busy_cpu_seconds():
    """CPU time spent by everything on the machine since boot (user, nice,
    system, irq, softirq from /proc/stat), in seconds."""
    with open("/proc/stat") as f:
        fields = f.readline().split()
    user, nice, system, _idle, _iowait, irq, softirq = map(int, fields[1:8])
    return (user + nice + system + irq + softirq) / os.sysconf("SC_CLK_TCK")


@dataclass
class Disturbance:
    """CPU time other processes used while the timed rounds ran, against
    the machine's capacity (elapsed time × CPUs). Kernel threads count as
    others, so the write-back of the outputs adds a little of its own."""

    others: float
    capacity: float

    @property
    def share(self):
        return self.others / self.capacity if self.capacity > 0 else 0.0


def measure(cmds: list, reps: int, warmup: int, folder: Path, progress=print):
    """Runs every command `warmup` times untimed, then `reps` timed rounds;
    the measurements per command and the disturbance during the rounds.
    Even rounds run the commands in order, odd rounds reversed (ABC, CBA,
    …), so of any two commands each runs first in alternate rounds."""
    for _ in range(warmup):
        for cmd in cmds:
            run_once(cmd, folder)
    results = {c.name: Measured(c.threads) for c in cmds}
    start, busy, mine = time.perf_counter(), busy_cpu_seconds(), os.times()
    for r in range(reps):
        order = cmds if r % 2 == 0 else cmds[::-1]
        for cmd in order:
            wall, cpu, rss = run_once(cmd, folder)
            m = results[cmd.name]
            m.walls.append(wall)
            m.cpu.append(cpu)
            m.rss_kb.append(rss)
            progress(f"  round {r + 1}/{reps}: {cmd.name:<16} {wall:7.3f} s  {rss / 1024:7.1f} MiB")
    now = os.times()
    own = now.user + now.system - mine.user - mine.system
    children = sum(sum(m.cpu) for m in results.values())
    others = busy_cpu_seconds() - busy - own - children
    elapsed = time.perf_counter() - start
    for cmd in cmds:
        results[cmd.name].size = cmd.output.stat().st_size
    return results, Disturbance(max(others, 0.0), elapsed * (os.cpu_count() or 1))


def time_ratio(results, num: str, den: str):
    """median(num) / median(den), with the range of the per-round ratios and
    the ratio of the fastest runs (less disturbed by other processes on a
    shared machine) as detail; None when either run was not measured."""
    a, b = results.get(num), results.get(den)
    if a is None or b is None:
        return None, None
    paired = [x / y for x, y in zip(a.walls, b.walls)]
    best = min(a.walls) / min(b.walls)
    detail = f"per round {min(paired):.2f}–{max(paired):.2f}, of minima {best:.2f}"
    return a.median / b.median, detail


# ---------------------------------------------------------------- agreement


def datasets(path: Path) -> dict:
    """Every dataset reachable in the file, through hard or soft links:
    {path: how}, `how` "dataset" or "soft link to …". Values are read one
    dataset at a time by `agreement`: the harness stays small, and a child
    forked from it starts small (Linux counts the RSS a child inherits at
    fork in its `ru_maxrss`)."""
    found = {}

    def walk(group, prefix):
        for key in group:
            link = group.get(key, getlink=True)
            obj = group[key]
            name = f"{prefix}/{key}"
            if isinstance(obj, h5py.Group):
                walk(obj, name)
            else:
                how = f"soft link to {link.path}" if isinstance(link, h5py.SoftLink) else "dataset"
                found[name] = how

    with h5py.File(path, "r") as f:
        walk(f, "")
    return found


def relative_difference(a: np.ndarray, b: np.ndarray) -> float:
    """max |a − b| / max(|a|, |b|) elementwise (0 where both are 0, inf
    where shapes differ or a value is not finite)."""
    if a.shape != b.shape:
        return float("inf")
    a, b = a.astype(np.float64), b.astype(np.float64)
    if not (np.isfinite(a).all() and np.isfinite(b).all()):
        return float("inf")
    scale = np.maximum(np.abs(a), np.abs(b))
    diff = np.abs(a - b)
    with np.errstate(invalid="ignore", divide="ignore"):
        rel = np.where(scale > 0, diff / np.where(scale > 0, scale, 1.0), 0.0)
    return float(rel.max()) if rel.size else 0.0


@dataclass
class Agreement:
    """Largest relative difference per common dataset between the reference
    output and another run's, and what only one of them has."""

    other: str
    differences: dict
    only_reference: list
    only_other: list
    layout: dict  # datasets stored differently: name -> (reference, other)

    def ok(self, rtol):
        return bool(self.differences) and all(d <= rtol for d in self.differences.values())


def agreement(reference: Path, other_name: str, other: Path) -> Agreement:
    """Compares every dataset the two files have in common."""
    ref, oth = datasets(reference), datasets(other)
    common = [n for n in ref if n in oth]
    differences = {}
    with h5py.File(reference, "r") as a, h5py.File(other, "r") as b:
        for n in common:
            differences[n] = relative_difference(a[n][()], b[n][()])
    return Agreement(
        other=other_name,
        differences=differences,
        only_reference=[n for n in ref if n not in oth],
        only_other=[n for n in oth if n not in ref],
        layout={n: (ref[n], oth[n]) for n in common if ref[n] != oth[n]},
    )
