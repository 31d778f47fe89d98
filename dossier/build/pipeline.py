"""`dossier build`: assess every case, then render and publish the site.

Two phases, one direction:

1. **assess** (:func:`assess_file`): each case file on its own is loaded,
   assessed and given its integrity record.  A case that fails is kept as a
   :class:`CaseFailure` with its file, line and key; the others go on.
2. **render** (:func:`render_site`): figures, pages, data exports and PDF
   packets for the cases that were assessed, as one mapping of site path →
   bytes.  Nothing is written in this phase.

Only then does :func:`dossier.build.writer.write_site` write the whole site at once
(temporary folder, then a swap).  With ``strict=True`` a single failed case
stops the build before anything is written.
"""
from __future__ import annotations

import functools
import json
import types
import traceback
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Callable, Mapping, Sequence

from dossier.errors import CaseError, DossierError, Problem

if TYPE_CHECKING:  # pragma: no cover
    from dossier.assess.evaluate import Assessment
    from dossier.model.case import Case
    from dossier.review.decisions import CaseDecisions
    from dossier.review.digest import IntegrityRecord
    from dossier.render.pages import CaseView, MeetingView
    from dossier.library.lookup import Library, SpeciesRecord
    from dossier.engine.thermo import ReactionThermo

NOT_COMPUTED = "integrity record: not yet computed"


# --------------------------------------------------------------------------
# Phase 1: assess

@dataclass(frozen=True)
class CaseFailure:
    """A case file that could not be assessed, with its located problems."""

    file: str
    problems: tuple[str, ...]


@dataclass(frozen=True)
class AssessedCase:
    """A case with everything computed about it (phase 1 output)."""

    path: Path
    case: "Case"
    assessment: "Assessment"
    records: tuple["SpeciesRecord", ...]  # one per assessment.species
    thermo: "ReactionThermo"
    integrity: "IntegrityRecord | None"
    integrity_note: str
    decisions: "CaseDecisions | None" = None  # signatures, recorded verdicts, revision history


def reaction_thermo(case: "Case", assessment: "Assessment", library: "Library"
                    ) -> tuple["ReactionThermo", tuple["SpeciesRecord", ...]]:
    """The engine's ReactionThermo and the records of an assessed case.

    Rebuilt from the assessment's species uses (record ids and coefficients)
    and the library extended with the case's own records, as assess_case does.
    """
    from dossier.assess.evaluate import local_record
    from dossier.engine.thermo import ReactionThermo

    lib = library.with_records([local_record(sp, case.window) for sp in case.species]) \
        if case.species else library
    records = tuple(lib.get(u.record_id) for u in assessment.species)
    thermo = ReactionThermo(tuple(u.nu for u in assessment.species),
                            tuple(r.model for r in records))
    return thermo, records


def _integrity(path: Path) -> tuple["IntegrityRecord | None", str]:
    try:
        from dossier.review.digest import digest_for_case
    except ImportError:  # pragma: no cover - module absent in a partial install
        return None, NOT_COMPUTED
    try:
        record, _rev, _id = digest_for_case(path)
    except DossierError as err:
        return None, f"{NOT_COMPUTED} ({'; '.join(p.message for p in err.problems)})"
    return record, ""


def assess_file(path: Path, library: "Library") -> AssessedCase | CaseFailure:
    """Load and assess one case file; never raises for a bad case."""
    from dossier.assess.evaluate import assess_case
    from dossier.casefile.load import load_case

    try:
        case = load_case(path)
        assessment = assess_case(case, library)
        thermo, records = reaction_thermo(case, assessment, library)
    except DossierError as err:
        located = err.located(str(path))
        return CaseFailure(str(path), tuple(str(p) for p in located.problems))
    except Exception as exc:  # a defect in dossier, not in the case: isolate it too
        where = traceback.extract_tb(exc.__traceback__)[-1]
        return CaseFailure(str(path), (
            f"{path}: internal error while assessing this case ({type(exc).__name__}: {exc}; "
            f"at {Path(where.filename).name}:{where.lineno}); please report it",))
    integrity, note = _integrity(path)
    from dossier.review.decisions import collect_decisions

    decisions = collect_decisions(path, case, assessment, integrity, library)
    return AssessedCase(path, case, assessment, records, thermo, integrity, note, decisions)


# --------------------------------------------------------------------------
# Phase 2: render (pure: returns the files)

@dataclass(frozen=True)
class RenderedSite:
    files: dict[str, bytes]
    packets: tuple[str, ...]
    problems: tuple[str, ...]  # e.g. a packet that asked for a missing file
    failed: tuple[CaseFailure, ...] = ()  # cases left out because rendering them failed


