"""The units of work of a build.  Each runs in a worker process (or in the
building process with one job), gets everything it needs as arguments, and
stores what it made in the cache: the files as blobs, and under its key the
list of those files (:class:`UnitResult`)."""
from __future__ import annotations

import dataclasses
import functools
import json
import types
from dataclasses import dataclass
from pathlib import Path
from typing import Mapping, Sequence

from dossier.build.assessing import AssessedCase, CaseFailure, assess_inputs
from dossier.build.cache import Cache
from dossier.build.layout import UsedBy
from dossier.build.keys import drawings_key
from dossier.build.outputs import (Drawings, base_files, case_output, case_pages, drawings,
                                   light_view, meeting_pdf, render_failure, species_files)
from dossier.build.pickles import dumps, loads
from dossier.library.lookup import Library
from dossier.library.record import SpeciesRecord
from dossier.render.views import CaseView, MeetingView
from dossier.review.inputs import CaseInputs


@dataclass(frozen=True)
class UnitResult:
    """Site path -> blob digest of the files one unit made, and its notes."""

    files: dict[str, str]
    problems: tuple[str, ...] = ()
    failure: CaseFailure | None = None  # the case was left out (not cached)
    views_made: int = 0  # case views drawn by this unit (not cached with it)
    views_reused: int = 0  # case views it took from the cache

    def payload(self) -> bytes:
        return json.dumps({"files": self.files, "problems": list(self.problems)},
                          sort_keys=True).encode("utf-8")

    @classmethod
    def from_payload(cls, data: bytes) -> "UnitResult":
        d = json.loads(data)
        return cls(dict(d["files"]), tuple(d["problems"]))


def cached_unit(cache: Cache, kind: str, unit_key: str) -> UnitResult | None:
    """The cached result of a unit when its entry and every blob it names are sound."""
    data = cache.get(kind, unit_key)
    if data is None:
        return None
    try:
        u = UnitResult.from_payload(data)
    except (ValueError, KeyError, TypeError):
        cache.stats.corrupt.append(f"{kind} entry {unit_key[:12]} (unreadable)")
        return None
    if all(cache.blob_ok(d) for d in u.files.values()):
        return u
    return None


def store(cache_root: str, kind: str, unit_key: str, files: Mapping[str, bytes],
          problems: Sequence[str] = ()) -> UnitResult:
    """Keep ``files`` as blobs and their list under ``unit_key``."""
    cache = Cache(Path(cache_root))
    result = UnitResult({p: cache.put_blob(b) for p, b in sorted(files.items())},
                        tuple(problems))
    cache.put(kind, unit_key, result.payload())
    return result


@functools.lru_cache(maxsize=2)
def base_files_once(packets: bool) -> Mapping[str, bytes]:
    """base_files, made once per process (immutable: a read-only mapping)."""
    return types.MappingProxyType(base_files(packets))


def cached_view(cache_root: str, view_key: str) -> CaseView | None:
    data = Cache(Path(cache_root)).get("view", view_key)
    try:
        return loads(data) if data is not None else None
    except Exception:  # written by another version of the classes: make it again
        return None


def unit_assess(inputs: CaseInputs, unit_key: str, cache_root: str) -> bytes:
    """Assess one case from its inputs; returns (and caches) the pickled AssessedCase
    or CaseFailure."""
    data = dumps(assess_inputs(inputs, Library.default()))
    Cache(Path(cache_root)).put("assess", unit_key, data)
    return data


def cached_drawings(cache: Cache, a: AssessedCase, slug: str, code: str) -> Drawings:
    """The case's figures and derivation: from the cache when the numbers they are
    drawn from are unchanged (a narrative edit), else drawn and cached."""
    k = drawings_key(code, slug, a.assessment.to_dict(), dumps(a.thermo))
    data = cache.get("drawings", k)
    if data is not None:
        try:
            got = loads(data)
            if isinstance(got, Drawings):
                return got
        except Exception:  # written by another version of the classes: draw again
            pass
    drawn = drawings(a, slug)
    cache.put("drawings", k, dumps(drawn))
    return drawn


def unit_case(a: AssessedCase | bytes, slug: str, species_slugs: list[str], packets: bool,
              unit_key: str, view_key: str, cache_root: str, code: str = "") -> UnitResult:
    """A case's figures, pages and packet.  Its view (figures and derivation, which do
    not depend on the templates) is cached on its own under ``view_key``; the drawings
    themselves also on the numbers alone (:func:`cached_drawings`, given ``code``)."""
    a = loads(a) if isinstance(a, bytes) else a
    try:
        view = cached_view(cache_root, view_key)
        drawn = (cached_drawings(Cache(Path(cache_root)), a, slug, code)
                 if view is None and code else None)
        out = case_output(a, slug, species_slugs, packets, base_files_once(packets), view,
                          drawn)
        if view is None:
            Cache(Path(cache_root)).put("view", view_key, dumps(out.view))
        files = {**out.files, **case_pages(out.view, packets)}
    except Exception as exc:  # a defect, not bad input: isolate this case
        return UnitResult({}, (), render_failure(a, "drawing its figures and packet", exc))
    result = store(cache_root, "case", unit_key, files, out.problems)
    made = int(view is None)
    return dataclasses.replace(result, views_made=made, views_reused=1 - made)


def unit_species(rec: SpeciesRecord, slug: str, local_to: str | None, used_by: list[UsedBy],
                 unit_key: str, cache_root: str) -> UnitResult:
    return store(cache_root, "species", unit_key, species_files(rec, slug, local_to, used_by))


def unit_meeting(date: str, slug: str, members: list[tuple[bytes, str, list[str], str]],
                 unit_key: str, cache_root: str) -> UnitResult:
    """The packet of one meeting, put together from its cases' finished packets (each
    member as (pickled assessment, case slug, species slugs, case unit key)); only the
    cover, agenda and sign-off sheet are laid out here."""
    cache = Cache(Path(cache_root))
    views, pdfs = [], {}
    for data, case_slug, sp, case_unit_key in members:
        case_unit = cached_unit(cache, "case", case_unit_key)
        path = f"packets/{case_slug}.pdf"
        pdf = cache.read_blob(case_unit.files[path]) if case_unit and path in case_unit.files else None
        if pdf is None:
            raise RuntimeError(f"the cache lost the packet of case {case_slug}; build again")
        views.append(light_view(loads(data), case_slug, sp))
        pdfs[case_slug] = pdf
    m = MeetingView(date=date, slug=slug, cases=tuple(sorted(views, key=lambda v: v.id)))
    pdf = meeting_pdf(m, [pdfs[c.slug] for c in m.cases], base_files_once(True))
    return store(cache_root, "meeting", unit_key, {f"packets/{slug}.pdf": pdf})


__all__ = ["UnitResult", "base_files_once", "cached_unit", "cached_view", "store",
           "unit_assess", "unit_case", "unit_meeting", "unit_species"]
