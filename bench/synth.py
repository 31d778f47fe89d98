"""Generate N synthetic case files for the build benchmarks.

    .venv/bin/python bench/synth.py N OUT_DIR

Each case is one of the demonstration cases in cases/ (real reactions from
the species library with their temperature windows; several with [charge],
[vessel] and [decomposition] tables), renamed and given its own title and a
slightly different upper temperature (so every case has its own numbers and
figures).  Only the first ten keep a review meeting, so that the meeting
packets stay the size of a real meeting; the others become drafts.  Kept
revisions and signatures are not copied.
"""
from __future__ import annotations

import re
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "cases"

_TEMPERATURE = re.compile(r'^(temperature = \["[^"]*", ")(-?[0-9.]+)( degC"\])$', re.M)
_MEETING = re.compile(r"^meeting = .*\n", re.M)
_STATUS = re.compile(r'^status = "[^"]*"$', re.M)
_TITLE = re.compile(r'^title = "([^"]*)"$', re.M)


def templates() -> list[tuple[str, str]]:
    """(stem, text) of the demonstration cases, in name order."""
    return [(p.stem, p.read_text(encoding="utf-8")) for p in sorted(DEMO.glob("*.md"))]


def synthetic_case(i: int, stem: str, text: str) -> str:
    text = _TITLE.sub(lambda m: f'title = "{m.group(1)} (synthetic {i})"', text, count=1)
    text = _TEMPERATURE.sub(
        lambda m: f"{m.group(1)}{float(m.group(2)) + (i % 7):g}{m.group(3)}", text, count=1)
    if i >= 10 and _MEETING.search(text.split("+++")[1]):
        text = _MEETING.sub("", text, count=1)
        text = _STATUS.sub('status = "draft"', text, count=1)
        text = re.sub(r"(?ms)^\[\[review\]\].*?(?=^\[|^\+\+\+)", "", text)
    return text


def write_cases(n: int, out: Path) -> list[Path]:
    out.mkdir(parents=True, exist_ok=True)
    demo = templates()
    paths = []
    for i in range(n):
        stem, text = demo[i % len(demo)]
        path = out / f"s{i:04d}-{stem}.md"
        path.write_text(synthetic_case(i, stem, text), encoding="utf-8")
        paths.append(path)
    return paths


def main() -> int:
    if len(sys.argv) != 3:
        print(__doc__)
        return 2
    paths = write_cases(int(sys.argv[1]), Path(sys.argv[2]))
    print(f"wrote {len(paths)} cases into {sys.argv[2]}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
