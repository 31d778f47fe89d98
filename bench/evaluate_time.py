"""Benchmark: start-up of `dossier evaluate`, as a ratio to `python -c "import numpy"`.

    .venv/bin/python bench/evaluate_time.py [--repeats N] [CASE ...]

Target (issue 16): one whole `dossier evaluate CASE` process, and the same
with `--json`, takes at most 2.5x the wall time of a Python process that only
imports numpy, on the same machine.  Both are measured in one run: each
repetition runs the numpy process, then every case with and without
`--json`, in turn, so a change of machine load falls on all of them alike.
The figure is the ratio of the medians (wall time); the median of the CPU
time (user + system, from the operating system's accounting of the child)
is printed too, because it is far less sensitive to other load on a shared
machine.

Without CASE: every demonstration case in cases/ that needs no group
estimate, plus `cases/tame-etherification.md` (it asks for a Benson estimate,
whose library imports scipy and matplotlib; reported on its own line and not
part of the target).

The processes run as an installed package does: with compiled bytecode.  An
environment that sets PYTHONDONTWRITEBYTECODE (as some sandboxes do) would
otherwise make every run compile the whole package from source; the bytecode
goes to a private temporary folder (PYTHONPYCACHEPREFIX), warmed by one run
of each command before timing.
"""
from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
TARGET = 2.5
ESTIMATE_CASES = ("tame-etherification.md",)  # cases that ask for a group estimate


def _timed(cmd: list[str], env: dict[str, str]) -> tuple[float, float]:
    """Wall time and CPU time (user + system) of one whole process."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True, capture_output=True, env=env, cwd=ROOT)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return wall, cpu


def _commands(cases: list[str]) -> dict[str, list[str]]:
    exe = os.path.join(os.path.dirname(sys.executable), "dossier")
    base = [exe] if os.path.exists(exe) else [sys.executable, "-m", "dossier.cli.main"]
    cmds = {"import numpy": [sys.executable, "-c", "import numpy"]}
    for case in cases:
        name = os.path.relpath(case, ROOT)
        cmds[f"evaluate {name}"] = [*base, "evaluate", case]
        cmds[f"evaluate --json {name}"] = [*base, "evaluate", "--json", case]
    return cmds


def _default_cases() -> list[str]:
    folder = os.path.join(ROOT, "cases")
    return [os.path.join(folder, f) for f in sorted(os.listdir(folder)) if f.endswith(".md")]


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("cases", nargs="*")
    parser.add_argument("--repeats", type=int, default=9)
    args = parser.parse_args()
    cases = args.cases or _default_cases()
    cmds = _commands(cases)
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    with tempfile.TemporaryDirectory(prefix="dossier-bench-pyc-") as pyc:
        env["PYTHONPYCACHEPREFIX"] = pyc
        for cmd in cmds.values():  # compile the bytecode, warm the file cache
            _timed(cmd, env)
        walls: dict[str, list[float]] = {k: [] for k in cmds}
        cpus: dict[str, list[float]] = {k: [] for k in cmds}
        for _ in range(args.repeats):
            for key, cmd in cmds.items():
                wall, cpu = _timed(cmd, env)
                walls[key].append(wall)
                cpus[key].append(cpu)
    floor_wall = statistics.median(walls["import numpy"])
    floor_cpu = statistics.median(cpus["import numpy"])
    print(f"{args.repeats} alternated repetitions; medians (wall, CPU); target: "
          f"evaluate <= {TARGET}x import numpy (wall)")
    print(f"  {'import numpy':<52} {floor_wall:6.3f} s {floor_cpu:6.3f} s")
    worst = 0.0
    for key in cmds:
        if key == "import numpy":
            continue
        wall, cpu = statistics.median(walls[key]), statistics.median(cpus[key])
        ratio = wall / floor_wall
        estimate = any(key.endswith(c) for c in ESTIMATE_CASES)
        if not estimate:
            worst = max(worst, ratio)
        note = " (group estimate: not in the target)" if estimate else ""
        print(f"  {key:<52} {wall:6.3f} s {cpu:6.3f} s  {ratio:4.2f}x wall "
              f"{cpu / floor_cpu:4.2f}x CPU{note}")
    verdict = "meets" if worst <= TARGET else "MISSES"
    print(f"  worst ratio {worst:.2f}x: {verdict} the target of {TARGET}x")
    return 0 if worst <= TARGET else 1


if __name__ == "__main__":
    raise SystemExit(main())
