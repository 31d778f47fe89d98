"""`dossier build`: read every case once, assess, render and publish the site.

:func:`build_site` runs in named phases, one direction:

1. **read** (:func:`read_cases`): each case file, its kept revisions, its
   signature file and the trusted keys are read once into a
   :class:`~dossier.review.inputs.CaseInputs`; nothing later reads them again.
2. **plan keys** (:func:`plan_keys`): the cache key of each case's
   assessment, from those bytes, and the key of the whole build.
3. **unchanged?** (:func:`unchanged_since`): when the site in the output
   folder was built from the same key, nothing is rendered or written.
4. **assess** (:func:`assess_cases`): each case on its own, in a worker
   (:func:`dossier.build.units.unit_assess`); a case that fails is kept as a
   :class:`CaseFailure` with its file, line and key, and the others go on.
5. **render**: each case's figures, pages and packet (:func:`render_cases`),
   then what the cases share: species pages, meeting packets
   (:func:`render_shared`), the register, methods page and guide
   (:func:`render_register`).  Every unit keeps its files in the cache.
   A case that failed keeps its page (:func:`dossier.build.kept.keep_failed`): what failed and
   where, and its last good assessment from the site being replaced, marked
   as not current, with that build's packets; a build without packets keeps
   the packets it finds (:func:`dossier.build.kept.keep_packets`) and says so.
6. **publish** (:func:`publish`): :func:`dossier.build.writer.write_site`
   writes the whole site at once (temporary folder, then a swap).

The whole build holds the site's lock (:class:`dossier.build.writer.SiteLock`):
a second build into the same folder is refused at once, and every build
first removes the temporary folders an interrupted one left (even when it
then finds nothing changed).

With ``strict=True`` a single failed case stops the build before anything
is written.  Each unit of work is made once and kept in the cache under the
digest of what it depends on (:mod:`dossier.build.keys`), so a rebuild redoes
only what changed; :class:`BuildReport` counts the units made and reused.
"""
from __future__ import annotations

import json
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Mapping, Sequence

from dossier.build.assessing import AssessedCase, CaseFailure, located_failure
from dossier.build.cache import DEFAULT_NAME, Cache
from dossier.build.keys import (MANIFEST_FORMAT, BuildSettings, build_key, build_settings,
                                case_key, case_unit_key, meeting_unit_key, register_key,
                                species_unit_key, unreadable_key, view_key)
from dossier.build.layout import SiteLayout, site_layout
from dossier.build.kept import SiteFiles, keep_failed, keep_packets
from dossier.build.outputs import base_files, light_view, meeting_views, site_pages
from dossier.build.pickles import loads
from dossier.build.runner import Call, Pending, Progress, Runner, fewer_collections
from dossier.build.units import (UnitResult, cached_unit, store, unit_assess, unit_case,
                                 unit_meeting, unit_species)
from dossier.build.writer import (SiteLock, check_target, is_within, read_manifest,
                                  remove_stale, write_site)
from dossier.errors import CaseError, DossierError, Problem
from dossier.render.views import CaseView, FailedCase, MeetingView
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.review.inputs import CaseInputs, read_case_inputs
from dossier.review.optional import FileRead
from dossier.review.policy import policy_settings, read_policy

#: The kinds of unit a build makes or takes from the cache.  Views (a case's
#: figures and derivation) are kept apart inside case units and are counted
#: under "view" too, but not in the totals.
UNIT_KINDS = ("assess", "case", "species", "meeting", "register")


