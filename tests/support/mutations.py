"""Seeded mutations of valid case files, and the run that checks each one.

Shared by ``tests/system/test_fuzz_case.py`` (a small seeded run in the suite)
and ``bench/fuzz_cases.py`` (the 10,000-input run, with its result in
``bench/README.md``).  Every mutated file must end in an assessment whose JSON
is finite or in one located :class:`~dossier.errors.DossierError`; an input
that raises anything else is a *traceback*, one that takes longer than
:data:`SLOW_SECONDS` is *slow* (issue 16: 0 of either).
"""
from __future__ import annotations

import json
import random
import signal
import time
import traceback
from dataclasses import dataclass, field
from pathlib import Path

from dossier.assess.evaluate import assess_case
from dossier.casefile.load import CaseSource, parse_source
from dossier.errors import DossierError

#: An input slower than this (seconds, parse and assessment) is counted as slow.
SLOW_SECONDS = 2.0
#: An input still running after this many seconds is stopped and counted as a hang.
HANG_SECONDS = 20

HUGE_AND_TINY = ["1e308", "-1e308", "1e-400", "5e-324", "1" + "0" * 5000, "9" * 4300,
                 "0", "-0.0", "1e20", "1e21", "0.000000001", "123456789012345678901234567890"]
NAN_INF = ["nan", "inf", "-inf", "NaN", "Infinity", "+inf", "nan K", "inf bar", "-inf kg"]
UNICODE = ["é", "°", "µ", "\u2028", "\u200b", "\ufeff", "😀", "\u0301", "\uffff", "Ω", "\x00",
           "\u202e", "ﬁ", "Å"]
WINDOWS = ['["6000 K", "1e9 K"]', '["300 K", "1e12 K"]', '["1e-300 K", "300 K"]',
           '["300 K", "9999 K"]', '["0.001 K", "10000 K"]', '["-273.15 degC", "1e4 degC"]',
           '["300 K", "300.000001 K"]', '["1 K", "2 K"]']


@dataclass
class Outcome:
    """What one run found."""

    inputs: int = 0
    results: int = 0     # assessed, finite JSON
    errors: int = 0      # one located DossierError
    tracebacks: list[tuple[int, str, str]] = field(default_factory=list)  # (index, kind, text)
    slow: list[tuple[int, float]] = field(default_factory=list)          # (index, seconds)
    slowest: float = 0.0
    seconds: float = 0.0


def seeds(folders: list[Path], library) -> list[str]:
    """The text of every valid case file (``*.md``) directly in ``folders``, sorted:
    the files the mutations start from."""
    texts = [p.read_text(encoding="utf-8") for folder in folders
             for p in sorted(Path(folder).glob("*.md"))]
    return [t for t in texts if run_one(t.encode("utf-8"), library)[0] == "result"]


def _lines_with_values(lines: list[str]) -> list[int]:
    return [i for i, line in enumerate(lines) if " = " in line and not line.startswith("[")]


def _replace_value(rng: random.Random, lines: list[str], values: list[str]) -> None:
    at = _lines_with_values(lines)
    if at:
        i = rng.choice(at)
        key, old = lines[i].split(" = ", 1)
        value = rng.choice(values)
        quoted = old.strip().startswith('"') and rng.random() < 0.7
        if quoted:  # keep a unit where there was one
            unit = old.strip().strip('"').split(" ", 1)[1:] or [""]
            value = f'"{value} {unit[0]}"'.replace(' "', '"')
        lines[i] = f"{key} = {value}"


