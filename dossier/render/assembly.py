"""Meeting packets put together from finished PDFs (pypdf), and page numbers stamped.

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

:func:`stamp` then writes the packet's own page number, "page 12 of 59",
on every page, from a stamp sheet laid out once (one page per number, see
:func:`dossier.render.packets.stamp_sheet`); each stamp is marked as a
pagination artefact, so it is not read out as content.

pypdf is imported only inside these functions.
"""
from __future__ import annotations

import io
from dataclasses import dataclass, field
from typing import Sequence

#: The marked-content prefix of a stamp: a pagination artefact (ISO 32000-1, 14.8.2.2).
ARTIFACT_OPEN = b"/Artifact <</Type /Pagination /Subtype /Footer>> BDC\n"
ARTIFACT_CLOSE = b"\nEMC\n"


@dataclass(frozen=True)
class Part:
    """One finished PDF to append, and the bookmark title that leads to it.

    ``reader`` is a pypdf reader of ``pdf`` when one is open already
    (:func:`read_parts`): parsing a tagged packet's object streams takes about
    0.2 s, so a meeting packet reads each case packet once, for its page count
    and for its pages."""

    pdf: bytes
    title: str
    reader: object = field(default=None, compare=False, repr=False)

    def pdf_reader(self):
        """The pypdf reader of this part (its own, or a new one)."""
        return self.reader if self.reader is not None else _reader(self.pdf)

    @property
    def page_count(self) -> int:
        return len(self.pdf_reader().pages)


def _reader(data: bytes):
    from pypdf import PdfReader

    return PdfReader(io.BytesIO(data))


def page_counts(pdfs: Sequence[bytes]) -> tuple[int, ...]:
    """The number of pages of each PDF."""
    return tuple(len(_reader(d).pages) for d in pdfs)


def read_parts(pdfs: Sequence[bytes], titles: Sequence[str]) -> tuple[Part, ...]:
    """Parts with their readers open (each PDF parsed once, here)."""
    if len(pdfs) != len(titles):
        raise ValueError(f"{len(pdfs)} PDFs but {len(titles)} titles")
    return tuple(Part(pdf, title, _reader(pdf)) for pdf, title in zip(pdfs, titles))


def _nums(tree) -> list:
    """The flat [key, value, ...] list of a number tree (flat or with kids)."""
    tree = tree.get_object()
    out = list(tree.get("/Nums", ()))
    for kid in tree.get("/Kids", ()):
        out.extend(_nums(kid))
    return out


def _dest_pairs(root) -> list:
    names = root.get("/Names")
    dests = names.get_object().get("/Dests") if names is not None else None
    if dests is None:
        return []
    flat, stack = [], [dests.get_object()]
    while stack:
        node = stack.pop().get_object()
        flat.extend(node.get("/Names", ()))
        stack.extend(node.get("/Kids", ()))
    return [(flat[i], flat[i + 1]) for i in range(0, len(flat) - 1, 2)]