@dataclass(frozen=True)
class BuildReport:
    cases_dir: Path
    out_dir: Path
    built: tuple[str, ...]
    failed: tuple[CaseFailure, ...]
    written: bool
    strict: bool
    files: int = 0
    packets: tuple[str, ...] = ()
    notes: tuple[str, ...] = field(default=())
    unchanged: bool = False  # nothing changed since the site in out_dir was built
    made: Mapping[str, int] = field(default_factory=dict)  # units of work done, by kind
    taken: Mapping[str, int] = field(default_factory=dict)  # units taken from the cache, by kind
    corrupt: tuple[str, ...] = ()  # cache entries that failed their digest (rebuilt)
    seconds: float = 0.0

    @property
    def rendered(self) -> int:
        """Units of work done (assessments, pages, packets)."""
        return sum(self.made.get(k, 0) for k in UNIT_KINDS)

    @property
    def reused(self) -> int:
        """Units of work taken from the cache."""
        return sum(self.taken.get(k, 0) for k in UNIT_KINDS)

    def lines(self) -> list[str]:
        out = []
        for f in self.failed:
            out.extend(f"error: {p}" for p in f.problems)
        out.extend(f"note: {n}" for n in self.notes)
        if self.corrupt:
            out.append(f"note: {len(self.corrupt)} damaged cache entries were ignored and "
                       f"rebuilt: {', '.join(self.corrupt[:5])}")
        total = len(self.built) + len(self.failed)
        if not self.written and not self.unchanged:
            out.append(f"strict build: nothing written to {self.out_dir}; {len(self.failed)} of "
                       f"{total} case files have errors")
        elif self.unchanged:
            bad = f"; {len(self.failed)} failed (see the errors above)" if self.failed else ""
            out.append(f"nothing changed: {self.out_dir} is up to date ({len(self.built)} of "
                       f"{total} cases{bad}; {self.seconds:.2f} s)")
        else:
            bad = f"; {len(self.failed)} failed (see the errors above)" if self.failed else ""
            out.append(f"built {len(self.built)} of {total} cases into {self.out_dir}{bad}: "
                       f"{self.files} files, {len(self.packets)} PDF packets; "
                       f"{self.rendered} made, {self.reused} reused, {self.seconds:.2f} s")
        return out


# --------------------------------------------------------------------------
# One run of build_site: what every phase needs

@dataclass
class Build:
    cases_dir: Path
    out_dir: Path
    paths: list[Path]  # the case files
    target: Path  # the output folder, checked
    strict: bool
    packets: bool
    meeting: str | None
    cache: Cache
    cache_is_new: bool  # a strict build that writes nothing removes it again
    settings: BuildSettings
    runner: Runner
    start: float
    made: dict[str, int] = field(default_factory=dict)
    taken: dict[str, int] = field(default_factory=dict)
    policy: FileRead | None = None  # the board's policy file, read once for every case
    methods: MethodSettings = DEFAULT  # the settings it gives

    @property
    def root(self) -> str:
        return str(self.cache.root)

    def count(self, kind: str, made: int = 0, taken: int = 0) -> None:
        if made:
            self.made[kind] = self.made.get(kind, 0) + made
        if taken:
            self.taken[kind] = self.taken.get(kind, 0) + taken

    def report(self, built: Sequence[str], failed: Sequence[CaseFailure], **more) -> BuildReport:
        return BuildReport(self.cases_dir, self.out_dir, tuple(built), tuple(failed),
                           strict=self.strict, made=dict(self.made), taken=dict(self.taken),
                           corrupt=tuple(self.cache.stats.corrupt),
                           seconds=time.perf_counter() - self.start, **more)

    def refuse(self, built: Sequence[str], failed: Sequence[CaseFailure]) -> BuildReport:
        """A strict build with a failed case: nothing written, no new cache left behind."""
        if self.cache_is_new:
            self.cache.discard()
        return self.report(built, failed, written=False)


@dataclass(frozen=True)
class Assessed:
    """An assessed case with the key of its assessment and its pickle (what units get)."""

    case: AssessedCase
    key: str
    pickled: bytes


@dataclass(frozen=True)
class CaseUnit:
    """A case on its way into the site: its slugs and the keys of its view and pages."""

    assessed: Assessed
    slug: str
    species_slugs: list[str]
    view_key: str
    key: str


# --------------------------------------------------------------------------
# Where things are

def case_files(cases_dir: Path) -> list[Path]:
    cases_dir = Path(cases_dir)
    if not cases_dir.is_dir():
        raise CaseError(Problem("the cases folder does not exist (give the folder that holds "
                                "the case files, e.g. 'cases')", str(cases_dir)))
    # a named pipe, socket or device named *.md is listed, to be refused by name
    return sorted(p for p in cases_dir.glob("*.md") if p.exists() and not p.is_dir())


