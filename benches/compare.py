#!/usr/bin/env python3
"""stillpoint against the scripts a user would write instead.

Builds stillpoint in release, then for each case (benches/cases.py) runs
`stillpoint build` at each thread count and each competing script, in
alternating order, measuring wall time and peak resident memory of each
child process and the size of its output; prints a table, the ratios
against the case's targets (met / NOT MET) and the largest relative
difference per dataset between stillpoint's output and each other output,
so that the figures cannot come from different work.

    python3 benches/compare.py                 # every case, 5 rounds
    python3 benches/compare.py --reps 9 --case tapered-disk-2d
    python3 benches/compare.py --list

Exit status: 0 when every output agrees (targets are reported, not
enforced, unless --strict), 1 with --strict when a target is not met, 2
when a command fails or the outputs disagree.
"""

import argparse
import json
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

import h5py
import numpy as np
from cases import CASES
from harness import MIB, ROOT, RunFailed, agreement, commands, measure


def shell(*argv):
    """Output of a command, or "?" when it cannot run."""
    try:
        return subprocess.run(
            argv, cwd=ROOT, capture_output=True, text=True, check=True
        ).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return "?"


def machine():
    """What the figures were measured on."""
    cpu = "?"
    for line in shell("lscpu").splitlines():
        if line.startswith("Model name:"):
            cpu = line.split(":", 1)[1].strip()
    mem = "?"
    with open("/proc/meminfo") as f:
        for line in f:
            if line.startswith("MemTotal:"):
                mem = f"{int(line.split()[1]) / MIB:.1f} GiB"
    rev = shell("git", "rev-parse", "--short", "HEAD")
    dirty = (
        " (uncommitted changes)"
        if shell("git", "status", "--porcelain", "--untracked-files=no")
        else ""
    )
    return {
        "cpu": cpu,
        "cpus": os.cpu_count(),
        "nproc": shell("nproc"),
        "memory": mem,
        "kernel": platform.release(),
        "commit": rev + dirty,
        "rustc": shell("rustc", "--version"),
        "python": platform.python_version(),
        "numpy": np.__version__,
        "h5py": h5py.__version__,
        "hdf5": h5py.version.hdf5_version,
        "openblas_env": {
            k: os.environ[k] for k in ("OPENBLAS_CORETYPE", "OPENBLAS_L2_SIZE") if k in os.environ
        },
    }


def build_stillpoint():
    """cargo build --release; the path of the binary."""
    subprocess.run(["cargo", "build", "--release", "--locked"], cwd=ROOT, check=True)
    meta = json.loads(shell("cargo", "metadata", "--no-deps", "--format-version", "1"))
    return Path(meta["target_directory"]) / "release" / "stillpoint"


def print_table(results):
    """Wall time (median, min, max), median CPU time, largest peak RSS and
    output size of each run."""
    head = ("run", "threads", "wall median", "min", "max", "CPU median", "peak RSS", "output")
    print(f"  {head[0]:<16}{head[1]:>8}" + "".join(f"{h:>13}" for h in head[2:]))
    for name, m in results.items():
        times = (m.median, min(m.walls), max(m.walls), statistics.median(m.cpu))
        sizes = (m.peak_rss / MIB, m.size / MIB)
        print(
            f"  {name:<16}{m.threads:>8}"
            + "".join(f"{t:>11.3f} s" for t in times)
            + "".join(f"{v:>9.1f} MiB" for v in sizes)
        )


def judge(case, known):
    """Prints each target with its figure and verdict; their JSON records."""
    verdicts = []
    print("  targets:")
    for target in case.targets:
        text, ratio, detail, met = target.judge(known)
        shown = "not measured" if ratio is None else f"{ratio:.2f}"
        verdict = {True: "met", False: "NOT MET", None: "not measured"}[met]
        extra = f" ({detail})" if detail else ""
        print(f"    {text}: {shown}{extra}  {verdict}")
        verdicts.append({"target": text, "ratio": ratio, "detail": detail, "met": met})
    return verdicts


def check_outputs(case, cmds):
    """Compares every output with the first (stillpoint's); prints the
    largest relative difference per dataset. True when all agree."""
    ref, others = cmds[0], [c for c in cmds[1:] if c.compare]
    found = [agreement(ref.output, c.name, c.output) for c in others]
    names = list(dict.fromkeys(n for a in found for n in a.differences))
    print(f"  agreement with {ref.name} (largest relative difference, tolerance {case.rtol:g}):")
    print("    " + f"{'dataset':<28}" + "".join(f"{a.other:>16}" for a in found))
    for n in names:
        cells = "".join(
            f"{a.differences[n]:>16.2e}" if n in a.differences else f"{'-':>16}" for a in found
        )
        print(f"    {n:<28}{cells}")
    ok = True
    for a in found:
        fine = a.ok(case.rtol)
        ok &= fine
        print(
            f"    {a.other}: {'agrees' if fine else 'DISAGREES'} on {len(a.differences)} common datasets"
        )
        if a.only_reference:
            print(f"      only in {ref.name}: {', '.join(a.only_reference)}")
        if a.only_other:
            print(f"      only in {a.other}: {', '.join(a.only_other)}")
        if a.layout:
            name, (r, o) = next(iter(a.layout.items()))
            print(
                f"      stored differently: {len(a.layout)} datasets, e.g. {name}: "
                f"{r} in {ref.name}, {o} in {a.other}"
            )
    return ok, [
        {
            "other": a.other,
            "max_relative": a.differences,
            "only_reference": a.only_reference,
            "only_other": a.only_other,
        }
        for a in found
    ]


