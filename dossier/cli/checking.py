"""`dossier check`: validate case files and apply the readiness rules of each case's
status (loaded by :mod:`dossier.cli.main` when asked for, so that ``dossier
evaluate`` does not pay for the board's decisions).

A current case file is read and assessed exactly as the build does it
(:func:`dossier.build.assessing.assess_inputs`), so ``check`` and the site apply
the same rules (:mod:`dossier.review.readiness`); a kept earlier revision
(``<id>/rev-N.md``) is history and is only loaded and assessed.
"""
from __future__ import annotations

import sys
from pathlib import Path

import click

from dossier.assess.check import case_problems
from dossier.assess.evaluate import assess_case
from dossier.build.assessing import CaseFailure, assess_inputs
from dossier.casefile.load import load_case, read_source
from dossier.errors import EXIT_BAD_INPUT, DossierError
from dossier.library.lookup import Library
from dossier.review.inputs import read_case_inputs
from dossier.review.policy import policy_settings, read_policy
from dossier.review.revisions import archived_revisions


@click.command()
@click.argument("paths", nargs=-1, required=True, type=click.Path(path_type=Path))
def check(paths: tuple[Path, ...]) -> None:
    """Validate case files (or folders of them) and check that each case is ready for
    its status; exit 0 when all are good, 2 otherwise."""
    files: list[tuple[Path, bool]] = []  # (file, is the current revision)
    for p in paths:
        for f in (sorted(p.glob("*.md")) if p.is_dir() else [p]):
            files.append((f, True))
            files.extend((path, False) for _n, path in archived_revisions(f))
    library = Library.default()
    bad = 0
    for f, current in files:
        problems, notes = check_file(f, current, library)
        for note in notes:
            click.echo(f"note: {f}: {note}")
        if problems:
            bad += 1
            for problem in problems:
                click.echo(f"error: {problem}", err=True)
        else:
            click.echo(f"ok: {f}")
    click.echo(f"{len(files) - bad} of {len(files)} case files are good.")
    if bad or not files:
        sys.exit(EXIT_BAD_INPUT)


def check_file(f: Path, current: bool, library: Library) -> tuple[list[str], tuple[str, ...]]:
    """The problems of one case file, each located (a current one also against the
    readiness rules of its status, as the build applies them), and its notes."""
    try:
        if not current:  # a kept revision is history: it loads and assesses, nothing more
            assess_case(load_case(f), library, settings=policy_settings(read_policy(f.parent)))
            return [], ()
        assessed = assess_inputs(read_case_inputs(f), library)
    except DossierError as err:
        return every_problem(f, library) or [str(p) for p in err.problems], ()
    if isinstance(assessed, CaseFailure):
        return every_problem(f, library) or list(assessed.problems), ()
    ready = assessed.decisions.readiness if assessed.decisions else None
    if ready is None:
        return [], ()
    return [str(p) for p in ready.problems], ready.notes


def every_problem(f: Path, library: Library) -> list[str]:
    """Every problem of the case file ``f`` at once, across the checks' phases (the
    header, the reaction, its species, its balance: :func:`dossier.assess.check.case_problems`),
    for a case that failed; empty when the failure is not the case file's."""
    try:
        settings = policy_settings(read_policy(f.parent))
        return [str(p) for p in case_problems(read_source(f), library, settings)]
    except DossierError:
        return []


COMMANDS = (check,)

__all__ = ["COMMANDS", "check", "check_file"]
