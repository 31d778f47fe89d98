"""The build cache: content-addressed, verified on every read.

Two kinds of file live under the cache folder (default ``.dossier-cache/``
beside the output folder):

* **blobs** (``blobs/<aa>/<sha256>``): the bytes of one output file of the
  site, named by the SHA-256 of those bytes.  The build hard-links them into
  the new site (or copies them where links fail).  A blob is used only after
  its bytes hash to its name.
* **entries** (``entries/<kind>/<aa>/<key>``): what one unit of work
  produced (an assessment, or the list of files a page or packet made),
  under a key that is the SHA-256 of everything the unit depends on (see
  :func:`key`).  The first line of an entry is the SHA-256 of the rest;
  an entry whose payload does not match is a *corrupt* miss, never served.

Every write is atomic (a temporary file in the same folder, then a rename),
so an interrupted build leaves either the whole entry or none of it.  The
cache is safe to delete at any time; the next build is then a cold build.

Entries of kind ``assess`` hold pickles (the assessed case with its engine
objects).  The digest protects against damage, not against someone who can
write to the cache folder: keep the cache as private as the cases folder.
"""
from __future__ import annotations

import hashlib
import os
import shutil
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

#: Bumped when the layout or the payload formats change.
CACHE_FORMAT = "dossier-cache-1"
DEFAULT_NAME = ".dossier-cache"


def key(*parts: bytes | str) -> str:
    """The SHA-256 of ``parts`` (each length-prefixed, so parts never run together)."""
    h = hashlib.sha256(CACHE_FORMAT.encode("ascii"))
    for part in parts:
        data = part.encode("utf-8") if isinstance(part, str) else bytes(part)
        h.update(len(data).to_bytes(8, "big"))
        h.update(data)
    return h.hexdigest()


def _sha(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _is_hex(text: str) -> bool:
    return len(text) == 64 and all(c in "0123456789abcdef" for c in text)


@dataclass
class CacheStats:
    """What the lookups of one build found (counted in the building process)."""

    hits: int = 0
    misses: int = 0
    corrupt: list[str] = field(default_factory=list)  # entries or blobs that failed their digest


class Cache:
    """A cache folder.  Lookups are counted in :attr:`stats`."""

    def __init__(self, root: Path):
        self.root = Path(root)
        self.stats = CacheStats()

    # -- blobs --------------------------------------------------------------
    def blob_path(self, digest: str) -> Path:
        if not _is_hex(digest):
            raise ValueError(f"not a SHA-256 digest: {digest!r:.80}")
        return self.root / "blobs" / digest[:2] / digest

    def put_blob(self, data: bytes) -> str:
        """Store ``data``; returns its digest (the blob's name)."""
        digest = _sha(data)
        path = self.blob_path(digest)
        if not (path.is_file() and path.stat().st_size == len(data)):
            _atomic_write(path, data)
        return digest

    def blob_ok(self, digest: str) -> bool:
        """True when the blob exists and its bytes hash to its name."""
        try:
            data = self.blob_path(digest).read_bytes()
        except (OSError, ValueError):
            return False
        if _sha(data) != digest:
            self.stats.corrupt.append(f"blob {digest[:12]}")
            return False
        return True

    def read_blob(self, digest: str) -> bytes | None:
        try:
            data = self.blob_path(digest).read_bytes()
        except (OSError, ValueError):
            return None
        if _sha(data) != digest:
            self.stats.corrupt.append(f"blob {digest[:12]}")
            return None
        return data

    # -- entries ------------------------------------------------------------
    def entry_path(self, kind: str, entry_key: str) -> Path:
        if not _is_hex(entry_key) or not kind.isidentifier():
            raise ValueError(f"bad cache entry name {kind!r}/{entry_key!r:.80}")
        return self.root / "entries" / kind / entry_key[:2] / entry_key

    def get(self, kind: str, entry_key: str) -> bytes | None:
        """The payload stored under (kind, key), or None (missing or corrupt)."""
        path = self.entry_path(kind, entry_key)
        try:
            raw = path.read_bytes()
        except OSError:
            self.stats.misses += 1
            return None
        head, sep, payload = raw.partition(b"\n")
        if not sep or head.decode("ascii", "replace") != _sha(payload):
            self.stats.corrupt.append(f"{kind} entry {entry_key[:12]}")
            self.stats.misses += 1
            return None
        self.stats.hits += 1
        return payload

    def put(self, kind: str, entry_key: str, payload: bytes) -> None:
        _atomic_write(self.entry_path(kind, entry_key),
                      _sha(payload).encode("ascii") + b"\n" + payload)

    # -- the folder -----------------------------------------------------------
    def discard(self) -> None:
        """Remove the whole cache folder (e.g. one a build created and then wrote
        nothing from)."""
        shutil.rmtree(self.root, ignore_errors=True)


def _atomic_write(path: Path, data: bytes) -> None:
    """Write ``data`` to ``path`` via a temporary file in the same folder and a rename."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=".tmp-", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        os.chmod(tmp, 0o644)  # blobs are linked into a site that is meant to be read
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


__all__ = ["CACHE_FORMAT", "Cache", "CacheStats", "DEFAULT_NAME", "key"]
