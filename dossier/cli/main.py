"""The `dossier` command line: the group and the commands about single cases
(``evaluate``, ``species``, ``new``; ``check`` lives in :mod:`dossier.cli.checking`).

Every command turns a :class:`dossier.errors.DossierError` into one line per
problem on standard error and exit code 2; ``--debug`` shows the traceback
instead.  The site commands (:mod:`dossier.cli.site`) and the signing commands
(:mod:`dossier.cli.signing`) and ``check`` are loaded from :data:`COMMAND_MODULES` only when
asked for, so that ``dossier evaluate`` pays neither for the build and the
pages nor for the cryptography library.  Heavy libraries (sympy, matplotlib,
weasyprint) are imported inside the functions that need them.
"""
from __future__ import annotations

import gc
import importlib
import json
import sys
from pathlib import Path

# Loading the package makes many small objects (frozen dataclasses, compiled
# patterns) and frees nothing cyclic: the cyclic garbage collector is paused
# while the modules below load (about 8 ms of every command's start-up,
# bench/evaluate_time.py) and set back as it was right after them.
_COLLECTOR_WAS_ON = gc.isenabled()
gc.disable()

import click  # noqa: E402

from dossier import __version__  # noqa: E402
from dossier.assess.check import reaction_report  # noqa: E402
from dossier.assess.evaluate import assess_case  # noqa: E402
from dossier.casefile.load import load_case  # noqa: E402
from dossier.casefile.template import check_case_id, write_new_case  # noqa: E402
from dossier.casefile.units import parse_quantity  # noqa: E402
from dossier.errors import EXIT_BAD_INPUT, DossierError, Problem, UnitError  # noqa: E402
from dossier.library.lookup import Library  # noqa: E402
from dossier.render.species_text import describe  # noqa: E402
from dossier.render.terminal import render_assessment  # noqa: E402
from dossier.review.policy import policy_settings, read_policy  # noqa: E402

if _COLLECTOR_WAS_ON:
    gc.enable()

#: Commands that live in other modules of this package, loaded on first use:
#: command name -> module whose ``COMMANDS`` tuple holds it.  The one dynamic
#: import of the package (checked by tests/contracts).
COMMAND_MODULES: dict[str, str] = {
    "build": "dossier.cli.site", "serve": "dossier.cli.site",
    "check": "dossier.cli.checking",
    "keygen": "dossier.cli.signing", "sign": "dossier.cli.signing",
    "verify": "dossier.cli.signing", "withdraw": "dossier.cli.signing",
}


class _Group(click.Group):
    """Runs a command and reports DossierError as plain problems (exit 2)."""

    def list_commands(self, ctx: click.Context) -> list[str]:
        return sorted(set(super().list_commands(ctx)) | set(COMMAND_MODULES))

    def get_command(self, ctx: click.Context, name: str):
        if name in COMMAND_MODULES and name not in self.commands:
            for command in importlib.import_module(COMMAND_MODULES[name]).COMMANDS:
                self.add_command(command)
        return super().get_command(ctx, name)

    def invoke(self, ctx: click.Context):
        try:
            return super().invoke(ctx)
        except DossierError as err:
            if ctx.obj and ctx.obj.get("debug"):
                raise
            for problem in err.problems:
                click.echo(f"error: {problem}", err=True)
            ctx.exit(EXIT_BAD_INPUT)


@click.group(cls=_Group)
@click.version_option(__version__, prog_name="dossier")
@click.option("--debug", is_flag=True, help="Show Python tracebacks for errors.")
@click.pass_context
def main(ctx: click.Context, debug: bool) -> None:
    """Reaction-feasibility dossiers for process-safety review boards."""
    ctx.ensure_object(dict)
    ctx.obj["debug"] = debug


@main.command()
@click.argument("case_file", type=click.Path(dir_okay=False, path_type=Path))
@click.option("--at", "at", multiple=True, metavar="TEMP",
              help='Also evaluate at this temperature, with a unit ("350 K", "80 degC"). Repeatable.')
@click.option("--json", "as_json", is_flag=True, help="Print the assessment as JSON.")
def evaluate(case_file: Path, at: tuple[str, ...], as_json: bool) -> None:
    """Assess one case and print its thermodynamics (and safety figures)."""
    extra = []
    for text in at:
        try:
            extra.append(parse_quantity(text, "temperature"))
        except UnitError as err:
            raise UnitError([Problem(p.message, key="--at") for p in err.problems]) from None
    case = load_case(case_file)
    settings = policy_settings(read_policy(case_file.parent))  # the board's policy, if any
    assessment = assess_case(case, Library.default(), extra_temperatures=tuple(extra),
                             settings=settings)
    if as_json:
        click.echo(json.dumps(assessment.to_dict(), indent=2, ensure_ascii=False))
    else:
        click.echo(render_assessment(assessment))


@main.command()
@click.argument("query")
@click.option("--limit", default=10, show_default=True, help="Show at most this many records.")
def species(query: str, limit: int) -> None:
    """Search the species library and print records with their sources.

    Best first: the same formula or an exact name, then names that start with or
    hold QUERY, then names close to it (a typing slip is forgiven)."""
    lib = Library.default()
    hits = lib.search(query)
    if not hits:
        click.echo(f"No species in library {lib.version} matches '{query}', and no name "
                   "is close to it. A species the library does not hold is given in the "
                   "case as a [[species]] table (its data, or an estimate from its "
                   "structure).")
        sys.exit(1)
    for rec in hits[:limit]:
        click.echo(f"{rec.id}")
        for label, value in describe(rec):
            click.echo(f"  {label:<22} {value}")
        click.echo("")
    if len(hits) > limit:
        click.echo(f"... and {len(hits) - limit} more; use --limit to see them.")


@main.command(name="new")
@click.argument("case_id")
@click.option("--reaction", default=None, help='The reaction, e.g. "CH4(g) + 2 O2(g) -> CO2(g) + 2 H2O(g)".')
@click.option("--cases", "cases_dir", default="cases", show_default=True,
              type=click.Path(file_okay=False, path_type=Path), help="The cases folder.")
def new_case(case_id: str, reaction: str | None, cases_dir: Path) -> None:
    """Write a new case file from the template, every key explained.

    A reaction given is checked first: one that does not balance, or names a species
    several library records answer, is refused (nothing is written); a species the
    library does not hold is named in a warning that says how to supply its data."""
    check_case_id(case_id)
    warnings: tuple[str, ...] = ()
    unknown: tuple[str, ...] = ()
    if reaction is not None:
        try:
            report = reaction_report(reaction, Library.default())
        except DossierError as err:
            raise DossierError([Problem(p.message, key="reaction")
                                for p in err.problems]) from None
        if report.problems:
            raise DossierError([Problem(f"{m}; no case file was written", key="reaction")
                                for m in report.problems])
        warnings, unknown = report.warnings, report.unknown
    path = write_new_case(cases_dir, case_id, reaction, unknown)
    for warning in warnings:
        click.echo(f"warning: {warning}", err=True)
    click.echo(f"wrote {path}; fill it in, then run: dossier check {path}")


if __name__ == "__main__":  # pragma: no cover
    main()
