"""The species record: one substance in one phase, its thermo model and provenance."""
from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass
from typing import Any, Mapping

from dossier.chem.phases import PHASES
from dossier.constants import T_REF
from dossier.errors import LibraryError
from dossier.library.models import Model, model_from_dict


@dataclass(frozen=True)
class SpeciesRecord:
    """One substance in one phase, with its thermo model and provenance."""

    id: str
    name: str
    formula: str
    elements: tuple[tuple[str, float], ...]
    charge: int
    phase: str
    model: Model
    source: str
    aliases: tuple[str, ...] = ()
    note: str = ""
    uncertainty: tuple[tuple[str, float], ...] = ()
    stable_range: tuple[float, float] | None = None
    cas: str | None = None
    molar_mass: float = 0.0
    smiles: str | None = None  # structure, where the source or the case gives one

    def __post_init__(self):
        if self.phase not in PHASES:
            raise LibraryError(f"species '{self.id}': unknown phase '{self.phase}'")
        object.__setattr__(self, "elements",
                           tuple((str(e), float(n)) for e, n in self.elements))
        object.__setattr__(self, "aliases", tuple(self.aliases))
        object.__setattr__(self, "uncertainty",
                           tuple((str(k), float(v)) for k, v in self.uncertainty))
        if self.stable_range is not None:
            lo, hi = self.stable_range
            object.__setattr__(self, "stable_range", (float(lo), float(hi)))

    @property
    def hf298(self) -> float:
        """ΔfH°(298.15 K), J/mol (from the model)."""
        return float(self.model.h(T_REF))

    @property
    def s298(self) -> float:
        """S°(298.15 K), J/(mol K) (from the model)."""
        return float(self.model.s(T_REF))

    @property
    def composition(self) -> dict[str, float]:
        return dict(self.elements)

    @property
    def label(self) -> str:
        """Formula with phase, e.g. ``C2H6O(l)``."""
        return f"{self.formula}({self.phase})"

    def to_dict(self) -> dict:
        return {
            "id": self.id,
            "name": self.name,
            "aliases": list(self.aliases),
            "formula": self.formula,
            "elements": [[e, n] for e, n in self.elements],
            "charge": self.charge,
            "phase": self.phase,
            "model": self.model.to_dict(),
            "source": self.source,
            "note": self.note,
            "uncertainty": [[k, v] for k, v in self.uncertainty],
            "stable_range": list(self.stable_range) if self.stable_range else None,
            "cas": self.cas,
            "molar_mass": self.molar_mass,
            **({"smiles": self.smiles} if self.smiles else {}),
        }

    @classmethod
    def from_dict(cls, d: Mapping[str, Any]) -> "SpeciesRecord":
        try:
            sr = d.get("stable_range")
            return cls(
                id=d["id"],
                name=d["name"],
                aliases=tuple(d.get("aliases", ())),
                formula=d["formula"],
                elements=tuple((e, n) for e, n in d["elements"]),
                charge=int(d.get("charge", 0)),
                phase=d["phase"],
                model=model_from_dict(d["model"]),
                source=d["source"],
                note=d.get("note", ""),
                uncertainty=tuple((k, v) for k, v in d.get("uncertainty", ())),
                stable_range=tuple(sr) if sr else None,
                cas=d.get("cas"),
                molar_mass=float(d.get("molar_mass", 0.0)),
                smiles=d.get("smiles") or None,
            )
        except (KeyError, TypeError, ValueError) as exc:
            raise LibraryError(f"species record {d.get('id', '?')!r} is incomplete: {exc}") from None

    def digest(self) -> str:
        """SHA-256 (hex) of the canonical JSON form of the record."""
        text = json.dumps(self.to_dict(), sort_keys=True, separators=(",", ":"), ensure_ascii=False)
        return hashlib.sha256(text.encode("utf-8")).hexdigest()


__all__ = ["SpeciesRecord"]
