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

One build at a time writes a site: :class:`SiteLock` (``flock`` on
``.<name>.lock`` beside it, held by the build from start to end) refuses a
second one.  Files of the site being replaced are read only through
:func:`previous_file` (regular files inside it, no links), for what a build
keeps: a failed case's last good data export and packets.
"""
from __future__ import annotations

import ctypes
import ctypes.util
import fcntl
import os
import shutil
import stat
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


def previous_file(out_dir: Path, rel: str) -> Path | None:
    """A regular file of the site in ``out_dir`` that a build may keep or read (the
    data export of a case that now fails, a packet an earlier build printed); None
    when it is missing, a link or not a regular file, or the folder is no site."""
    target = Path(out_dir)
    path = target.joinpath(*check_relpath(rel).parts)
    try:
        if not (target / MARKER).is_file() or target.is_symlink():
            return None
        if any(p.is_symlink() for p in [path, *path.parents] if is_within(p, target)
               and p != target):
            return None
        return path if stat.S_ISREG(path.stat(follow_symlinks=False).st_mode) else None
    except OSError:
        return None


def read_previous(out_dir: Path, rel: str, limit: int = 8 << 20) -> bytes | None:
    """The bytes of :func:`previous_file` (at most ``limit``), or None."""
    path = previous_file(out_dir, rel)
    if path is None:
        return None
    try:
        with open(path, "rb") as fh:
            data = fh.read(limit + 1)
    except OSError:
        return None
    return data if len(data) <= limit else None


def previous_files(out_dir: Path, folder: str, suffix: str) -> list[str]:
    """The site paths of the regular files ``<folder>/*<suffix>`` in the site in ``out_dir``."""
    base = Path(out_dir) / folder
    try:
        names = sorted(p.name for p in base.iterdir() if p.name.endswith(suffix))
    except OSError:
        return []
    return [f"{folder}/{n}" for n in names
            if not n.startswith(".") and previous_file(out_dir, f"{folder}/{n}") is not None]


def remove_stale(target: Path) -> int:
    """Remove temporary folders that an interrupted build left beside ``target``.

    Called by every build while it holds the site's lock (:class:`SiteLock`), so
    no running build owns them, whatever the build then finds (a "nothing
    changed" build too).
    """
    removed = 0
    for pattern in (f".{target.name}.building-*", f".{target.name}.old-*"):
        for p in target.parent.glob(pattern):
            if p.is_dir() and not p.is_symlink():
                shutil.rmtree(p, ignore_errors=True)
                removed += 1
    return removed


def lock_path(target: Path) -> Path:
    """The lock file of a site: ``.<name>.lock`` beside it (there only while a build runs)."""
    return target.parent / f".{target.name}.lock"


class SiteLock:
    """An exclusive lock on one site folder: one build at a time writes into it.

    A build holds it from before it reads the cases until its site is in place
    (:func:`dossier.build.pipeline.build_site`), so a second build into the same
    folder is refused at once instead of racing the first to the swap.  The lock
    is ``flock`` on ``.<name>.lock`` beside the site; the kernel drops it with the
    process, however that ends (SIGKILL included), and the holder removes the
    file when it is done, so nothing is left beside the site (a file left by a
    killed build is taken over by the next one).  Sites in the same parent folder
    do not block each other.
    """

    def __init__(self, target: Path):
        self.target = Path(target)
        self.path = lock_path(self.target)
        self.fd: int | None = None

    def _refusal(self) -> OutputError:
        return OutputError(Problem("another dossier build is writing into this folder right "
                                   f"now (it holds {self.path.name}); wait for it to finish",
                                   str(self.target), key="--out"))

    def __enter__(self) -> "SiteLock":
        flags = (os.O_RDWR | os.O_CREAT | getattr(os, "O_NOFOLLOW", 0)
                 | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_CLOEXEC", 0))
        for _attempt in range(20):
            try:
                fd = os.open(self.path, flags, 0o644)
            except OSError as err:
                raise OutputError(Problem(f"cannot create the lock file {self.path.name} beside "
                                          f"the site ({err.strerror})", str(self.target),
                                          key="--out")) from None
            try:
                if not stat.S_ISREG(os.fstat(fd).st_mode):
                    raise OutputError(Problem(f"{self.path} is not a regular file; remove it",
                                              str(self.target), key="--out"))
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except BlockingIOError:
                os.close(fd)
                raise self._refusal() from None
            except BaseException:
                os.close(fd)
                raise
            try:  # the holder before us may have removed the file we locked: lock the new one
                same = os.stat(self.path, follow_symlinks=False).st_ino == os.fstat(fd).st_ino
            except FileNotFoundError:
                same = False
            if same:
                self.fd = fd
                return self
            os.close(fd)
        raise self._refusal()

    def __exit__(self, *exc) -> None:
        if self.fd is not None:
            try:
                os.unlink(self.path)  # while still holding it: see the check in __enter__
            except OSError:
                pass
            fcntl.flock(self.fd, fcntl.LOCK_UN)
            os.close(self.fd)
            self.fd = None


def write_site(out_dir: Path, files: Mapping[str, bytes],
               protected: Iterable[Path] = (), linked: Mapping[str, Path] | None = None,
               manifest: bytes | None = None, lock: SiteLock | None = None) -> WriteResult:
    """Write ``files`` as the complete new content of ``out_dir``, atomically.

    Holds the site's lock while writing (``lock``: the one the caller already
    holds for this folder), and first removes what an interrupted earlier
    build left behind.
    """
    target = check_target(out_dir, protected)
    if lock is not None:
        if lock.fd is None or lock.target != target:
            raise ValueError(f"the lock given is not held for {target}")
        remove_stale(target)
        return _write_site(target, out_dir, files, protected, linked, manifest)
    with SiteLock(target):
        remove_stale(target)
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


__all__ = ["MANIFEST", "MARKER", "OutputError", "SiteLock", "WriteResult", "check_relpath",
           "check_target", "is_within", "lock_path", "previous_file", "previous_files",
           "read_manifest", "read_previous", "remove_stale", "write_site"]
