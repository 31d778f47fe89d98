"""Markdown as safe HTML: the one sanitiser (Markdown → HTML → nh3).

Two kinds of Markdown reach the site: the narrative of a case file (written
by anyone who can edit a case) and the user guide that ships with dossier.
Both go through :func:`markdown_html` with the one allow-list below: no
script, no event handlers, no ``javascript:`` links, no images, no styles.
Links survive only as web links, ``mailto:`` and in-page anchors, or, in
the guide, as links between guide pages (``x.md`` → ``x.html``).  Heading
ids survive only in the guide, whose table of contents makes them.
(The module is not called ``markdown`` so as not to stand in for the
Markdown package it uses.)
"""
from __future__ import annotations

import functools
import re
from typing import Mapping

from markupsafe import Markup

#: Elements that survive, in narratives and the guide alike.
TAGS = frozenset({"p", "br", "em", "strong", "b", "i", "code", "pre", "blockquote", "ul", "ol",
                  "li", "h1", "h2", "h3", "h4", "h5", "h6", "table", "thead", "tbody", "tr",
                  "th", "td", "a", "sub", "sup", "hr", "dl", "dt", "dd", "abbr", "del"})

#: Attributes that survive, per element (``id`` on headings only where ids are kept).
ATTRIBUTES = {"a": {"href", "title"}, "abbr": {"title"}, "th": {"align"}, "td": {"align"},
              "h1": {"id"}, "h2": {"id"}, "h3": {"id"}, "h4": {"id"}}

#: Elements removed together with their content.
REMOVED_WITH_CONTENT = {"script", "style"}

URL_SCHEMES = {"http", "https", "mailto"}
LINK_REL = "noopener noreferrer nofollow"

_EXTENSIONS = ("tables", "fenced_code", "sane_lists")
_HEADING_RE = re.compile(r"<(/?)h([1-6])\b", re.IGNORECASE)
_PAGE_LINK_RE = re.compile(r"(?:docs/)?([a-z0-9-]+)\.md(#[\w-]+)?")
_HEADING_BLOCK_RE = re.compile(r"<h([1-6])\b[^>]*>(.*?)</h\1>\s*", re.IGNORECASE | re.DOTALL)
_TAG_RE = re.compile(r"<[^>]*>")


def link_target(href: str, pages: Mapping[str, str]) -> str | None:
    """What becomes of a link: kept, rewritten to a page of ``pages``, or dropped (None).

    ``pages`` maps a Markdown document's stem to its page's stem; a link to a
    document not in it is dropped, like every other relative link (it would break).
    """
    v = href.strip()
    m = _PAGE_LINK_RE.fullmatch(v)
    if m:
        if m.group(1) in pages:
            return f"{pages[m.group(1)]}.html{m.group(2) or ''}"
        return None
    if v.lower().startswith(("https://", "http://", "mailto:")) or v.startswith("#"):
        return v
    return None


def drop_empty_headings(html: str) -> str:
    """``html`` without headings that head nothing: a heading with no text, or one
    followed only by headings of its own level or above (or by the end), so that an
    unfilled section of a narrative is not published as a bare title."""
    heads = list(_HEADING_BLOCK_RE.finditer(html))
    kept: list[re.Match] = []  # headings that stay, from the last one back
    drop: list[re.Match] = []
    for m in reversed(heads):
        level = int(m.group(1))
        after = kept[-1] if kept else None
        between = html[m.end():after.start() if after else len(html)]
        for d in drop:  # headings dropped already between this one and the next kept
            between = between.replace(d.group(0), "", 1)
        bare = not _TAG_RE.sub("", m.group(2)).strip()
        heads_nothing = not between.strip() and (after is None or int(after.group(1)) <= level)
        (drop if bare or heads_nothing else kept).append(m)
    out, pos = [], 0
    for m in sorted(drop, key=lambda d: d.start()):
        out.append(html[pos:m.start()])
        pos = m.end()
    out.append(html[pos:])
    return "".join(out)


def markdown_html(text: str, *, pages: Mapping[str, str] | None = None,
                  heading_shift: int = 0, heading_ids: bool = False) -> Markup:
    """Markdown as sanitised HTML.

    ``pages``: documents whose links are rewritten to their pages (see
    :func:`link_target`); ``heading_shift``: levels to move every heading down
    (so that it sits under the page's own); ``heading_ids``: give headings ids
    (the table of contents of a document) and keep them.
    """
    import markdown
    import nh3

    pages = pages or {}
    raw = markdown.markdown(text or "", output_format="html",
                            extensions=[*_EXTENSIONS, *(["toc"] if heading_ids else [])])
    if heading_shift:
        raw = _HEADING_RE.sub(
            lambda m: f"<{m.group(1)}h{min(int(m.group(2)) + heading_shift, 6)}", raw)

    def keep(tag: str, attr: str, value: str) -> str | None:
        if attr == "id":
            return value if heading_ids else None
        if tag == "a" and attr == "href":
            return link_target(value, pages)
        return value

    clean = nh3.clean(raw, tags=set(TAGS), clean_content_tags=REMOVED_WITH_CONTENT,
                      attributes=ATTRIBUTES, attribute_filter=keep,
                      url_schemes=URL_SCHEMES, link_rel=LINK_REL, strip_comments=True)
    return Markup(drop_empty_headings(clean))


@functools.lru_cache(maxsize=64)
def narrative_html(markdown_text: str) -> Markup:
    """A case's narrative: headings moved down two levels, under the page's own
    (remembered: the case's page and its packet show the same narrative)."""
    return markdown_html(markdown_text, heading_shift=2)


__all__ = ["ATTRIBUTES", "TAGS", "drop_empty_headings", "link_target", "markdown_html", "narrative_html"]
