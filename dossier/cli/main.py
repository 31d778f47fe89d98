"""The `dossier` command line.

Every command turns a :class:`dossier.errors.DossierError` into one line per
problem on standard error and exit code 2; ``--debug`` shows the traceback
instead.  Heavy libraries (sympy, matplotlib, weasyprint) are imported inside
the commands that need them, so ``dossier evaluate`` starts quickly.
"""
from __future__ import annotations

import json
import sys
from pathlib import Path

import click

from dossier import __version__
from dossier.errors import EXIT_BAD_INPUT, DossierError


class _Group(click.Group):
    """Runs a command and reports DossierError as plain problems (exit 2).

    The signing commands live in :mod:`dossier.cli.signing` and are loaded only
    when asked for, so that commands such as ``evaluate`` do not pay for
    importing the cryptography library.
    """

    _LAZY = ("keygen", "sign", "verify")

    def list_commands(self, ctx: click.Context) -> list[str]:
        return sorted(set(super().list_commands(ctx)) | set(self._LAZY))

    def get_command(self, ctx: click.Context, name: str):
        if name in self._LAZY and name not in self.commands:
            from dossier.cli.signing import COMMANDS

            for command in COMMANDS:
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
    from dossier.assess.evaluate import assess_case
    from dossier.casefile.load import load_case
    from dossier.casefile.units import parse_quantity
    from dossier.library.lookup import Library
    from dossier.errors import Problem, UnitError

    extra = []
    for text in at:
        try:
            extra.append(parse_quantity(text, "temperature"))
        except UnitError as err:
            raise UnitError([Problem(p.message, key="--at") for p in err.problems]) from None
    case = load_case(case_file)
    assessment = assess_case(case, Library.default(), extra_temperatures=tuple(extra))
    if as_json:
        click.echo(json.dumps(assessment.to_dict(), indent=2, ensure_ascii=False))
    else:
        from dossier.render.terminal import render_assessment

        click.echo(render_assessment(assessment))


@main.command()
@click.argument("paths", nargs=-1, required=True, type=click.Path(path_type=Path))
def check(paths: tuple[Path, ...]) -> None:
    """Validate case files (or folders of them); exit 0 when all are good, 2 otherwise."""
    from dossier.assess.evaluate import assess_case
    from dossier.casefile.load import load_case
    from dossier.library.lookup import Library

    from dossier.review.revisions import archived_revisions

    files: list[Path] = []
    for p in paths:
        for f in (sorted(p.glob("*.md")) if p.is_dir() else [p]):
            files.append(f)
            files.extend(path for _n, path in archived_revisions(f))
    bad = 0
    for f in files:
        try:
            assess_case(load_case(f), Library.default())
        except DossierError as err:
            bad += 1
            for problem in err.problems:
                click.echo(f"error: {problem}", err=True)
        else:
            click.echo(f"ok: {f}")
    click.echo(f"{len(files) - bad} of {len(files)} case files are good.")
    if bad or not files:
        sys.exit(EXIT_BAD_INPUT)


@main.command()
@click.argument("query")
@click.option("--limit", default=10, show_default=True, help="Show at most this many records.")
def species(query: str, limit: int) -> None:
    """Search the species library and print records with their sources."""
    from dossier.library.lookup import Library, describe

    lib = Library.default()
    hits = lib.search(query)
    if not hits:
        click.echo(f"No species in library {lib.version} matches '{query}'.")
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
    """Write a new case file from the template, every key explained."""
    from dossier.casefile.template import write_new_case

    path = write_new_case(cases_dir, case_id, reaction)
    click.echo(f"wrote {path}; fill it in, then run: dossier check {path}")


def _default_jobs() -> int:
    import os

    return max(1, len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity")
               else (os.cpu_count() or 1))


