"""The only module that writes the published site to disk.

:func:`write_site` takes the complete set of output files (relative path →
bytes), writes them into a fresh temporary folder next to the target, and
only when every file is written swaps that folder into place.  An error or
an interruption part-way leaves the previous site exactly as it was (the
temporary folder is removed).

Where a site may be written (:func:`check_target`):

* never ``/``, the home folder, the cases folder, or any folder that
  contains one of those (``--out .`` in a project would replace the
  project);
* never a symbolic link;
* an existing folder only when it is empty or carries the marker file
  :data:`MARKER` that every site written here has, i.e. it looks like a
  previous dossier site.

Output paths are checked too (:func:`check_relpath`): relative, forward
slashes, no ``..``, no empty or hidden parts, nothing outside the folder.
"""
from __future__ import annotations

import ctypes
import ctypes.util
import fcntl
import os
import shutil
import tempfile
from dataclasses import dataclass
from pathlib import Path, PurePosixPath
from typing import Iterable, Mapping

from dossier.errors import DossierError, Problem

#: Marker file written into every site; its presence lets a rebuild replace the folder.
MARKER = ".dossier-site"
#: The build's record of its inputs and files, written with every site (see dossier.build.pipeline).
MANIFEST = ".dossier-manifest.json"
MARKER_TEXT = ("This folder is a dossier site. `dossier build` replaces it as a whole "
               "on every build; do not keep other files here.\n")


class OutputError(DossierError):
    """The output folder cannot or must not be written."""


@dataclass(frozen=True)
class WriteResult:
    out_dir: Path
    files: int
    bytes: int
    replaced: bool  # a previous site was replaced


def _problem(message: str, out_dir: Path) -> OutputError:
    return OutputError(Problem(message, str(out_dir), None, "--out"))


def is_within(path: Path, parent: Path) -> bool:
    try:
        path.relative_to(parent)
        return True
    except ValueError:
        return False


def check_target(out_dir: Path, protected: Iterable[Path] = ()) -> Path:
    """The resolved output folder, or OutputError when it must not be written.

    ``protected`` are folders the site must neither be nor contain (the
    cases folder; the home folder and ``/`` are always protected).
    """
    out_dir = Path(out_dir)
    if out_dir.is_symlink():
        raise _problem("the output folder is a symbolic link; give the real folder", out_dir)
    target = out_dir.expanduser().resolve()
    guarded = [Path("/"), Path.home().resolve(), *(Path(p).expanduser().resolve() for p in protected)]
    for g in guarded:
        if target == g:
            what = ("the root folder" if g == Path("/") else
                    "the home folder" if g == Path.home().resolve() else "the cases folder")
            raise _problem(f"refusing to write the site into {what} ({g}); "
                           "choose a separate folder such as 'site'", out_dir)
        if is_within(g, target):
            raise _problem(f"refusing to write the site into {target}: it contains {g}, "
                           "which a build would replace; choose a separate folder such as 'site'",
                           out_dir)
    if target.exists():
        if not target.is_dir():
            raise _problem("the output path exists and is not a folder", out_dir)
        if not (target / MARKER).is_file() and any(target.iterdir()):
            raise _problem(f"the folder is not empty and does not look like a dossier site "
                           f"(no {MARKER} file); refusing to replace it. Choose a new or "
                           "empty folder, or remove this one yourself", out_dir)
    if not target.parent.is_dir():
        raise _problem(f"the parent folder {target.parent} does not exist", out_dir)
    return target


def check_relpath(rel: str) -> PurePosixPath:
    """A safe relative output path, or ValueError."""
    if not isinstance(rel, str) or not rel or "\\" in rel or "\x00" in rel:
        raise ValueError(f"unsafe output path {rel!r}")
    parts = rel.split("/")
    if rel.startswith("/") or any(part in ("", ".", "..") for part in parts):
        raise ValueError(f"unsafe output path {rel!r}")
    p = PurePosixPath(rel)
    if any(part.startswith(".") for part in parts) and rel != MARKER:
        raise ValueError(f"hidden output path {rel!r}")
    return p


# -- atomic exchange of two folders (Linux renameat2), else two renames ----

_RENAME_EXCHANGE = 2
_AT_FDCWD = -100


def _exchange(a: Path, b: Path) -> bool:
    """Atomically swap the folders ``a`` and ``b``; False where unsupported."""
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or None, use_errno=True)
        fn = libc.renameat2
    except (OSError, AttributeError):
        return False
    fn.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p, ctypes.c_uint]
    rc = fn(_AT_FDCWD, os.fsencode(a), _AT_FDCWD, os.fsencode(b), _RENAME_EXCHANGE)
    return rc == 0


