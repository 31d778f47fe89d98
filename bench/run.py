"""Run every benchmark in bench/ in one process tree and report: `make bench`."""
from __future__ import annotations

import os
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
SCRIPTS = ["thermo_speed.py", "library_load.py", "evaluate_time.py", "build_bench.py",
           "fuzz_cases.py"]


def main() -> int:
    worst = 0
    for name in SCRIPTS:
        print(f"== {name}")
        rc = subprocess.call([sys.executable, os.path.join(HERE, name)])
        worst = max(worst, rc)
    return worst


if __name__ == "__main__":
    raise SystemExit(main())