def parse_args():
    ap = argparse.ArgumentParser(
        description=__doc__.splitlines()[0], epilog="Cases: " + ", ".join(c.name for c in CASES)
    )
    ap.add_argument("--reps", type=int, default=5, help="timed rounds per case (default 5)")
    ap.add_argument(
        "--warmup", type=int, default=1, help="untimed runs of each command first (default 1)"
    )
    ap.add_argument(
        "--case", action="append", metavar="NAME", help="run only this case (repeatable)"
    )
    ap.add_argument("--list", action="store_true", help="list the cases and exit")
    ap.add_argument("--no-build", action="store_true", help="use the release binary as it is")
    ap.add_argument("--keep", metavar="DIR", help="keep profile copies, outputs and logs in DIR")
    ap.add_argument("--json", metavar="FILE", help="also write the figures as JSON")
    ap.add_argument("--strict", action="store_true", help="exit 1 when a target is not met")
    args = ap.parse_args()
    unknown = set(args.case or []) - {c.name for c in CASES}
    if unknown:
        ap.error(f"unknown case {', '.join(sorted(unknown))} (see --list)")
    if args.reps < 1 or args.warmup < 0:
        ap.error("--reps must be at least 1 and --warmup at least 0")
    return args


def header(info, args):
    """The machine, the software and how the runs are ordered."""
    print(
        f"machine: {info['cpu']}, {info['nproc']} CPUs (nproc), {info['memory']}, "
        f"Linux {info['kernel']}"
    )
    print(f"load average at start: {' '.join(f'{x:.2f}' for x in info['load_start'])}")
    if info["load_start"][0] > 0.5:
        print("note: other processes are running (load > 0.5); wall times include their share")
    print(
        f"software: stillpoint {info['commit']}, {info['rustc']}, Python {info['python']}, "
        f"NumPy {info['numpy']}, h5py {info['h5py']}, HDF5 {info['hdf5']}"
    )
    if info["openblas_env"]:
        print(f"unset for the competing scripts: {info['openblas_env']}")
    print(f"{args.reps} timed rounds per case after {args.warmup} warm-up run(s), ABC CBA order\n")


def run_case(case, binary, folder, args, earlier):
    """Measures, judges and checks one case; its JSON record and status
    (0 fine, 1 a target not met under --strict, 2 failed or disagreeing)."""
    print(f"== {case.name}: {case.about}")
    profile = case.profile.write(folder, case.name)
    cmds = commands(case, binary, profile, folder)
    started = time.time()
    try:
        results, disturbed = measure(cmds, args.reps, args.warmup, folder)
    except RunFailed as e:
        print(f"  FAILED: {e}\n")
        return {"name": case.name, "failed": str(e)}, 2
    print(
        f"  {time.time() - started:.0f} s in all; other processes used {disturbed.others:.1f} "
        f"of {disturbed.capacity:.0f} CPU-seconds during the rounds ({100 * disturbed.share:.1f} %)"
    )
    if disturbed.share > 0.05:
        print("  note: more than 5 % of the machine was busy elsewhere: wall times are disturbed")
    # Targets see this case's runs by name, earlier cases' as "case:run".
    known = dict(earlier, **results)
    earlier.update({f"{case.name}:{k}": v for k, v in results.items()})
    print_table(results)
    verdicts = judge(case, known)
    ok, agree = check_outputs(case, cmds)
    print()
    status = 0 if ok else 2
    if ok and args.strict and any(v["met"] is not True for v in verdicts):
        status = 1
    runs = {
        k: {
            "threads": m.threads,
            "wall_s": m.walls,
            "cpu_s": m.cpu,
            "peak_rss_kB": m.rss_kb,
            "output_bytes": m.size,
        }
        for k, m in results.items()
    }
    record = {"name": case.name, "about": case.about, "runs": runs, "targets": verdicts}
    record["other_processes_cpu_share"] = disturbed.share
    record.update(agreement=agree, agrees=ok)
    return record, status


def main():
    sys.stdout.reconfigure(line_buffering=True)
    args = parse_args()
    if args.list:
        for c in CASES:
            print(f"{c.name:<20} {c.about}")
        return 0
    binary = ROOT / "target" / "release" / "stillpoint"
    if not args.no_build:
        binary = build_stillpoint()
    info = machine()
    info["load_start"] = os.getloadavg()
    header(info, args)
    report, status, earlier = {"machine": info, "cases": []}, 0, {}
    with tempfile.TemporaryDirectory(prefix="stillpoint-bench-") as scratch:
        folder = Path(args.keep or scratch)
        folder.mkdir(parents=True, exist_ok=True)
        for case in CASES:
            if not args.case or case.name in args.case:
                record, st = run_case(case, binary, folder, args, earlier)
                report["cases"].append(record)
                status = max(status, st)
    info["load_end"] = os.getloadavg()
    print(f"load average at end: {' '.join(f'{x:.2f}' for x in info['load_end'])}")
    if args.json:
        Path(args.json).write_text(json.dumps(report, indent=2))
    return status


if __name__ == "__main__":
    sys.exit(main())