class _Progress:
    """A tqdm bar per phase on a terminal; plain lines (at each tenth) otherwise."""

    def __init__(self, stream=None):
        self.stream = stream or sys.stderr
        self.tty = bool(getattr(self.stream, "isatty", lambda: False)())
        self.bar = None
        self.phase = None

    def __call__(self, phase: str, done: int, total: int) -> None:
        if phase != self.phase:
            self.close()
            self.phase = phase
            if self.tty and total:
                from tqdm import tqdm

                self.bar = tqdm(total=total, desc=phase, unit="item", file=self.stream,
                                leave=False)
            return
        if self.bar is not None:
            self.bar.update(done - self.bar.n)
        elif total and (done == total or done % max(1, total // 10) == 0):
            click.echo(f"{phase}: {done}/{total}", err=True)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()
            self.bar = None


def _build_options(fn):
    for option in reversed([
        click.option("--out", "out_dir", default="site", show_default=True,
                     type=click.Path(file_okay=False, path_type=Path), help="Output folder."),
        click.option("--jobs", "-j", "jobs", type=int, default=None,
                     help="Worker processes (default: the number of CPUs)."),
        click.option("--cache", "cache_dir", default=None,
                     type=click.Path(file_okay=False, path_type=Path),
                     help="Cache folder (default: .dossier-cache beside the output folder)."),
        click.option("--no-packets", is_flag=True, help="Leave the PDF packets out."),
    ]):
        fn = option(fn)
    return fn


def _run_build(cases_dir, out_dir, strict, jobs, cache_dir, no_packets):
    from dossier.build.pipeline import build_site

    progress = _Progress()
    try:
        report = build_site(cases_dir, out_dir, strict=strict, jobs=jobs or _default_jobs(),
                            packets=not no_packets, cache_dir=cache_dir, progress=progress)
    finally:
        progress.close()
    for line in report.lines():
        click.echo(line, err=bool(report.failed))
    return report


@main.command()
@click.argument("cases_dir", default="cases", type=click.Path(file_okay=False, path_type=Path))
@_build_options
@click.option("--strict", is_flag=True, help="Fail the whole build if any case has an error.")
def build(cases_dir: Path, out_dir: Path, strict: bool, jobs: int | None, cache_dir: Path | None,
          no_packets: bool) -> None:
    """Assess every case in CASES_DIR and publish the site into --out.

    Only what changed since the last build is made again (see --cache).
    """
    report = _run_build(cases_dir, out_dir, strict, jobs, cache_dir, no_packets)
    if report.failed:
        sys.exit(EXIT_BAD_INPUT)


@main.command()
@click.argument("cases_dir", default="cases", type=click.Path(file_okay=False, path_type=Path))
@_build_options
@click.option("--port", default=8000, show_default=True, type=click.IntRange(0, 65535),
              help="Port on 127.0.0.1 (this machine only).")
def serve(cases_dir: Path, out_dir: Path, jobs: int | None, cache_dir: Path | None,
          no_packets: bool, port: int) -> None:
    """Build, serve the site on 127.0.0.1 and rebuild when a case or template changes."""
    import threading

    import watchfiles

    from dossier.build.pipeline import rebuild_on_changes, site_server, template_dirs

    _run_build(cases_dir, out_dir, False, jobs, cache_dir, no_packets)
    server = site_server(out_dir, port)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    host, real_port = server.server_address[:2]
    click.echo(f"serving {out_dir} at http://{host}:{real_port}/ (Ctrl-C to stop)")
    templates = template_dirs()

    def rebuild():
        try:
            return _run_build(cases_dir, out_dir, False, jobs, cache_dir, no_packets)
        except DossierError as err:  # keep serving the last good site
            for problem in err.problems:
                click.echo(f"error: {problem}", err=True)
            return None

    try:
        for _report in rebuild_on_changes(
                watchfiles.watch(cases_dir, *templates), rebuild, cases_dir, templates):
            pass
    except KeyboardInterrupt:
        pass
    finally:
        server.shutdown()
        server.server_close()


if __name__ == "__main__":  # pragma: no cover
    main()