def _derivation(a: AssessedCase, slug: str):
    from dossier.engine.derivation import derive
    from dossier.render.pages import derivation_view
    from dossier.engine.thermo import T_REF
    import numpy as np

    lo, hi = a.assessment.thermo.window_K
    t_low, t_high = min(T_REF, lo), max(T_REF, hi)
    try:
        d = derive(a.thermo, t_low, t_high)
    except Exception as exc:  # the page says why instead of failing the build
        return None, f"{type(exc).__name__}: {exc}"
    temps = sorted({t_low, lo, 0.5 * (lo + hi), hi, t_high})
    checks = tuple((T, float(d.dG(np.array([T]))[0]) / 1e3,
                    float(a.thermo.dG(np.array([T]))[0]) / 1e3) for T in temps)
    forms = tuple((u.key, u.model) for u in a.assessment.species)
    return derivation_view(d.segments, slug, t_low, t_high, checks, forms), ""


def _view_json(v: "CaseView") -> bytes:
    """The data export of a case: the assessment, its integrity record and source file."""
    data = v.assessment.to_dict()
    data["integrity"] = v.integrity.to_dict() if v.integrity else None
    data["source_file"] = v.source_name
    return (json.dumps(data, indent=2, ensure_ascii=False) + "\n").encode("utf-8")


def case_view(a: AssessedCase, slug: str, species_slugs: Sequence[str]) -> "CaseView":
    """The plain data a dossier page is rendered from (figures drawn here)."""
    from dossier.render.figures import case_figures
    from dossier.render.pages import CaseView

    derivation, note = _derivation(a, slug)
    c = a.case
    return CaseView(
        slug=slug, source_name=a.path.name, assessment=a.assessment, reviews=c.reviews,
        narrative=c.narrative, inerts=c.inerts, charge=c.charge, vessel=c.vessel,
        decomposition=c.decomposition, measured=c.measured,
        species_slugs=tuple(species_slugs), figures=case_figures(a.thermo, a.assessment),
        derivation=derivation, derivation_note=note, integrity=a.integrity,
        integrity_note=a.integrity_note or NOT_COMPUTED, decisions=a.decisions)


def _species_key(a: AssessedCase, i: int) -> tuple[str, ...]:
    use = a.assessment.species[i]
    return ("local", a.case.id, use.record_id) if use.local else ("library", use.record_id)


def _render_failure(a: AssessedCase, step: str, exc: Exception) -> CaseFailure:
    where = traceback.extract_tb(exc.__traceback__)[-1]
    return CaseFailure(str(a.path), (
        f"{a.path}: internal error while {step} ({type(exc).__name__}: {exc}; at "
        f"{Path(where.filename).name}:{where.lineno}); the case is left out; please report it",))


def base_files(packets: bool = True) -> dict[str, bytes]:
    """The files every site has: stylesheets and (with packets) the Kirchhoff formula images."""
    from dossier.render import pages as site
    from dossier.render.figures import formula_svg

    files = {"style.css": site.template_text("site.css").encode("utf-8"),
             "packet.css": site.template_text("packet.css").encode("utf-8")}
    for tex, path in site.kirchhoff_assets() if packets else ():
        files[path] = formula_svg(tex).encode("utf-8")
    return files


@dataclass(frozen=True)
class CaseOutput:
    """What one case contributes to the site (figures, formulas, JSON, packet)."""

    view: "CaseView"
    files: dict[str, bytes]
    printed: object | None  # the laid-out packet (packets.Printed) for meeting packets
    problems: tuple[str, ...]


def case_output(a: AssessedCase, slug: str, species_slugs: Sequence[str], packets: bool,
                base: Mapping[str, bytes], view: "CaseView | None" = None) -> CaseOutput:
    """Figures, formula images, data export and (optionally) the packet of one case.

    ``view`` is the case's view when it is at hand already (from the cache).
    Raises on a defect; the callers turn that into a :class:`CaseFailure`.
    """
    from dossier.render import pages as site
    from dossier.render.figures import formula_svg
    from dossier.render.packets import lay_out, write_pdf

    v = view if view is not None else case_view(a, slug, species_slugs)
    own: dict[str, bytes] = {}
    problems: list[str] = []
    for f in v.figures:
        own[f"figures/cases/{slug}/{f.name}.svg"] = f.svg.encode("utf-8")
    for path, tex in site.print_assets(v) if packets else ():
        if path not in base:
            own[path] = formula_svg(tex).encode("utf-8")
    own[f"cases/{slug}.json"] = _view_json(v)
    printed = None
    if packets:
        path = f"packets/{slug}.pdf"
        printed = lay_out(site.render_case_packet(v), f"packets/{slug}.html", {**base, **own})
        problems.extend(f"{path}: asked for {u}" for u in printed.refused)
        own[path] = write_pdf([printed], [_attachment(v)])
    return CaseOutput(v, own, printed, tuple(problems))


def case_pages(v: "CaseView", packets: bool) -> dict[str, bytes]:
    from dossier.render import pages as site

    return {f"cases/{v.slug}.html": site.render_case_page(v, packets).encode("utf-8"),
            f"cases/{v.slug}-derivation.html": site.render_derivation_page(v).encode("utf-8")}


def species_files(rec: "SpeciesRecord", slug: str, local_to: str | None,
                  used_by: Sequence[tuple[str, str, str]]) -> dict[str, bytes]:
    """The page and figure of one species record."""
    from dossier.render import pages as site
    from dossier.render.figures import species_figure

    fig = species_figure(rec)
    sv = site.SpeciesView(slug=slug, record=rec, local_to=local_to, figure=fig,
                          used_by=tuple(used_by))
    return {f"species/{slug}.html": site.render_species_page(sv).encode("utf-8"),
            f"figures/species/{slug}/{fig.name}.svg": fig.svg.encode("utf-8")}


