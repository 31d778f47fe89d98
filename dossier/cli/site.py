"""`dossier build` and `dossier serve`: the site commands (loaded by
:mod:`dossier.cli.main` when one of them is asked for)."""
from __future__ import annotations

import os
import sys
import threading
from pathlib import Path

import click

from dossier.build.pipeline import BuildReport, build_site
from dossier.build.serve import rebuild_on_changes, site_server, template_dirs
from dossier.errors import EXIT_BAD_INPUT, DossierError


def _default_jobs() -> int:
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


def _run_build(cases_dir, out_dir, strict, jobs, cache_dir, no_packets) -> BuildReport:
    progress = _Progress()
    try:
        report = build_site(cases_dir, out_dir, strict=strict, jobs=jobs or _default_jobs(),
                            packets=not no_packets, cache_dir=cache_dir, progress=progress)
    finally:
        progress.close()
    for line in report.lines():
        click.echo(line, err=bool(report.failed))
    return report


@click.command()
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


@click.command()
@click.argument("cases_dir", default="cases", type=click.Path(file_okay=False, path_type=Path))
@_build_options
@click.option("--port", default=8000, show_default=True, type=click.IntRange(0, 65535),
              help="Port on 127.0.0.1 (this machine only).")
def serve(cases_dir: Path, out_dir: Path, jobs: int | None, cache_dir: Path | None,
          no_packets: bool, port: int) -> None:
    """Build, serve the site on 127.0.0.1 and rebuild when a case or template changes."""
    import watchfiles

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


COMMANDS = (build, serve)