def default_cache_dir(out_dir: Path) -> Path:
    """``.dossier-cache/`` beside the output folder."""
    return Path(out_dir).expanduser().resolve().parent / DEFAULT_NAME


def check_cache_dir(cache_dir: Path, target: Path, cases_dir: Path) -> Path:
    given = Path(cache_dir).expanduser()
    c = given.resolve()
    for link in (given, given / "blobs", given / "entries"):
        if link.is_symlink():
            what = "the cache folder" if link == given else f"its folder '{link.name}'"
            raise DossierError(Problem(f"{what} is a symbolic link to {link.resolve()}; a "
                                       "build does not write the cache through a link: "
                                       "give a real folder", str(cache_dir), key="--cache"))
    if is_within(c, target) or is_within(target, c):
        raise DossierError(Problem("the cache folder must not be inside the output folder "
                                   "(or hold it): a build replaces the output folder as a whole",
                                   str(cache_dir), key="--cache"))
    if c == Path(cases_dir).expanduser().resolve():
        raise DossierError(Problem("the cache folder must not be the cases folder",
                                   str(cache_dir), key="--cache"))
    return c


def site_intact(target: Path, manifest: Mapping) -> bool:
    """Every file the manifest lists is in the site with its size."""
    for rel, size in manifest.get("files", {}).items():
        try:
            if (target / rel).stat().st_size != size:
                return False
        except OSError:
            return False
    return True


# --------------------------------------------------------------------------
# Phases 1-3: read, plan keys, unchanged?

def read_cases(paths: Sequence[Path], policy: FileRead | None = None
               ) -> list[CaseInputs | CaseFailure]:
    """Every case file and the files beside it, read once (``policy``: the cases
    folder's policy file, read once for all); a case file that cannot be read is a
    failure naming it."""
    read: list[CaseInputs | CaseFailure] = []
    for p in paths:
        try:
            read.append(read_case_inputs(p, policy))
        except DossierError as err:
            read.append(located_failure(p, err))
    return read


def plan_keys(read: Sequence[CaseInputs | CaseFailure], settings: BuildSettings) -> list[str]:
    """The key of each case's assessment (of what went wrong, for a file not read)."""
    return [unreadable_key(r) if isinstance(r, CaseFailure) else case_key(r, settings)
            for r in read]


def unchanged_since(b: Build, key: str) -> BuildReport | None:
    """The report of the site in the output folder when it was built from ``key``
    and is whole; None when it must be built."""
    previous = read_manifest(b.target)
    if previous is None:
        return None
    try:
        old = json.loads(previous)
    except ValueError:
        return None
    if not (isinstance(old, dict) and old.get("format") == MANIFEST_FORMAT
            and old.get("key") == key and site_intact(b.target, old)):
        return None
    return BuildReport(
        b.cases_dir, b.out_dir, tuple(old["built"]),
        tuple(CaseFailure(f, tuple(ps)) for f, ps in old["failed"]), written=False,
        strict=b.strict, files=len(old["files"]), packets=tuple(old["packets"]),
        notes=tuple(old["notes"]), unchanged=True, seconds=time.perf_counter() - b.start)


# --------------------------------------------------------------------------
# Phase 4: assess

def assess_cases(b: Build, read: Sequence[CaseInputs | CaseFailure], keys: Sequence[str]
                 ) -> tuple[list[Assessed], list[CaseFailure]]:
    """Each case's assessment, from the cache or made by a unit; failures in the
    order of the case files."""
    results: list[tuple[object, bytes | None]] = [(r, None) for r in read]
    todo = []
    for i, (r, k) in enumerate(zip(read, keys)):
        if isinstance(r, CaseFailure):
            continue
        data = b.cache.get("assess", k)
        if data is not None:
            try:
                results[i] = (loads(data), data)
                continue
            except Exception:  # written by another version of the classes
                b.cache.stats.corrupt.append(f"assess entry {k[:12]} (unreadable)")
        todo.append(i)
    calls: list[Call] = [(unit_assess, (read[i], keys[i], b.root)) for i in todo]
    for i, data in zip(todo, b.runner.run("assess", calls)):
        results[i] = (loads(data), data)
    b.count("assess", made=len(todo),
            taken=sum(isinstance(r, CaseInputs) for r in read) - len(todo))
    assessed = [Assessed(a, k, data) for (a, data), k in zip(results, keys)
                if isinstance(a, AssessedCase)]
    return assessed, [r for r, _data in results if isinstance(r, CaseFailure)]


