"""The species library: records with their provenance, looked up by id, name or formula.

A :class:`Library` holds :class:`~dossier.library.record.SpeciesRecord`
entries and resolves the labels used in reaction strings (with suggestions
when nothing matches).  The shipped library comes from the data file read
by :mod:`dossier.library.datafile`; a case's own ``[[species]]`` entries are
added with :meth:`Library.with_records`.
"""
from __future__ import annotations

import difflib
import functools
from typing import Any, Iterable, Mapping

from dossier.chem.formula import hill_formula, is_formula, parse_formula
from dossier.chem.phases import PHASES, normalise_phase, split_phase
from dossier.errors import FormulaError, LibraryError, SpeciesError, UnknownSpeciesError
from dossier.library.datafile import (LK_ALIASES, LK_CAS, LK_FORMULA, LK_NAME, LK_PHASE,
                                      StructureGroups, parse_row, read_package_data,
                                      read_package_groups, read_species_data,
                                      read_structure_groups, record_from_row)
from dossier.library.record import SpeciesRecord


def _formula_key(composition: Mapping[str, Any], charge: int) -> str:
    return hill_formula({e: n for e, n in composition.items()}, charge)




#: The least similarity (0-100, rapidfuzz's ratio of the letters in common) at which a
#: name counts as a match of a search that matches nothing exactly or in part: 85 lets
#: a slip or two in a name of ten letters through ("nitrobenzne"), and keeps
#: out names that merely share letters ("ethanol" and "methanal", 80).
SEARCH_CUTOFF = 85.0


