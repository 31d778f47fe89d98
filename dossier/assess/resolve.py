"""The one species resolver: which data record each term of a case's reaction uses.

Used by the assessment; the integrity digest and the revision history take
the records from the assessment's result, so all three always agree.

Precedence: a case's own ``[[species]]`` table answers first.  It matches a
term when the phases agree and the term is written as the table's ``name``
or as a formula with the table's composition and charge (``H2O(l)`` matches
``name = "water", formula = "H2O", phase = "l"``).  The author wrote it for
this case, so it replaces any library record for the same species, and the
dossier says so.  Only then is the library asked.  A ``[[species]]`` table
that no term of the reaction and no inert uses is reported, never silently
dropped.
"""
from __future__ import annotations

from dataclasses import dataclass

from dossier.chem.formula import parse_formula
from dossier.chem.phases import normalise_phase, split_phase
from dossier.chem.reaction import Reaction, Term
from dossier.constants import T_REF
from dossier.errors import CaseError, DossierError, FormulaError, Problem
from dossier.library.lookup import Library
from dossier.library.models import ConstantCp
from dossier.library.record import SpeciesRecord
from dossier.model.case import Case, LocalSpecies


@dataclass(frozen=True)
class ResolvedTerm:
    """One term of the reaction with the record it uses."""

    term: Term
    record: SpeciesRecord
    table: LocalSpecies | None = None  # the case's own [[species]] table it comes from
    replaces: str | None = None        # id of the library record that table replaces

    @property
    def local(self) -> bool:
        return self.table is not None

    @property
    def smiles(self) -> str | None:
        return self.table.smiles if self.table is not None else None


@dataclass(frozen=True)
class Resolution:
    """Every term resolved, in the order of the reaction, and what was left unused."""

    terms: tuple[ResolvedTerm, ...]
    unused_local: tuple[tuple[int, LocalSpecies], ...]  # (index in [[species]], table)

    @property
    def records(self) -> tuple[SpeciesRecord, ...]:
        return tuple(r.record for r in self.terms)

    def record_for(self, key: str) -> SpeciesRecord:
        return next(r.record for r in self.terms if r.term.key == key)


def local_record(sp: LocalSpecies, window: tuple[float, float]) -> SpeciesRecord:
    """A species record built from a case's own [[species]] table (constant Cp)."""
    formula = parse_formula(sp.formula)
    phase = normalise_phase(str(sp.phase))
    lo, hi = sp.t_range if sp.t_range else (min(T_REF, window[0]), max(T_REF, window[1]))
    return SpeciesRecord(
        id=f"{sp.name}({phase})",
        name=sp.name,
        aliases=(f"{formula.hill}({phase})",) if sp.name != formula.hill else (),
        formula=formula.hill,
        elements=tuple((e, float(n)) for e, n in formula.elements),
        charge=formula.charge,
        phase=phase,
        model=ConstantCp(sp.hf, sp.s, sp.cp, lo, hi),
        source=f"case-local data: {sp.source}",
        note="constant heat capacity" + ("" if sp.t_range else
                                         " (no range given: taken as valid over the window)"),
        uncertainty=tuple(sp.uncertainty),
        stable_range=None,
        cas=None,
        molar_mass=formula.molar_mass,
    )


def _composition_key(text: str) -> tuple | None:
    """(sorted element counts, charge) of a formula, or None when ``text`` is not one."""
    try:
        f = parse_formula(text)
    except FormulaError:
        return None
    return tuple(sorted((e, float(n)) for e, n in f.composition.items())), f.charge


def _matches(label: str, phase: str, sp: LocalSpecies, record: SpeciesRecord) -> bool:
    if record.phase != normalise_phase(phase):
        return False
    written = label.strip().lower()
    if written in (sp.name.lower(), record.id.lower()):
        return True
    key = _composition_key(label)
    return key is not None and key == _composition_key(sp.formula)


def _local_match(label: str, phase: str, local: list[tuple[int, LocalSpecies, SpeciesRecord]]
                 ) -> list[tuple[int, LocalSpecies, SpeciesRecord]]:
    return [entry for entry in local if _matches(label, phase, entry[1], entry[2])]


def _library_record(library: Library, term: Term) -> SpeciesRecord | None:
    try:
        return library.resolve(term.label, term.phase)
    except DossierError:
        return None


def resolve_species(case: Case, reaction: Reaction, library: Library) -> Resolution:
    """The record of every term of ``reaction``; every problem located at the reaction.

    Raises :class:`CaseError` listing every term that matches nothing (or
    matches several of the case's tables, or several library records).
    """
    path, line = str(case.path), case.line_of("reaction")
    local = [(i, sp, local_record(sp, case.window)) for i, sp in enumerate(case.species)]
    used: set[int] = set()
    problems: list[Problem] = []
    out: list[ResolvedTerm] = []
    for term in reaction.terms:
        hits = _local_match(term.label, term.phase, local)
        if len(hits) > 1:
            names = ", ".join(f"'{sp.name}'" for _i, sp, _r in hits)
            problems.append(Problem(f"species '{term.key}': matches {len(hits)} of the case's "
                                    f"[[species]] tables ({names}); write the name of the one "
                                    "meant", path, line, "reaction"))
            continue
        if hits:
            index, table, record = hits[0]
            used.add(index)
            replaced = _library_record(library, term)
            out.append(ResolvedTerm(term, record, table, replaced.id if replaced else None))
            continue
        try:
            out.append(ResolvedTerm(term, library.resolve(term.label, term.phase)))
        except DossierError as err:
            problems.extend(Problem(f"species '{term.key}': {p.message}", path, line, "reaction")
                            for p in err.problems)
    if problems:
        raise CaseError(problems)
    for label, _amount in case.inerts:
        body, phase = split_phase(label)
        if phase is not None:
            used.update(i for i, _sp, _r in _local_match(body, phase, local))
    unused = tuple((i, sp) for i, sp, _r in local if i not in used)
    return Resolution(tuple(out), unused)


def unused_table_warning(case: Case, index: int, sp: LocalSpecies) -> str:
    """The warning for a [[species]] table (``index`` from 0) that nothing in the case uses."""
    line = case.line_of(f"species[{index + 1}]")  # key paths number tables from 1
    where = f" at line {line}" if line else ""
    phase = normalise_phase(str(sp.phase))
    return (f"the case's [[species]] table '{sp.name}'{where} ({sp.formula}, phase {phase}) "
            "is not used: no term of the reaction and no inert names it, so its data play no "
            f"part in this dossier; write it in the reaction as '{sp.name}({phase})' or as its "
            "formula with that phase, or remove the table")


__all__ = ["ResolvedTerm", "Resolution", "local_record", "resolve_species",
           "unused_table_warning"]
