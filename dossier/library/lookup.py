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

from dossier.chem.formula import hill_formula, parse_formula
from dossier.chem.phases import PHASES, normalise_phase, split_phase
from dossier.errors import FormulaError, LibraryError, SpeciesError
from dossier.library.datafile import (COL_ALIASES, COL_CAS, COL_FORMULA, COL_NAME, COL_PHASE,
                                      read_package_data, read_species_data, record_from_row)
from dossier.library.record import SpeciesRecord


def _formula_key(composition: Mapping[str, Any], charge: int) -> str:
    return hill_formula({e: n for e, n in composition.items()}, charge)


@functools.lru_cache(maxsize=4096)
def _is_formula(text: str) -> bool:
    """True when ``text`` reads as a chemical formula (then its letter case is meaningful)."""
    try:
        parse_formula(text)
    except FormulaError:
        return False
    return True


class Library:
    """An immutable collection of species records with lookup by id, name or formula.

    Records read from the data file are kept as parsed JSON and turned into
    :class:`SpeciesRecord` objects on first use, so that loading stays fast.
    """

    def __init__(self, records: Iterable[SpeciesRecord] = (), version: str = "local",
                 sources: Mapping[str, str] | None = None,
                 overridden: Iterable[str] = (), local_ids: Iterable[str] = ()):
        self._entries: dict[str, SpeciesRecord | list] = {}
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
        return lib

    def _materialise(self, species_id: str) -> SpeciesRecord:
        entry = self._entries[species_id]
        if isinstance(entry, SpeciesRecord):
            return entry
        try:
            rec = record_from_row(entry, self.sources)
        except (KeyError, TypeError, ValueError, IndexError, LibraryError) as exc:
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
        return lib

    # -- indexes -----------------------------------------------------------
    def _index(self) -> None:
        names: dict[str, list[tuple[str, str]]] = {}  # lower case -> (id, text as written)
        formulas: dict[tuple[str, str], list[str]] = {}
        for sid, e in self._entries.items():
            if isinstance(e, SpeciesRecord):
                name, aliases, phase = e.name, e.aliases, e.phase
                fkey = _formula_key(e.composition, e.charge)
            else:  # data-file rows carry the Hill formula already
                name, aliases, phase, fkey = (e[COL_NAME], e[COL_ALIASES], e[COL_PHASE],
                                              e[COL_FORMULA])
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
            if text != label and _is_formula(text):
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
        raise SpeciesError(self._not_found_message(label, phase, parsed))

    def _not_found_message(self, label: str, phase: str, parsed) -> str:
        shown = f"{label}({phase})"
        other = [r for r in self._by_name(label) if r.phase != phase]
        if parsed is not None:
            fkey = _formula_key(parsed.composition, parsed.charge)
            for ph in PHASES:
                if ph != phase:
                    other += self._by_formula(fkey, ph)
        if other:
            ids = sorted({r.id for r in other})[:5]
            return f"no library species '{shown}'; other phases exist: {', '.join(ids)}"
        keys: dict[str, str] = {}
        for sid, e in self._entries.items():
            if isinstance(e, SpeciesRecord):
                texts, ph = (e.name, e.formula, *e.aliases), e.phase
            else:
                texts, ph = (e[COL_NAME], e[COL_FORMULA], *e[COL_ALIASES]), e[COL_PHASE]
            if ph != phase:
                continue
            for text in texts:
                keys.setdefault(text.lower(), sid)
        close = difflib.get_close_matches(label.lower(), list(keys), n=5, cutoff=0.6)
        ids = list(dict.fromkeys(keys[c] for c in close))
        if ids:
            return f"no library species '{shown}'; did you mean: {', '.join(ids)}?"
        return (f"no library species '{shown}'; add it to the case as a [[species]] entry "
                f"with formula, phase, hf, s and cp")

    def search(self, query: str) -> list[SpeciesRecord]:
        """Records whose id, name, aliases, formula or CAS number contain ``query``.

        Case-insensitive.  Ranked: exact matches first (a formula query also
        matches by composition), then prefix matches, then other substrings;
        within a rank gas, liquid, solid, aqueous, then shorter names first.
        """
        q = query.strip().lower()
        if not q:
            return []
        try:
            parsed = parse_formula(query.strip())
            fkey: str | None = _formula_key(parsed.composition, parsed.charge)
        except FormulaError:
            fkey = None
        ranked = []
        for sid, e in self._entries.items():
            if isinstance(e, SpeciesRecord):
                name, formula, aliases, cas, phase = e.name, e.formula, e.aliases, e.cas, e.phase
                ekey = _formula_key(e.composition, e.charge) if fkey is not None else None
            else:
                name, formula, aliases, cas, phase = (e[COL_NAME], e[COL_FORMULA], e[COL_ALIASES],
                                                      e[COL_CAS], e[COL_PHASE])
                ekey = formula
            lowered = [t.lower() for t in (sid, name, formula, *aliases, *((cas,) if cas else ()))]
            if (fkey is not None and fkey == ekey) or q in lowered:
                rank = 0
            elif any(t.startswith(q) for t in lowered):
                rank = 1
            elif any(q in t for t in lowered):
                rank = 2
            else:
                continue
            ranked.append((rank, PHASES.index(phase), len(name), sid))
        ranked.sort()
        return [self._materialise(x[-1]) for x in ranked]


def _ambiguous_message(shown: str, matches: list[SpeciesRecord]) -> str:
    listing = ", ".join(f"{r.name} [{r.id}]" for r in sorted(matches, key=lambda r: (r.name.lower(), r.id)))
    example = sorted(matches, key=lambda r: (r.name.lower(), r.id))[0]
    return (f"'{shown}' matches {len(matches)} library species: {listing}; "
            f"write the name or id instead, e.g. '{example.id}'")


@functools.lru_cache(maxsize=1)
def default_library() -> Library:
    """The library shipped with dossier, read once."""
    return Library.from_json_bytes(read_package_data())


__all__ = ["Library", "default_library"]
