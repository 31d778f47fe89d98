"""The 10,000-input fuzz run of issue 16: mutated case files, seeded, through
``parse_source`` and ``assess_case``; reports tracebacks, hangs and inputs over 2 s.

    .venv/bin/python bench/fuzz_cases.py [--inputs 10000] [--seed 16] [--budget 3600]

The seeds are the valid cases of ``tests/fixtures/cases`` and the demonstration
cases in ``cases/``; the mutations are in ``tests/support/mutations.py`` (the
suite runs a smaller seeded sample of the same in ``tests/system/test_fuzz_case.py``).
Exits 1 when any input raised something other than a located DossierError,
hung, or took longer than 2 s.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests" / "support"))
import mutations  # noqa: E402

from dossier.library.lookup import Library  # noqa: E402


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--inputs", type=int, default=10_000)
    ap.add_argument("--seed", type=int, default=16)
    ap.add_argument("--budget", type=float, default=3600.0, help="seconds at most")
    args = ap.parse_args()
    library = Library.default()
    texts = mutations.seeds([ROOT / "tests" / "fixtures" / "cases", ROOT / "cases"], library)
    out = mutations.run(args.inputs, args.seed, texts, library, args.budget)
    print(f"seed {args.seed}: {out.inputs} mutated case files from {len(texts)} valid cases "
          f"in {out.seconds:.0f} s: {out.results} assessed, {out.errors} located errors, "
          f"{len(out.tracebacks)} tracebacks or hangs, {len(out.slow)} over "
          f"{mutations.SLOW_SECONDS:.0f} s (slowest {out.slowest:.2f} s)")
    for index, kind, detail in out.tracebacks[:20]:
        print(f"input {index}: {kind}\n{detail}")
    for index, seconds in out.slow[:20]:
        print(f"input {index}: {seconds:.2f} s")
    complete = out.inputs == args.inputs
    return 0 if complete and not out.tracebacks and not out.slow else 1


if __name__ == "__main__":
    sys.exit(main())