class Library:
    """An immutable collection of species records with lookup by id, name or formula.

    Records read from the data file are kept as their unparsed lines and turned
    into :class:`SpeciesRecord` objects on first use; lookups read the file's
    lookup table (``_lookup``) meanwhile, so that loading stays fast.
    """

    def __init__(self, records: Iterable[SpeciesRecord] = (), version: str = "local",
                 sources: Mapping[str, str] | None = None,
                 overridden: Iterable[str] = (), local_ids: Iterable[str] = ()):
        self._entries: dict[str, SpeciesRecord | bytes] = {}
        self._lookup: dict[str, list] = {}  # id -> lookup entry, for entries not yet parsed
        for rec in records:
            if rec.id in self._entries:
                raise LibraryError(f"duplicate species id '{rec.id}'")
            self._entries[rec.id] = rec
        self.version = version
        self.sources: dict[str, str] = dict(sources or {})
        self.overridden: frozenset[str] = frozenset(overridden)
        self.local_ids: frozenset[str] = frozenset(local_ids)
        self._names: dict[str, list[tuple[str, str]]] | None = None
        self._formulas: dict[tuple[str, str], list[str]] | None = None

    # -- loading -----------------------------------------------------------
    @classmethod
    def default(cls) -> "Library":
        """The library shipped with dossier (loaded once, then cached)."""
        return default_library()

    @classmethod
    def from_json_bytes(cls, raw: bytes) -> "Library":
        """Build a library from the bytes of a data file written by tools/build_library.py."""
        data = read_species_data(raw)
        lib = cls(version=data.version, sources=data.citations)
        lib._entries = data.rows  # type: ignore[assignment]
        lib._lookup = data.lookup
        return lib

    def _materialise(self, species_id: str) -> SpeciesRecord:
        entry = self._entries[species_id]
        if isinstance(entry, SpeciesRecord):
            return entry
        try:
            rec = record_from_row(parse_row(species_id, entry, self.sources), self.sources)
        except (KeyError, TypeError, ValueError, IndexError) as exc:  # parse_row raises its own
            raise LibraryError(f"species data file: record '{species_id}' is damaged: {exc!r}") from None
        self._entries[species_id] = rec
        return rec

    # -- basic access ------------------------------------------------------
    @property
    def records(self) -> tuple[SpeciesRecord, ...]:
        return tuple(self._materialise(i) for i in self._entries)

    @property
    def ids(self) -> tuple[str, ...]:
        return tuple(self._entries)

    def __len__(self) -> int:
        return len(self._entries)

    def __contains__(self, species_id: object) -> bool:
        return species_id in self._entries

    def __iter__(self):
        return (self._materialise(i) for i in self._entries)

    def get(self, species_id: str) -> SpeciesRecord:
        if species_id not in self._entries:
            raise SpeciesError(f"no library species with id '{species_id}'")
        return self._materialise(species_id)

    def with_records(self, local_records: Iterable[SpeciesRecord]) -> "Library":
        """A new library where ``local_records`` extend or replace (same id) the records here.

        Local records also win label lookups: a name, alias or formula that a
        local record answers to resolves to it even where library records
        share the label.  ``overridden`` lists the library ids replaced.
        """
        merged = dict(self._entries)
        overridden = set(self.overridden)
        seen: set[str] = set()
        for rec in local_records:
            if rec.id in seen:
                raise SpeciesError(f"case-local species id '{rec.id}' is given twice")
            seen.add(rec.id)
            if rec.id in self._entries and rec.id not in self.local_ids:
                overridden.add(rec.id)
            merged[rec.id] = rec
        lib = Library(version=self.version, sources=self.sources, overridden=overridden,
                      local_ids=self.local_ids | seen)
        lib._entries = merged
        lib._lookup = self._lookup
        return lib

    # -- indexes -----------------------------------------------------------
    def _labels(self, sid: str) -> tuple[str, Any, str, str, str, str | None]:
        """What lookups read of an entry: name, aliases, formula as shown, its Hill key,
        phase and CAS number; from the record, or from the data file's lookup table for
        a record not yet parsed (that table carries the Hill formula already)."""
        e = self._entries[sid]
        if isinstance(e, SpeciesRecord):
            return (e.name, e.aliases, e.formula, _formula_key(e.composition, e.charge),
                    e.phase, e.cas)
        k = self._lookup[sid]
        return (k[LK_NAME], k[LK_ALIASES], k[LK_FORMULA], k[LK_FORMULA], k[LK_PHASE],
                k[LK_CAS])

    def _index(self) -> None:
        names: dict[str, list[tuple[str, str]]] = {}  # lower case -> (id, text as written)
        formulas: dict[tuple[str, str], list[str]] = {}
        for sid in self._entries:
            name, aliases, _shown, fkey, phase, _cas = self._labels(sid)
            for text in dict.fromkeys((name, *aliases)):
                names.setdefault(text.lower(), []).append((sid, text))
            formulas.setdefault((fkey, phase), []).append(sid)
        self._names, self._formulas = names, formulas

    def _by_name(self, label: str) -> list[SpeciesRecord]:
        """Records whose name or an alias is ``label``: names compare without letter case,
        but a name or alias that is a formula (``SN``, ``CO``) only as written, so that
        ``Sn`` is never sulfur nitride and ``Co`` never carbon monoxide."""
        if self._names is None:
            self._index()
        ids: list[str] = []
        for sid, text in self._names.get(label.lower(), ()):  # type: ignore[union-attr]
            if text != label and is_formula(text):
                continue
            if sid not in ids:
                ids.append(sid)
        return [self._materialise(i) for i in ids]

    def _by_formula(self, fkey: str, phase: str) -> list[SpeciesRecord]:
        if self._formulas is None:
            self._index()
        return [self._materialise(i) for i in self._formulas.get((fkey, phase), ())]  # type: ignore[union-attr]

    def _prefer_local(self, matches: list[SpeciesRecord]) -> list[SpeciesRecord]:
        local = [r for r in matches if r.id in self.local_ids]
        return local or matches

    # -- resolution --------------------------------------------------------
    def resolve(self, label: str, phase: str | None = None) -> SpeciesRecord:
        """The record for ``label`` in ``phase``.

        ``label`` is an id (``H2O(g)``, exactly as written), a name or alias
        (``water``, in any letter case; an alias that is a formula only as
        written) or a formula (``H2O``, compared by composition and charge, so
        ``Sn`` and ``SN`` differ).
        The phase may instead be written in the label (``water(l)``).
        Raises :class:`SpeciesError` when nothing matches (with suggestions)
        or when a formula matches several species (listing them).
        """
        body, label_phase = split_phase(label)
        if phase is None:
            if label in self._entries:
                return self._materialise(label)
            if label_phase is None:
                raise SpeciesError(f"species '{label}' has no phase; write it as "
                                   f"{label}(g), {label}(l), {label}(s) or {label}(aq)")
            phase, label = label_phase, body
        else:
            phase = normalise_phase(phase)
            if label_phase is not None and label_phase == phase:
                label = body
        shown = f"{label}({phase})"

        for candidate in (shown, label):
            if candidate in self._entries:
                rec = self._materialise(candidate)
                if rec.phase == phase:
                    return rec

        by_name = self._prefer_local([r for r in self._by_name(label) if r.phase == phase])
        if len(by_name) == 1:
            return by_name[0]
        if len(by_name) > 1:
            raise SpeciesError(_ambiguous_message(shown, by_name))

        try:
            parsed = parse_formula(label)
        except FormulaError:
            parsed = None
        if parsed is not None:
            fkey = _formula_key(parsed.composition, parsed.charge)
            by_formula = self._prefer_local(self._by_formula(fkey, phase))
            if len(by_formula) == 1:
                return by_formula[0]
            if len(by_formula) > 1:
                raise SpeciesError(_ambiguous_message(shown, by_formula))
        raise self._not_found(label, phase, parsed)

    def _not_found(self, label: str, phase: str, parsed) -> UnknownSpeciesError:
        """The error for a label no record answers, with the species of the same name or
        formula in other phases, or else the nearest names in this phase (the best five
        of :meth:`search` that are at least :data:`SEARCH_CUTOFF` alike)."""
        shown = f"{label}({phase})"
        other = [r for r in self._by_name(label) if r.phase != phase]
        if parsed is not None:
            fkey = _formula_key(parsed.composition, parsed.charge)
            for ph in PHASES:
                if ph != phase:
                    other += self._by_formula(fkey, ph)
        if other:
            ids = tuple(sorted({r.id for r in other})[:5])
            return UnknownSpeciesError(f"no library species '{shown}'; other phases exist: "
                                       f"{', '.join(ids)}", ids)
        ids = tuple(sid for rank, _ph, _n, sid in self._ranked(label)
                    if self._phase_of(sid) == phase and -rank[1] >= SEARCH_CUTOFF)[:5]
        if ids:
            return UnknownSpeciesError(f"no library species '{shown}'; did you mean: "
                                       f"{', '.join(self._shown(i) for i in ids)}?", ids)
        return UnknownSpeciesError(f"no library species '{shown}', and none with a "
                                   "similar name in this phase")

    def search(self, query: str, cutoff: float = SEARCH_CUTOFF) -> list[SpeciesRecord]:
        """Records for ``query``, best first (see :func:`search_rank`); empty for a
        blank query."""
        return [self._materialise(x[-1]) for x in self._ranked(query, cutoff)]

    def _shown(self, sid: str) -> str:
        """A record's id, with its name first where the id does not hold it."""
        rec = self._materialise(sid)
        return sid if sid == f"{rec.name}({rec.phase})" else f"{rec.name} [{sid}]"

    def _phase_of(self, sid: str) -> str:
        return self._labels(sid)[4]

    def _ranked(self, query: str, cutoff: float = SEARCH_CUTOFF) -> list[tuple]:
        """(rank, phase order, name length, id) of every record that answers ``query``,
        sorted."""
        q = query.strip()
        if not q:
            return []
        try:
            parsed = parse_formula(q)
            fkey: str | None = _formula_key(parsed.composition, parsed.charge)
        except FormulaError:
            fkey = None
        ranked = []
        for sid in self._entries:
            name, aliases, formula, ekey, phase, cas = self._labels(sid)
            rank = search_rank(q, fkey == ekey if fkey is not None else False,
                               (sid, name, *aliases), formula, cas, cutoff)
            if rank is not None:
                ranked.append((rank, PHASES.index(phase), len(name), sid))
        ranked.sort()
        return ranked


