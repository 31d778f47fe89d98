"""What each assessed case, species record and meeting contributes to the site,
as site path -> bytes (pure: nothing is written here).

:func:`render_site` puts them together in one process without the cache
(for tests and tools); :mod:`dossier.build.units` makes the same files in
worker processes and keeps them in the cache.
"""
from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path
from typing import Mapping, Sequence

import numpy as np

from dossier.build.assessing import NOT_COMPUTED, AssessedCase, CaseFailure, internal_failure
from dossier.build.layout import SiteLayout, UsedBy, site_layout
from dossier.constants import T_REF
from dossier.engine.derivation import derive
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.library.record import SpeciesRecord
from dossier.render import pages as site
from dossier.render.export import case_csv_files, register_csv_files
from dossier.render.figures import case_figures, formula_svg, species_figure
from dossier.render.guide import render_guide_pages
from dossier.render.search import embeddable, search_index
from dossier.render.maths import DerivationView, derivation_view, kirchhoff_assets
from dossier.render.assembly import assemble, read_parts
from dossier.render.packets import PdfAttachment, Printed, lay_out, stamp_sheet, write_pdf
from dossier.render.slugs import slugify
from dossier.render.views import CaseView, FailedCase, MeetingView, SpeciesView
from dossier.review.readiness import joins_meeting


# --------------------------------------------------------------------------
# One case

def derivation(a: AssessedCase, slug: str) -> tuple[DerivationView | None, str]:
    """The closed-form derivation of a case, or why it could not be made."""
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


def view_json(v: CaseView) -> bytes:
    """The data export of a case: the assessment, its integrity record and source file."""
    data = v.assessment.to_dict()
    data["integrity"] = v.integrity.to_dict() if v.integrity else None
    data["source_file"] = v.source_name
    return (json.dumps(data, indent=2, ensure_ascii=False) + "\n").encode("utf-8")


@dataclass(frozen=True)
class Drawings:
    """What a case's page draws from its numbers alone: the figures and the derivation.
    They depend on the assessment and the reaction's properties, never on the
    narrative, the reviews or the templates, so they are cached on those
    (:func:`dossier.build.keys.drawings_key`): a narrative edit redraws nothing."""

    figures: tuple
    derivation: DerivationView | None
    derivation_note: str


def drawings(a: AssessedCase, slug: str) -> Drawings:
    view, note = derivation(a, slug)
    return Drawings(tuple(case_figures(a.thermo, a.assessment)), view, note)


def case_view(a: AssessedCase, slug: str, species_slugs: Sequence[str],
              drawn: Drawings | None = None) -> CaseView:
    """The plain data a dossier page is rendered from (figures drawn here unless
    ``drawn`` brings them)."""
    drawn = drawn if drawn is not None else drawings(a, slug)
    view, note = drawn.derivation, drawn.derivation_note
    c = a.case
    return CaseView(
        slug=slug, source_name=a.path.name, assessment=a.assessment, reviews=c.reviews,
        narrative=c.narrative, inerts=c.inerts, charge=c.charge, vessel=c.vessel,
        decomposition=c.decomposition, measured=c.measured,
        species_slugs=tuple(species_slugs), figures=drawn.figures,
        derivation=view, derivation_note=note, integrity=a.integrity,
        integrity_note=a.integrity_note or NOT_COMPUTED, decisions=a.decisions)


def light_view(a: AssessedCase, slug: str, species_slugs: Sequence[str]) -> CaseView:
    """A case view without figures or derivation: what the register and agendas need."""
    c = a.case
    return CaseView(
        slug=slug, source_name=a.path.name, assessment=a.assessment, reviews=c.reviews,
        narrative=c.narrative, inerts=c.inerts, charge=c.charge, vessel=c.vessel,
        decomposition=c.decomposition, measured=c.measured, species_slugs=tuple(species_slugs),
        figures=(), derivation=None, derivation_note="", integrity=a.integrity,
        integrity_note=a.integrity_note or NOT_COMPUTED, decisions=a.decisions)


def render_failure(a: AssessedCase, step: str, exc: Exception) -> CaseFailure:
    return internal_failure(a.path, step, exc, "; the case is left out")


def attachment(v: CaseView) -> PdfAttachment:
    return PdfAttachment(f"{v.slug}-assessment.json", view_json(v),
                         f"Assessment of case {v.id}, revision {v.assessment.revision} "
                         "(JSON: the numbers this packet shows)")


@dataclass(frozen=True)
class CaseOutput:
    """What one case contributes to the site (figures, formulas, JSON, packet)."""

    view: CaseView
    files: dict[str, bytes]
    problems: tuple[str, ...]

    @property
    def packet(self) -> bytes | None:
        """The case's finished packet (meeting packets are put together from these)."""
        return self.files.get(f"packets/{self.view.slug}.pdf")


