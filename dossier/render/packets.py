"""PDF packets for the review board (weasyprint, PDF/A-3a and PDF/UA-1, tagged).

:func:`render_pdf` turns the HTML of a packet (made by :mod:`dossier.render.pages`)
into PDF bytes.  It writes nothing: the stylesheet, figures and formula
images are served from the in-memory set of files of the site being built
(``files``: site path → bytes) by :class:`SiteFetcher`, which refuses every
other URL: the network, ``file:`` paths elsewhere, ``data:`` URLs and paths
that climb out of the site with ``..``.  A packet therefore shows exactly
what the site holds and nothing a case file could point at.

Packets are PDF/A-3a: archival, the part that allows attachments, at level
A (accessible), for which weasyprint tags the document (a structure tree of
headings, paragraphs, lists, tables and figures; page furniture as
artefacts).  weasyprint takes one variant at a time; the PDF/UA-1
identification (``pdfuaid:part``) is added to the same XMP metadata
(:data:`UA_XMP`), since the tagging PDF/UA asks for is the tagging level A
makes.  Each case packet carries its assessment as an attached JSON file,
and the PDF's title, subject and keywords name the case and its revision.

:func:`stamp_sheet` lays out the page numbers of an assembled meeting packet
(:mod:`dossier.render.assembly`): one page per number, made once.

weasyprint is imported only inside these functions.
"""
from __future__ import annotations

import logging
import mimetypes
import posixpath
import urllib.parse
from dataclasses import dataclass
from typing import Mapping, Sequence

#: The URL the site being built is served under while packets are printed.
#: It names no real place: the fetcher answers it from memory.
ROOT_URL = "file:///dossier-site/"

PDF_VARIANT = "pdf/a-3a"

#: The PDF/UA-1 identification, added to the XMP metadata of every packet.
UA_XMP = (b'<rdf:RDF xmlns:rdf="http://www.w3.org/1999/02/22-rdf-syntax-ns#">'
          b'<rdf:Description rdf:about="" xmlns:pdfuaid="http://www.aiim.org/pdfua/ns/id/">'
          b'<pdfuaid:part>1</pdfuaid:part></rdf:Description></rdf:RDF>')

#: The page number stamped on each page of a meeting packet: below the case's own.
STAMP_CSS = """
@page { size: A4; margin: 0 18mm 6mm 20mm;
  @bottom-right { content: "%s · page " counter(page) " of " counter(pages);
    font-family: "Liberation Sans", "DejaVu Sans", sans-serif; font-size: 8pt;
    font-weight: bold; color: #1f2a33; vertical-align: bottom; } }
div { break-after: page; }
"""

_MIME = {".css": "text/css", ".svg": "image/svg+xml", ".png": "image/png",
         ".html": "text/html", ".json": "application/json", ".js": "text/javascript"}


class RefusedURL(ValueError):
    """A packet asked for something outside the site being built."""


def site_path(url: str, root_url: str = ROOT_URL) -> str:
    """The site path that ``url`` names, or RefusedURL.

    Only URLs under ``root_url`` qualify; the path is decoded and normalised,
    and must stay inside the site.
    """
    if not isinstance(url, str) or not url.startswith(root_url):
        raise RefusedURL(f"refused (outside the site being built): {url!r:.120}")
    parts = urllib.parse.urlsplit(url)
    root_path = urllib.parse.urlsplit(root_url).path
    path = urllib.parse.unquote(parts.path)
    if "\x00" in path or "\\" in path:
        raise RefusedURL(f"refused (bad characters): {url!r:.120}")
    norm = posixpath.normpath(path)
    if not (norm + "/").startswith(root_path) or norm.rstrip("/") == root_path.rstrip("/"):
        raise RefusedURL(f"refused (climbs out of the site): {url!r:.120}")
    rel = norm[len(root_path):]
    if rel.startswith("/") or rel.startswith("..") or rel in ("", "."):
        raise RefusedURL(f"refused (climbs out of the site): {url!r:.120}")
    return rel


