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

A table may instead give its structure and ask for an estimate (``estimate``):
its record then holds the group-additivity estimate of
:mod:`dossier.engine.estimate`, with the method's uncertainty.
"""
from __future__ import annotations

from dataclasses import dataclass

from dossier.chem.formula import Formula, parse_formula
from dossier.chem.phases import normalise_phase, split_phase
from dossier.chem.reaction import Reaction, Term
from dossier.constants import T_REF
from dossier.engine.estimate import (JOBACK_SOURCE, Estimate, composition_of, estimate_species,
                                     read_structure)
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.errors import (CaseError, DossierError, FormulaError, Problem, SpeciesError,
                            UnknownSpeciesError)
from dossier.library.lookup import Library
from dossier.library.models import ConstantCp
from dossier.library.phasedata import PhaseData
from dossier.library.record import SpeciesRecord
from dossier.model.case import Case, LocalSpecies


#: How the source of an estimated record begins.
ESTIMATE_PREFIX = "estimate from the structure: "


class StructureError(SpeciesError):
    """A [[species]] table's structure is the problem (reported at its `smiles`)."""


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
        """The structure: the case table's, or the library record's where it has one."""
        return self.record.smiles


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


def local_record(sp: LocalSpecies, window: tuple[float, float],
                 settings: MethodSettings = DEFAULT) -> SpeciesRecord:
    """A species record built from a case's own [[species]] table: its values with a
    constant Cp, or the estimate it asks for (:func:`estimated_record`)."""
    formula = parse_formula(sp.formula)
    phase = normalise_phase(str(sp.phase))
    if sp.estimated:
        return estimated_record(sp, formula, phase, settings)
    lo, hi = sp.t_range if sp.t_range else (min(T_REF, window[0]), max(T_REF, window[1]))
    return SpeciesRecord(
        **_identity(sp, formula, phase),
        model=ConstantCp(sp.hf, sp.s, sp.cp, lo, hi),
        source=f"case-local data: {sp.source}",
        note="constant heat capacity" + ("" if sp.t_range else
                                         " (no range given: taken as valid over the window)"),
        uncertainty=tuple(sp.uncertainty),
    )


def _identity(sp: LocalSpecies, formula: Formula, phase: str) -> dict:
    """The fields of a case table's record that say which species it is."""
    return dict(id=f"{sp.name}({phase})", name=sp.name,
                aliases=(f"{formula.hill}({phase})",) if sp.name != formula.hill else (),
                formula=formula.hill, elements=tuple((e, float(n)) for e, n in formula.elements),
                charge=formula.charge, phase=phase, cas=None, molar_mass=formula.molar_mass,
                smiles=sp.smiles)


def estimated_record(sp: LocalSpecies, formula: Formula, phase: str,
                     settings: MethodSettings) -> SpeciesRecord:
    """The record of a [[species]] table whose data are estimated from its SMILES.

    Raises :class:`SpeciesError` when no estimate can be made or the structure does
    not have the table's formula."""
    structure_composition(sp, settings)
    est = estimate_species(str(sp.smiles).strip(), phase, str(sp.estimate), settings)
    note = "; ".join(est.notes + ((f"groups: {est.groups}",) if est.groups else ()))
    return SpeciesRecord(
        **_identity(sp, formula, phase),
        model=est.model,
        source=(f"{ESTIMATE_PREFIX}{est.summary}: " + "; ".join(est.sources)
                + (f" (case note: {sp.source})" if sp.source else "")),
        note=note,
        uncertainty=est.uncertainty,
        phase_data=_estimated_phase_data(est),
    )


def _estimated_phase_data(est: Estimate) -> PhaseData | None:
    """The estimated normal boiling and melting points as phase boundaries, each with
    its method and standard uncertainty as its source."""
    points = [(what, q) for what, q in (("boiling point", est.t_boil),
                                        ("melting point", est.t_melt)) if q is not None]
    if not points:
        return None
    return PhaseData(
        t_boil=est.t_boil.value if est.t_boil else None,
        t_melt=est.t_melt.value if est.t_melt else None,
        sources=tuple((what, f"estimate by the Joback method ({JOBACK_SOURCE}), standard "
                             f"uncertainty {q.uncertainty:.0f} K (published error)")
                      for what, q in points))


