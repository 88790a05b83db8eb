"""Join PDF files into one, streaming: memory does not grow with the number of sheets.

``pypdf.PdfWriter.append`` keeps every copied object in memory until the end (measured:
about 270 MB for 1,500 one-page sheets, growing in proportion). :class:`PdfJoin` takes one
source at a time, writes the objects its pages use straight to the output with new
object numbers, and keeps only the numbers and byte offsets it needs for the
cross-reference table, the page tree, the bookmarks and the attachment list.

A source is first made a :class:`Fragment` (parsed once with ``pypdf.PdfReader``, each
object serialised with its references cut out); joining a fragment is writing bytes
with shifted numbers. The build keeps a fragment per sheet, so a rebuild after one
change parses one sheet, not thousands.

The output is a classic PDF 1.7 file (ISO 32000-1): header with a binary comment line,
indirect objects, one flat page tree, a document outline (one bookmark per source,
7.7.2 and 12.3.3), an ``EmbeddedFiles`` name tree sorted by name (7.9.6, 7.11.4), an
information dictionary (14.3.3), an XMP metadata stream, a cross-reference table and a
trailer with a file identifier (14.4). Attachments found in a source (its
``EmbeddedFiles``) are carried over and also listed in the ``AF`` array of that source's
first page (PDF/A-3, ISO 19005-3 6.8: files associated with the page they belong to).
With ``pdfa=True`` the XMP packet declares PDF/A-3B and the output intent of the first
source that has one is copied; that is what PDF/A-3 asks of a joined file, but it has not
been through a PDF/A validator.
"""

from __future__ import annotations

import hashlib
import io
import os
import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path
from typing import BinaryIO
from xml.sax.saxutils import escape as xml_escape

from pypdf import PdfReader
from pypdf.generic import (
    ArrayObject,
    DictionaryObject,
    IndirectObject,
    NameObject,
    NumberObject,
    PdfObject,
    StreamObject,
    TextStringObject,
)


@dataclass(frozen=True)
class DocumentInfo:
    """Document metadata (information dictionary and XMP)."""

    title: str = ""
    author: str = ""
    subject: str = ""
    keywords: Sequence[str] = ()
    creator: str = "loopdocs"
    created: datetime = field(default_factory=lambda: datetime.now(timezone.utc).replace(microsecond=0))


@dataclass(frozen=True)
class Bookmark:
    title: str
    page_index: int
    """0-based index of the page in the joined file."""


class _Ref(IndirectObject):
    """A reference to an object of the output (written as ``N 0 R``)."""

    def __init__(self, idnum: int) -> None:
        super().__init__(idnum, 0, None)


