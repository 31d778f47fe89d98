"""Benchmark: loading the species library data file and building its lookup
indexes (part of every command's start-up).  Best and median of 9 runs.

    .venv/bin/python bench/library_load.py
"""
from __future__ import annotations

import os
import statistics
import sys
import time

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))


def main() -> int:
    from dossier.library.lookup import Library

    path = os.path.join(os.path.dirname(__file__), "..", "dossier", "data", "species.json")
    raw = open(path, "rb").read()
    times = []
    for _ in range(9):
        t0 = time.perf_counter()
        lib = Library.from_json_bytes(raw)
        lib.resolve("water", "l")
        times.append(time.perf_counter() - t0)
    print(f"library load ({len(lib)} records, {len(raw) / 1e6:.2f} MB): best {min(times) * 1e3:.1f} ms, "
          f"median {statistics.median(times) * 1e3:.1f} ms (target < 100 ms)")
    return 0 if statistics.median(times) < 0.1 else 1


if __name__ == "__main__":
    raise SystemExit(main())
