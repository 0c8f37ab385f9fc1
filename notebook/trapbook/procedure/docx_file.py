"""A procedure as a Word document (.docx, written by python-docx): the same blocks, the same words."""

from __future__ import annotations

import io
import re

from ..text_safety import printable
from .document import Document, Heading, Paragraph

#: Characters XML 1.0 cannot hold (its Char production, section 2.2): shown as escapes instead.
_NOT_XML = re.compile("[^\t\n\r\x20-\ud7ff\ue000-\ufffd\U00010000-\U0010ffff]")


def xml_text(text: str) -> str:
    """Stored text as a .docx can hold it: control characters (printable) and XML's excluded
    characters (U+FFFE, U+FFFF, lone surrogates) written as visible escapes, never dropped."""
    return _NOT_XML.sub(lambda m: f"\\u{ord(m.group()):04x}", printable(text))


def as_docx(doc: Document) -> bytes:
    """The .docx file's bytes; stored text passes through `printable` (XML cannot hold control characters)."""
    import docx  # python-docx: only needed for this format

    out = docx.Document()
    out.core_properties.title = xml_text(doc.title)[:250]
    out.core_properties.author = "Trapbook"
    for block in doc.blocks:
        if isinstance(block, Heading):
            out.add_heading(xml_text(block.text), level=2)
        elif isinstance(block, Paragraph):
            para = out.add_paragraph()
            for text, style in block.pieces:
                piece = para.add_run(xml_text(text))
                piece.bold = style == "bold"
                piece.italic = style == "italic"
        else:
            out.add_paragraph().add_run(xml_text(block.caption)).italic = True
            table = out.add_table(rows=1 + len(block.rows), cols=len(block.header))
            table.style = "Table Grid"
            for r, row in enumerate([block.header, *block.rows]):
                for c, value in enumerate(row):
                    table.cell(r, c).text = xml_text(value)
                    if r == 0:
                        for piece in table.cell(r, c).paragraphs[0].runs:
                            piece.bold = True
    buf = io.BytesIO()
    out.save(buf)
    return buf.getvalue()
