"""Benchmark: wall time of one whole `dossier evaluate CASE` process
(start-up, loading, assessment, printing), median of several runs.

    .venv/bin/python bench/evaluate_time.py [CASE]
"""
from __future__ import annotations

import os
import statistics
import subprocess
import sys
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)


def main() -> int:
    case = sys.argv[1] if len(sys.argv) > 1 else os.path.join(ROOT, "tests", "fixtures", "cases", "full.md")
    exe = os.path.join(os.path.dirname(sys.executable), "dossier")
    cmd = [exe, "evaluate", case] if os.path.exists(exe) else [sys.executable, "-m", "dossier.cli.main", "evaluate", case]
    subprocess.run(cmd, check=True, capture_output=True)  # warm the file cache and pint's cache
    times = []
    for _ in range(7):
        t0 = time.perf_counter()
        subprocess.run(cmd, check=True, capture_output=True)
        times.append(time.perf_counter() - t0)
    med = statistics.median(times)
    print(f"dossier evaluate {os.path.relpath(case, ROOT)}: median {med:.3f} s, "
          f"min {min(times):.3f} s over {len(times)} runs (target < 1 s)")
    print("  result:", "meets target" if med < 1.0 else "MISSES target")
    return 0 if med < 1.0 else 1


if __name__ == "__main__":
    raise SystemExit(main())
