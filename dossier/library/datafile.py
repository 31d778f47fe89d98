"""The species data file, ``dossier/data/species.json``: its layout and its reader.

The file is written by ``tools/build_library.py``: a header (format, library
version, sources with their citations, the list of record ``fields``, and a
``lookup`` table: id, name, aliases, formula, phase and CAS number of every
record), then the records as arrays in the order of :data:`FILE_FIELDS`, one
per line and in the order of the lookup table.  This is the only module that
reads it.  Loading parses the header alone; a record's line is parsed and
checked when the record is first needed (:func:`parse_row`), so that
``dossier evaluate`` does not parse 2,700 records to use ten.
:func:`check_species_data` parses and checks every line (the tests and the
tools do).
"""
from __future__ import annotations

import gc
import hashlib
import json
from dataclasses import dataclass
from importlib import resources
from typing import Iterator, Mapping

from dossier.chem.phases import PHASES
from dossier.errors import LibraryError
from dossier.library.models import Model, Nasa7, Shomate, model_from_dict
from dossier.library.phasedata import PhaseData
from dossier.library.record import MISSING_PROPERTIES, SpeciesRecord

#: Data-file format this code reads.  Format 2 replaced the "stable_range" column
#: (often a data-fit range) by phase boundaries ("phase_data") and added the
#: structure ("smiles") and the properties the source lacks ("missing").  Format 3
#: added the header's "lookup" table and fixed the layout (one record per line).
DATA_FORMAT = 3

# Column order of records in the data file (its header repeats it as "fields").
FILE_FIELDS = ("id", "name", "aliases", "formula", "elements", "charge", "phase", "model",
               "source", "note", "uncertainty", "cas", "molar_mass", "smiles", "phase_data",
               "missing")
_F = {name: i for i, name in enumerate(FILE_FIELDS)}

#: The columns of the header's lookup table, in order: what a lookup by name,
#: formula or CAS number reads without parsing the record.
LOOKUP_FIELDS = ("id", "name", "aliases", "formula", "phase", "cas")
#: Column of each field in a lookup entry (entries stay the lists JSON gives: making
#: 2,700 objects would cost more than the parsing saves).
LK_ID, LK_NAME, LK_ALIASES, LK_FORMULA, LK_PHASE, LK_CAS = range(len(LOOKUP_FIELDS))

#: Column of each field in a record's row.
COL_ID, COL_SOURCE, COL_SMILES = _F["id"], _F["source"], _F["smiles"]
_COL_PHASE_DATA = _F["phase_data"]

#: Where the records begin and how the file ends, as tools/build_library.py writes it.
_RECORDS_START = b'\n"records": [\n'
_RECORDS_END = b"\n]\n}\n"

#: Format of ``dossier/data/structure_groups.json`` this code reads.
STRUCTURE_GROUPS_FORMAT = 1


@dataclass(frozen=True)
class SpeciesData:
    """The contents of a data file: the header read, the records' lines not yet parsed."""

    version: str                     # library version + short hash of the file's bytes
    citations: dict[str, str]        # source key -> citation
    lookup: dict[str, list]          # species id -> its lookup entry (LOOKUP_FIELDS), file order
    rows: dict[str, bytes]           # species id -> its record's line (JSON), unparsed

    def parsed_rows(self) -> Iterator[list]:
        """Every record's row, parsed and checked (:func:`parse_row`), in file order."""
        for sid, line in self.rows.items():
            yield parse_row(sid, line, self.citations)


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


def _package_file(name: str, what: str) -> bytes:
    """The bytes of ``dossier/data/<name>``; a LibraryError naming ``what`` when absent."""
    try:
        return resources.files("dossier").joinpath(f"data/{name}").read_bytes()
    except (FileNotFoundError, OSError) as exc:
        raise LibraryError(f"{what} is missing: {exc}") from None


def read_package_groups() -> bytes:
    """The bytes of the structure groups table shipped in the package."""
    return _package_file("structure_groups.json", "structure groups file")


def read_package_data() -> bytes:
    """The bytes of the data file shipped in the package."""
    return _package_file("species.json", "species data file")


