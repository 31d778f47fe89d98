"""Files a case may have beside it, read without waiting: absent is not a problem,
a file that cannot be read is recorded with the reason (signature files, the
board's trusted keys, the board's policy)."""
from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

from dossier.casefile.load import not_regular


@dataclass(frozen=True)
class FileRead:
    """A file that may be absent: its bytes, or why they could not be read."""

    path: Path
    data: bytes | None = None
    problem: str | None = None  # e.g. "cannot read the signatures: Permission denied"

    @property
    def exists(self) -> bool:
        return self.data is not None or self.problem is not None


def read_optional(path: Path, what: str) -> FileRead:
    """The bytes of ``path`` if it is a regular file; absent is not a problem.

    Opened without waiting (a named pipe is refused, not waited on) and checked
    on the open file, so a file swapped for a pipe after a check is refused too.
    """
    if not path.exists() and not path.is_symlink():
        return FileRead(path)
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as err:
        return FileRead(path, problem=f"{path}: cannot read the {what}: {err.strerror or err}")
    try:
        kind = not_regular(os.fstat(fd).st_mode)
        if kind:
            return FileRead(path, problem=f"{path}: cannot read the {what}: {kind}")
        with os.fdopen(os.dup(fd), "rb") as fh:
            return FileRead(path, fh.read())
    except OSError as err:
        return FileRead(path, problem=f"{path}: cannot read the {what}: {err.strerror or err}")
    finally:
        os.close(fd)


__all__ = ["FileRead", "read_optional"]
