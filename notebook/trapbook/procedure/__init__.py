"""The experimental paragraph: a finished run (or a screen) written as a paper's
Supporting Information has it, as plain text, Markdown or a .docx.

`run_procedure` / `screen_procedure` make the words once (document.py's blocks); the
formats only lay them out. `write_procedure` is what the command line calls.
"""

from __future__ import annotations

from pathlib import Path

from ..errors import ExchangeError, NotFoundError
from .document import Document, as_markdown, as_text
from .run import run_procedure
from .screen import screen_procedure

__all__ = ["FORMATS", "Document", "render", "run_procedure", "screen_procedure", "procedure_for", "write_procedure"]

FORMATS = ("text", "md", "docx")


def render(doc: Document, fmt: str) -> str | bytes:
    """The document in one format: text and md as str, docx as bytes."""
    if fmt == "text":
        return as_text(doc)
    if fmt == "md":
        return as_markdown(doc)
    if fmt == "docx":
        from .docx_file import as_docx

        return as_docx(doc)
    raise ExchangeError(f"unknown format '{fmt}'", "use text, md or docx", field="format", got=fmt)


def procedure_for(nb, ref) -> Document:
    """The procedure of a stored run id, a screen (id or name), or a Run already loaded."""
    from ..records import Run

    if isinstance(ref, Run):
        return run_procedure(ref, nb)
    try:
        nb.run_meta(ref)
        return run_procedure(nb.get_run(ref), nb)
    except NotFoundError:
        try:
            screen = nb.get_screen(ref)
        except NotFoundError:
            raise NotFoundError(
                f"no run or screen '{ref}' in this notebook", "list them with 'trapbook list' and 'trapbook screens'"
            ) from None
    return screen_procedure(screen, nb.screen_runs(screen))


def write_procedure(doc: Document, fmt: str, output: str | Path | None) -> str | bytes | Path:
    """The rendered document, written to `output` when given (atomically); a .docx needs a file."""
    if fmt not in FORMATS:
        raise ExchangeError(f"unknown format '{fmt}'", "use text, md or docx", field="format", got=fmt)
    if fmt == "docx" and output is None:
        raise ExchangeError("a .docx is a file, not text for the terminal", "add -o FILE.docx", field="output")
    if output is not None and fmt == "docx" and Path(output).suffix.lower() != ".docx":
        raise ExchangeError(f"{output} does not end in .docx", "give a file name like procedure.docx", field="output")
    data = render(doc, fmt)
    if output is None:
        return data
    from ..files import write_atomic

    return write_atomic(Path(output), data)