def read_species_data(raw: bytes) -> SpeciesData:
    """Read the header of a data file written by tools/build_library.py and split its
    records into lines (parsed later, one by one, by :func:`parse_row`)."""
    start = raw.find(_RECORDS_START)
    if start < 0 or not raw.endswith(_RECORDS_END):
        raise LibraryError("species data file is not laid out as tools/build_library.py "
                           "writes it (a header, then one record per line)")
    head_text = raw[:start].rstrip().removesuffix(b",") + b"\n}"
    gc_was_on = gc.isenabled()
    gc.disable()  # parsing creates many small lists; collecting meanwhile only costs time
    try:
        head = json.loads(head_text)
    except ValueError as exc:
        raise LibraryError(f"species data file is not valid JSON: {exc}") from None
    finally:
        if gc_was_on:
            gc.enable()
    if not isinstance(head, dict) or head.get("format") != DATA_FORMAT:
        found = head.get("format") if isinstance(head, dict) else "?"
        raise LibraryError(f"species data file has format {found}, "
                           f"this dossier reads format {DATA_FORMAT}")
    if tuple(head.get("fields", ())) != FILE_FIELDS:
        raise LibraryError("species data file lists unexpected record fields "
                           f"{head.get('fields')}; expected {list(FILE_FIELDS)}")
    if tuple(head.get("lookup_fields", ())) != LOOKUP_FIELDS:
        raise LibraryError("species data file lists unexpected lookup fields "
                           f"{head.get('lookup_fields')}; expected {list(LOOKUP_FIELDS)}")
    lines = raw[start + len(_RECORDS_START):-len(_RECORDS_END)].split(b",\n")
    try:
        citations = {k: v["citation"] for k, v in head["sources"].items()}
        entries = head["lookup"]
        if len(entries) != len(lines):
            raise LibraryError(f"species data file: the lookup table has {len(entries)} "
                               f"entries but there are {len(lines)} records")
        lookup = {e[LK_ID]: e for e in entries}
        if len(lookup) != len(entries):
            seen: set[str] = set()
            twice = next(e[LK_ID] for e in entries if e[LK_ID] in seen or seen.add(e[LK_ID]))
            raise LibraryError(f"species data file: duplicate id '{twice}'")
    except (KeyError, TypeError, AttributeError, IndexError) as exc:
        raise LibraryError(f"species data file is damaged: missing {exc}") from None
    version = f"{head.get('library_version', '?')}+{hashlib.sha256(raw).hexdigest()[:12]}"
    return SpeciesData(version=version, citations=citations, lookup=lookup,
                       rows=dict(zip(lookup, lines)))


def parse_row(species_id: str, line: bytes, citations: Mapping[str, str]) -> list:
    """The row of one record's line, checked: valid JSON, the number of fields, the id
    its lookup entry gives, and sources the header cites."""
    try:
        row = json.loads(line)
    except ValueError as exc:
        raise LibraryError(f"species data file: record '{species_id}' is not valid JSON: "
                           f"{exc}") from None
    if not isinstance(row, list) or len(row) != len(FILE_FIELDS):
        raise LibraryError(f"species data file: record '{species_id}' has "
                           f"{len(row) if isinstance(row, list) else 0} fields, "
                           f"expected {len(FILE_FIELDS)}")
    if row[COL_ID] != species_id:
        raise LibraryError(f"species data file: the line of record '{species_id}' holds "
                           f"record '{row[COL_ID]}' (records and lookup table out of order)")
    try:
        keys = (row[COL_SOURCE], *_phase_source_keys(row[_COL_PHASE_DATA]))
    except (KeyError, TypeError, AttributeError) as exc:
        raise LibraryError(f"species data file: record '{species_id}' is damaged: "
                           f"missing {exc}") from None
    for key in keys:
        if key not in citations:
            raise LibraryError(f"species data file: record '{species_id}' names "
                               f"unknown source '{key}'")
    return row


def check_species_data(data: SpeciesData) -> int:
    """Parse and check every record of ``data`` (each as :func:`parse_row` and
    :func:`record_from_row` do, and its lookup entry against the record); the
    number of records.  Raises :class:`LibraryError` at the first problem."""
    n = 0
    for row in data.parsed_rows():
        rec = record_from_row(row, data.citations)
        entry = data.lookup[rec.id]
        if [entry[LK_NAME], tuple(entry[LK_ALIASES]), entry[LK_FORMULA], entry[LK_PHASE],
                entry[LK_CAS]] != [rec.name, rec.aliases, row[_F["formula"]], rec.phase, rec.cas]:
            raise LibraryError(f"species data file: the lookup entry of '{rec.id}' differs "
                               "from its record")
        n += 1
    return n


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


__all__ = ["DATA_FORMAT", "FILE_FIELDS", "LOOKUP_FIELDS", "COL_ID", "COL_SOURCE", "COL_SMILES",
           "STRUCTURE_GROUPS_FORMAT", "LK_ID", "LK_NAME", "LK_ALIASES", "LK_FORMULA",
           "LK_PHASE", "LK_CAS", "SpeciesData", "StructureGroups",
           "check_species_data", "parse_row", "read_package_data", "read_package_groups",
           "read_species_data", "read_structure_groups", "record_from_row"]