def search_rank(query: str, same_formula: bool, names: tuple[str, ...], formula: str,
                cas: str | None, cutoff: float = SEARCH_CUTOFF) -> tuple | None:
    """How well a record answers ``query``, as a sort key (smaller is better), or None.

    ``names`` are the record's id, name and aliases.  In order: the same composition
    as a formula query, or a name, CAS number or formula equal to the query in any
    letter case (rank 0); a name that starts with the query (1) or holds it (2); a
    name similar to the query (3, at least ``cutoff`` on rapidfuzz's ratio).  Within
    ranks 1 to 3 the most similar name comes first.  A formula, and an id or alias that is one ("N2O4(g)"), is
    matched only whole, so "N2O" is neither part of "C6H12N2O4S2" nor of "N2O4".
    """
    q = query.lower()
    if same_formula or q == formula.lower() or (cas and q == cas.lower()) \
            or any(q == t.lower() for t in names):
        return (0, 0.0)
    words = [t.lower() for t in names if not _reads_as_formula(t)]
    if not words:
        return None
    from rapidfuzz import fuzz  # lazy: only a search needs it (about 18 ms)
    best = max(fuzz.ratio(q, t) for t in words)
    if any(t.startswith(q) for t in words):
        return (1, -best)
    if any(q in t for t in words):
        return (2, -best)
    return (3, -best) if best >= cutoff else None


def _reads_as_formula(text: str) -> bool:
    """True for a formula, with or without a phase ("N2O", "N2O4(g)")."""
    return is_formula(split_phase(text)[0] if split_phase(text)[1] else text)


def _ambiguous_message(shown: str, matches: list[SpeciesRecord]) -> str:
    listing = ", ".join(f"{r.name} [{r.id}]" for r in sorted(matches, key=lambda r: (r.name.lower(), r.id)))
    example = sorted(matches, key=lambda r: (r.name.lower(), r.id))[0]
    return (f"'{shown}' matches {len(matches)} library species: {listing}; "
            f"write the name or id instead, e.g. '{example.id}'")


@functools.lru_cache(maxsize=1)
def structure_groups() -> StructureGroups:
    """The explosophore groups of the library's structures, read once on first use."""
    return read_structure_groups(read_package_groups())


@functools.lru_cache(maxsize=1)
def default_library() -> Library:
    """The library shipped with dossier, read once."""
    return Library.from_json_bytes(read_package_data())


__all__ = ["Library", "default_library", "structure_groups", "search_rank", "SEARCH_CUTOFF"]