class _Merger:
    """The writer of one assembled packet (the cover's document, parts appended)."""

    def __init__(self, cover: bytes):
        from pypdf import PdfWriter
        from pypdf.generic import ArrayObject, NameObject

        self.writer = PdfWriter(clone_from=_reader(cover))
        root = self.writer.root_object
        self.tree = root.get("/StructTreeRoot")
        self.tree = self.tree.get_object() if self.tree is not None else None
        self.nums = ArrayObject(_nums(self.tree["/ParentTree"])) if self.tree else ArrayObject()
        if self.tree is not None:  # one flat number tree, extended part by part
            parent_tree = self.tree["/ParentTree"].get_object()
            parent_tree.pop("/Kids", None)
            parent_tree[NameObject("/Nums")] = self.nums
        self.dests = list(_dest_pairs(root))

    def next_key(self) -> int:
        keys = [int(self.nums[i]) for i in range(0, len(self.nums), 2)]
        return max(keys) + 1 if keys else 0

    def append(self, part: Part) -> None:
        from pypdf.generic import NameObject, NumberObject

        reader = part.pdf_reader()
        offset = self.next_key()
        first = len(self.writer.pages)
        for page in reader.pages:
            new = self.writer.add_page(page)
            if "/StructParents" in page:
                new[NameObject("/StructParents")] = NumberObject(int(page["/StructParents"]) + offset)
            for annot in new.get("/Annots", ()):
                a = annot.get_object()
                if "/StructParent" in a:
                    a[NameObject("/StructParent")] = NumberObject(int(a["/StructParent"]) + offset)
        self._structure(reader, offset)
        for name, dest in _dest_pairs(reader.trailer["/Root"]):
            self.dests.append((name, dest.get_object().clone(self.writer)))
        self._bookmarks(reader, part.title, first)

    def _structure(self, reader, offset: int) -> None:
        from pypdf.generic import NameObject, NumberObject

        theirs = reader.trailer["/Root"].get("/StructTreeRoot")
        if theirs is None or self.tree is None:
            return
        theirs = theirs.get_object()
        nums = _nums(theirs["/ParentTree"])
        for i in range(0, len(nums), 2):
            self.nums.append(NumberObject(int(nums[i]) + offset))
            self.nums.append(nums[i + 1].clone(self.writer))
        mine = self.tree["/K"]
        doc = (mine[0] if hasattr(mine, "__len__") else mine).get_object()
        kids = theirs["/K"] if isinstance(theirs["/K"], list) else [theirs["/K"]]
        for kid in kids:
            element = kid.clone(self.writer).get_object()
            element[NameObject("/S")] = NameObject("/Part")
            element[NameObject("/P")] = doc.indirect_reference
            doc["/K"].append(element.indirect_reference)

    def _bookmarks(self, reader, title: str, first: int) -> None:
        from pypdf.generic import NameObject, NumberObject

        item = self.writer.add_outline_item(title=title, page_number=first).get_object()
        outlines = reader.trailer["/Root"].get("/Outlines")
        if outlines is None or "/First" not in outlines.get_object():
            return
        cloned = outlines.get_object().clone(self.writer)
        children, node = [], cloned.get("/First")
        while node is not None:
            children.append(node.get_object())
            node = node.get_object().get("/Next")
        for child in children:
            child[NameObject("/Parent")] = item.indirect_reference
        item[NameObject("/First")] = children[0].indirect_reference
        item[NameObject("/Last")] = children[-1].indirect_reference
        item[NameObject("/Count")] = NumberObject(-len(children))  # closed: the case's title shows

    def finish(self) -> None:
        from pypdf.generic import ArrayObject, DictionaryObject, NameObject, TextStringObject

        if not self.dests:
            return
        flat = ArrayObject()
        for name, dest in sorted(self.dests, key=lambda p: str(p[0])):
            flat.extend((TextStringObject(str(name)), dest))
        root = self.writer.root_object
        names = root.get("/Names")
        names = names.get_object() if names is not None else DictionaryObject()
        names[NameObject("/Dests")] = DictionaryObject({NameObject("/Names"): flat})
        root[NameObject("/Names")] = names


def _stamp_pages(writer, sheet: bytes) -> None:
    """Lay page i of ``sheet`` over page i of ``writer`` as a pagination artefact."""
    from pypdf import PdfWriter
    from pypdf.generic import ContentStream

    stamps = PdfWriter(clone_from=_reader(sheet))
    if len(stamps.pages) != len(writer.pages):
        raise ValueError(f"the stamp sheet has {len(stamps.pages)} pages for a packet of "
                         f"{len(writer.pages)}")
    for page, stamp in zip(writer.pages, stamps.pages):
        content = stamp.get_contents()
        data = content.get_data() if content is not None else b""
        marked = ContentStream(None, stamps)
        marked.set_data(ARTIFACT_OPEN + data + ARTIFACT_CLOSE)
        stamp.replace_contents(marked)
        page.merge_page(stamp, over=True)
        page.compress_content_streams()


def assemble(cover: bytes, parts: Sequence[Part], sheet: bytes | None = None) -> bytes:
    """The cover followed by ``parts`` page for page, with tags, links and bookmarks
    kept; page numbers stamped from ``sheet`` (one page per page of the result) if given."""
    m = _Merger(cover)
    for part in parts:
        m.append(part)
    m.finish()
    if sheet is not None:
        _stamp_pages(m.writer, sheet)
    m.writer.compress_identical_objects(remove_duplicates=True, remove_unreferenced=True)
    out = io.BytesIO()
    m.writer.write(out)
    return out.getvalue()


__all__ = ["ARTIFACT_CLOSE", "ARTIFACT_OPEN", "Part", "assemble", "page_counts", "read_parts"]