def _link_or_copy(src: Path, dest: Path) -> None:
    """Hard-link ``src`` (a cache blob) to ``dest``; copy where links fail."""
    try:
        os.link(src, dest)
    except OSError:  # another file system, no link support, too many links
        shutil.copyfile(src, dest)
        os.chmod(dest, 0o644)


def read_manifest(out_dir: Path) -> bytes | None:
    """The manifest of the site in ``out_dir`` (as written by :func:`write_site`), or None."""
    try:
        return (Path(out_dir) / MANIFEST).read_bytes()
    except OSError:
        return None


def _remove_stale(target: Path) -> int:
    """Remove temporary folders that an interrupted build left beside ``target``.

    Only called while holding the site's lock, so no running build owns them.
    """
    removed = 0
    for pattern in (f".{target.name}.building-*", f".{target.name}.old-*"):
        for p in target.parent.glob(pattern):
            if p.is_dir() and not p.is_symlink():
                shutil.rmtree(p, ignore_errors=True)
                removed += 1
    return removed


class _SiteLock:
    """An exclusive lock on the folder that holds the site: one writer at a time.

    The lock is taken on the parent folder itself (``flock`` on a directory
    descriptor), so no lock file is left anywhere; it is released when the
    build ends, however it ends (the kernel drops it with the process).
    """

    def __init__(self, target: Path):
        self.target = target
        self.fd: int | None = None

    def __enter__(self) -> "_SiteLock":
        self.fd = os.open(self.target.parent, os.O_RDONLY | getattr(os, "O_DIRECTORY", 0))
        try:
            fcntl.flock(self.fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            os.close(self.fd)
            self.fd = None
            raise OutputError(Problem("another dossier build is writing into this folder right "
                                      "now; wait for it to finish", str(self.target),
                                      key="--out")) from None
        return self

    def __exit__(self, *exc) -> None:
        if self.fd is not None:
            fcntl.flock(self.fd, fcntl.LOCK_UN)
            os.close(self.fd)


def write_site(out_dir: Path, files: Mapping[str, bytes],
               protected: Iterable[Path] = (), linked: Mapping[str, Path] | None = None,
               manifest: bytes | None = None) -> WriteResult:
    """Write ``files`` as the complete new content of ``out_dir``, atomically.

    Holds an exclusive lock beside the site while writing, and first removes
    what an interrupted earlier build left behind.
    """
    target = check_target(out_dir, protected)
    with _SiteLock(target):
        _remove_stale(target)
        return _write_site(target, out_dir, files, protected, linked, manifest)


def _write_site(target: Path, out_dir: Path, files: Mapping[str, bytes],
               protected: Iterable[Path] = (), linked: Mapping[str, Path] | None = None,
               manifest: bytes | None = None) -> WriteResult:
    """``linked`` are further files given as existing files (cache blobs) to
    hard-link or copy in; ``manifest`` is written as :data:`MANIFEST`."""
    linked = dict(linked or {})
    both = set(files) & set(linked)
    if both:
        raise ValueError(f"output paths given twice: {sorted(both)[:3]}")
    checked = [(check_relpath(rel), data) for rel, data in sorted(files.items())]
    links = [(check_relpath(rel), Path(src)) for rel, src in sorted(linked.items())]
    tmp = Path(tempfile.mkdtemp(prefix=f".{target.name}.building-", dir=target.parent))
    old: Path | None = None
    try:
        total = 0
        for rel, data in checked:
            dest = tmp.joinpath(*rel.parts)
            dest.parent.mkdir(parents=True, exist_ok=True)
            with open(dest, "xb") as fh:
                fh.write(data)
            total += len(data)
        for rel, src in links:
            dest = tmp.joinpath(*rel.parts)
            dest.parent.mkdir(parents=True, exist_ok=True)
            _link_or_copy(src, dest)
            total += dest.stat().st_size
        if manifest is not None:
            (tmp / MANIFEST).write_bytes(manifest)
        (tmp / MARKER).write_text(MARKER_TEXT, encoding="utf-8")
        os.chmod(tmp, 0o755)  # mkdtemp makes 0700; a site is meant to be read
        replaced = target.exists()
        if not replaced:
            os.rename(tmp, target)
        elif _exchange(tmp, target):
            old = tmp  # now holds the previous site
        else:
            old = Path(tempfile.mkdtemp(prefix=f".{target.name}.old-", dir=target.parent))
            os.rename(target, old / "site")
            try:
                os.rename(tmp, target)
            except BaseException:
                os.rename(old / "site", target)  # put the previous site back
                raise
        return WriteResult(target, len(checked) + len(links), total, replaced)
    except BaseException:
        if tmp.exists() and (old is None or tmp != old):
            shutil.rmtree(tmp, ignore_errors=True)
        raise
    finally:
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)


__all__ = ["MANIFEST", "MARKER", "OutputError", "WriteResult", "check_relpath", "check_target",
           "is_within", "read_manifest", "write_site"]
