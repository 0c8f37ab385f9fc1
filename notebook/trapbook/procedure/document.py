"""A written procedure as plain blocks (headings, paragraphs of styled pieces, tables), and
how those blocks read as plain text and as Markdown.

The wording is made once, into these blocks; each output format only lays them out, so
the text, the Markdown and the .docx say the same words.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from ..text_safety import printable


def clean(text: str) -> str:
    """Stored text as one run of words: line breaks and repeated spaces become one space."""
    return " ".join(str(text).split())


def sentence(text: str) -> str:
    """`text` as a sentence: capital first letter, closing full stop."""
    text = clean(text)
    text = text[:1].upper() + text[1:]
    return text if text.endswith((".", "!", "?")) else text + "."


@dataclass
class Heading:
    text: str


@dataclass
class Paragraph:
    """Pieces of one paragraph, each (text, style) with style '', 'bold' or 'italic'."""

    pieces: list[tuple[str, str]] = field(default_factory=list)

    def add(self, text: str, style: str = "") -> Paragraph:
        if text:
            self.pieces.append((text, style))
        return self

    @property
    def text(self) -> str:
        return "".join(t for t, _ in self.pieces)


@dataclass
class Table:
    caption: str
    header: list[str]
    rows: list[list[str]]


@dataclass
class Document:
    """A procedure: what a chemist pastes into a paper, and notes on what the record lacked."""

    title: str
    blocks: list = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        out = []
        for b in self.blocks:
            if isinstance(b, Heading):
                out.append({"heading": b.text})
            elif isinstance(b, Paragraph):
                out.append({"paragraph": b.text})
            else:
                out.append({"table": {"caption": b.caption, "header": b.header, "rows": b.rows}})
        return {"title": self.title, "blocks": out, "notes": self.notes}


def _text_table(t: Table) -> list[str]:
    cells = [[printable(c) for c in row] for row in [t.header, *t.rows]]
    widths = [max(len(r[i]) for r in cells) for i in range(len(t.header))]
    lines = [printable(t.caption)]
    for k, row in enumerate(cells):
        lines.append("  ".join(c.ljust(w) for c, w in zip(row, widths)).rstrip())
        if k == 0:
            lines.append("  ".join("-" * w for w in widths))
    return lines


def as_text(doc: Document) -> str:
    """Plain text: one paragraph per block, stored text with control characters made visible."""
    out: list[str] = []
    for b in doc.blocks:
        if isinstance(b, Heading):
            out.append(printable(b.text))
        elif isinstance(b, Paragraph):
            out.append(printable(b.text))
        else:
            out.extend(_text_table(b))
        out.append("")
    return "\n".join(out).rstrip() + "\n"


_MD_SPECIAL = re.compile(r"([\\`*_\[\]<>|~])")
#: What Markdown reads as a heading, list or quote when it opens a block.
_MD_LINE_START = re.compile(r"^(\s*\d*)([#+\-=]|(?<=\d)\.)")


def md_escape(text: str, opens_block: bool = False) -> str:
    """Stored text as literal Markdown: every character Markdown would read as markup is escaped
    (and, where the text opens a block, a leading '#', '-' or '1.')."""
    text = _MD_SPECIAL.sub(r"\\\1", printable(text))
    return _MD_LINE_START.sub(r"\1\\\2", text) if opens_block else text


def as_markdown(doc: Document) -> str:
    """Markdown: headings, **bold** and *italic* pieces, and pipe tables."""
    out: list[str] = []
    for b in doc.blocks:
        if isinstance(b, Heading):
            out.append("## " + md_escape(b.text))
        elif isinstance(b, Paragraph):
            marks = {"bold": "**", "italic": "*"}
            out.append(
                "".join(f"{marks.get(s, '')}{md_escape(t, k == 0)}{marks.get(s, '')}" for k, (t, s) in enumerate(b.pieces))
            )
        else:
            out.append("*" + md_escape(b.caption) + "*")
            out.append("")
            out.append("| " + " | ".join(md_escape(h) for h in b.header) + " |")
            out.append("|" + "|".join("---" for _ in b.header) + "|")
            out += ["| " + " | ".join(md_escape(c) for c in row) + " |" for row in b.rows]
        out.append("")
    return "\n".join(out).rstrip() + "\n"
