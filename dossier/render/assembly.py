"""Meeting packets put together from finished PDFs (pikepdf), and page numbers stamped.

A meeting packet is its cover (laid out by weasyprint: cover, agenda,
sign-off sheet, the packet's metadata and attachments) followed by the
finished packet of each case, page for page; nothing is laid out again.
:func:`assemble` keeps what makes the parts archival and accessible:

* the structure tree of every part (the tags): each case's ``Document``
  element becomes a ``Part`` under the cover's ``Document``, and the page and
  link keys of its parent tree are moved past those already used;
* the named destinations of every part (the contents pages' links; case
  packets prefix their anchors with the case, so names never collide);
* the bookmarks: one per case, with the case's own bookmarks under it.

It then writes the packet's own page number, "page 12 of 59", on every
page, from a stamp sheet laid out once (one page per number, see
:func:`dossier.render.packets.stamp_sheet`): page i of the sheet is laid over
page i as a form XObject, marked as a pagination artefact, so it is not read
out as content.  The cover's metadata (PDF/A) and attachments are kept.  The
packet is written with object streams and compressed streams, and the same
inputs give the same bytes (the file identifier is a digest of the content).

pikepdf (qpdf) is imported only inside these functions.  An object of a part is
copied once however often it is reached (qpdf keeps one map per source file),
so the fonts of the stamp sheet are written once, and objects of a part that
nothing in the packet refers to any more are not written.
"""
from __future__ import annotations

import io
import warnings
from dataclasses import dataclass, field
from typing import Sequence

#: The marked-content prefix of a stamp: a pagination artefact (ISO 32000-1, 14.8.2.2).
ARTIFACT_OPEN = b"/Artifact <</Type /Pagination /Subtype /Footer>> BDC\n"
ARTIFACT_CLOSE = b"\nEMC\n"

#: The resource name of the stamp's form XObject on each page (made unique if taken).
_STAMP_NAME = "/DossierStamp"


@dataclass(frozen=True)
class Part:
    """One finished PDF to append, and the bookmark title that leads to it.

    ``reader`` is an open :class:`pikepdf.Pdf` of ``pdf`` when one is open
    already (:func:`read_parts`), so that a meeting packet reads each case
    packet once, for its page count and for its pages."""

    pdf: bytes
    title: str
    reader: object = field(default=None, compare=False, repr=False)

    def pdf_reader(self):
        """The open pikepdf document of this part (its own, or a new one)."""
        return self.reader if self.reader is not None else _reader(self.pdf)

    @property
    def page_count(self) -> int:
        return len(self.pdf_reader().pages)


def _reader(data: bytes):
    import pikepdf

    return pikepdf.open(io.BytesIO(data))


def page_counts(pdfs: Sequence[bytes]) -> tuple[int, ...]:
    """The number of pages of each PDF."""
    return tuple(len(_reader(d).pages) for d in pdfs)


def read_parts(pdfs: Sequence[bytes], titles: Sequence[str]) -> tuple[Part, ...]:
    """Parts with their documents open (each PDF parsed once, here)."""
    if len(pdfs) != len(titles):
        raise ValueError(f"{len(pdfs)} PDFs but {len(titles)} titles")
    return tuple(Part(pdf, title, _reader(pdf)) for pdf, title in zip(pdfs, titles))


def _copy(pdf, obj):
    """``obj`` of another document as an object of ``pdf``: indirect objects copied
    by qpdf (once per source object), direct arrays and dictionaries rebuilt."""
    import pikepdf

    if not isinstance(obj, pikepdf.Object):
        return obj  # numbers and booleans come as Python values
    if obj.is_indirect:
        return pdf.copy_foreign(obj)
    if isinstance(obj, pikepdf.Array):
        return pikepdf.Array([_copy(pdf, x) for x in obj])
    if isinstance(obj, pikepdf.Dictionary):
        return pikepdf.Dictionary({k: _copy(pdf, v) for k, v in obj.items()})
    return obj


def _nums(tree) -> list:
    """The flat [key, value, ...] list of a number tree (flat or with kids)."""
    out = list(tree.get("/Nums", ()))
    for kid in tree.get("/Kids", ()):
        out.extend(_nums(kid))
    return out