def _mutate_text(rng: random.Random, text: str) -> str:
    lines = text.split("\n")
    op = rng.randrange(10)
    if op == 0 and lines:      # delete a line
        del lines[rng.randrange(len(lines))]
    elif op == 1 and lines:    # duplicate a line
        i = rng.randrange(len(lines))
        lines.insert(i, lines[i])
    elif op == 2:              # swap the values of two lines
        at = _lines_with_values(lines)
        if len(at) >= 2:
            i, j = rng.sample(at, 2)
            (ki, vi), (kj, vj) = lines[i].split(" = ", 1), lines[j].split(" = ", 1)
            lines[i], lines[j] = f"{ki} = {vj}", f"{kj} = {vi}"
    elif op == 3:
        _replace_value(rng, lines, HUGE_AND_TINY)
    elif op == 4:
        _replace_value(rng, lines, NAN_INF)
    elif op == 5:              # unicode somewhere
        i = rng.randrange(len(lines))
        pos = rng.randrange(len(lines[i]) + 1)
        lines[i] = lines[i][:pos] + rng.choice(UNICODE) * rng.randint(1, 3) + lines[i][pos:]
    elif op == 6:              # deep nesting
        depth = rng.choice([10, 100, 600, 3000])
        opener, closer = rng.choice([("[", "]"), ("{a=", "}")])
        body = opener * depth + ("1" if opener != "[" else "") + closer * depth
        lines.insert(min(2, len(lines)), f"deep = {body}")
    elif op == 7:              # a long dotted key
        parts = rng.choice([3, 32, 33, 500, 20_000])
        key = ".".join(["k"] * parts) if rng.random() < 0.5 else \
            " . ".join(f'"p{n}"' for n in range(parts))
        lines.insert(min(2, len(lines)), f"{key} = 1")
    elif op == 8:              # a huge or odd window
        at = [i for i, line in enumerate(lines) if line.startswith("temperature = ")]
        if at:
            lines[at[0]] = "temperature = " + rng.choice(WINDOWS)
    else:                      # cut the file anywhere
        return text[:rng.randrange(len(text) + 1)]
    return "\n".join(lines)


def mutate(rng: random.Random, text: str) -> bytes:
    """One to three text mutations, then sometimes byte flips, of ``text``."""
    for _ in range(rng.randint(1, 3)):
        text = _mutate_text(rng, text)
    data = bytearray(text.encode("utf-8", "surrogatepass"))
    if data and rng.random() < 0.25:
        for _ in range(rng.randint(1, 4)):
            data[rng.randrange(len(data))] ^= 1 << rng.randrange(8)
    return bytes(data)


class _Hang(Exception):
    pass


def _alarm(signum, frame):
    raise _Hang


def run_one(data: bytes, library, name: str = "fuzz.md") -> tuple[str, str, float]:
    """("result" | "error" | "traceback" | "hang", detail, seconds) for one input."""
    start = time.perf_counter()
    old = signal.signal(signal.SIGALRM, _alarm)
    signal.alarm(HANG_SECONDS)
    try:
        case = parse_source(CaseSource(Path(name), data, name))
        json.dumps(assess_case(case, library).to_dict(), allow_nan=False)
        kind, detail = "result", ""
    except DossierError as err:
        bad = [p for p in err.problems if p.file != name or not (p.message or "").strip()]
        kind, detail = ("traceback", f"unlocated problems: {bad}") if bad or not err.problems \
            else ("error", str(err.problems[0]))
    except _Hang:
        kind, detail = "hang", f"stopped after {HANG_SECONDS} s"
    except Exception:  # noqa: BLE001 - counting every other exception is the point
        kind, detail = "traceback", traceback.format_exc(limit=-3)
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)
    return kind, detail, time.perf_counter() - start


def run(n: int, seed: int, texts: list[str], library, budget_seconds: float) -> Outcome:
    """Mutate ``texts`` ``n`` times with ``random.Random(seed)``; stop early when
    ``budget_seconds`` have passed (``Outcome.inputs`` says how many ran)."""
    rng = random.Random(seed)
    out = Outcome()
    began = time.perf_counter()
    for index in range(n):
        if time.perf_counter() - began > budget_seconds:
            break
        kind, detail, seconds = run_one(mutate(rng, rng.choice(texts)), library)
        out.inputs += 1
        out.slowest = max(out.slowest, seconds)
        if kind == "result":
            out.results += 1
        elif kind == "error":
            out.errors += 1
        else:
            out.tracebacks.append((index, kind, detail))
        if seconds > SLOW_SECONDS:
            out.slow.append((index, seconds))
    out.seconds = time.perf_counter() - began
    return out
