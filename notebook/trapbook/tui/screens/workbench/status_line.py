"""Fitting the Workbench's status line into the lines it has, without cutting a word.

The status says where the run stands (its id, unsaved work, whether ctrl+s can save, the
checks when their panel is out of sight). At 80 columns the whole sentence does not fit in
its two lines, and a line cut at the edge loses the very end a chemist reads it for. So
each part comes in a few readings, longest first: the less important parts are shortened
first, then left out, and only as a last resort is the reason a run cannot be saved cut,
between words, with "…" (the checks panel, f7, always has it whole).
"""

from __future__ import annotations

from dataclasses import dataclass

from rich.cells import cell_len
from rich.text import Text

SEPARATOR = " · "


@dataclass(frozen=True)
class Part:
    """One thing the status says, in readings from longest to shortest.

    `rank` is how much it matters: 0 is shortened and given up last. Parts are said in the
    order they are given, whatever their rank.
    """

    forms: tuple[Text, ...]
    rank: int
    droppable: bool = True


def wrapped_line_count(text: str, width: int) -> int:
    """Lines the text takes when wrapped at spaces into `width` cells (a word wider than a line is folded)."""
    lines, used = 1, 0
    for word in text.split(" "):
        size = cell_len(word)
        if used and used + 1 + size > width:
            lines, used = lines + 1, 0
        used = used + 1 + size if used else size
        while used > width:
            lines, used = lines + 1, used - width
    return lines


def clip_words(text: Text, keep_words: int) -> Text:
    """The first `keep_words` words of a reading, closed with an ellipsis in the reading's style."""
    words = text.plain.split(" ")
    if keep_words >= len(words):
        return text
    clipped = text[: len(" ".join(words[:keep_words]))]
    clipped.append("…")
    return clipped


def fit_status(parts: list[Part], width: int, max_lines: int = 2) -> Text:
    """The status as one Text that wraps into at most `max_lines` lines of `width` cells."""
    readings = [part.forms[0] for part in parts]
    kept = [True] * len(parts)

    def said() -> Text:
        return Text(SEPARATOR).join(r for r, k in zip(readings, kept) if k)

    def fits() -> bool:
        return wrapped_line_count(said().plain, max(width, 1)) <= max_lines

    least_first = sorted(range(len(parts)), key=lambda i: -parts[i].rank)
    for i in least_first:  # shorten the least important first
        for shorter in parts[i].forms[1:]:
            if fits():
                return said()
            readings[i] = shorter
    for i in least_first:  # then leave out what may go
        if fits():
            return said()
        kept[i] = not parts[i].droppable
    if fits():
        return said()
    longest = max((i for i in range(len(parts)) if kept[i]), key=lambda i: len(readings[i]))
    whole = readings[longest]  # a very long reason: cut between words, as little as will do
    for keep in range(len(whole.plain.split(" ")) - 1, 0, -1):
        readings[longest] = clip_words(whole, keep)
        if fits():
            break
    return said()


__all__ = ["Part", "fit_status", "wrapped_line_count"]
