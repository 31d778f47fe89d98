"""`dossier build`: assess every case, then render and publish the site.

Two phases, one direction:

1. **assess** (:func:`assess_file`): each case file on its own is loaded,
   assessed and given its integrity record.  A case that fails is kept as a
   :class:`CaseFailure` with its file, line and key; the others go on.
2. **render** (:func:`render_site`): figures, pages, data exports and PDF
   packets for the cases that were assessed, as one mapping of site path →
   bytes.  Nothing is written in this phase.

Only then does :func:`dossier.writer.write_site` write the whole site at once
(temporary folder, then a swap).  With ``strict=True`` a single failed case
stops the build before anything is written.
"""
from __future__ import annotations

import json
import traceback
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Callable, Mapping, Sequence

from .errors import CaseError, DossierError, Problem

if TYPE_CHECKING:  # pragma: no cover
    from .assess import Assessment
    from .case import Case
    from .decisions import CaseDecisions
    from .integrity import IntegrityRecord
    from .site import CaseView, MeetingView
    from .species import Library, SpeciesRecord
    from .thermo import ReactionThermo

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
    from .assess import local_record
    from .thermo import ReactionThermo

    lib = library.with_records([local_record(sp, case.window) for sp in case.species]) \
        if case.species else library
    records = tuple(lib.get(u.record_id) for u in assessment.species)
    thermo = ReactionThermo(tuple(u.nu for u in assessment.species),
                            tuple(r.model for r in records))
    return thermo, records


def _integrity(path: Path) -> tuple["IntegrityRecord | None", str]:
    try:
        from .integrity import digest_for_case
    except ImportError:  # pragma: no cover - module absent in a partial install
        return None, NOT_COMPUTED
    try:
        record, _rev, _id = digest_for_case(path)
    except DossierError as err:
        return None, f"{NOT_COMPUTED} ({'; '.join(p.message for p in err.problems)})"
    return record, ""


def assess_file(path: Path, library: "Library") -> AssessedCase | CaseFailure:
    """Load and assess one case file; never raises for a bad case."""
    from .assess import assess_case
    from .casefile import load_case

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
    from .decisions import collect_decisions

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
    from .derivation import derive
    from .site import derivation_view
    from .thermo import T_REF
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
    from .figures import case_figures
    from .site import CaseView

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
    from . import site
    from .figures import formula_svg

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
                base: Mapping[str, bytes]) -> CaseOutput:
    """Figures, formula images, data export and (optionally) the packet of one case.

    Raises on a defect; the callers turn that into a :class:`CaseFailure`.
    """
    from . import site
    from .figures import formula_svg
    from .packets import lay_out, write_pdf

    v = case_view(a, slug, species_slugs)
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
    from . import site

    return {f"cases/{v.slug}.html": site.render_case_page(v, packets).encode("utf-8"),
            f"cases/{v.slug}-derivation.html": site.render_derivation_page(v).encode("utf-8")}


def species_files(rec: "SpeciesRecord", slug: str, local_to: str | None,
                  used_by: Sequence[tuple[str, str, str]]) -> dict[str, bytes]:
    """The page and figure of one species record."""
    from . import site
    from .figures import species_figure

    fig = species_figure(rec)
    sv = site.SpeciesView(slug=slug, record=rec, local_to=local_to, figure=fig,
                          used_by=tuple(used_by))
    return {f"species/{slug}.html": site.render_species_page(sv).encode("utf-8"),
            f"figures/species/{slug}/{fig.name}.svg": fig.svg.encode("utf-8")}


def meeting_pdf(m: "MeetingView", parts: Sequence[object], files: Mapping[str, bytes]) -> bytes:
    """The packet of a meeting: cover and agenda, then each case's laid-out packet."""
    from .packets import write_pdf

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
    from . import site

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
    from . import site

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
    from . import site

    render = getattr(site, "render_guide_pages", None)
    return dict(render()) if render is not None else {}