def meeting_pdf(m: "MeetingView", parts: Sequence[object], files: Mapping[str, bytes]) -> bytes:
    """The packet of a meeting: cover and agenda, then each case's laid-out packet."""
    from dossier.render.packets import write_pdf

    cover = _meeting_cover(m, parts, files)
    return write_pdf([cover, *parts], [_attachment(c) for c in m.cases])


@dataclass(frozen=True)
class SiteLayout:
    """Slugs and cross-links of a set of assessed cases (cheap; no rendering)."""

    case_slug: dict[str, str]  # case id -> slug
    species: dict[tuple, tuple[str, "SpeciesRecord"]]  # species key -> (text, record)
    species_slug: dict[tuple, str]

    def species_slugs(self, a: AssessedCase) -> list[str]:
        return [self.species_slug[_species_key(a, i)] for i in range(len(a.records))]

    def used_by(self, published: Sequence[AssessedCase]) -> dict[tuple, list[tuple[str, str, str]]]:
        used: dict[tuple, list[tuple[str, str, str]]] = {}
        for a in published:
            for i, use in enumerate(a.assessment.species):
                used.setdefault(_species_key(a, i), []).append(
                    (self.case_slug[a.case.id], a.case.id, use.key))
        return used


def site_layout(assessed: Sequence[AssessedCase]) -> SiteLayout:
    from dossier.render import pages as site

    case_slug = site.case_slugs([a.case.id for a in assessed])
    species_keys: dict[tuple, tuple[str, "SpeciesRecord"]] = {}
    for a in assessed:
        for i, rec in enumerate(a.records):
            k = _species_key(a, i)
            text = f"local {case_slug[a.case.id]} {rec.id}" if k[0] == "local" else rec.id
            species_keys.setdefault(k, (text, rec))
    sp_slug = site.unique_slugs([(k, text) for k, (text, _r) in species_keys.items()])
    return SiteLayout(case_slug, species_keys, sp_slug)


def meeting_views(views: Sequence["CaseView"], meeting: str | None
                  ) -> tuple[tuple["MeetingView", ...], list[str]]:
    from dossier.render import pages as site

    by_date: dict[str, list] = {}
    for v in views:
        if v.assessment.meeting:
            by_date.setdefault(v.assessment.meeting, []).append(v)
    problems = []
    if meeting is not None and meeting not in by_date:
        problems.append(f"no case names the meeting {meeting}; known meetings: "
                        f"{', '.join(sorted(by_date)) or 'none'}")
    meetings = tuple(site.MeetingView(date=d, slug=f"meeting-{site.slugify(d)}",
                                      cases=tuple(sorted(by_date[d], key=lambda v: v.id)))
                     for d in sorted(by_date) if meeting is None or d == meeting)
    return meetings, problems


def guide_pages() -> dict[str, bytes]:
    """The user guide's pages (docs/*.md), where this version of dossier has them."""
    from dossier.render import pages as site

    render = getattr(site, "render_guide_pages", None)
    return dict(render()) if render is not None else {}


def failed_rows(failures: Sequence[CaseFailure]):
    """The register names a bad file by its name, not by where the build ran."""
    from dossier.render import pages as site

    return tuple(site.FailedCase(Path(f.file).name,
                                 tuple(p.replace(f.file, Path(f.file).name, 1) for p in f.problems))
                 for f in failures)


def render_site(assessed: Sequence[AssessedCase], failures: Sequence[CaseFailure] = (),
                meeting: str | None = None, packets: bool = True) -> RenderedSite:
    """Every file of the site, as site path → bytes (in memory, one process, no cache).

    A case whose figures, pages or packet cannot be made is left out and
    reported in ``RenderedSite.failed``; the other cases are unaffected.
    """
    from dossier.render import pages as site

    files = base_files(packets)
    problems: list[str] = []
    render_failed: list[CaseFailure] = []
    layout = site_layout(assessed)
    done: list[tuple[AssessedCase, CaseOutput]] = []
    made: list[str] = []
    for a in assessed:
        slug = layout.case_slug[a.case.id]
        try:
            out = case_output(a, slug, layout.species_slugs(a), packets, files)
        except Exception as exc:  # a defect, not bad input: isolate this case
            render_failed.append(_render_failure(a, "drawing its figures and packet", exc))
            continue
        files.update(out.files)
        problems.extend(out.problems)
        if packets:
            made.append(f"packets/{slug}.pdf")
        done.append((a, out))
    views = [o.view for _a, o in done]
    for v in views:
        files.update(case_pages(v, packets))

    used_by = layout.used_by([a for a, _o in done])
    for k, (_text, rec) in layout.species.items():
        if k in used_by:
            files.update(species_files(rec, layout.species_slug[k],
                                       layout.case_slug[k[1]] if k[0] == "local" else None,
                                       used_by[k]))

    meetings, meeting_problems = meeting_views(views, meeting)
    problems.extend(meeting_problems)
    if packets:
        printed = {o.view.slug: o.printed for _a, o in done}
        for m in meetings:
            path = f"packets/{m.slug}.pdf"
            files[path] = meeting_pdf(m, [printed[c.slug] for c in m.cases], files)
            made.append(path)

    failed = failed_rows([*failures, *render_failed])
    files["index.html"] = site.render_register(views, failed, meetings, packets).encode("utf-8")
    files["methods.html"] = site.render_methods_page().encode("utf-8")
    files.update(guide_pages())
    return RenderedSite(files, tuple(made), tuple(problems), tuple(render_failed))


