"""The species data file, ``dossier/data/species.json``: its layout and its reader.

The file is written by ``tools/build_library.py``: a header (format, library
version, sources with their citations, the list of record ``fields``) and the
records as arrays in the order of :data:`FILE_FIELDS`.  This is the only
module that reads it; the rows stay parsed JSON until a record is needed
(:func:`record_from_row`), so that loading stays fast.
"""
from __future__ import annotations

import gc
import hashlib
import json
from dataclasses import dataclass
from importlib import resources
from typing import Mapping

from dossier.chem.phases import PHASES
from dossier.errors import LibraryError
from dossier.library.models import Model, Nasa7, Shomate, model_from_dict
from dossier.library.phasedata import PhaseData
from dossier.library.record import MISSING_PROPERTIES, SpeciesRecord

#: Data-file format this code reads.  Format 2 replaced the "stable_range" column
#: (often a data-fit range) by phase boundaries ("phase_data") and added the
#: structure ("smiles") and the properties the source lacks ("missing").
DATA_FORMAT = 2

# Column order of records in the data file (its header repeats it as "fields").
FILE_FIELDS = ("id", "name", "aliases", "formula", "elements", "charge", "phase", "model",
               "source", "note", "uncertainty", "cas", "molar_mass", "smiles", "phase_data",
               "missing")
_F = {name: i for i, name in enumerate(FILE_FIELDS)}

#: Column of each field that lookups read from rows not yet turned into records.
COL_ID, COL_NAME, COL_ALIASES, COL_FORMULA, COL_PHASE, COL_SOURCE, COL_CAS, COL_SMILES = (
    _F["id"], _F["name"], _F["aliases"], _F["formula"], _F["phase"], _F["source"], _F["cas"],
    _F["smiles"])

#: Format of ``dossier/data/structure_groups.json`` this code reads.
STRUCTURE_GROUPS_FORMAT = 1
_COL_PHASE_DATA = _F["phase_data"]


@dataclass(frozen=True)
class SpeciesData:
    """The contents of a data file: rows checked for shape, not yet records."""

    version: str                     # library version + short hash of the file's bytes
    citations: dict[str, str]        # source key -> citation
    rows: dict[str, list]            # species id -> row in FILE_FIELDS order


@dataclass(frozen=True)
class StructureGroups:
    """The explosophore groups of the library's structures, found once with RDKit
    (``dossier/data/structure_groups.json``, written by tools/make_structure_groups.py)."""

    patterns: str                    # digest of the group patterns the table was made with
    made_with: str                   # e.g. "rdkit 2026.9.1"
    entries: dict[str, list]         # SMILES -> [element counts, group counts]

    def get(self, smiles: str) -> tuple[dict[str, int], dict[str, int]] | None:
        """The element and group counts of ``smiles`` as written, or None."""
        entry = self.entries.get(smiles)
        return (entry[0], entry[1]) if entry is not None else None


def read_structure_groups(raw: bytes) -> StructureGroups:
    """Parse and check the bytes of a table written by tools/make_structure_groups.py."""
    try:
        data = json.loads(raw)
    except ValueError as exc:
        raise LibraryError(f"structure groups file is not valid JSON: {exc}") from None
    if not isinstance(data, dict) or data.get("format") != STRUCTURE_GROUPS_FORMAT:
        found = data.get("format") if isinstance(data, dict) else "?"
        raise LibraryError(f"structure groups file has format {found}, "
                           f"this dossier reads format {STRUCTURE_GROUPS_FORMAT}")
    try:
        entries = data["groups"]
        if not all(isinstance(v, list) and len(v) == 2 and isinstance(v[0], dict)
                   and isinstance(v[1], dict) for v in entries.values()):
            raise TypeError("an entry is not [elements, groups]")
        return StructureGroups(patterns=str(data["patterns"]), made_with=str(data["made_with"]),
                               entries=entries)
    except (KeyError, TypeError, AttributeError) as exc:
        raise LibraryError(f"structure groups file is damaged: {exc}") from None


def read_package_groups() -> bytes:
    """The bytes of the structure groups table shipped in the package."""
    try:
        return resources.files("dossier").joinpath("data/structure_groups.json").read_bytes()
    except (FileNotFoundError, OSError) as exc:
        raise LibraryError(f"structure groups file is missing: {exc}") from None


def read_package_data() -> bytes:
    """The bytes of the data file shipped in the package."""
    try:
        return resources.files("dossier").joinpath("data/species.json").read_bytes()
    except (FileNotFoundError, OSError) as exc:
        raise LibraryError(f"species data file is missing: {exc}") from None


