"""What-if variants: a case's validated header with a ``[[variant]]``'s changes made.

A variant names a few keys of [charge], [vessel], [decomposition] or [measured]
and their new values (``charge.feed_time = "2 h"``).  Each is turned into a
whole header, the case's own with those values replaced, so that the
assessment runs on it exactly as on the case itself.  A value written with ±
brings its own uncertainty; a value written without one replaces the case's
value and its uncertainty (the variant's value is then taken as exact).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from dossier.casefile.schema import VARIANT_TABLES


@dataclass(frozen=True)
class VariantHeader:
    """One variant as the loader builds it."""

    name: str
    note: str
    changes: tuple[tuple[str, str], ...]   # (key path, value as written)
    top: dict[str, Any]                    # the validated header with the changes made
    uncertainty: dict[str, float]          # key path -> SI half-width, for this variant


def _written(value: Any) -> str:
    if isinstance(value, dict):
        return ", ".join(f"{k} = {v}" for k, v in value.items())
    return str(value)


def variant_headers(top: dict[str, Any], raw: dict[str, Any],
                    uncertainty: dict[str, float]) -> tuple[VariantHeader, ...]:
    """Every ``[[variant]]`` of the validated header ``top`` (``raw``: the same header as
    TOML gives it, for the values as written; ``uncertainty``: the stated half-widths)."""
    out = []
    raw_variants = raw.get("variant") or []
    for index, var in enumerate(top.get("variant") or [], start=1):
        written = raw_variants[index - 1] if index - 1 < len(raw_variants) else {}
        changed = dict(top)
        changed["variant"] = None
        changes: list[tuple[str, str]] = []
        own = {k: u for k, u in uncertainty.items() if not k.startswith("variant[")}
        for table in VARIANT_TABLES:  # the tables a variant may change
            new = var.get(table)
            if not isinstance(new, dict):
                continue
            merged = dict(top.get(table) or {})
            for name, value in new.items():
                if value is None:
                    continue
                merged[name] = value
                key = f"{table}.{name}"
                changes.append((key, _written((written.get(table) or {}).get(name, value))))
                own = {k: u for k, u in own.items() if k != key and not k.startswith(key + ".")}
                prefix = f"variant[{index}].{key}"
                own.update({k[len(f"variant[{index}]."):]: u for k, u in uncertainty.items()
                            if k == prefix or k.startswith(prefix + ".")})
            changed[table] = merged
        out.append(VariantHeader(var["name"], var.get("note") or "", tuple(changes), changed,
                                 own))
    return tuple(out)


__all__ = ["VariantHeader", "variant_headers"]
