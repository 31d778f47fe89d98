"""Every file one case rests on, read once: the case file, its kept earlier
revisions, its signature file, the board's trusted keys and the board's policy
(``board-policy.toml`` in the cases folder, :mod:`dossier.review.policy`).

The build's cache key, the loader, the integrity digest, the signatures and
the revision history all use this one :class:`CaseInputs`, so they can never
come from different reads of a file that is being saved.  Case files are
read by :func:`dossier.casefile.load.read_source` (the only reader of case
files); the signature and key files by :func:`read_optional`.
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from dossier.casefile.load import CaseSource, read_source
from dossier.engine.settings import MethodSettings
from dossier.errors import DossierError
from dossier.review.optional import FileRead, read_optional
from dossier.review.keys import trusted_keys_path
from dossier.review.policy import policy_settings, read_policy
from dossier.review.revisions import archived_revisions
from dossier.review.signatures import signatures_path


@dataclass(frozen=True)
class KeptRevision:
    number: int
    path: Path
    source: CaseSource | None
    problem: str | None = None  # why it could not be read


@dataclass(frozen=True)
class CaseInputs:
    source: CaseSource
    revisions: tuple[KeptRevision, ...]
    signatures: FileRead
    trusted_keys: FileRead
    #: The board's policy file of the cases folder (absent: the published defaults).
    policy: FileRead | None = None

    @property
    def path(self) -> Path:
        return self.source.path

    def settings(self) -> MethodSettings:
        """The method settings of this case: the defaults with the board's policy."""
        return policy_settings(self.policy)

    def key_parts(self) -> list[bytes | str]:
        """Everything read, for a cache key: names and bytes (or what went wrong)."""
        parts: list[bytes | str] = ["case", str(self.source.path), self.source.data]
        if self.policy is not None and self.policy.exists:
            parts += ["policy", _bytes(self.policy)]
        if self.signatures.exists:
            parts += ["signatures", _bytes(self.signatures), "trusted", _bytes(self.trusted_keys)]
        for kept in self.revisions:
            parts += [f"rev-{kept.number}",
                      kept.source.data if kept.source else f"unreadable: {kept.problem}"]
        return parts


def _bytes(read: FileRead) -> bytes:
    if read.data is not None:
        return read.data
    return f"unreadable: {read.problem or 'absent'}".encode()


def read_case_inputs(path: str | Path, policy: FileRead | None = None) -> CaseInputs:
    """Read the case file at ``path`` and every file beside it that it rests on;
    ``policy`` is the cases folder's policy file when the caller read it already.

    Raises the loader's :class:`~dossier.errors.CaseError` when the case file
    itself cannot be read; a kept revision or signature file that cannot be
    read is recorded with its problem, for the dossier to show.
    """
    source = read_source(path)
    kept = []
    for number, rev_path in archived_revisions(source.path):
        try:
            kept.append(KeptRevision(number, rev_path, read_source(rev_path)))
        except DossierError as err:
            why = "; ".join(p.message for p in err.problems)
            kept.append(KeptRevision(number, rev_path, None, why))
    sig = read_optional(signatures_path(source.path), "signatures")
    trusted = (read_optional(trusted_keys_path(source.path.parent), "trusted keys")
               if sig.exists else FileRead(trusted_keys_path(source.path.parent)))
    if policy is None:
        policy = read_policy(source.path.parent)
    return CaseInputs(source, tuple(kept), sig, trusted, policy)


__all__ = ["KeptRevision", "CaseInputs", "read_case_inputs"]
