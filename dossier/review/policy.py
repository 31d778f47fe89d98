"""A board's policy: the optional file ``board-policy.toml`` in the cases folder,
by which a review board adopts its own thresholds and bands, naming its own
source for each value it changes.

The file is read with the other files of a case (:mod:`dossier.review.inputs`,
once per build); this module only parses its bytes into the
:class:`~dossier.engine.settings.MethodSettings` every assessment of the folder
then uses.  Every key is checked; each problem names the file, the line and the
key, and says what was expected.  The format::

    policy = "Orrowby Works safety board: criteria of March 2026"

    [severity_bands_K]             # the two limits between low, medium and high
    limits = [30, 150]
    source = "Board minute 2026-03, item 4, after the 2025 incident review"

    [enthalpy_mismatch_fraction]   # a number, in the unit the name ends with
    value = 0.15
    source = "..."

    [criticality_findings]         # the finding severity of each level or class
    value = { 3 = "critical" }
    source = "..."

Only the settings in :data:`~dossier.engine.settings.POLICY_KEYS` may be
changed; values are in the unit the setting's name ends with (K, h, s, J_per_g,
kJ_mol, pct; fractions and ratios bare).
"""
from __future__ import annotations

import dataclasses
import difflib
import math
import re
import tomllib
from pathlib import Path
from typing import Any

from dossier.casefile.locate import locate_keys
from dossier.engine.settings import DEFAULT, POLICY_KEYS, MethodSettings
from dossier.errors import CaseError, Problem
from dossier.model.findings import SEVERITIES
from dossier.review.optional import FileRead, read_optional

#: The policy file's name in the cases folder.
POLICY_FILE = "board-policy.toml"
#: A policy is a few kilobytes.
MAX_POLICY_BYTES = 1_000_000

_BANDS = ("severity_bands_K", "probability_bands_h", "pressure_severity_bands")
_FRACTIONS = ("equilibrium_limited_below", "enthalpy_mismatch_fraction")
_FINDINGS = ("severity_findings", "probability_findings", "criticality_findings",
             "limit_findings")
_ANY_NUMBER = ("un_oxygen_balance_pct",)


def policy_path(cases_folder: Path) -> Path:
    """Where the policy of the cases in ``cases_folder`` is."""
    return Path(cases_folder) / POLICY_FILE


def read_policy(cases_folder: str | Path) -> FileRead:
    """The board's policy file of ``cases_folder`` (read once per build)."""
    return read_optional(policy_path(Path(cases_folder)), "board policy")


def policy_settings(policy: FileRead | None) -> MethodSettings:
    """The settings a policy file read gives: the defaults when there is none;
    a :class:`~dossier.errors.CaseError` naming the file when it cannot be used."""
    if policy is None or not policy.exists:
        return DEFAULT
    if policy.data is None:
        why = (policy.problem or "cannot read the board policy").removeprefix(f"{policy.path}: ")
        raise CaseError(Problem(why, str(policy.path)))
    return parse_policy(policy.path, policy.data)


def parse_policy(path: Path, data: bytes, base: MethodSettings = DEFAULT) -> MethodSettings:
    """``base`` with the values of the policy file ``data`` (read from ``path``).

    Raises :class:`~dossier.errors.CaseError` with every problem found, located."""
    where = str(path)
    if len(data) > MAX_POLICY_BYTES:
        raise CaseError(Problem("the policy file is larger than 1 MB; a policy is a few "
                                "kilobytes", where))
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        line = data[:err.start].count(b"\n") + 1
        raise CaseError(Problem(f"the file is not valid UTF-8: byte {err.start} "
                                f"(0x{data[err.start]:02x}) cannot be decoded; save the file "
                                "as UTF-8", where, line)) from None
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        m = re.search(r"line (\d+)", str(err))
        raise CaseError(Problem(f"TOML syntax error: {err}", where,
                                int(m.group(1)) if m else None)) from None
    except RecursionError:
        raise CaseError(Problem("the file nests arrays or tables too deeply", where)) from None
    lines = locate_keys(text)
    problems: list[Problem] = []

    def problem(message: str, key: str) -> None:
        line = lines.get(key, lines.get(key.split(".")[0]))
        problems.append(Problem(message, where, line, key))

    name = doc.pop("policy", None)
    if not isinstance(name, str) or not name.strip():
        problem("expected policy = \"...\": the name of the board's policy (who adopted it, "
                "and when)", "policy")
    changes: dict[str, Any] = {}
    sources: list[tuple[str, str]] = []
    for key, entry in doc.items():
        if key not in POLICY_KEYS:
            problem(_unknown(key), key)
            continue
        value = _entry(key, entry, base, problem)
        if value is not None:
            changes[key] = value
            sources.append((key, entry["source"].strip()))
    if problems:
        raise CaseError(sorted(problems, key=lambda p: (p.line or 0, p.key or "")))
    return dataclasses.replace(base, **changes, policy=str(name).strip(),
                               policy_sources=tuple(sources))