def case_output(a: AssessedCase, slug: str, species_slugs: Sequence[str], packets: bool,
                base: Mapping[str, bytes], view: CaseView | None = None,
                drawn: Drawings | None = None) -> CaseOutput:
    """Figures, formula images, data export and (optionally) the packet of one case.

    ``view`` is the case's view when it is at hand already (from the cache).
    Raises on a defect; the callers turn that into a :class:`CaseFailure`.
    """
    v = view if view is not None else case_view(a, slug, species_slugs, drawn)
    own: dict[str, bytes] = {}
    problems: list[str] = []
    for f in v.figures:
        own[f"figures/cases/{slug}/{f.name}.svg"] = f.svg.encode("utf-8")
    for path, tex in site.print_assets(v) if packets else ():
        if path not in base:
            own[path] = formula_svg(tex).encode("utf-8")
    own[f"cases/{slug}.json"] = view_json(v)
    own.update(case_csv_files(v))  # every table of the dossier as CSV
    if packets:
        path = f"packets/{slug}.pdf"
        printed = lay_out(site.render_case_packet(v), f"packets/{slug}.html", {**base, **own})
        problems.extend(f"{path}: asked for {u}" for u in printed.refused)
        own[path] = write_pdf([printed], [attachment(v)])
    return CaseOutput(v, own, tuple(problems))


def case_pages(v: CaseView, packets: bool) -> dict[str, bytes]:
    return {f"cases/{v.slug}.html": site.render_case_page(v, packets).encode("utf-8"),
            f"cases/{v.slug}-derivation.html": site.render_derivation_page(v).encode("utf-8")}


# --------------------------------------------------------------------------
# Species, meetings and the pages every site has

def species_files(rec: SpeciesRecord, slug: str, local_to: str | None,
                  used_by: Sequence[UsedBy]) -> dict[str, bytes]:
    """The page and figure of one species record."""
    fig = species_figure(rec)
    sv = SpeciesView(slug=slug, record=rec, local_to=local_to, figure=fig,
                     used_by=tuple(used_by))
    return {f"species/{slug}.html": site.render_species_page(sv).encode("utf-8"),
            f"figures/species/{slug}/{fig.name}.svg": fig.svg.encode("utf-8")}


def meeting_views(views: Sequence[CaseView], meeting: str | None
                  ) -> tuple[tuple[MeetingView, ...], list[str]]:
    """The meetings the cases name (only ``meeting`` when given), and a problem when
    no case names that one."""
    by_date: dict[str, list] = {}
    for v in views:
        if joins_meeting(v.assessment.status, v.assessment.meeting):  # not drafts, not withdrawn
            by_date.setdefault(v.assessment.meeting, []).append(v)
    problems = []
    if meeting is not None and meeting not in by_date:
        problems.append(f"no case names the meeting {meeting}; known meetings: "
                        f"{', '.join(sorted(by_date)) or 'none'}")
    meetings = tuple(MeetingView(date=d, slug=f"meeting-{slugify(d)}",
                                 cases=tuple(sorted(by_date[d], key=lambda v: v.id)))
                     for d in sorted(by_date) if meeting is None or d == meeting)
    return meetings, problems


