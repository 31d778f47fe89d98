"""Whether a case is ready for the board at its status, as plain data.

Made by :mod:`dossier.review.readiness` (the rules); shown by ``dossier check``,
the dossier page and the register.
"""
from __future__ import annotations

from dataclasses import dataclass

from dossier.errors import Problem


@dataclass(frozen=True)
class Readiness:
    """The readiness rules of one case's status, applied.

    ``needs`` says in words what the status asks of a case (empty for a status
    without rules); ``problems`` are the rules the case breaks, each with the
    file, the line and the key; ``notes`` are facts the board should know that
    are not faults (a draft naming a meeting does not join it); ``excused`` are the
safety inputs the case says do not apply, with the reasons it gives.
    """

    status: str
    needs: str
    problems: tuple[Problem, ...] = ()
    notes: tuple[str, ...] = ()
    excused: tuple[tuple[str, str], ...] = ()  # (safety table, why it does not apply)

    @property
    def ready(self) -> bool:
        return not self.problems


__all__ = ["Readiness"]