def _pdf_date(moment: datetime) -> str:
    """``D:YYYYMMDDHHmmSS+HH'mm'`` (ISO 32000-1 7.9.4)."""
    offset = moment.utcoffset()
    if offset is None:
        return moment.strftime("D:%Y%m%d%H%M%S")
    minutes = int(offset.total_seconds() // 60)
    sign = "+" if minutes >= 0 else "-"
    minutes = abs(minutes)
    if minutes == 0:
        return moment.strftime("D:%Y%m%d%H%M%SZ")
    return moment.strftime("D:%Y%m%d%H%M%S") + f"{sign}{minutes // 60:02d}'{minutes % 60:02d}'"


PAGES_ROOT = -1
"""Relative reference of a fragment to the page tree root of the joined file."""
_TOKEN = b"\x00loopdocs-ref-" + os.urandom(6).hex().encode() + b":"
_SPLIT = re.compile(re.escape(_TOKEN) + rb"(-?[0-9]+);")


class _Mark(IndirectObject):
    """A reference inside a fragment: written as a token that :func:`_splice` replaces."""

    def __init__(self, relative: int) -> None:
        super().__init__(relative, 0, None)

    def write_to_stream(self, stream, encryption_key=None) -> None:  # noqa: ANN001
        stream.write(_TOKEN + str(self.idnum).encode() + b";")


@dataclass(frozen=True)
class FragmentObject:
    parts: tuple[bytes, ...]
    """The object's text (its dictionary for a stream) cut at each reference."""
    refs: tuple[int, ...]
    """Relative number of each reference (``PAGES_ROOT`` for the page tree)."""
    stream: bytes | None = None
    """Stream data, as stored (still encoded)."""


@dataclass(frozen=True)
class Fragment:
    """One source PDF, parsed once, with its objects serialised and numbered 0, 1, 2...:
    joining it is writing bytes with the numbers shifted, no parsing. Picklable, so the
    build keeps one per sheet and a rebuild parses only the sheets that changed."""

    objects: tuple[FragmentObject, ...]
    pages: tuple[int, ...]
    files: tuple[tuple[str, int], ...] = ()
    output_intents: tuple[tuple[bytes, ...], tuple[int, ...]] | None = None


def _serialise(obj: PdfObject) -> tuple[tuple[bytes, ...], tuple[int, ...]]:
    buffer = io.BytesIO()
    obj.write_to_stream(buffer)
    pieces = _SPLIT.split(buffer.getvalue())
    return tuple(pieces[0::2]), tuple(int(ref) for ref in pieces[1::2])


def _splice(parts: Sequence[bytes], refs: Sequence[int], number) -> bytes:  # noqa: ANN001
    out = [parts[0]]
    for ref, part in zip(refs, parts[1:]):
        out.append(f"{number(ref)} 0 R".encode())
        out.append(part)
    return b"".join(out)


def make_fragment(data: bytes) -> Fragment:
    """Parse one PDF (pypdf) into a :class:`Fragment`: the objects its pages use (not its
    page tree, catalog or outline), its embedded files (associated with its first page,
    ``/AF``) and its output intents."""
    reader = PdfReader(io.BytesIO(data))
    relative: dict[int, int] = {}
    order: list[int] = []

    def rel(idnum: int) -> int:
        if idnum not in relative:
            relative[idnum] = len(order)
            order.append(idnum)
        return relative[idnum]

    def remap(obj: PdfObject) -> PdfObject:
        if isinstance(obj, IndirectObject):
            return _Mark(rel(obj.idnum))
        if isinstance(obj, StreamObject):
            copy = DictionaryObject({key: remap(value) for key, value in dict.items(obj) if key != "/Length"})
            copy[NameObject("/Length")] = NumberObject(len(obj._data))
            return copy
        if isinstance(obj, DictionaryObject):
            return DictionaryObject({key: remap(value) for key, value in dict.items(obj)})
        if isinstance(obj, ArrayObject):
            return ArrayObject(remap(value) for value in list.__iter__(obj))
        return obj

    pages = list(reader.pages)
    page_ids = {page.indirect_reference.idnum: page for page in pages}
    page_refs = tuple(rel(idnum) for idnum in page_ids)
    root = reader.trailer["/Root"]
    old_tree = dict.__getitem__(root, "/Pages")
    if isinstance(old_tree, IndirectObject):
        relative[old_tree.idnum] = PAGES_ROOT
    names = root.get("/Names") if "/Names" in root else None
    files = tuple((name, rel(spec.idnum)) for name, spec in _name_tree_entries(
        names.get("/EmbeddedFiles") if names is not None else None) if isinstance(spec, IndirectObject))
    intents = _serialise(remap(dict.__getitem__(root, "/OutputIntents"))) if "/OutputIntents" in root else None

    objects: list[FragmentObject] = []
    index = 0
    while index < len(order):
        idnum = order[index]
        page = page_ids.get(idnum)
        if page is not None:
            obj = DictionaryObject({key: remap(value) for key, value in dict.items(page) if key != "/Parent"})
            obj[NameObject("/Parent")] = _Mark(PAGES_ROOT)
            if page_refs and relative[idnum] == page_refs[0] and files:
                obj[NameObject("/AF")] = ArrayObject(_Mark(ref) for _, ref in files)
            stream = None
        else:
            source = reader.get_object(idnum)
            stream = source._data if isinstance(source, StreamObject) else None
            obj = remap(source)
        parts, refs = _serialise(obj)
        objects.append(FragmentObject(parts, refs, stream))
        index += 1
    return Fragment(tuple(objects), page_refs, files, intents)


class PdfJoin:
    """Write sources one after another into ``out`` (a binary file open for writing).

    >>> import io
    >>> from pypdf import PdfWriter
    >>> page = io.BytesIO(); w = PdfWriter(); _ = w.add_blank_page(200, 100); _ = w.write(page)
    >>> out = io.BytesIO()
    >>> join = PdfJoin(out, DocumentInfo(title="Two blanks"))
    >>> join.add(page.getvalue(), bookmark="first"), join.add(page.getvalue(), bookmark="second")
    (1, 1)
    >>> join.close()
    >>> r = PdfReader(io.BytesIO(out.getvalue()))
    >>> len(r.pages), [o.title for o in r.outline], r.metadata.title
    (2, ['first', 'second'], 'Two blanks')
    """

    def __init__(self, out: BinaryIO, info: DocumentInfo, *, pdfa: bool = False) -> None:
        self.out = out
        self.info = info
        self.pdfa = pdfa
        self._start = out.tell() if out.seekable() else 0
        self._offsets: list[int] = [0]  # index = object number; 0 is the free head
        self._catalog = self._reserve()
        self._pages = self._reserve()
        self._page_refs: list[int] = []
        self._bookmarks: list[Bookmark] = []
        self._files: list[tuple[str, int]] = []  # (name, filespec object number)
        self._output_intents: PdfObject | None = None
        self._write_raw(b"%PDF-1.7\n%\xe2\xe3\xcf\xd3\n")

    # -- low level --------------------------------------------------------------------
    def _reserve(self) -> int:
        self._offsets.append(0)
        return len(self._offsets) - 1

    def _write_raw(self, data: bytes) -> None:
        self.out.write(data)

    def _position(self) -> int:
        return self.out.tell() - self._start

    def _write_object(self, number: int, obj: PdfObject) -> None:
        self._offsets[number] = self._position()
        buffer = io.BytesIO()
        buffer.write(f"{number} 0 obj\n".encode())
        obj.write_to_stream(buffer)
        buffer.write(b"\nendobj\n")
        self._write_raw(buffer.getvalue())

    def _new_object(self, obj: PdfObject) -> int:
        number = self._reserve()
        self._write_object(number, obj)
        return number

    # -- copying one source ------------------------------------------------------------
    def add(self, source: bytes | Path | Fragment, bookmark: str | None = None) -> int:
        """Append every page of ``source`` (PDF bytes, a path, or a :class:`Fragment` made
        from one earlier); bookmark its first page. Returns the number of pages added."""
        fragment = source if isinstance(source, Fragment) else make_fragment(
            source if isinstance(source, bytes) else Path(source).read_bytes())
        base = len(self._offsets)
        self._offsets.extend([0] * len(fragment.objects))

        def number(ref: int) -> int:
            return self._pages if ref == PAGES_ROOT else base + ref

        for index, obj in enumerate(fragment.objects):
            self._offsets[base + index] = self._position()
            self._write_raw(f"{base + index} 0 obj\n".encode() + _splice(obj.parts, obj.refs, number)
                            + (b"\nstream\n" + obj.stream + b"\nendstream" if obj.stream is not None else b"")
                            + b"\nendobj\n")
        if self._output_intents is None and fragment.output_intents is not None:
            parts, refs = fragment.output_intents
            intents = self._reserve()
            self._offsets[intents] = self._position()
            self._write_raw(f"{intents} 0 obj\n".encode() + _splice(parts, refs, number) + b"\nendobj\n")
            self._output_intents = _Ref(intents)
        if bookmark is not None and fragment.pages:
            self._bookmarks.append(Bookmark(bookmark, len(self._page_refs)))
        self._page_refs.extend(base + ref for ref in fragment.pages)
        self._files.extend((name, base + ref) for name, ref in fragment.files)
        return len(fragment.pages)

    # -- finishing ----------------------------------------------------------------------
    @property
    def page_count(self) -> int:
        return len(self._page_refs)

    def close(self) -> None:
        """Write the page tree, outline, metadata, catalog, cross-reference table and trailer."""
        self._write_object(self._pages, DictionaryObject({
            NameObject("/Type"): NameObject("/Pages"),
            NameObject("/Kids"): ArrayObject(_Ref(n) for n in self._page_refs),
            NameObject("/Count"): NumberObject(len(self._page_refs)),
        }))
        catalog = DictionaryObject({
            NameObject("/Type"): NameObject("/Catalog"),
            NameObject("/Pages"): _Ref(self._pages),
        })
        if self._bookmarks:
            catalog[NameObject("/Outlines")] = _Ref(self._write_outline())
            catalog[NameObject("/PageMode")] = NameObject("/UseOutlines")
        if self._files:
            catalog[NameObject("/Names")] = DictionaryObject({
                NameObject("/EmbeddedFiles"): _Ref(self._new_object(self._file_tree())),
            })
            if self.pdfa:
                catalog[NameObject("/AF")] = ArrayObject(_Ref(n) for _, n in self._files)
        if self.pdfa and self._output_intents is not None:
            catalog[NameObject("/OutputIntents")] = self._output_intents
        catalog[NameObject("/Metadata")] = _Ref(self._new_object(self._xmp()))
        self._write_object(self._catalog, catalog)
        info = self._new_object(self._info_dict())

        xref_at = self._position()
        lines = [f"xref\n0 {len(self._offsets)}\n".encode(), b"0000000000 65535 f \n"]
        lines += [f"{offset:010d} 00000 n \n".encode() for offset in self._offsets[1:]]
        self._write_raw(b"".join(lines))
        digest = hashlib.md5(f"{self.info.title}|{self.info.created.isoformat()}|{len(self._offsets)}".encode(),
                             usedforsecurity=False).hexdigest()
        self._write_raw(
            f"trailer\n<< /Size {len(self._offsets)} /Root {self._catalog} 0 R /Info {info} 0 R "
            f"/ID [<{digest}> <{digest}>] >>\nstartxref\n{xref_at}\n%%EOF\n".encode()
        )

    def _write_outline(self) -> int:
        outline = self._reserve()
        items = [self._reserve() for _ in self._bookmarks]
        for i, (mark, number) in enumerate(zip(self._bookmarks, items)):
            item = DictionaryObject({
                NameObject("/Title"): TextStringObject(mark.title),
                NameObject("/Parent"): _Ref(outline),
                NameObject("/Dest"): ArrayObject([_Ref(self._page_refs[mark.page_index]), NameObject("/Fit")]),
            })
            if i > 0:
                item[NameObject("/Prev")] = _Ref(items[i - 1])
            if i + 1 < len(items):
                item[NameObject("/Next")] = _Ref(items[i + 1])
            self._write_object(number, item)
        self._write_object(outline, DictionaryObject({
            NameObject("/Type"): NameObject("/Outlines"),
            NameObject("/First"): _Ref(items[0]),
            NameObject("/Last"): _Ref(items[-1]),
            NameObject("/Count"): NumberObject(len(items)),
        }))
        return outline

    def _file_tree(self) -> DictionaryObject:
        names: list[PdfObject] = []
        used: set[str] = set()
        for name, number in sorted(self._files, key=lambda entry: entry[0].encode("utf-16-be")):
            unique, n = name, 2
            while unique in used:
                unique, n = f"{name} ({n})", n + 1
            used.add(unique)
            names += [TextStringObject(unique), _Ref(number)]
        return DictionaryObject({NameObject("/Names"): ArrayObject(names)})

    def _info_dict(self) -> DictionaryObject:
        info = self.info
        stamp = _pdf_date(info.created)
        entries = {
            "/Title": info.title, "/Author": info.author, "/Subject": info.subject,
            "/Keywords": ", ".join(info.keywords), "/Creator": info.creator, "/Producer": "loopdocs (pypdf join)",
            "/CreationDate": stamp, "/ModDate": stamp,
        }
        return DictionaryObject({NameObject(k): TextStringObject(v) for k, v in entries.items() if v})

    def _xmp(self) -> StreamObject:
        info = self.info
        when = info.created.isoformat()
        e = xml_escape
        pdfa = (
            '<rdf:Description rdf:about="" xmlns:pdfaid="http://www.aiim.org/pdfa/ns/id/">'
            "<pdfaid:part>3</pdfaid:part><pdfaid:conformance>B</pdfaid:conformance></rdf:Description>"
            if self.pdfa else ""
        )
        xml = (
            '<?xpacket begin="\ufeff" id="W5M0MpCehiHzreSzNTczkc9d"?>'
            '<x:xmpmeta xmlns:x="adobe:ns:meta/"><rdf:RDF xmlns:rdf="http://www.w3.org/1999/02/22-rdf-syntax-ns#">'
            '<rdf:Description rdf:about="" xmlns:dc="http://purl.org/dc/elements/1.1/">'
            f'<dc:format>application/pdf</dc:format>'
            f'<dc:title><rdf:Alt><rdf:li xml:lang="x-default">{e(info.title)}</rdf:li></rdf:Alt></dc:title>'
            f'<dc:creator><rdf:Seq><rdf:li>{e(info.author)}</rdf:li></rdf:Seq></dc:creator>'
            f'<dc:description><rdf:Alt><rdf:li xml:lang="x-default">{e(info.subject)}</rdf:li></rdf:Alt></dc:description>'
            "</rdf:Description>"
            '<rdf:Description rdf:about="" xmlns:pdf="http://ns.adobe.com/pdf/1.3/">'
            f"<pdf:Keywords>{e(', '.join(info.keywords))}</pdf:Keywords><pdf:Producer>loopdocs (pypdf join)</pdf:Producer>"
            "</rdf:Description>"
            '<rdf:Description rdf:about="" xmlns:xmp="http://ns.adobe.com/xap/1.0/">'
            f"<xmp:CreatorTool>{e(info.creator)}</xmp:CreatorTool><xmp:CreateDate>{when}</xmp:CreateDate>"
            f"<xmp:ModifyDate>{when}</xmp:ModifyDate><xmp:MetadataDate>{when}</xmp:MetadataDate>"
            "</rdf:Description>"
            f"{pdfa}</rdf:RDF></x:xmpmeta>"
            '<?xpacket end="w"?>'
        )
        return StreamObject.initialize_from_dictionary({
            NameObject("/Type"): NameObject("/Metadata"),
            NameObject("/Subtype"): NameObject("/XML"),
            "__streamdata__": xml.encode("utf-8"),
        })


def _name_tree_entries(node: PdfObject | None) -> list[tuple[str, PdfObject]]:
    """``(name, raw value)`` pairs of a name tree (ISO 32000-1 7.9.6), leaves and kids."""
    if node is None:
        return []
    node = node.get_object()
    entries: list[tuple[str, PdfObject]] = []
    if "/Names" in node:
        raw = list.__iter__(node["/Names"])
        items = list(raw)
        for name, value in zip(items[0::2], items[1::2]):
            entries.append((str(name.get_object()), value))
    for kid in node.get("/Kids", []):
        entries.extend(_name_tree_entries(kid))
    return entries
