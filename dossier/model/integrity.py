"""Integrity records: the digest a verdict is tied to, and recorded verdicts
checked against it.  Made by :mod:`dossier.review.digest`."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

#: Names the serialisation; bump it if the manifest ever changes shape.
INTEGRITY_FORMAT = "dossier-integrity-2"

#: Hex characters shown in the short display form of a digest.
SHORT_LENGTH = 12


def short_digest(digest: str) -> str:
    """The first 12 hex characters in groups of four, e.g. ``"ba78 16bf 8f01"``."""
    head = digest[:SHORT_LENGTH]
    return " ".join(head[i:i + 4] for i in range(0, len(head), 4))


@dataclass(frozen=True)
class IntegrityRecord:
    """The integrity digest of one case and the component digests it is made of."""

    digest: str                                   # SHA-256 of the manifest, hex
    case_file_digest: str                         # SHA-256 of the case as the loader reads it
    species_digests: tuple[tuple[str, str], ...]  # (record id, SHA-256 of its canonical JSON)
    settings_digest: str                          # SHA-256 of the method settings' canonical JSON
    library_version: str
    tool_version: str
    format: str = INTEGRITY_FORMAT

    @property
    def short(self) -> str:
        """Short display form for pages: ``"ba78 16bf 8f01"``."""
        return short_digest(self.digest)

    def manifest(self) -> dict[str, Any]:
        """The object whose canonical JSON text is hashed into :attr:`digest`."""
        return {
            "format": self.format,
            "case": self.case_file_digest,
            "species": [[sid, d] for sid, d in self.species_digests],
            "library_version": self.library_version,
            "tool_version": self.tool_version,
            "settings": self.settings_digest,
        }

    def to_dict(self) -> dict[str, Any]:
        """The manifest plus the digest itself (for the register and JSON export)."""
        return {**self.manifest(), "digest": self.digest}


@dataclass(frozen=True)
class RecordedReview:
    """A ``[[review]]`` table of the case file, checked against the current digest."""

    name: str
    role: str
    date: str
    verdict: str
    status: str  # "matches" | "changed since reviewed" | "not checkable: no digest"
    explanation: str


__all__ = ["INTEGRITY_FORMAT", "SHORT_LENGTH", "short_digest", "IntegrityRecord",
           "RecordedReview"]