def _dest_pairs(root) -> list:
    """The (name, destination) pairs of a document's named destinations."""
    names = root.get("/Names")
    dests = names.get("/Dests") if names is not None else None
    if dests is None:
        return []
    flat, stack = [], [dests]
    while stack:
        node = stack.pop()
        flat.extend(node.get("/Names", ()))
        stack.extend(node.get("/Kids", ()))
    return [(flat[i], flat[i + 1]) for i in range(0, len(flat) - 1, 2)]


def _visible(item) -> int:
    """How many outline items under ``item`` show when it is open (ISO 32000-1, 12.3.3)."""
    n, node = 0, item.get("/First")
    while node is not None:
        count = int(node.get("/Count", 0))
        n += 1 + (count if count > 0 else 0)
        node = node.get("/Next")
    return n


class _Merger:
    """One assembled packet: the cover's document, parts appended."""

    def __init__(self, cover: bytes):
        import pikepdf

        self.pdf = _reader(cover)
        self.sources: list = []  # the parts' documents stay open until the packet is written
        root = self.pdf.Root
        self.tree = root.get("/StructTreeRoot")
        self.nums = pikepdf.Array(_nums(self.tree.ParentTree) if self.tree is not None else ())
        if self.tree is not None:  # one flat number tree, extended part by part
            parent_tree = self.tree.ParentTree
            if "/Kids" in parent_tree:
                del parent_tree["/Kids"]
            parent_tree.Nums = self.nums
        self.dests = list(_dest_pairs(root))

    def next_key(self) -> int:
        keys = [int(self.nums[i]) for i in range(0, len(self.nums), 2)]
        return max(keys) + 1 if keys else 0

    def append(self, part: Part) -> None:
        import pikepdf

        src = part.pdf_reader()
        if any(src is s for s in self.sources):  # qpdf would map its objects to the first copy
            src = _reader(part.pdf)
        self.sources.append(src)
        offset = self.next_key()
        first = len(self.pdf.pages)
        # the pages first: every later copy (tags, links, bookmarks) then refers to them;
        # pikepdf warns that extend() leaves the named destinations behind: they are
        # merged below, with the tags (which add_pages_from() would not move either)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", pikepdf.PageCopyWarning)
            self.pdf.pages.extend(src.pages)
        for page in self.pdf.pages[first:]:
            obj = page.obj
            if "/StructParents" in obj:
                obj.StructParents = int(obj.StructParents) + offset
            for annot in obj.get("/Annots", ()):
                if "/StructParent" in annot:
                    annot.StructParent = int(annot.StructParent) + offset
        self._structure(src, offset)
        for name, dest in _dest_pairs(src.Root):
            self.dests.append((name, _copy(self.pdf, dest)))
        self._bookmark(src, part.title, first)

    def _structure(self, src, offset: int) -> None:
        import pikepdf

        theirs = src.Root.get("/StructTreeRoot")
        if theirs is None or self.tree is None:
            return
        theirs = _copy(self.pdf, theirs)
        nums = _nums(theirs.ParentTree)
        for i in range(0, len(nums), 2):
            self.nums.append(int(nums[i]) + offset)
            self.nums.append(nums[i + 1])
        for key in ("/RoleMap", "/ClassMap"):  # the part's own roles and classes, if new
            if key in theirs:
                mine = self.tree.get(key)
                if mine is None:
                    self.tree[key] = mine = pikepdf.Dictionary()
                for k, v in theirs[key].items():
                    if k not in mine:
                        mine[k] = v
        k = self.tree.K
        doc = k[0] if isinstance(k, pikepdf.Array) else k
        if not isinstance(doc.get("/K"), pikepdf.Array):
            doc.K = pikepdf.Array([doc.K] if "/K" in doc else [])
        kids = theirs.K if isinstance(theirs.K, pikepdf.Array) else [theirs.K]
        for kid in kids:
            element = kid if kid.is_indirect else self.pdf.make_indirect(kid)
            element.S = pikepdf.Name.Part
            element.P = doc
            doc.K.append(element)

    def _bookmark(self, src, title: str, first: int) -> None:
        import pikepdf

        root = self.pdf.Root
        if "/Outlines" not in root:
            root.Outlines = self.pdf.make_indirect(pikepdf.Dictionary(Type=pikepdf.Name.Outlines))
        outlines = root.Outlines
        item = self.pdf.make_indirect(pikepdf.Dictionary(
            Title=pikepdf.String(title), Parent=outlines,
            Dest=pikepdf.Array([self.pdf.pages[first].obj, pikepdf.Name.Fit])))
        last = outlines.get("/Last")
        if last is None:
            outlines.First = item
        else:
            last.Next = item
            item.Prev = last
        outlines.Last = item
        theirs = src.Root.get("/Outlines")
        if theirs is not None and "/First" in theirs:
            node = _copy(self.pdf, theirs).First
            item.First = node
            while node is not None:
                node.Parent = item
                item.Last = node
                node = node.get("/Next")
            item.Count = -_visible(item)  # closed: the case's title shows
        outlines.Count = _visible(outlines)

    def finish(self) -> None:
        import pikepdf

        if self.tree is not None:
            self.tree.ParentTreeNextKey = self.next_key()
        if not self.dests:
            return
        flat = pikepdf.Array()
        for name, dest in sorted(self.dests, key=lambda p: bytes(p[0])):
            flat.extend((pikepdf.String(bytes(name)), dest))
        root = self.pdf.Root
        if "/Names" not in root:
            root.Names = pikepdf.Dictionary()
        root.Names.Dests = self.pdf.make_indirect(pikepdf.Dictionary(Names=flat))