def _unknown(key: str) -> str:
    if key in {f.name for f in dataclasses.fields(MethodSettings)}:
        return (f"'{key}' is a method setting, not one of the board's thresholds or bands; "
                "a policy may change only: " + ", ".join(POLICY_KEYS))
    close = difflib.get_close_matches(key, POLICY_KEYS, n=1, cutoff=0.6)
    hint = f"; did you mean '{close[0]}'?" if close else ""
    return f"unknown key '{key}'{hint} (a policy may change: {', '.join(POLICY_KEYS)})"


def _entry(key: str, entry: Any, base: MethodSettings, problem) -> Any:
    """The setting's new value from its table, or None after reporting the problems."""
    field = "limits" if key in _BANDS else "value"
    if not isinstance(entry, dict):
        problem(f"expected a table [{key}] with {field} = ... and source = \"...\"", key)
        return None
    ok = True
    for extra in sorted(set(entry) - {field, "source"}):
        problem(f"unknown key '{extra}' in [{key}]: expected {field} and source", f"{key}.{extra}")
        ok = False
    source = entry.get("source")
    if not isinstance(source, str) or not source.strip():
        problem("expected source = \"...\": where the board's value comes from (a standard, "
                "a report, a minute of the board)", f"{key}.source")
        ok = False
    if field not in entry:
        problem(f"expected {field} = ...", key)
        return None
    value = _value(key, entry[field], base, lambda m: problem(m, f"{key}.{field}"))
    return value if ok else None


def _number(raw: Any) -> float | None:
    if isinstance(raw, bool) or not isinstance(raw, (int, float)) or not math.isfinite(raw):
        return None
    return float(raw)


def _value(key: str, raw: Any, base: MethodSettings, problem) -> Any:
    current = getattr(base, key)
    if key in _BANDS:
        limits = [_number(x) for x in raw] if isinstance(raw, list) else []
        if len(limits) != 2 or None in limits or not 0 <= limits[0] < limits[1]:
            problem("expected two increasing numbers of zero or more, the limits between "
                    f"{', '.join(b[0] for b in current)}, e.g. [{current[0][2]:g}, "
                    f"{current[1][2]:g}]")
            return None
        (l0, lo0, _), (l1, _, _), (l2, _, hi2) = current
        return ((l0, lo0, limits[0]), (l1, limits[0], limits[1]), (l2, limits[1], hi2))
    if key in _FINDINGS:
        levels = {str(k): v for k, v in current}
        if not isinstance(raw, dict) or not raw:
            problem("expected a table of finding severities, e.g. { "
                    + ", ".join(f'{k} = "{v}"' for k, v in list(levels.items())[:2]) + " }")
            return None
        out = dict(levels)
        bad = False
        for level, severity in raw.items():
            if level not in levels:
                problem(f"unknown level '{level}': expected one of {', '.join(levels)}")
                bad = True
            elif severity not in SEVERITIES:
                problem(f"level '{level}': expected one of {', '.join(SEVERITIES)}, "
                        f"not {severity!r}")
                bad = True
            else:
                out[level] = severity
        if bad:
            return None
        return tuple((k, out[str(k)]) for k, _v in current)
    x = _number(raw)
    if key in _FRACTIONS:
        if x is None or not 0 < x <= 1:
            problem("expected a fraction above 0 and at most 1 (e.g. 0.2 for 20 %)")
            return None
        return x
    if key in _ANY_NUMBER:
        if x is None:
            problem("expected a finite number")
        return x
    if x is None or x <= 0:
        problem("expected a number above zero, in the unit the key's name ends with")
        return None
    return x


__all__ = ["POLICY_FILE", "MAX_POLICY_BYTES", "policy_path", "parse_policy", "policy_settings",
           "read_policy"]