def _attachment(v: "CaseView"):
    from dossier.render.packets import PdfAttachment

    return PdfAttachment(f"{v.slug}-assessment.json", _view_json(v),
                         f"Assessment of case {v.id}, revision {v.assessment.revision} "
                         "(JSON: the numbers this packet shows)")


def _meeting_cover(m, parts, files):
    """Lay out the meeting cover and agenda with the page where each case starts."""
    from dossier.render import pages as site
    from dossier.render.packets import lay_out

    cover_pages = 1
    for _ in range(3):  # the agenda's own length decides where the cases start
        starts, page = [], cover_pages + 1
        for p in parts:
            starts.append(page)
            page += p.page_count
        cover = lay_out(site.render_meeting_packet(m, tuple(starts)),
                        f"packets/{m.slug}.html", files)
        if cover.page_count == cover_pages:
            return cover
        cover_pages = cover.page_count
    return cover


# --------------------------------------------------------------------------
# The command

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
    rendered: int = 0  # units of work done (assessments, pages, packets)
    reused: int = 0  # units of work taken from the cache
    corrupt: tuple[str, ...] = ()  # cache entries that failed their digest (rebuilt)
    seconds: float = 0.0

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


def case_files(cases_dir: Path) -> list[Path]:
    cases_dir = Path(cases_dir)
    if not cases_dir.is_dir():
        raise CaseError(Problem("the cases folder does not exist (give the folder that holds "
                                "the case files, e.g. 'cases')", str(cases_dir)))
    return sorted(p for p in cases_dir.glob("*.md") if p.is_file())


# --------------------------------------------------------------------------
# What each output depends on

@dataclass(frozen=True)
class BuildSettings:
    """Digests of everything that is the same for every case of a build."""

    code: str  # tool version and the package's own source files
    library: str  # the species library data
    templates: str  # every template, stylesheet and script (and the guide's sources)
    methods: str  # the method settings
    packets: bool
    meeting: str | None

    def parts(self) -> tuple[str, ...]:
        return (self.code, self.library, self.templates, self.methods,
                "packets" if self.packets else "no-packets", self.meeting or "")


def _tree_digest(root, suffixes: tuple[str, ...] | None = None) -> str:
    """Digest of the files below an importlib.resources folder (names and bytes, sorted)."""
    from dossier.build.cache import key

    parts: list[bytes | str] = []
    stack = [("", root)]
    while stack:
        prefix, node = stack.pop()
        for child in sorted(node.iterdir(), key=lambda c: c.name):
            name = prefix + child.name
            if child.is_dir():
                if child.name != "__pycache__":
                    stack.append((name + "/", child))
            elif suffixes is None or child.name.endswith(suffixes):
                parts += [name, child.read_bytes()]
    return key(*parts)


def build_settings(packets: bool = True, meeting: str | None = None) -> BuildSettings:
    """Reads the package's sources, data and templates (fast: no heavy imports)."""
    from importlib.resources import files

    from dossier import __version__
    from dossier.assess.evaluate import METHOD_SETTINGS
    from dossier.build.cache import key

    pkg = files("dossier")
    docs = _tree_digest(files("dossier.docs")) if _has_package("dossier.docs") else ""
    return BuildSettings(
        code=key(__version__, _tree_digest(pkg, (".py",))),
        library=key(pkg.joinpath("data", "species.json").read_bytes()),
        templates=key(_tree_digest(files("dossier.templates")), docs),
        methods=key(repr(sorted(METHOD_SETTINGS.items()))),
        packets=packets, meeting=meeting)


def _has_package(name: str) -> bool:
    import importlib.util

    try:
        return importlib.util.find_spec(name) is not None
    except ImportError:
        return False


def case_key(path: Path, settings: BuildSettings) -> str:
    """The key of a case's assessment: the case file and every file it draws on.

    The case file's bytes and path; its signatures file and (when it exists)
    the trusted keys; its kept revisions; the library, the method settings and
    the code.
    """
    from dossier.build.cache import key
    from dossier.review.revisions import archived_revisions
    from dossier.review.signatures import signatures_path, trusted_keys_path

    parts: list[bytes | str] = ["case", str(path), _read(path)]
    sig = signatures_path(path)
    if sig.exists():
        parts += ["signatures", _read(sig), "trusted", _read(trusted_keys_path(path.parent))]
    for n, rev in archived_revisions(path):
        parts += [f"rev-{n}", _read(rev)]
    return key(*parts, settings.code, settings.library, settings.methods)


