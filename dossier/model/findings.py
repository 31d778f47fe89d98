"""Findings: hazard and data notes written by small, named rules.

A rule is a plain function of the assessment's parts that returns zero or
more :class:`Finding` records.  Rules are registered with :func:`rule` and run
in registration order by :func:`run_rules`; each names its method or source,
and states its numbers in one sentence.  To add a rule, write a function in
this module (or any module imported by :mod:`dossier.assess.evaluate`), decorate it
with ``@rule("short-name")``, and add a test with one small case that fires
it and one that does not.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Iterable

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


RuleFunction = Callable[[object], Iterable[Finding]]
_RULES: list[tuple[str, RuleFunction]] = []


def rule(name: str) -> Callable[[RuleFunction], RuleFunction]:
    """Register a rule under a short, stable name."""

    def register(fn: RuleFunction) -> RuleFunction:
        if any(n == name for n, _ in _RULES):
            raise ValueError(f"rule {name!r} registered twice")
        _RULES.append((name, fn))
        return fn

    return register


def registered_rules() -> tuple[str, ...]:
    return tuple(n for n, _ in _RULES)


def run_rules(subject: object) -> tuple[Finding, ...]:
    """Run every rule on ``subject``; most severe first, then in rule order."""
    out: list[Finding] = []
    for _name, fn in _RULES:
        out.extend(fn(subject))
    return tuple(sorted(out, key=lambda f: -f.rank))


def worst(findings: Iterable[Finding]) -> Finding | None:
    fs = list(findings)
    return max(fs, key=lambda f: f.rank) if fs else None