def cover_pages_guess(cases: int) -> int:
    """The pages a meeting's cover and agenda will likely take, to number the agenda
    before it is laid out: the first page holds the cover and about three agenda
    rows, each further page about seven (agendas of 1 to 20 copies of the demo case
    nitro-hydrogenation).  A wrong guess costs one more lay-out, never a wrong number: the cover
    is laid out again with the page count it really took."""
    return 1 + -(-max(0, cases - 3) // 7)


def meeting_cover(m: MeetingView, counts: Sequence[int], files: Mapping[str, bytes]) -> Printed:
    """Lay out the meeting's cover, agenda and sign-off sheet, with the page of the
    meeting packet where each case starts (``counts``: the pages of each case packet)."""
    cover_pages = cover_pages_guess(len(counts))
    for _ in range(3):  # the agenda's own length decides where the cases start
        starts, page = [], cover_pages + 1
        for n in counts:
            starts.append(page)
            page += n
        cover = lay_out(site.render_meeting_packet(m, tuple(starts)),
                        f"packets/{m.slug}.html", files)
        if cover.page_count == cover_pages:
            return cover
        cover_pages = cover.page_count
    return cover


def meeting_pdf(m: MeetingView, case_pdfs: Sequence[bytes], files: Mapping[str, bytes]) -> bytes:
    """The packet of a meeting: its cover, agenda and sign-off sheet (laid out here),
    then each case's finished packet as it is (``case_pdfs``, in the order of
    ``m.cases``), numbered through "page i of N" by one stamp sheet."""
    parts = read_parts(case_pdfs, [f"Case {c.id}, revision {c.assessment.revision}: "
                                   f"{c.assessment.title}" for c in m.cases])
    counts = tuple(p.page_count for p in parts)
    cover = meeting_cover(m, counts, files)
    cover_pdf = write_pdf([cover], [attachment(c) for c in m.cases])
    sheet = stamp_sheet(f"Meeting packet {m.date}", cover.page_count + sum(counts))
    return assemble(cover_pdf, parts, sheet)


def base_files(packets: bool = True) -> dict[str, bytes]:
    """The files every site has: stylesheets and (with packets) the Kirchhoff formula images."""
    files = {"style.css": site.template_text("site.css").encode("utf-8"),
             "packet.css": site.template_text("packet.css").encode("utf-8")}
    for tex, path in kirchhoff_assets() if packets else ():
        files[path] = formula_svg(tex).encode("utf-8")
    return files


def failed_rows(failures: Sequence[CaseFailure | FailedCase]) -> tuple[FailedCase, ...]:
    """The register names a bad file by its name, not by where the build ran (rows
    made already, with their pages, are kept as they are)."""
    return tuple(f if isinstance(f, FailedCase) else
                 FailedCase(Path(f.file).name,
                            tuple(p.replace(f.file, Path(f.file).name, 1) for p in f.problems))
                 for f in failures)


def site_pages(views: Sequence[CaseView], failed: Sequence[CaseFailure | FailedCase],
               meetings: Sequence[MeetingView], packets: bool,
               methods: MethodSettings = DEFAULT) -> dict[str, bytes]:
    """The register, the methods page (of the policy in force), the guide and the
    site's search index (``search.json``, also carried by the register)."""
    guide = render_guide_pages()
    methods_page = {"methods.html": site.render_methods_page(methods).encode("utf-8")}
    index = search_index(views, methods_page, guide)
    return {"index.html": site.render_register(views, failed_rows(failed), meetings, packets,
                                               search=embeddable(index)).encode("utf-8"),
            **methods_page, "search.json": index.encode("utf-8"),
            **register_csv_files(views),
            **guide}


# --------------------------------------------------------------------------
# The whole site in one process

@dataclass(frozen=True)
class RenderedSite:
    files: dict[str, bytes]
    packets: tuple[str, ...]
    problems: tuple[str, ...]  # e.g. a packet that asked for a missing file
    failed: tuple[CaseFailure, ...] = ()  # cases left out because rendering them failed


def species_pages(layout: SiteLayout, published: Sequence[AssessedCase]) -> dict[str, bytes]:
    """The page and figure of every species record a published case uses."""
    used_by = layout.used_by(published)
    files: dict[str, bytes] = {}
    for k, (_text, rec) in layout.species.items():
        if k in used_by:
            files.update(species_files(rec, layout.species_slug[k], layout.local_to(k),
                                       used_by[k]))
    return files


def render_site(assessed: Sequence[AssessedCase], failures: Sequence[CaseFailure] = (),
                meeting: str | None = None, packets: bool = True) -> RenderedSite:
    """Every file of the site, as site path -> bytes (in memory, one process, no cache).

    A case whose figures, pages or packet cannot be made is left out and
    reported in ``RenderedSite.failed``; the other cases are unaffected.
    """
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
            render_failed.append(render_failure(a, "drawing its figures and packet", exc))
            continue
        files.update(out.files)
        problems.extend(out.problems)
        if packets:
            made.append(f"packets/{slug}.pdf")
        done.append((a, out))
    views = [o.view for _a, o in done]
    for v in views:
        files.update(case_pages(v, packets))
    files.update(species_pages(layout, [a for a, _o in done]))

    meetings, meeting_problems = meeting_views(views, meeting)
    problems.extend(meeting_problems)
    if packets:
        for m in meetings:
            path = f"packets/{m.slug}.pdf"
            files[path] = meeting_pdf(m, [files[f"packets/{c.slug}.pdf"] for c in m.cases], files)
            made.append(path)
    files.update(site_pages(views, [*failures, *render_failed], meetings, packets))
    return RenderedSite(files, tuple(made), tuple(problems), tuple(render_failed))


__all__ = ["CaseOutput", "RenderedSite", "attachment", "base_files", "case_output",
           "case_pages", "case_view", "cover_pages_guess", "derivation", "failed_rows",
           "light_view", "meeting_pdf", "meeting_views", "render_failure", "render_site", "site_pages",
           "species_files", "species_pages", "view_json"]