def _read(path: Path) -> bytes:
    try:
        return path.read_bytes()
    except OSError as err:  # the assessment reports it; the key just has to differ
        return f"unreadable: {type(err).__name__}".encode()


# --------------------------------------------------------------------------
# Units of work (run in worker processes; each stores its result in the cache)

@dataclass(frozen=True)
class UnitResult:
    """Site path → blob digest of the files one unit made, and its notes."""

    files: dict[str, str]
    problems: tuple[str, ...] = ()
    failure: CaseFailure | None = None  # the case was left out (not cached)

    def payload(self) -> bytes:
        return json.dumps({"files": self.files, "problems": list(self.problems)},
                          sort_keys=True).encode("utf-8")

    @classmethod
    def from_payload(cls, data: bytes) -> "UnitResult":
        d = json.loads(data)
        return cls(dict(d["files"]), tuple(d["problems"]))


def _store(cache_root: str, kind: str, unit_key: str, files: Mapping[str, bytes],
           problems: Sequence[str] = ()) -> UnitResult:
    from dossier.build.cache import Cache

    cache = Cache(Path(cache_root))
    result = UnitResult({p: cache.put_blob(b) for p, b in sorted(files.items())}, tuple(problems))
    cache.put(kind, unit_key, result.payload())
    return result


def _read_only(d: dict) -> Mapping:
    return types.MappingProxyType(d)


def dumps(obj: object) -> bytes:
    """Pickle ``obj``; read-only mappings (``Case.header_lines``) are stored as such."""
    import copyreg
    import io
    import pickle

    buf = io.BytesIO()
    pickler = pickle.Pickler(buf, protocol=5)
    table = copyreg.dispatch_table.copy()
    table[types.MappingProxyType] = lambda m: (_read_only, (dict(m),))
    pickler.dispatch_table = table
    pickler.dump(obj)
    return buf.getvalue()


def _unit_assess(path: str, unit_key: str, cache_root: str) -> bytes:
    """Assess one case; returns (and caches) the pickled AssessedCase or CaseFailure."""
    from dossier.build.cache import Cache
    from dossier.library.lookup import Library

    data = dumps(assess_file(Path(path), Library.default()))
    Cache(Path(cache_root)).put("assess", unit_key, data)
    return data


def _cached_view(cache_root: str, view_key: str) -> "CaseView | None":
    import pickle

    from dossier.build.cache import Cache

    data = Cache(Path(cache_root)).get("view", view_key)
    try:
        return pickle.loads(data) if data is not None else None
    except Exception:  # written by another version of the classes: make it again
        return None


def _unit_case(a: AssessedCase | bytes, slug: str, species_slugs: list[str], packets: bool,
               unit_key: str, view_key: str, cache_root: str) -> UnitResult:
    """A case's figures, pages and packet.  Its view (figures and derivation, which do
    not depend on the templates) is cached on its own under ``view_key``."""
    import pickle

    from dossier.build.cache import Cache

    a = pickle.loads(a) if isinstance(a, bytes) else a
    try:
        view = _cached_view(cache_root, view_key)
        out = case_output(a, slug, species_slugs, packets, _base_files(packets), view)
        if view is None:
            Cache(Path(cache_root)).put("view", view_key, dumps(out.view))
        files = {**out.files, **case_pages(out.view, packets)}
    except Exception as exc:  # a defect, not bad input: isolate this case
        return UnitResult({}, (), _render_failure(a, "drawing its figures and packet", exc))
    return _store(cache_root, "case", unit_key, files, out.problems)


def _unit_species(rec: "SpeciesRecord", slug: str, local_to: str | None,
                  used_by: list[tuple[str, str, str]], unit_key: str, cache_root: str) -> UnitResult:
    return _store(cache_root, "species", unit_key, species_files(rec, slug, local_to, used_by))


def _unit_meeting(date: str, slug: str, members: list[tuple[bytes, str, list[str], str]],
                  unit_key: str, cache_root: str) -> UnitResult:
    import pickle

    from dossier.render import pages as site

    base = _base_files(True)
    files, outs = dict(base), []
    for data, case_slug, sp, view_key in members:
        a = pickle.loads(data)
        out = case_output(a, case_slug, sp, True, base, _cached_view(cache_root, view_key))
        files.update(out.files)
        outs.append(out)
    m = site.MeetingView(date=date, slug=slug,
                         cases=tuple(sorted((o.view for o in outs), key=lambda v: v.id)))
    by_slug = {o.view.slug: o.printed for o in outs}
    pdf = meeting_pdf(m, [by_slug[c.slug] for c in m.cases], files)
    return _store(cache_root, "meeting", unit_key, {f"packets/{slug}.pdf": pdf})


@functools.lru_cache(maxsize=2)
def _base_files(packets: bool) -> Mapping[str, bytes]:
    """base_files, made once per process (immutable: a read-only mapping)."""
    return types.MappingProxyType(base_files(packets))


