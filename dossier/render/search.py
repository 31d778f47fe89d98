"""The site's search index: one small JSON document made when the site is built.

Every case, every species record a case uses, and every section of the
methods page and the guide becomes one entry: its title, its address in the
site, its kind and the words it is found by.  The build writes the index as
``search.json`` and the register carries the same text in a data block
(:func:`embeddable`), so the register's script searches the whole site with
no server and no network, even from a folder opened in a browser.
"""
from __future__ import annotations

import html
import json
import re
from typing import Mapping, Sequence

from dossier.render.views import CaseView, verdict_summary

#: The index's format; a reader checks it before using the entries.
INDEX_FORMAT = 1

_SECTION_RE = re.compile(r'<h([1-3])\b[^>]*\bid="([^"]+)"[^>]*>(.*?)</h\1>', re.DOTALL)
_TITLE_RE = re.compile(r"<title>(.*?)</title>", re.DOTALL)
_TAG_RE = re.compile(r"<[^>]*>")
_SPACE_RE = re.compile(r"\s+")


def plain(fragment: str) -> str:
    """Text of an HTML fragment: tags dropped, entities read, spaces folded."""
    return _SPACE_RE.sub(" ", html.unescape(_TAG_RE.sub("", fragment))).strip()


def entry(title: str, url: str, kind: str, words: Sequence[str]) -> dict[str, str]:
    """One entry: ``t`` title, ``u`` address in the site, ``k`` kind, ``w`` the words
    (lower case) it is found by."""
    return {"t": title, "u": url, "k": kind,
            "w": _SPACE_RE.sub(" ", " ".join([title, *words]).lower()).strip()}


def case_entries(views: Sequence[CaseView]) -> list[dict[str, str]]:
    """Each case, and each species record the cases use (once, with the cases using it)."""
    out, species = [], {}
    for v in views:
        a = v.assessment
        out.append(entry(f"{a.case_id}: {a.title}", f"cases/{v.slug}.html", "case", [
            a.thermo.reaction, a.status, a.gate or "", a.owner or "", a.meeting or "",
            verdict_summary(v.reviews), *(f.text for f in a.findings)]))
        for use, slug in zip(a.species, v.species_slugs):
            name, words = species.get(slug, (f"{use.name} ({use.phase})", []))
            words.extend([use.key, use.formula, use.record_id])
            species[slug] = (name, words)
    for slug in sorted(species):
        name, words = species[slug]
        out.append(entry(name, f"species/{slug}.html", "species", sorted(set(words))))
    return out


def section_entries(pages: Mapping[str, bytes], kind: str) -> list[dict[str, str]]:
    """Each page of ``pages`` (site path → HTML), and each of its headings with an id."""
    out = []
    for path in sorted(pages):
        text = pages[path].decode("utf-8")
        m = _TITLE_RE.search(text)
        page_title = plain(m.group(1)).removesuffix(" · dossier") if m else path
        out.append(entry(page_title, path, kind, []))
        for _level, anchor, heading in _SECTION_RE.findall(text):
            out.append(entry(f"{page_title}: {plain(heading)}", f"{path}#{anchor}", kind, []))
    return out


def search_index(views: Sequence[CaseView], methods: Mapping[str, bytes],
                 guide: Mapping[str, bytes]) -> str:
    """The index as JSON text (deterministic: the same site gives the same bytes)."""
    entries = [*case_entries(views), *section_entries(methods, "methods"),
               *section_entries(guide, "guide")]
    return json.dumps({"format": INDEX_FORMAT, "entries": entries}, ensure_ascii=False,
                      sort_keys=True, separators=(",", ":"))


def embeddable(index: str) -> str:
    """The index as the text of a ``<script type="application/json">`` block: ``<``,
    ``>`` and ``&`` written as JSON escapes, so no text in it can close the block."""
    return index.replace("&", "\\u0026").replace("<", "\\u003c").replace(">", "\\u003e")


__all__ = ["INDEX_FORMAT", "case_entries", "embeddable", "entry", "plain", "search_index",
           "section_entries"]