# --------------------------------------------------------------------------
# Phase 5: render

def plan_case_units(b: Build, layout: SiteLayout, assessed: Sequence[Assessed]) -> list[CaseUnit]:
    units = []
    for e in assessed:
        slug = layout.case_slug[e.case.case.id]
        species_slugs = layout.species_slugs(e.case)
        vk = view_key(e.key, slug, species_slugs, b.settings)
        units.append(CaseUnit(e, slug, species_slugs, vk, case_unit_key(vk, b.settings)))
    return units


def render_cases(b: Build, units: Sequence[CaseUnit], then: Sequence[Call] = ()
                 ) -> tuple[list[tuple[CaseUnit, UnitResult]], list[CaseFailure], Pending]:
    """Each case's figures, pages and packet; a case that fails to render is left out.
    ``then`` (the species pages) is handed to the workers behind the cases, to fill
    those that finish early; it is returned pending."""
    results: list[UnitResult | None] = [cached_unit(b.cache, "case", u.key) for u in units]
    todo = [i for i, r in enumerate(results) if r is None]
    calls: list[Call] = [
        (unit_case, (units[i].assessed.pickled, units[i].slug, units[i].species_slugs,
                     b.packets, units[i].key, units[i].view_key, b.root,
                     b.settings.code))
        for i in todo]
    pending = b.runner.submit("cases", calls, ahead=False)
    after = b.runner.submit("species", list(then))
    fresh = b.runner.collect(pending)
    for i, r in zip(todo, fresh):
        results[i] = r
    b.count("case", made=len(todo), taken=len(units) - len(todo))
    b.count("view", made=sum(r.views_made for r in fresh),
            taken=sum(r.views_reused for r in fresh))
    ok = [(u, r) for u, r in zip(units, results) if r.failure is None]
    return ok, [r.failure for r in results if r.failure is not None], after


def plan_species(b: Build, layout: SiteLayout, published: Sequence[AssessedCase],
                 made: Mapping[str, UnitResult] | None = None,
                 cached: Mapping[str, UnitResult] | None = None
                 ) -> tuple[dict[str, Call], dict[str, UnitResult], list[UnitResult]]:
    """The species pages the published cases link to, by unit key: units to run, those
    in the cache, and those this build made already (``made``).  ``cached``: cache
    entries found already (not looked up again)."""
    used_by = layout.used_by(published)
    calls, found, done = {}, {}, []
    for sk, (_text, rec) in layout.species.items():
        if sk not in used_by:
            continue
        slug, local_to = layout.species_slug[sk], layout.local_to(sk)
        k = species_unit_key(rec, sk[0] == "local", slug, local_to, used_by[sk], b.settings)
        if made and k in made:
            done.append(made[k])
            continue
        u = cached[k] if cached and k in cached else cached_unit(b.cache, "species", k)
        if u is None:
            calls[k] = (unit_species, (rec, slug, local_to, used_by[sk], k, b.root))
        else:
            found[k] = u
    return calls, found, done


def plan_meetings(b: Build, meetings: Sequence[MeetingView], ok: Sequence[CaseUnit]
                  ) -> tuple[list[Call], list[UnitResult]]:
    """The meeting packets: units to run, and those cached."""
    by_slug = {u.slug: u for u in ok}
    calls, cached = [], []
    for m in meetings:
        members = [by_slug[c.slug] for c in m.cases]
        k = meeting_unit_key(m.date, m.slug, [u.key for u in members], b.settings)
        u = cached_unit(b.cache, "meeting", k)
        if u is None:
            calls.append((unit_meeting, (m.date, m.slug, [
                (u.assessed.pickled, u.slug, u.species_slugs, u.key) for u in members],
                k, b.root)))
        else:
            cached.append(u)
    return calls, cached


