"""The one pypdf internal the package join relies on, pinned by a test that fails loudly.

``loopdocs.render.pdfjoin`` copies each stream's bytes as stored in the file (still
compressed) from ``StreamObject._data``: pypdf has no public accessor for the raw bytes
(``get_data()`` decodes). pyproject.toml bounds pypdf below 8; if a pypdf release moves
or changes ``_data``, this test says so before a package is joined wrongly.
"""

from __future__ import annotations

import io
import zlib

from pypdf import PdfReader, PdfWriter
from pypdf.generic import ContentStream, StreamObject


def test_stream_data_attribute_holds_the_encoded_bytes():
    writer = PdfWriter()
    page = writer.add_blank_page(100, 100)
    text = b"BT /F1 12 Tf 10 10 Td (raw bytes) Tj ET" * 20
    content = ContentStream(None, None)
    content.set_data(text)
    page.replace_contents(content)
    page.compress_content_streams()
    buffer = io.BytesIO()
    writer.write(buffer)

    reader = PdfReader(io.BytesIO(buffer.getvalue()))
    stream = reader.pages[0]["/Contents"].get_object()
    assert isinstance(stream, StreamObject)
    raw = stream._data  # the attribute loopdocs.render.pdfjoin reads
    assert isinstance(raw, bytes)
    # stored compressed (FlateDecode, ISO 32000-1 7.4.4): the raw bytes are what the file holds
    # (pdfjoin writes /Length as their count), and inflating them gives the content back
    assert stream["/Filter"] == "/FlateDecode"
    assert zlib.decompress(raw) == text and len(raw) < len(text)
    assert raw in buffer.getvalue()
