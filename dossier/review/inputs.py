"""Every file one case rests on, read once: the case file, its kept earlier
revisions, its signature file and the board's trusted keys.

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
from dossier.errors import DossierError
from dossier.review.revisions import archived_revisions
from dossier.review.keys import trusted_keys_path
from dossier.review.signatures import signatures_path


@dataclass(frozen=True)
class FileRead:
    """A file that may be absent: its bytes, or why they could not be read."""

    path: Path
    data: bytes | None = None
    problem: str | None = None  # e.g. "cannot read the signatures: Permission denied"

    @property
    def exists(self) -> bool:
        return self.data is not None or self.problem is not None


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

    @property
    def path(self) -> Path:
        return self.source.path

    def key_parts(self) -> list[bytes | str]:
        """Everything read, for a cache key: names and bytes (or what went wrong)."""
        parts: list[bytes | str] = ["case", str(self.source.path), self.source.data]
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


def read_optional(path: Path, what: str) -> FileRead:
    """The bytes of ``path`` if it is a regular file; absent is not a problem."""
    if not path.exists() and not path.is_symlink():
        return FileRead(path)
    if not path.is_file():
        return FileRead(path, problem=f"{path}: cannot read the {what}: not a regular file")
    try:
        return FileRead(path, path.read_bytes())
    except OSError as err:
        return FileRead(path, problem=f"{path}: cannot read the {what}: {err.strerror or err}")


def read_case_inputs(path: str | Path) -> CaseInputs:
    """Read the case file at ``path`` and every file beside it that it rests on.

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
    return CaseInputs(source, tuple(kept), sig, trusted)


__all__ = ["FileRead", "KeptRevision", "CaseInputs", "read_optional", "read_case_inputs"]