def render_shared(b: Build, layout: SiteLayout, ok: Sequence[CaseUnit], site: SiteFiles,
                  early: tuple[Mapping[str, UnitResult], Sequence[str], Pending]
                  ) -> tuple[list[CaseView], tuple[MeetingView, ...]]:
    """Species pages and meeting packets (one phase of units); returns the cases'
    light views and the meetings, for the register.  ``early``: the species pages
    planned before the cases rendered (those found in the cache, and the unit keys of
    those handed to the workers with the cases, pending); those the published cases
    link to are used, the others made now."""
    found_early, keys, pending = early
    made_early = dict(zip(keys, b.runner.collect(pending)))
    sp_planned, found, sp_early = plan_species(b, layout, [u.assessed.case for u in ok],
                                               made_early, found_early)
    sp_calls, sp_cached = list(sp_planned.values()), list(found.values())
    views = [light_view(u.assessed.case, u.slug, u.species_slugs) for u in ok]
    meetings, meeting_problems = meeting_views(views, b.meeting)
    site.problems.extend(meeting_problems)
    mt_calls, mt_cached = [], []
    if b.packets:
        site.packets.extend(f"packets/{v.slug}.pdf" for v in views)
        site.packets.extend(f"packets/{m.slug}.pdf" for m in meetings)
        mt_calls, mt_cached = plan_meetings(b, meetings, ok)
    # meeting packets first: each puts many case packets together, the longest units of
    # the phase, and species pages then fill the other workers instead of waiting on one
    fresh = b.runner.run("pages", mt_calls + sp_calls)
    b.count("species", made=len(sp_calls) + len(sp_early), taken=len(sp_cached))
    b.count("meeting", made=len(mt_calls), taken=len(mt_cached))
    made_meetings, made_species = fresh[:len(mt_calls)], [*sp_early, *fresh[len(mt_calls):]]
    b.count("view", made=sum(u.views_made for u in [*made_meetings, *made_species]),
            taken=sum(u.views_reused for u in [*made_meetings, *made_species]))
    for u in [*sp_cached, *mt_cached, *made_species, *made_meetings]:
        site.add(u)
    return views, meetings


def render_register(b: Build, views: Sequence[CaseView], meetings: Sequence[MeetingView],
                    ok: Sequence[CaseUnit], failed: Sequence[FailedCase]) -> UnitResult:
    """The register, methods page, guide and stylesheets (in this process)."""
    k = register_key([u.key for u in ok], failed, b.settings)
    u = cached_unit(b.cache, "register", k)
    if u is not None:
        b.count("register", taken=1)
        return u
    b.count("register", made=1)
    return store(b.root, "register", k, {**site_pages(views, failed, meetings, b.packets, b.methods),
                                         **base_files(b.packets)})


# --------------------------------------------------------------------------
# Phase 6: publish

def publish(b: Build, key: str, built: Sequence[str], failed: Sequence[CaseFailure],
            site: SiteFiles, lock: SiteLock | None = None) -> BuildReport:
    """Write the whole site (linked from the cache's blobs) with its manifest."""
    manifest_files = {rel: b.cache.blob_path(d).stat().st_size
                      for rel, d in sorted(site.linked.items())}
    manifest_files.update({rel: len(data) for rel, data in site.pages.items()})
    manifest_files.update({rel: p.stat().st_size for rel, p in site.kept.items()})
    manifest = json.dumps({
        "format": MANIFEST_FORMAT, "key": key, "built": list(built),
        "failed": [[f.file, list(f.problems)] for f in failed], "packets": site.packets,
        "notes": site.problems, "files": dict(sorted(manifest_files.items()))}, indent=1,
        sort_keys=True).encode("utf-8")
    result = write_site(b.out_dir, site.pages, protected=[b.cases_dir],
                        linked={**{rel: b.cache.blob_path(d) for rel, d in site.linked.items()},
                                **site.kept},
                        manifest=manifest, lock=lock)
    return b.report(built, failed, written=True, files=result.files,
                    packets=tuple(site.packets), notes=tuple(site.problems))


