"""The user guide's pages: docs/*.md (shipped as the package ``dossier.docs``) as HTML."""
from __future__ import annotations

from importlib.resources import files

from markupsafe import Markup

from dossier.render.markdown_html import markdown_html
from dossier.render.pages import content_policy, render_template

#: (document stem, page stem, title) of every guide page, in the guide's order.
GUIDE_PAGES = (("guide", "index", "User guide"),
               ("case-format", "case-format", "The case file format"),
               ("signatures", "signatures", "Integrity records and signatures"))


def guide_html(markdown_text: str) -> Markup:
    """The guide's Markdown as sanitised HTML, its links between documents made links
    between pages (``case-format.md`` → ``case-format.html``).  Code blocks scroll
    sideways rather than being clipped, so each can take the keyboard's focus
    (``tabindex="0"``) and be scrolled without a mouse."""
    html = markdown_html(markdown_text, pages={doc: page for doc, page, _t in GUIDE_PAGES},
                         heading_ids=True)
    return Markup(str(html).replace("<pre>", '<pre tabindex="0">'))


def render_guide_pages() -> dict[str, bytes]:
    """Site path → page for every guide document that ships with dossier."""
    docs = files("dossier.docs")
    out: dict[str, bytes] = {}
    for doc, page, title in GUIDE_PAGES:
        source = docs / f"{doc}.md"
        if not source.is_file():
            continue
        body = guide_html(source.read_text(encoding="utf-8"))
        html = render_template("guide.html", root="../", body=body, csp=content_policy(),
                               page_title=title, pages=GUIDE_PAGES)
        out[f"guide/{page}.html"] = html.encode("utf-8")
    return out


__all__ = ["GUIDE_PAGES", "guide_html", "render_guide_pages"]
