"""Findings: hazard and data notes, each with a severity, one sentence with
its numbers, and the method or source it rests on.

The rules that write them are in :mod:`dossier.assess.rules`.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Iterable

SEVERITIES = ("information", "caution", "warning", "critical")


@dataclass(frozen=True)
class Finding:
    rule: str
    severity: str  # one of SEVERITIES
    text: str
    source: str

    def __post_init__(self) -> None:
        if self.severity not in SEVERITIES:
            raise ValueError(f"unknown severity {self.severity!r}")

    @property
    def rank(self) -> int:
        return SEVERITIES.index(self.severity)

    def to_dict(self) -> dict:
        return {"rule": self.rule, "severity": self.severity, "text": self.text,
                "source": self.source}


def worst(findings: Iterable[Finding]) -> Finding | None:
    fs = list(findings)
    return max(fs, key=lambda f: f.rank) if fs else None