# --------------------------------------------------------------------------
# The command

def start_build(cases_dir: Path, out_dir: Path, strict: bool, meeting: str | None, jobs: int,
                packets: bool, cache_dir: Path | None, progress: Progress | None) -> Build:
    """Check the options and folders (refusing early, before any work) and set up the run."""
    start = time.perf_counter()
    if jobs < 1:
        raise DossierError(Problem(f"--jobs must be 1 or more, got {jobs}", key="--jobs"))
    paths = case_files(cases_dir)
    target = check_target(out_dir, protected=[cases_dir])
    cache = Cache(check_cache_dir(cache_dir or default_cache_dir(out_dir), target, cases_dir))
    policy = read_policy(cases_dir)
    methods = policy_settings(policy)  # a policy that cannot be used refuses the build
    return Build(cases_dir, out_dir, paths, target, strict, packets, meeting, cache,
                 not cache.root.exists(), build_settings(packets, meeting, methods),
                 Runner(jobs, progress, packets), start, policy=policy, methods=methods)


def build_site(cases_dir: Path, out_dir: Path, strict: bool = False,
               meeting: str | None = None, jobs: int = 1, packets: bool = True,
               cache_dir: Path | None = None, progress: Progress | None = None) -> BuildReport:
    """Assess every case in ``cases_dir`` and publish the site into ``out_dir``.

    Each output is made once and kept in the cache (``cache_dir``, default
    ``.dossier-cache/`` beside ``out_dir``) under the digest of what it
    depends on, so a rebuild redoes only what changed.  When nothing changed
    since the site in ``out_dir`` was built, nothing is rendered or written.
    ``jobs`` > 1 runs the cases in that many worker processes; the site is
    the same byte for byte whatever the number.  ``meeting`` limits the
    meeting packets to that date (YYYY-MM-DD); ``packets=False`` leaves the
    PDF packets out.  ``progress(phase, done, total)`` is told how far it got.
    """
    b = start_build(Path(cases_dir), Path(out_dir), strict, meeting, jobs, packets, cache_dir,
                    progress)
    # one build at a time into this folder, start to end; the collector tuned for a build
    with SiteLock(b.target) as lock, fewer_collections():
        remove_stale(b.target)  # whatever this build then finds (nothing changed too)
        return locked_build(b, lock)


def locked_build(b: Build, lock: SiteLock) -> BuildReport:
    """The phases of :func:`build_site`, run while holding the site's lock."""
    strict = b.strict
    read = read_cases(b.paths, b.policy)
    keys = plan_keys(read, b.settings)
    whole = build_key(b.settings, strict, b.paths, keys)
    unchanged = unchanged_since(b, whole)
    if unchanged is not None:
        return unchanged
    try:
        assessed, failures = assess_cases(b, read, keys)
        if strict and failures:
            return b.refuse([e.case.case.id for e in assessed], failures)
        layout = site_layout([e.case for e in assessed])
        # the species pages of every assessed case go to the workers behind the cases
        sp_ahead, sp_found, _none = plan_species(b, layout, [e.case for e in assessed])
        ok, render_failed, sp_pending = render_cases(b, plan_case_units(b, layout, assessed),
                                                     list(sp_ahead.values()))
        built = [u.assessed.case.case.id for u, _r in ok]
        failed = [*failures, *render_failed]
        if strict and render_failed:
            return b.refuse(built, failed)
        site = SiteFiles()
        for _u, r in ok:
            site.add(r)
        views, meetings = render_shared(b, layout, [u for u, _r in ok], site,
                                        (sp_found, list(sp_ahead), sp_pending))
        rows = keep_failed(b.target, b.packets, layout, failed, meetings, site)
        keep_packets(b.target, b.packets, site)
        site.add(render_register(b, views, meetings, [u for u, _r in ok], rows))
    finally:
        b.runner.close()
    return publish(b, whole, built, failed, site, lock)


__all__ = ["UNIT_KINDS", "BuildReport", "build_site", "case_files", "default_cache_dir",
           "read_cases", "plan_keys"]