def structure_composition(sp: LocalSpecies, settings: MethodSettings) -> dict[str, float]:
    """The composition of a table's SMILES, which must be the table's formula.

    Raises :class:`StructureError` when the SMILES cannot be read or estimated from, or
    describes another formula."""
    try:
        got = composition_of(read_structure(str(sp.smiles), settings))
    except SpeciesError as err:
        raise StructureError(err.problems) from None
    want = {e: float(n) for e, n in parse_formula(sp.formula).elements}
    if got != want:
        show = "".join(f"{e}{n:g}" for e, n in sorted(got.items()))
        raise StructureError(f"the SMILES describes {show}, not the formula '{sp.formula}': "
                             "correct the one that is wrong")
    return got


def _local_records(case: Case, settings: MethodSettings
                   ) -> list[tuple[int, LocalSpecies, SpeciesRecord]]:
    """Every [[species]] table with its record; an estimate that cannot be made is an
    error at the table's `estimate` key (a structure problem at its `smiles`)."""
    out, problems = [], []
    for i, sp in enumerate(case.species):
        try:
            out.append((i, sp, local_record(sp, case.window, settings)))
        except SpeciesError as err:
            key = f"species[{i + 1}]." + ("smiles" if isinstance(err, StructureError)
                                          else "estimate")
            problems.extend(Problem(f"species '{sp.name}': {p.message}", str(case.path),
                                    case.line_of(key), key) for p in err.problems)
    if problems:
        raise CaseError(problems)
    return out


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


def resolve_species(case: Case, reaction: Reaction, library: Library,
                    settings: MethodSettings = DEFAULT) -> Resolution:
    """The record of every term of ``reaction``; every problem located at the reaction.

    Raises :class:`CaseError` listing every term that matches nothing (or
    matches several of the case's tables, or several library records), or the
    [[species]] tables whose estimate cannot be made (located at the table).
    """
    path, line = str(case.path), case.line_of("reaction")
    local = _local_records(case, settings)
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
        except UnknownSpeciesError as err:
            problems.extend(Problem(unknown_species_text(term, p.message, err.nearest),
                                    path, line, "reaction") for p in err.problems)
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


#: The phases an estimate from a structure can be made for (see engine.estimate).
_ESTIMATED_PHASES = ("g", "l")


def unknown_species_text(term: Term, message: str, nearest: tuple[str, ...]) -> str:
    """The problem of a term whose species the library does not hold: the library's
    ``message`` (with the ``nearest`` names, if any), then how to supply the data."""
    if nearest and message.endswith("?"):  # "did you mean: ...?"
        return f"species '{term.key}': {message} If not, {supply_hint(term)}"
    if nearest:  # the same species in other phases
        return f"species '{term.key}': {message}; if the phase is right, {supply_hint(term)}"
    return f"species '{term.key}': {message}; {supply_hint(term)}"


def supply_hint(term: Term) -> str:
    """How to give the data of a term's species that the library does not hold: a
    [[species]] table with its values, or (a gas or a liquid) an estimate from its
    structure."""
    formula = f'formula = "{term.label}"' if term.formula is not None else "formula"
    name = "name" if term.formula is not None else f'name = "{term.label}"'
    text = (f'give its data in a [[species]] table: {name}, {formula}, phase = '
            f'"{term.phase}", hf, s, cp and source')
    if term.phase not in _ESTIMATED_PHASES:
        return text + " (an estimate from a structure is made for a gas or a liquid only)"
    return (text + '; or have them estimated from its structure: the same table with smiles '
                   'and estimate = "benson" (or "joback") in place of hf, s, cp and source')


def unused_table_warning(case: Case, index: int, sp: LocalSpecies) -> str:
    """The warning for a [[species]] table (``index`` from 0) that nothing in the case uses."""
    line = case.line_of(f"species[{index + 1}]")  # key paths number tables from 1
    where = f" at line {line}" if line else ""
    phase = normalise_phase(str(sp.phase))
    return (f"the case's [[species]] table '{sp.name}'{where} ({sp.formula}, phase {phase}) "
            "is not used: no term of the reaction and no inert names it, so its data play no "
            f"part in this dossier; write it in the reaction as '{sp.name}({phase})' or as its "
            "formula with that phase, or remove the table")


__all__ = ["ESTIMATE_PREFIX", "ResolvedTerm", "Resolution", "StructureError", "local_record",
           "estimated_record", "structure_composition", "resolve_species",
           "supply_hint", "unknown_species_text", "unused_table_warning"]