def light_view(a: AssessedCase, slug: str, species_slugs: Sequence[str]) -> "CaseView":
    """A case view without figures or derivation: what the register and agendas need."""
    from dossier.render.pages import CaseView

    c = a.case
    return CaseView(
        slug=slug, source_name=a.path.name, assessment=a.assessment, reviews=c.reviews,
        narrative=c.narrative, inerts=c.inerts, charge=c.charge, vessel=c.vessel,
        decomposition=c.decomposition, measured=c.measured, species_slugs=tuple(species_slugs),
        figures=(), derivation=None, derivation_note="", integrity=a.integrity,
        integrity_note=a.integrity_note or NOT_COMPUTED, decisions=a.decisions)


# --------------------------------------------------------------------------
# Running units: in this process (jobs=1) or in a pool of worker processes

Progress = Callable[[str, int, int], None]  # (phase, done, total)


class _Runner:
    """Runs unit functions in order of submission; results come back in that order."""

    def __init__(self, jobs: int, progress: Progress | None, packets: bool = False):
        self.jobs = jobs
        self.progress = progress
        self.packets = packets
        self._pool = None

    def _executor(self, n: int):
        if self._pool is None:
            import multiprocessing
            from concurrent.futures import ProcessPoolExecutor

            # forkserver: workers fork from a clean server process that has the
            # heavy modules imported once (fork from a process with threads,
            # e.g. `dossier serve`, is unsafe; spawn re-imports per worker)
            methods = multiprocessing.get_all_start_methods()
            ctx = multiprocessing.get_context("forkserver" if "forkserver" in methods else "spawn")
            if "forkserver" in methods:
                ctx.set_forkserver_preload(
                    ["dossier.build.pipeline", "dossier.assess.evaluate", "dossier.render.pages", "dossier.render.figures",
                     "matplotlib.pyplot", *(["weasyprint"] if self.packets else [])])
            self._pool = ProcessPoolExecutor(max_workers=self.jobs, mp_context=ctx)
        return self._pool

    def run(self, phase: str, calls: list[tuple[Callable, tuple]]) -> list:
        total = len(calls)
        if self.progress:
            self.progress(phase, 0, total)
        if not calls:
            return []
        results: list = [None] * total
        if self.jobs == 1 or total == 1:
            for i, (fn, args) in enumerate(calls):
                results[i] = fn(*args)
                if self.progress:
                    self.progress(phase, i + 1, total)
            return results
        from concurrent.futures import as_completed

        pool = self._executor(total)
        futures = {pool.submit(fn, *args): i for i, (fn, args) in enumerate(calls)}
        try:
            for done, fut in enumerate(as_completed(futures), 1):
                results[futures[fut]] = fut.result()
                if self.progress:
                    self.progress(phase, done, total)
        except BaseException:
            for fut in futures:
                fut.cancel()
            raise
        return results

    def close(self) -> None:
        if self._pool is not None:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None


# --------------------------------------------------------------------------
# The command

MANIFEST_FORMAT = "dossier-manifest-1"


def default_cache_dir(out_dir: Path) -> Path:
    """``.dossier-cache/`` beside the output folder."""
    from dossier.build.cache import DEFAULT_NAME

    return Path(out_dir).expanduser().resolve().parent / DEFAULT_NAME


def _check_cache_dir(cache_dir: Path, target: Path, cases_dir: Path) -> Path:
    from dossier.build.writer import _is_within

    c = Path(cache_dir).expanduser().resolve()
    if _is_within(c, target) or _is_within(target, c):
        raise DossierError(Problem("the cache folder must not be inside the output folder "
                                   "(or hold it): a build replaces the output folder as a whole",
                                   str(cache_dir), key="--cache"))
    if c == Path(cases_dir).expanduser().resolve():
        raise DossierError(Problem("the cache folder must not be the cases folder",
                                   str(cache_dir), key="--cache"))
    return c


def _drop_new_cache(cache, created_now: bool) -> None:
    """A strict build that writes nothing leaves no new cache folder behind either."""
    import shutil

    if created_now:
        shutil.rmtree(cache.root, ignore_errors=True)


