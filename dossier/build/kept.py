"""What a build keeps of the site it replaces, so that failures stay visible.

A case that fails to assess keeps its page, with the last good assessment of
the site being replaced marked not current, and that site's packet and
meeting packet when this build makes none in their place; a build without
packets keeps the packets it finds and says so.  :class:`SiteFiles` collects
what the render phase made and what is kept, for the writer.
"""
from __future__ import annotations

import dataclasses
import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import Sequence

from dossier.build.assessing import CaseFailure
from dossier.build.layout import SiteLayout
from dossier.build.outputs import failed_rows
from dossier.build.units import UnitResult
from dossier.build.writer import previous_file, previous_files, read_previous
from dossier.render.pages import render_failed_case_page
from dossier.render.slugs import case_slugs, slugify
from dossier.render.views import FailedCase, MeetingView


@dataclass
class SiteFiles:
    """What the units made for the site: site path -> blob, notes, packets."""

    linked: dict[str, str] = field(default_factory=dict)
    problems: list[str] = field(default_factory=list)
    packets: list[str] = field(default_factory=list)
    pages: dict[str, bytes] = field(default_factory=dict)  # made here: failed cases' pages
    kept: dict[str, Path] = field(default_factory=dict)  # kept from the site it replaces

    def add(self, unit: UnitResult) -> None:
        self.linked.update(unit.files)
        self.problems.extend(unit.problems)



def earlier_export(data: bytes | None, file_name: str) -> dict | None:
    """A previous site's data export of the case file ``file_name``, or None."""
    try:
        e = json.loads(data) if data else None
    except ValueError:
        return None
    return e if isinstance(e, dict) and e.get("source_file") == file_name else None


def keep_failed(target: Path, packets: bool, layout: SiteLayout, failed: Sequence[CaseFailure],
                meetings: Sequence[MeetingView], site: SiteFiles) -> list[FailedCase]:
    """Each failed case keeps its page (``cases/<slug>.html``, no 404): what failed and
    where, and the last good assessment from the site this build replaces, marked not
    current (its data export is kept as ``cases/<slug>.last-good.json``), with that
    build's packet and meeting packet when this build makes none in their place."""
    taken = {p for s in layout.case_slug.values() for p in (s, f"{s}-derivation")}
    made = {m.slug for m in meetings} if packets else set()  # meeting packets made
    rows = []
    for f, row in zip(failed, failed_rows(failed)):
        stem = Path(f.file).name.removesuffix(".md")
        slug = case_slugs([stem])[stem]
        if slug in taken or f"{slug}-derivation" in taken:  # a good case holds its page
            rows.append(row)
            continue
        taken.update((slug, f"{slug}-derivation"))
        e, data = None, None
        for rel in (f"cases/{slug}.json", f"cases/{slug}.last-good.json"):
            data = read_previous(target, rel)
            e = earlier_export(data, row.file)
            if e is not None:
                break
        kept = []
        if e is not None:
            site.pages[f"cases/{slug}.last-good.json"] = data
            meeting = f"meeting-{slugify(str(e['meeting']))}" if e.get("meeting") else ""
            if meeting in made:
                site.problems.append(f"packets/{meeting}.pdf was made without case {stem}, "
                                     "which failed to assess")
            for rel in (f"packets/{slug}.pdf", f"packets/{meeting}.pdf" if meeting else ""):
                old = previous_file(target, rel) if rel and rel not in site.linked else None
                if old is not None:
                    site.kept[rel] = old
                    kept.append(rel)
        if kept:
            site.problems.append(f"case {stem} failed: kept {', '.join(kept)} from an "
                                 "earlier build (not current)")
        row = dataclasses.replace(row, slug=slug, earlier=e, kept=tuple(kept))
        site.pages[f"cases/{slug}.html"] = render_failed_case_page(row).encode("utf-8")
        rows.append(row)
    return rows


#: Beside packets kept by a build without packets.
KEPT_PACKETS_NOTE = ("The PDF packets in this folder were printed by an earlier build and kept "
                     "because the last build ran without packets (--no-packets). Each shows "
                     "the revision and date it was printed for on its cover; they may not match "
                     "the pages of this site. Build with packets to print them again.\n")


def keep_packets(target: Path, packets: bool, site: SiteFiles) -> None:
    """A build without packets keeps the packets of the site it replaces, says so
    (a note, and ``packets/KEPT-FROM-AN-EARLIER-BUILD.txt``) and never deletes them."""
    if packets:  # a build with packets prints its own (a failed case's are kept above)
        return
    old = [rel for rel in previous_files(target, "packets", ".pdf")
           if rel not in site.kept and rel not in site.linked]
    for rel in old:
        site.kept[rel] = previous_file(target, rel)
    if site.kept:
        site.pages["packets/KEPT-FROM-AN-EARLIER-BUILD.txt"] = KEPT_PACKETS_NOTE.encode("utf-8")
        site.problems.append(f"built without packets: kept {len(site.kept)} PDF packets of an "
                             "earlier build in packets/ (not current; build with packets to "
                             "print them again)")


__all__ = ["KEPT_PACKETS_NOTE", "SiteFiles", "earlier_export", "keep_failed", "keep_packets"]
