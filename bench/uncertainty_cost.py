"""The cost of carrying stated uncertainties into a case's figures, per demo case.

Runs ``evaluate`` on every demo case twice in one process, alternating: with the
default number of Monte Carlo draws and with a single draw (which still runs every
step of the propagation, so the difference is the cost of the draws themselves).
Prints the median time of each and their difference per case.

    .venv/bin/python bench/uncertainty_cost.py [--repeat 5]
"""
from __future__ import annotations

import argparse
import dataclasses
import statistics
import time
from pathlib import Path

from dossier.assess.evaluate import evaluate
from dossier.casefile.load import parse_source, read_source
from dossier.engine.settings import DEFAULT
from dossier.library.lookup import Library

CASES = Path(__file__).resolve().parent.parent / "cases"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    lib = Library.default()
    one = dataclasses.replace(DEFAULT, uncertainty_samples=1)
    print(f"{'case':28} {'draws':>6} {'with draws / ms':>16} {'one draw / ms':>14} "
          f"{'cost / ms':>10}")
    total_with = total_one = 0.0
    for path in sorted(CASES.glob("*.md")):
        case = parse_source(read_source(path))
        evaluate(case, lib)  # warm: imports, estimates, caches
        t_with, t_one = [], []
        for _ in range(args.repeat):
            for settings, into in ((DEFAULT, t_with), (one, t_one)):
                start = time.perf_counter()
                evaluate(case, lib, settings=settings)
                into.append(time.perf_counter() - start)
        w, o = statistics.median(t_with) * 1e3, statistics.median(t_one) * 1e3
        total_with += w
        total_one += o
        print(f"{path.stem:28} {DEFAULT.uncertainty_samples:>6} {w:>16.1f} {o:>14.1f} "
              f"{w - o:>10.1f}")
    print(f"{'all cases':28} {'':>6} {total_with:>16.1f} {total_one:>14.1f} "
          f"{total_with - total_one:>10.1f}")


if __name__ == "__main__":
    main()