def _stamp_pages(pdf, sheet) -> None:
    """Lay page i of ``sheet`` over page i of ``pdf`` as a pagination artefact."""
    import pikepdf

    if len(sheet.pages) != len(pdf.pages):
        raise ValueError(f"the stamp sheet has {len(sheet.pages)} pages for a packet of "
                         f"{len(pdf.pages)}")
    save = pdf.make_stream(b"q\n")  # the page's own graphics state, kept apart from the stamp
    for page, stamp in zip(pdf.pages, sheet.pages):
        form = pdf.copy_foreign(stamp.as_form_xobject())
        resources = pikepdf.Dictionary(dict(page.obj.get("/Resources", pikepdf.Dictionary())
                                            .items()))  # pages may share theirs
        xobjects = pikepdf.Dictionary(dict(resources.get("/XObject", pikepdf.Dictionary())
                                           .items()))
        name, n = _STAMP_NAME, 0
        while name in xobjects:
            n += 1
            name = f"{_STAMP_NAME}{n}"
        xobjects[name] = form
        resources.XObject = xobjects
        page.obj.Resources = resources
        page.contents_add(save, prepend=True)
        page.contents_add(pdf.make_stream(
            b"Q\n" + ARTIFACT_OPEN + b"q " + name.encode("ascii") + b" Do Q" + ARTIFACT_CLOSE))


def assemble(cover: bytes, parts: Sequence[Part], sheet: bytes | None = None) -> bytes:
    """The cover followed by ``parts`` page for page, with tags, links and bookmarks
    kept; page numbers stamped from ``sheet`` (one page per page of the result) if given."""
    import pikepdf

    m = _Merger(cover)
    stamps = _reader(sheet) if sheet is not None else None
    out = io.BytesIO()
    try:
        for part in parts:
            m.append(part)
        m.finish()
        if stamps is not None:
            _stamp_pages(m.pdf, stamps)
        # the cover's XMP packet (PDF/A and PDF/UA identification) is written as it is
        m.pdf.save(out, deterministic_id=True, compress_streams=True, fix_metadata_version=False,
                   object_stream_mode=pikepdf.ObjectStreamMode.generate)
    finally:
        m.pdf.close()
        if stamps is not None:
            stamps.close()
    return out.getvalue()


__all__ = ["ARTIFACT_CLOSE", "ARTIFACT_OPEN", "Part", "assemble", "page_counts", "read_parts"]
