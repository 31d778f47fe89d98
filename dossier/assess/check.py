"""Checking a case completely: every problem at once, across the checks' phases.

The loader stops at the header's problems and the assessment at the first step
that fails, so on their own a bad temperature hides an unbalanced reaction and
an unknown species hides the balance.  :func:`case_problems` goes on wherever a
later check can still run:

1. the header (schema, units, cross-checks) from :func:`~dossier.casefile.load.check_source`;
2. the reaction (parsing, the species of every term, the balance), even when other
   keys of the header are wrong; the balance from the formulas as written when a
   term's species is unknown but every term is written as a formula;
3. the rest of the assessment (:func:`~dossier.assess.evaluate.evaluate`) when the
   header is valid.

Each problem keeps its file, line and key; the list is sorted by line, without
repeats.  :func:`reaction_report` is the same reaction check for ``dossier new``,
before a case file exists.
"""
from __future__ import annotations

from dataclasses import dataclass

from dossier.assess.evaluate import evaluate
from dossier.assess.resolve import resolve_species, unknown_species_text
from dossier.casefile.load import CaseSource, check_source
from dossier.chem.reaction import Reaction, check_balance, parse_reaction
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.errors import DossierError, Problem, UnknownSpeciesError
from dossier.library.lookup import Library
from dossier.model.case import Case


def case_problems(source: CaseSource, library: Library,
                  settings: MethodSettings = DEFAULT) -> tuple[Problem, ...]:
    """Every problem of the case in ``source``, sorted by line (empty when it is good)."""
    try:
        found = check_source(source)
    except DossierError as err:  # the header cannot be read: nothing else can be checked
        return err.problems
    problems = list(found.problems)
    if found.case is not None:
        try:
            evaluate(found.case, library, settings=settings)
        except DossierError as err:
            problems += err.problems
            problems += _reaction_problems(found.case, library, settings, ())
    elif found.reaction_case is not None:
        problems += _reaction_problems(found.reaction_case, library, settings,
                                       found.unreadable_species)
    return tuple(sorted(dict.fromkeys(problems), key=lambda p: p.line or 0))


def _reaction_problems(case: Case, library: Library, settings: MethodSettings,
                       unreadable: tuple[str, ...]) -> list[Problem]:
    """The reaction's problems: parsing, then each term's species, then the balance
    (from the records, or from the formulas as written when a species is unknown)."""
    where = dict(file=str(case.path), line=case.line_of("reaction"), key="reaction")
    try:
        reaction = parse_reaction(case.reaction)
    except DossierError as err:
        return [Problem(p.message, **where) for p in err.problems]
    tables = {name.lower() for name in unreadable} | {sp.name.lower() for sp in case.species}
    # a term that names a table too damaged to read: neither its species nor the balance
    # can be known (the table's own problems are reported)
    skipped = tuple(f"species '{t.key}':" for t in reaction.terms
                    if t.label.lower() in {name.lower() for name in unreadable})
    try:
        resolution = resolve_species(case, reaction, library, settings)
    except DossierError as err:
        found = [p for p in err.problems if not p.message.startswith(skipped)]
        # a term written as a formula has that composition, unless it names a table
        if all(t.formula is not None and t.label.lower() not in tables
               for t in reaction.terms):
            found += _balance(reaction, None, where)
        return found
    if skipped:
        return []
    compositions = {r.term.key: (r.record.composition, r.record.charge)
                    for r in resolution.terms}
    return _balance(reaction, compositions, where)


def _balance(reaction: Reaction, compositions, where: dict) -> list[Problem]:
    try:
        check_balance(reaction, compositions)
    except DossierError as err:
        return [Problem(p.message, **where) for p in err.problems]
    return []


@dataclass(frozen=True)
class ReactionReport:
    """What ``dossier new`` learns about the reaction it is given.

    ``problems`` are for the reaction as written (it does not balance, a name or formula
    matches several library species): a new case is not written with them.
    ``warnings`` name each species the library does not hold and how to supply its
    data in the new case, and what is read differently from how it may look.
    """

    reaction: Reaction
    problems: tuple[str, ...]
    warnings: tuple[str, ...]
    unknown: tuple[str, ...] = ()   # the terms no library record answers, "intermediate B(l)"


#: The arrow that is read as another: what it is read as, and what to write instead.
_READ_AS = {"=": "'=' is read as '->', a forward reaction; write '<=>' if the reaction "
                 "is an equilibrium"}


def reaction_report(text: str, library: Library) -> ReactionReport:
    """The reaction ``text`` checked as ``dossier check`` checks it in a new case, which
    has no [[species]] tables yet: each term's library record, then the balance where
    every composition is known (from its record, or its formula as written).

    Raises :class:`DossierError` for a reaction that cannot be parsed.
    """
    reaction = parse_reaction(text)
    problems: list[str] = []
    unknown: list[str] = []
    warnings = [note for arrow, note in _READ_AS.items() if _arrow_of(text) == arrow]
    compositions = {}
    for term in reaction.terms:
        try:
            record = library.resolve(term.label, term.phase)
        except UnknownSpeciesError as err:
            unknown.append(term.key)
            warnings += [unknown_species_text(term, p.message, err.nearest)
                         for p in err.problems]
        except DossierError as err:
            problems += [f"species '{term.key}': {p.message}" for p in err.problems]
        else:
            compositions[term.key] = (record.composition, record.charge)
    if all(t.key in compositions or t.formula is not None for t in reaction.terms):
        problems += [p.message for p in _balance(reaction, compositions, {})]
    else:
        warnings.append("the balance is checked once every species has its formula: run "
                        "`dossier check` on the case")
    return ReactionReport(reaction, tuple(problems), tuple(warnings), tuple(unknown))


def _arrow_of(text: str) -> str:
    """The arrow of a reaction that parses: the one token of the arrows read."""
    return next(a for a in ("<=>", "⇌", "->", "→", "=") if a in text)


__all__ = ["case_problems", "ReactionReport", "reaction_report"]