def read_species_data(raw: bytes) -> SpeciesData:
    """Parse and check the bytes of a data file written by tools/build_library.py."""
    gc_was_on = gc.isenabled()
    gc.disable()  # parsing creates many small lists; collecting meanwhile only costs time
    try:
        data = json.loads(raw)
    except ValueError as exc:
        raise LibraryError(f"species data file is not valid JSON: {exc}") from None
    finally:
        if gc_was_on:
            gc.enable()
    if not isinstance(data, dict) or data.get("format") != DATA_FORMAT:
        found = data.get("format") if isinstance(data, dict) else "?"
        raise LibraryError(f"species data file has format {found}, "
                           f"this dossier reads format {DATA_FORMAT}")
    if tuple(data.get("fields", ())) != FILE_FIELDS:
        raise LibraryError("species data file lists unexpected record fields "
                           f"{data.get('fields')}; expected {list(FILE_FIELDS)}")
    try:
        citations = {k: v["citation"] for k, v in data["sources"].items()}
        rows: dict[str, list] = {}
        for row in data["records"]:
            if len(row) != len(FILE_FIELDS):
                raise LibraryError(f"species data file: record {row[:1]} has "
                                   f"{len(row)} fields, expected {len(FILE_FIELDS)}")
            if row[COL_ID] in rows:
                raise LibraryError(f"species data file: duplicate id '{row[COL_ID]}'")
            for key in (row[COL_SOURCE], *_phase_source_keys(row[_COL_PHASE_DATA])):
                if key not in citations:
                    raise LibraryError(f"species data file: record '{row[COL_ID]}' names "
                                       f"unknown source '{key}'")
            rows[row[COL_ID]] = row
    except (KeyError, TypeError, AttributeError) as exc:
        raise LibraryError(f"species data file is damaged: missing {exc}") from None
    version = f"{data.get('library_version', '?')}+{hashlib.sha256(raw).hexdigest()[:12]}"
    return SpeciesData(version=version, citations=citations, rows=rows)


def _phase_source_keys(pd: dict | None) -> list[str]:
    if not pd:
        return []
    keys = [v for _k, v in pd.get("sources", ())]
    if pd.get("vapour_pressure"):
        keys.append(pd["vapour_pressure"]["source"])
    return keys


def _trusted(cls, **values):
    """Build a frozen dataclass from values already in canonical form (data file)."""
    obj = object.__new__(cls)
    for k, v in values.items():
        object.__setattr__(obj, k, v)
    return obj


def _model_from_file(m: dict) -> Model:
    kind = m["kind"]
    if kind == "nasa7":
        return _trusted(Nasa7, ranges=tuple(m["ranges"]),
                        coeffs=tuple(map(tuple, m["coeffs"])), kind=kind)
    if kind == "shomate":
        return _trusted(Shomate, ranges=tuple(m["ranges"]),
                        coeffs=tuple(map(tuple, m["coeffs"])), hf298=m["hf298"], kind=kind)
    return model_from_dict(m)


def record_from_row(row: list, citations: Mapping[str, str]) -> SpeciesRecord:
    """The record of one data-file row (fast path: the file is already canonical)."""
    (sid, name, aliases, formula, elements, charge, phase, model, source, note,
     uncertainty, cas, molar_mass, smiles, phase_data, missing) = row
    if phase not in PHASES:
        raise ValueError(f"unknown phase {phase!r}")
    if any(m not in MISSING_PROPERTIES for m in missing):
        raise ValueError(f"unknown missing property in {missing!r}")
    return _trusted(
        SpeciesRecord, id=sid, name=name, formula=formula,
        elements=tuple(map(tuple, elements)), charge=charge, phase=phase,
        model=_model_from_file(model), source=citations.get(source, source),
        aliases=tuple(aliases), note=note, uncertainty=tuple(map(tuple, uncertainty)),
        cas=cas, molar_mass=molar_mass, smiles=smiles or None,
        phase_data=(PhaseData.from_dict(phase_data).with_citations(citations)
                    if phase_data else None),
        missing=tuple(missing))


__all__ = ["DATA_FORMAT", "FILE_FIELDS", "COL_ID", "COL_NAME", "COL_ALIASES", "COL_FORMULA",
           "COL_PHASE", "COL_SOURCE", "COL_CAS", "COL_SMILES", "STRUCTURE_GROUPS_FORMAT",
           "SpeciesData", "StructureGroups", "read_package_data", "read_package_groups",
           "read_species_data", "read_structure_groups", "record_from_row"]