def _site_intact(target: Path, manifest: Mapping) -> bool:
    """Every file the manifest lists is in the site with its size."""
    for rel, size in manifest.get("files", {}).items():
        try:
            if (target / rel).stat().st_size != size:
                return False
        except OSError:
            return False
    return True


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
    import pickle
    import time

    from dossier.render import pages as site
    from dossier.build.cache import Cache, key
    from dossier.build.writer import check_target, read_manifest, write_site

    start = time.perf_counter()
    if jobs < 1:
        raise DossierError(Problem(f"--jobs must be 1 or more, got {jobs}", key="--jobs"))
    cases_dir, out_dir = Path(cases_dir), Path(out_dir)
    paths = case_files(cases_dir)
    target = check_target(out_dir, protected=[cases_dir])  # refuse early, before any work
    cache = Cache(_check_cache_dir(cache_dir or default_cache_dir(out_dir), target, cases_dir))
    root = str(cache.root)
    cache_is_new = not cache.root.exists()

    # -- nothing changed? -----------------------------------------------------
    settings = build_settings(packets, meeting)
    keys = [case_key(p, settings) for p in paths]
    build_key = key(MANIFEST_FORMAT, *settings.parts(), "strict" if strict else "",
                    *(part for p, k in zip(paths, keys) for part in (str(p), k)))
    previous = read_manifest(target)
    if previous is not None:
        try:
            old = json.loads(previous)
        except ValueError:
            old = None
        if (isinstance(old, dict) and old.get("format") == MANIFEST_FORMAT
                and old.get("key") == build_key and _site_intact(target, old)):
            return BuildReport(
                cases_dir, out_dir, tuple(old["built"]),
                tuple(CaseFailure(f, tuple(ps)) for f, ps in old["failed"]), written=False,
                strict=strict, files=len(old["files"]), packets=tuple(old["packets"]),
                notes=tuple(old["notes"]), unchanged=True,
                seconds=time.perf_counter() - start)

    runner = _Runner(jobs, progress, packets)
    made = reused = 0
    try:
        # -- phase 1: assess (cached per case) ---------------------------------
        results: list = [None] * len(paths)
        pickled: list[bytes | None] = [None] * len(paths)
        todo = []
        for i, (p, k) in enumerate(zip(paths, keys)):
            data = cache.get("assess", k)
            if data is not None:
                try:
                    results[i] = pickle.loads(data)
                    pickled[i] = data
                    reused += 1
                    continue
                except Exception:  # written by another version of the classes
                    cache.stats.corrupt.append(f"assess entry {k[:12]} (unreadable)")
            todo.append(i)
        for i, data in zip(todo, runner.run("assess", [(_unit_assess, (str(paths[i]), keys[i], root))
                                                        for i in todo])):
            results[i] = pickle.loads(data)
            pickled[i] = data
        made += len(todo)
        assessed = [r for r in results if isinstance(r, AssessedCase)]
        failures = [r for r in results if isinstance(r, CaseFailure)]
        if strict and failures:
            _drop_new_cache(cache, cache_is_new)
            return BuildReport(cases_dir, out_dir, tuple(a.case.id for a in assessed),
                               tuple(failures), written=False, strict=True, rendered=made,
                               reused=reused, corrupt=tuple(cache.stats.corrupt),
                               seconds=time.perf_counter() - start)
        akey = {id(a): k for a, k in zip(results, keys)}
        apickle = {id(a): d for a, d in zip(results, pickled)}

        # -- phase 2: each case's figures, pages, packet -----------------------
        layout = site_layout(assessed)
        view_keys = {id(a): key("view", akey[id(a)], layout.case_slug[a.case.id],
                                *layout.species_slugs(a), settings.code) for a in assessed}
        case_keys = [key("case", view_keys[id(a)], *settings.parts()) for a in assessed]
        units: list[UnitResult | None] = [cached_unit(cache, "case", k) for k in case_keys]
        todo = [i for i, u in enumerate(units) if u is None]
        calls = [(_unit_case, (apickle[id(assessed[i])], layout.case_slug[assessed[i].case.id],
                               layout.species_slugs(assessed[i]), packets, case_keys[i],
                               view_keys[id(assessed[i])], root))
                 for i in todo]
        for i, u in zip(todo, runner.run("cases", calls)):
            units[i] = u
        made += len(todo)
        reused += len(units) - len(todo)
        render_failed = [u.failure for u in units if u.failure is not None]
        ok = [(a, u, k) for a, u, k in zip(assessed, units, case_keys) if u.failure is None]
        built = tuple(a.case.id for a, _u, _k in ok)
        if strict and render_failed:
            _drop_new_cache(cache, cache_is_new)
            return BuildReport(cases_dir, out_dir, built, (*failures, *render_failed),
                               written=False, strict=True, rendered=made, reused=reused,
                               corrupt=tuple(cache.stats.corrupt),
                               seconds=time.perf_counter() - start)

        linked: dict[str, str] = {}
        problems: list[str] = []
        for _a, u, _k in ok:
            linked.update(u.files)
            problems.extend(u.problems)

        # -- species pages and meeting packets ---------------------------------
        used_by = layout.used_by([a for a, _u, _k in ok])
        sp_calls, sp_keys, sp_units = [], [], []
        for sk, (_text, rec) in layout.species.items():
            if sk not in used_by:
                continue
            slug = layout.species_slug[sk]
            local_to = layout.case_slug[sk[1]] if sk[0] == "local" else None
            rec_digest = (key("library", rec.id) if sk[0] == "library"
                          else key("local", dumps(rec)))
            k = key("species", rec_digest, slug, local_to or "",
                    json.dumps(used_by[sk]), *settings.parts())
            u = cached_unit(cache, "species", k)
            if u is None:
                sp_calls.append((_unit_species, (rec, slug, local_to, used_by[sk], k, root)))
            else:
                sp_units.append(u)
        views = [light_view(a, layout.case_slug[a.case.id], layout.species_slugs(a))
                 for a, _u, _k in ok]
        meetings, meeting_problems = meeting_views(views, meeting)
        problems.extend(meeting_problems)
        packet_paths = [f"packets/{v.slug}.pdf" for v in views] if packets else []
        mt_calls = []
        if packets:
            by_slug = {layout.case_slug[a.case.id]: (a, k) for a, _u, k in ok}
            for m in meetings:
                members = [by_slug[c.slug] for c in m.cases]
                k = key("meeting", m.date, m.slug, *(ck for _a, ck in members), *settings.parts())
                packet_paths.append(f"packets/{m.slug}.pdf")
                u = cached_unit(cache, "meeting", k)
                if u is None:
                    mt_calls.append((_unit_meeting, (m.date, m.slug, [
                        (apickle[id(a)], c.slug, layout.species_slugs(a), view_keys[id(a)])
                        for (a, _k), c in zip(members, m.cases)],
                        k, root)))
                else:
                    sp_units.append(u)
        fresh = runner.run("pages", sp_calls + mt_calls)
        made += len(fresh)
        reused += len(sp_units)
        for u in [*sp_units, *fresh]:
            linked.update(u.files)
            problems.extend(u.problems)

        # -- register, methods, guide, stylesheets (in this process) -------------
        failed = (*failures, *render_failed)
        reg_key = key("register", *settings.parts(), *(k for _a, _u, k in ok),
                      json.dumps([[f.file, list(f.problems)] for f in failed]))
        u = cached_unit(cache, "register", reg_key)
        if u is None:
            made += 1
            rows = failed_rows(failed)
            u = _store(root, "register", reg_key, {
                "index.html": site.render_register(views, rows, meetings, packets).encode("utf-8"),
                "methods.html": site.render_methods_page().encode("utf-8"),
                **guide_pages(), **base_files(packets)})
        else:
            reused += 1
        linked.update(u.files)
    finally:
        runner.close()

    manifest_files = {rel: cache.blob_path(d).stat().st_size for rel, d in sorted(linked.items())}
    manifest = json.dumps({
        "format": MANIFEST_FORMAT, "key": build_key, "built": list(built),
        "failed": [[f.file, list(f.problems)] for f in failed], "packets": packet_paths,
        "notes": problems, "files": manifest_files}, indent=1, sort_keys=True).encode("utf-8")
    result = write_site(out_dir, {}, protected=[cases_dir],
                        linked={rel: cache.blob_path(d) for rel, d in linked.items()},
                        manifest=manifest)
    return BuildReport(cases_dir, out_dir, built, failed, written=True, strict=strict,
                       files=result.files, packets=tuple(packet_paths), notes=tuple(problems),
                       rendered=made, reused=reused, corrupt=tuple(cache.stats.corrupt),
                       seconds=time.perf_counter() - start)