def _fetcher_class():
    from weasyprint.urls import URLFetcher, URLFetcherResponse

    class SiteFetcher(URLFetcher):
        """Serves only files of the site being built (from memory); refuses the rest."""

        def __init__(self, files: Mapping[str, bytes], root_url: str = ROOT_URL):
            super().__init__(allowed_protocols=("file",), allow_redirects=False)
            self._files = files
            self._root = root_url
            self.served: list[str] = []
            self.refused: list[str] = []

        def fetch(self, url, headers=None):
            try:
                rel = site_path(url, self._root)
                if rel not in self._files:
                    raise RefusedURL(f"refused (no such file in the site): {rel}")
            except RefusedURL:
                self.refused.append(url)
                raise
            self.served.append(rel)
            ext = posixpath.splitext(rel)[1].lower()
            mime = _MIME.get(ext) or mimetypes.guess_type(rel)[0] or "application/octet-stream"
            return URLFetcherResponse(self._root + urllib.parse.quote(rel), self._files[rel],
                                      {"Content-Type": mime})

    return SiteFetcher


def site_fetcher(files: Mapping[str, bytes], root_url: str = ROOT_URL):
    """A weasyprint URL fetcher over ``files`` (site path → bytes)."""
    return _fetcher_class()(files, root_url)


@dataclass(frozen=True)
class PdfAttachment:
    name: str
    data: bytes
    description: str


@dataclass(frozen=True)
class Printed:
    """A laid-out packet (a weasyprint Document) and what it fetched."""

    document: object  # weasyprint.document.Document
    served: tuple[str, ...]  # site paths the packet used
    refused: tuple[str, ...]  # URLs the packet asked for and did not get

    @property
    def page_count(self) -> int:
        return len(self.document.pages)


@dataclass(frozen=True)
class PdfResult:
    pdf: bytes
    served: tuple[str, ...]
    refused: tuple[str, ...]


def lay_out(html_text: str, page_path: str, files: Mapping[str, bytes],
            variant: str | None = PDF_VARIANT) -> Printed:
    """Lay out ``html_text`` as if it were the page at site path ``page_path``."""
    from weasyprint import HTML

    fetcher = site_fetcher(files)
    log = logging.getLogger("weasyprint")
    level = log.level
    log.setLevel(logging.ERROR)  # refused fetches are reported in Printed instead
    try:
        doc = HTML(string=html_text, base_url=ROOT_URL + page_path,
                   url_fetcher=fetcher).render(pdf_variant=variant)
    finally:
        log.setLevel(level)
    return Printed(doc, tuple(fetcher.served), tuple(fetcher.refused))


def write_pdf(printed: Sequence[Printed], attachments: Sequence[PdfAttachment] = (),
              variant: str | None = PDF_VARIANT) -> bytes:
    """One PDF of the pages of ``printed`` in order (metadata from the first)."""
    from weasyprint import Attachment

    first = printed[0].document
    doc = first if len(printed) == 1 else first.copy(
        [page for p in printed for page in p.document.pages])
    atts = [Attachment(string=a.data, name=a.name, description=a.description,
                       url_fetcher=site_fetcher({}), relationship="Data") for a in attachments]
    if variant == PDF_VARIANT and UA_XMP not in doc.metadata.xmp_metadata:
        doc.metadata.xmp_metadata.append(UA_XMP)
    return doc.write_pdf(pdf_variant=variant, attachments=atts)


def stamp_sheet(label: str, pages: int) -> bytes:
    """``pages`` blank A4 pages, page i saying "<label> · page i of <pages>" at the foot.

    Laid out once per meeting packet and laid over its pages by
    :func:`dossier.render.assembly.assemble`; the label is escaped for CSS."""
    from weasyprint import HTML

    if pages < 1:
        raise ValueError("a stamp sheet needs at least one page")
    quoted = "".join(ch if ch.isalnum() or ch in " -·.,:" else f"\\{ord(ch):x} " for ch in label)
    html_text = ('<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><style>'
                 + STAMP_CSS % quoted + "</style></head><body>"
                 + "<div></div>" * (pages - 1) + "<p></p></body></html>")
    return HTML(string=html_text, url_fetcher=site_fetcher({})).write_pdf()


def render_pdf(html_text: str, page_path: str, files: Mapping[str, bytes],
               attachments: Sequence[PdfAttachment] = (), variant: str | None = PDF_VARIANT
               ) -> PdfResult:
    """Print ``html_text`` (as the page at ``page_path``) to PDF bytes in one step."""
    p = lay_out(html_text, page_path, files, variant)
    return PdfResult(write_pdf([p], attachments, variant), p.served, p.refused)


__all__ = ["PDF_VARIANT", "PdfAttachment", "PdfResult", "Printed", "ROOT_URL", "RefusedURL",
           "STAMP_CSS", "UA_XMP", "lay_out", "render_pdf", "site_fetcher", "site_path",
           "stamp_sheet", "write_pdf"]
