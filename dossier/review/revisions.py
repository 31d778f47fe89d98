"""Revision history: what changed between the revisions of a case.

Earlier revisions are kept as files beside the case, in a folder named after
it: ``cases/<id>/rev-<N>.md`` (the current revision stays ``cases/<id>.md``).
When a case is resubmitted, its author copies the current file to
``cases/<id>/rev-<N>.md`` before editing and raises ``revision``.  The build
assesses every kept revision with the same library and tool, and the dossier
shows, step by step, the inputs that changed and the assessment figures that
moved (ΔG° at the window ends, crossovers, equilibrium conversion, heat per
batch, ΔT_ad, MTSR, TD24, criticality class) and the findings that appeared
or went away.

:func:`archived_revisions` lists the files; everything else here is pure.
"""
from __future__ import annotations

import re
from pathlib import Path
from typing import Any, Iterable, Mapping

from dossier.model.assessment import Assessment
from dossier.model.decisions import Change, RevisionHistory, RevisionStep

_REV_FILE = re.compile(r"^rev-(\d{1,4})\.md$")


def archived_revisions(case_path: Path) -> list[tuple[int, Path]]:
    """The kept earlier revisions of a case, oldest first: ``[(N, path), ...]``.

    Only regular files named ``rev-<N>.md`` directly inside ``cases/<id>/``
    count; links are ignored, so an archive cannot point outside the cases
    folder.
    """
    folder = case_path.with_suffix("")
    if not folder.is_dir() or folder.is_symlink():
        return []
    found = []
    for p in folder.iterdir():
        m = _REV_FILE.match(p.name)
        if m and p.is_file() and not p.is_symlink():
            found.append((int(m.group(1)), p))
    return sorted(found)


def flatten(header: Mapping[str, Any], prefix: str = "") -> dict[str, str]:
    """Dotted key paths to display text; arrays of tables are counted from 1."""
    out: dict[str, str] = {}
    for key, value in header.items():
        path = f"{prefix}.{key}" if prefix else str(key)
        if isinstance(value, Mapping):
            out.update(flatten(value, path))
        elif isinstance(value, list) and value and all(isinstance(v, Mapping) for v in value):
            for i, item in enumerate(value, start=1):
                out.update(flatten(item, f"{path}[{i}]"))
        elif isinstance(value, list):
            out[path] = "[" + ", ".join(str(v) for v in value) + "]"
        else:
            out[path] = str(value)
    return out


#: Header keys that change with every revision by design, or belong to reviews
#: and closures of conditions.
_IGNORED = re.compile(r"^(revision|(review|closure)\[\d+\](\..*)?)$")


def input_changes(old_header: Mapping[str, Any], new_header: Mapping[str, Any],
                  old_narrative: str = "", new_narrative: str = "") -> tuple[Change, ...]:
    old, new = flatten(old_header), flatten(new_header)
    out = []
    for key in sorted(set(old) | set(new)):
        if _IGNORED.match(key):
            continue
        a, b = old.get(key, "(not given)"), new.get(key, "(not given)")
        if a != b:
            out.append(Change(key, a, b))
    if old_narrative.strip() != new_narrative.strip():
        out.append(Change("narrative", "earlier text", "revised text"))
    return tuple(out)


def _fmt(value: float | None, fmt: str, unit: str) -> str:
    return "not assessed" if value is None else f"{format(value, fmt)} {unit}".strip()


def key_figures(a: Assessment) -> dict[str, str]:
    """The figures whose movement a board wants to see, as display text."""
    t = a.thermo
    lo, hi = t.window_K
    rows = {r.T_K: r for r in t.profile}
    first, last = rows.get(lo), rows.get(hi)
    figs = {
        "ΔG° at the window's low end": _fmt(first.dG_kJ_mol if first else None, ".2f", "kJ/mol"),
        "ΔG° at the window's high end": _fmt(last.dG_kJ_mol if last else None, ".2f", "kJ/mol"),
        "crossover temperatures": ", ".join(f"{c.T:.1f} K" for c in t.crossovers) or "none",
        "equilibrium conversion at the low end": _fmt(first.conversion * 100 if first else None, ".1f", "%"),
        "equilibrium conversion at the high end": _fmt(last.conversion * 100 if last else None, ".1f", "%"),
    }
    s = a.safety
    if s is not None:
        figs.update({
            "heat released per batch": _fmt(s.scale.heat_released_kJ if s.scale else None, ",.0f", "kJ"),
            "adiabatic temperature rise": _fmt(s.adiabatic_rise_K, ".1f", "K"),
            "MTSR": _fmt(s.mtsr_K, ".1f", "K"),
            "TD24": _fmt(s.td24_K, ".1f", "K"),
            "criticality class": str(s.criticality_class) if s.criticality_class else "not assessed",
        })
    return figs


def _finding_labels(a: Assessment) -> set[str]:
    return {f"{f.severity}: {f.rule}" for f in a.findings}


def compare(old_rev: int, old_header: Mapping[str, Any], old_narrative: str, old: Assessment,
            new_rev: int, new_header: Mapping[str, Any], new_narrative: str,
            new: Assessment) -> RevisionStep:
    before, after = key_figures(old), key_figures(new)
    figures = tuple(Change(k, before.get(k, "not assessed"), after.get(k, "not assessed"))
                    for k in after if before.get(k) != after.get(k))
    fo, fn = _finding_labels(old), _finding_labels(new)
    return RevisionStep(
        from_revision=old_rev, to_revision=new_rev,
        inputs=input_changes(old_header, new_header, old_narrative, new_narrative),
        figures=figures,
        findings_added=tuple(sorted(fn - fo)), findings_removed=tuple(sorted(fo - fn)))


def history(case_id: str,
            revisions: Iterable[tuple[int, Mapping[str, Any], str, Assessment]],
            problems: Iterable[str] = ()) -> RevisionHistory:
    """Steps between consecutive revisions (each given as revision number,
    raw header, narrative and assessment), oldest first."""
    revs = sorted(revisions, key=lambda r: r[0])
    steps = tuple(compare(*a, *b) for a, b in zip(revs, revs[1:]))
    return RevisionHistory(case_id, tuple(r[0] for r in revs), steps, tuple(problems))
