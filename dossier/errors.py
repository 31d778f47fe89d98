"""The one place where dossier's error types live.

Every error that reaches a user carries one or more :class:`Problem` records:
the file, the line, the key and what was expected.  The command line prints
them one per line and exits with :data:`EXIT_BAD_INPUT`; a traceback is shown
only with ``--debug``.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Iterable

EXIT_OK = 0
EXIT_CHECK_FAILED = 1  # e.g. a signature no longer matches (dossier verify)
EXIT_BAD_INPUT = 2


@dataclass(frozen=True)
class Problem:
    """One thing wrong with an input, located as precisely as we can."""

    message: str
    file: str | None = None
    line: int | None = None
    key: str | None = None

    def __str__(self) -> str:
        where = ""
        if self.file:
            where = self.file if self.line is None else f"{self.file}:{self.line}"
        parts = [p for p in (where, f"key '{self.key}'" if self.key else "") if p]
        prefix = ": ".join(parts)
        return f"{prefix}: {self.message}" if prefix else self.message


class DossierError(Exception):
    """Base class: an input problem the user can fix (exit code 2)."""

    def __init__(self, problems: str | Problem | Iterable[Problem]):
        if isinstance(problems, str):
            problems = [Problem(problems)]
        elif isinstance(problems, Problem):
            problems = [problems]
        self.problems: tuple[Problem, ...] = tuple(problems)
        super().__init__("\n".join(str(p) for p in self.problems))

    def located(self, file: str | None = None, line: int | None = None,
                key: str | None = None) -> "DossierError":
        """The same error with missing location fields filled in."""
        fixed = [
            Problem(p.message, p.file or file, p.line if p.line is not None else line,
                    p.key or key)
            for p in self.problems
        ]
        return type(self)(fixed)


class CaseError(DossierError):
    """A case file is malformed or inconsistent."""


class ReactionError(DossierError):
    """A reaction string cannot be parsed, or does not balance."""


class FormulaError(DossierError):
    """A chemical formula cannot be parsed."""


class SpeciesError(DossierError):
    """A species cannot be found in the library, or is ambiguous."""


class UnknownSpeciesError(SpeciesError):
    """No library species answers a label; ``nearest`` holds the ids of the nearest
    names, or of the species in other phases (empty when none is near)."""

    def __init__(self, problems: str | Problem | Iterable[Problem],
                 nearest: tuple[str, ...] = ()):
        super().__init__(problems)
        self.nearest = tuple(nearest)


class LibraryError(DossierError):
    """The species library data file is damaged or inconsistent."""


class UnitError(DossierError):
    """A quantity has no unit, a unit of the wrong dimension, or is not a number."""


class SignatureError(DossierError):
    """A key, trusted-keys or signatures file is unusable or malformed."""
