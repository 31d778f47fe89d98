"""The species record: one substance in one phase, its thermo model, phase boundaries and provenance."""
from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass
from typing import Any, Mapping

from dossier.chem.phases import PHASES
from dossier.constants import T_REF
from dossier.errors import LibraryError
from dossier.library.models import Model, model_from_dict
from dossier.library.phasedata import PhaseData

#: Properties a record may lack in its source (listed in ``SpeciesRecord.missing``).
MISSING_PROPERTIES: tuple[str, ...] = ("cp",)


@dataclass(frozen=True)
class SpeciesRecord:
    """One substance in one phase, with its thermo model and provenance.

    ``model.t_min``..``model.t_max`` is the *data range* of the model (where
    its fit holds); whether the phase is the stable one at a temperature
    comes only from ``phase_data`` (melting and boiling points, vapour
    pressure).  ``missing`` lists properties the source does not give (so far
    only "cp": the model then holds Cp at 0 and ``uncertainty`` carries a
    bound on it).
    """

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
    cas: str | None = None
    molar_mass: float = 0.0
    smiles: str | None = None  # structure, where the source or the case gives one
    phase_data: PhaseData | None = None
    missing: tuple[str, ...] = ()

    def __post_init__(self):
        if self.phase not in PHASES:
            raise LibraryError(f"species '{self.id}': unknown phase '{self.phase}'")
        object.__setattr__(self, "elements",
                           tuple((str(e), float(n)) for e, n in self.elements))
        object.__setattr__(self, "aliases", tuple(self.aliases))
        object.__setattr__(self, "uncertainty",
                           tuple((str(k), float(v)) for k, v in self.uncertainty))
        object.__setattr__(self, "missing", tuple(self.missing))
        unknown = [m for m in self.missing if m not in MISSING_PROPERTIES]
        if unknown:
            raise LibraryError(f"species '{self.id}': unknown missing propert"
                               f"{'y' if len(unknown) == 1 else 'ies'} {', '.join(unknown)}")

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
            "cas": self.cas,
            "molar_mass": self.molar_mass,
            **({"smiles": self.smiles} if self.smiles else {}),
            **({"phase_data": self.phase_data.to_dict()} if self.phase_data else {}),
            **({"missing": list(self.missing)} if self.missing else {}),
        }

    @classmethod
    def from_dict(cls, d: Mapping[str, Any]) -> "SpeciesRecord":
        try:
            pd = d.get("phase_data")
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
                cas=d.get("cas"),
                molar_mass=float(d.get("molar_mass", 0.0)),
                smiles=d.get("smiles") or None,
                phase_data=PhaseData.from_dict(pd) if pd else None,
                missing=tuple(d.get("missing", ())),
            )
        except (KeyError, TypeError, ValueError) as exc:
            raise LibraryError(f"species record {d.get('id', '?')!r} is incomplete: {exc}") from None

    def digest(self) -> str:
        """SHA-256 (hex) of the canonical JSON form of the record."""
        text = json.dumps(self.to_dict(), sort_keys=True, separators=(",", ":"), ensure_ascii=False)
        return hashlib.sha256(text.encode("utf-8")).hexdigest()


__all__ = ["MISSING_PROPERTIES", "SpeciesRecord"]