def failed_rows(failures: Sequence[CaseFailure]):
    """The register names a bad file by its name, not by where the build ran."""
    from . import site

    return tuple(site.FailedCase(Path(f.file).name,
                                 tuple(p.replace(f.file, Path(f.file).name, 1) for p in f.problems))
                 for f in failures)


def render_site(assessed: Sequence[AssessedCase], failures: Sequence[CaseFailure] = (),
                meeting: str | None = None, packets: bool = True) -> RenderedSite:
    """Every file of the site, as site path → bytes (in memory, one process, no cache).

    A case whose figures, pages or packet cannot be made is left out and
    reported in ``RenderedSite.failed``; the other cases are unaffected.
    """
    from . import site

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
    from .packets import PdfAttachment

    return PdfAttachment(f"{v.slug}-assessment.json", _view_json(v),
                         f"Assessment of case {v.id}, revision {v.assessment.revision} "
                         "(JSON: the numbers this packet shows)")


def _meeting_cover(m, parts, files):
    """Lay out the meeting cover and agenda with the page where each case starts."""
    from . import site
    from .packets import lay_out

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

    def lines(self) -> list[str]:
        out = []
        for f in self.failed:
            out.extend(f"error: {p}" for p in f.problems)
        out.extend(f"note: {n}" for n in self.notes)
        total = len(self.built) + len(self.failed)
        if not self.written:
            out.append(f"strict build: nothing written to {self.out_dir}; {len(self.failed)} of "
                       f"{total} case files have errors")
        else:
            bad = f"; {len(self.failed)} failed (see the errors above)" if self.failed else ""
            out.append(f"built {len(self.built)} of {total} cases into {self.out_dir}{bad}: "
                       f"{self.files} files, {len(self.packets)} PDF packets")
        return out


def case_files(cases_dir: Path) -> list[Path]:
    cases_dir = Path(cases_dir)
    if not cases_dir.is_dir():
        raise CaseError(Problem("the cases folder does not exist (give the folder that holds "
                                "the case files, e.g. 'cases')", str(cases_dir)))
    return sorted(p for p in cases_dir.glob("*.md") if p.is_file())


def build_site(cases_dir: Path, out_dir: Path, strict: bool = False,
               meeting: str | None = None, jobs: int = 1, packets: bool = True) -> BuildReport:
    """Assess every case in ``cases_dir`` and publish the site into ``out_dir``.

    ``meeting`` limits the meeting packets to that date (YYYY-MM-DD).
    ``jobs`` is accepted for parallel builds; cases are processed one after
    the other for now.  ``packets=False`` leaves the PDF packets out.
    """
    from .species import Library
    from .writer import check_target, write_site

    if jobs < 1:
        raise DossierError(Problem(f"--jobs must be 1 or more, got {jobs}", key="--jobs"))
    cases_dir, out_dir = Path(cases_dir), Path(out_dir)
    paths = case_files(cases_dir)
    check_target(out_dir, protected=[cases_dir])  # refuse early, before any work

    library = Library.default()
    assessed: list[AssessedCase] = []
    failures: list[CaseFailure] = []
    for p in paths:
        r = assess_file(p, library)
        (failures if isinstance(r, CaseFailure) else assessed).append(r)

    built = tuple(a.case.id for a in assessed)
    if strict and failures:
        return BuildReport(cases_dir, out_dir, built, tuple(failures), written=False, strict=True)

    rendered = render_site(assessed, failures, meeting=meeting, packets=packets)
    failed = (*failures, *rendered.failed)
    left_out = {f.file for f in rendered.failed}
    built = tuple(a.case.id for a in assessed if str(a.path) not in left_out)
    if strict and rendered.failed:
        return BuildReport(cases_dir, out_dir, built, failed, written=False, strict=True)
    result = write_site(out_dir, rendered.files, protected=[cases_dir])
    return BuildReport(cases_dir, out_dir, built, failed, written=True, strict=strict,
                       files=result.files, packets=rendered.packets, notes=rendered.problems)


__all__ = ["AssessedCase", "BuildReport", "CaseFailure", "assess_file", "build_site",
           "case_view", "reaction_thermo", "render_site"]
