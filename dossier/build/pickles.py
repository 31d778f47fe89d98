"""How the build hands assessed cases and views to worker processes and keeps
them in the cache: as pickles, with read-only mappings kept read-only."""
from __future__ import annotations

import copyreg
import io
import pickle
import types
from typing import Mapping


def read_only(d: dict) -> Mapping:
    """``d`` as a read-only mapping (how a pickled ``MappingProxyType`` comes back)."""
    return types.MappingProxyType(d)


def dumps(obj: object) -> bytes:
    """Pickle ``obj``; read-only mappings (``Case.header_lines``) are stored as such."""
    buf = io.BytesIO()
    pickler = pickle.Pickler(buf, protocol=5)
    table = copyreg.dispatch_table.copy()
    table[types.MappingProxyType] = lambda m: (read_only, (dict(m),))
    pickler.dispatch_table = table
    pickler.dump(obj)
    return buf.getvalue()


def loads(data: bytes) -> object:
    """The object pickled in ``data``."""
    return pickle.loads(data)


__all__ = ["dumps", "loads", "read_only"]
