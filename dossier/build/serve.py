"""`dossier serve`: which changes rebuild the site, where the templates are, and
a server for the site on this machine only."""
from __future__ import annotations

import functools
from importlib.resources import files
from pathlib import Path
from typing import Callable, Iterable, Sequence, TypeVar

from dossier.build.keys import has_package

#: Files in the cases folder whose change changes the site.
WATCHED_NAMES = (".md", ".signatures", "trusted-keys.txt")

Report = TypeVar("Report")


def is_source_change(path: str | Path, cases_dir: Path, template_dirs: Sequence[Path] = ()) -> bool:
    """True when a changed path is one the site is built from (case files, their
    signatures and kept revisions, the trusted keys, templates); editor and
    temporary files (hidden, ``~``) are not."""
    p = Path(path)
    if p.name.startswith(".") or p.name.endswith("~"):
        return False
    for d in template_dirs:
        if is_inside(p, d):
            return True
    return is_inside(p, cases_dir) and p.name.endswith(WATCHED_NAMES)


def is_inside(p: Path, folder: Path) -> bool:
    try:
        p.resolve().relative_to(Path(folder).resolve())
        return True
    except (ValueError, OSError):
        return False


def rebuild_on_changes(batches: Iterable, rebuild: Callable[[], Report], cases_dir: Path,
                       template_dirs: Sequence[Path] = ()) -> Iterable[Report]:
    """For each batch of changes (watchfiles' sets of (change, path)) that touches a
    source, rebuild once; yields the reports.  Other batches are skipped."""
    for batch in batches:
        if any(is_source_change(path, cases_dir, template_dirs) for _change, path in batch):
            yield rebuild()


def template_dirs() -> list[Path]:
    """The folders of the templates (and the guide's sources) on disk, for watching."""
    out = []
    for pkg in ("dossier.templates", "dossier.docs"):
        if has_package(pkg):
            try:
                out.append(Path(str(files(pkg))))
            except (TypeError, ValueError):  # pragma: no cover - zipped install
                pass
    return out


def site_server(out_dir: Path, port: int = 8000):
    """An HTTP server for the site on 127.0.0.1 only (call serve_forever in a thread)."""
    from http.server import SimpleHTTPRequestHandler, ThreadingHTTPServer

    class Handler(SimpleHTTPRequestHandler):
        def log_message(self, format, *args):  # noqa: A002 - quiet: the build prints
            pass

    handler = functools.partial(Handler, directory=str(Path(out_dir).resolve()))
    return ThreadingHTTPServer(("127.0.0.1", port), handler)


__all__ = ["WATCHED_NAMES", "is_inside", "is_source_change", "rebuild_on_changes",
           "site_server", "template_dirs"]