def cached_unit(cache, kind: str, unit_key: str) -> UnitResult | None:
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


__all__ = ["AssessedCase", "BuildReport", "BuildSettings", "CaseFailure", "assess_file",
           "build_settings", "build_site", "case_key", "case_view", "default_cache_dir",
           "reaction_thermo", "render_site"]


# --------------------------------------------------------------------------
# `dossier serve`: rebuild what changed when a source changes

#: Files in the cases folder whose change changes the site.
WATCHED_NAMES = (".md", ".signatures", "trusted-keys.txt")


def is_source_change(path: str | Path, cases_dir: Path, template_dirs: Sequence[Path] = ()) -> bool:
    """True when a changed path is one the site is built from (case files, their
    signatures and kept revisions, the trusted keys, templates); editor and
    temporary files (hidden, ``~``) are not."""
    p = Path(path)
    if p.name.startswith(".") or p.name.endswith("~"):
        return False
    for d in template_dirs:
        if _inside(p, d):
            return True
    return _inside(p, cases_dir) and p.name.endswith(WATCHED_NAMES)


def _inside(p: Path, folder: Path) -> bool:
    try:
        p.resolve().relative_to(Path(folder).resolve())
        return True
    except (ValueError, OSError):
        return False


def rebuild_on_changes(batches, rebuild: Callable[[], BuildReport], cases_dir: Path,
                       template_dirs: Sequence[Path] = ()):
    """For each batch of changes (watchfiles' sets of (change, path)) that touches a
    source, rebuild once; yields the reports.  Other batches are skipped."""
    for batch in batches:
        if any(is_source_change(path, cases_dir, template_dirs) for _change, path in batch):
            yield rebuild()


def template_dirs() -> list[Path]:
    """The folders of the templates (and the guide's sources) on disk, for watching."""
    from importlib.resources import files

    out = []
    for pkg in ("dossier.templates", "dossier.docs"):
        if _has_package(pkg):
            try:
                out.append(Path(str(files(pkg))))
            except (TypeError, ValueError):  # pragma: no cover - zipped install
                pass
    return out


def site_server(out_dir: Path, port: int = 8000):
    """An HTTP server for the site on 127.0.0.1 only (call serve_forever in a thread)."""
    import functools as _ft
    from http.server import SimpleHTTPRequestHandler, ThreadingHTTPServer

    class Handler(SimpleHTTPRequestHandler):
        def log_message(self, format, *args):  # noqa: A002 - quiet: the build prints
            pass

    handler = _ft.partial(Handler, directory=str(Path(out_dir).resolve()))
    return ThreadingHTTPServer(("127.0.0.1", port), handler)
