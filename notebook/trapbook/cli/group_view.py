"""The commands that read a group (--group): the text and JSON of `trapbook.group` answers.

Under --group only the commands in `GROUP_COMMANDS` run; every other command is refused
before it starts, because it either writes or works on one notebook. Every answer names
each run by member and id (MEMBER:ID), and every JSON answer carries `members`: each
notebook with whether its chains checked out (a failing one is left out of the answer and
said here, on stderr in text mode).
"""

from __future__ import annotations

import click

from ..errors import TrapbookError
from .core import Ctx, emit_json, say

#: What a group view can do; each reads only.
GROUP_COMMANDS = ("list", "search", "review", "strain-map", "report", "open", "serve")


def refuse_outside_group(command: str | None) -> None:
    """Refuse a command that writes, or that reads one notebook only, before it runs under --group."""
    if command is None or command in GROUP_COMMANDS:
        return
    raise TrapbookError(
        f"'{command}' cannot run under --group: the group view only reads, and only "
        + ", ".join(GROUP_COMMANDS)
        + " read a group",
        f"to use '{command}', point --db at one member's notebook (trapbook --db FILE {command} ...)",
        field="group",
        got=command,
    )


def open_group(ctx: Ctx):
    """The group named by --group, opened read-only; a member that failed its check is said on stderr."""
    from ..group import Group

    group = Group.open(ctx.group)
    return group


def warn_failing(group, as_json: bool) -> None:
    if as_json:
        return
    for m in group.failing():
        first = m.problems[0]["message"] if m.problems else ""
        say(f"NOT VERIFIED, left out: {m.label} ({m.path}): {len(m.problems)} problem(s); {first}", err=True)
        say(f"  what to do: run 'trapbook --db {m.path} verify' and restore that notebook from a backup if needed", err=True)


def _rows_with_member(rows: list[dict]) -> str:
    from ..reports_text import run_rows_text

    width = max([len("member")] + [len(r["member"]) for r in rows])
    lines = run_rows_text(rows).splitlines()
    head = [f"{'member':{width}} {lines[0]}", "-" * (width + 1 + len(lines[1]))]
    return "\n".join(head + [f"{r['member']:{width}} {line}" for r, line in zip(rows, lines[2:])])


def list_group(ctx: Ctx, include_withdrawn: bool, screen: str | None, as_json: bool) -> None:
    with open_group(ctx) as group:
        rows = group.list_runs(include_withdrawn=include_withdrawn, screen=screen)
        if as_json:
            emit_json({"members": group.to_dict(), "runs": rows})
            return
        warn_failing(group, as_json)
    if not rows:
        click.echo("no runs in any member's notebook")
        return
    click.echo(_rows_with_member(rows))


def search_group(ctx: Ctx, query, as_json: bool) -> None:
    with open_group(ctx) as group:
        hits = group.search(query)
        if as_json:
            emit_json({"members": group.to_dict(), "hits": hits})
            return
        warn_failing(group, as_json)
    if not hits:
        click.echo("no run matches in any member's notebook")
        return
    for h in hits:
        say(f"{h['ref']:20} {h['score']:5.2f}  {h['title']}")
        for m in h["matched"]:
            say(f"{'':27}{m}")
    click.echo(f"{len(hits)} run(s)")


def review_group(ctx: Ctx, screen: str, as_json: bool) -> dict | None:
    """The review of a member's screen (MEMBER:SC-…), or None after printing JSON; the caller prints text."""
    with open_group(ctx) as group:
        rv = group.review(screen)
        if as_json:
            emit_json({"members": group.to_dict(), **rv})
            return None
        warn_failing(group, as_json)
    say(f"member: {rv['member']}")
    return rv


def strain_map_group(ctx: Ctx, as_json: bool) -> dict | None:
    with open_group(ctx) as group:
        sm = group.strain_map()
        if as_json:
            emit_json({"members": group.to_dict(), **sm})
            return None
        warn_failing(group, as_json)
    return sm


def report_group(ctx: Ctx, ref: str, output: str) -> dict:
    with open_group(ctx) as group:
        warn_failing(group, False)
        return group.write_report(ref, output)


def open_group_ui(ctx: Ctx, path: str | None) -> None:
    """The terminal UI on every member's runs, read-only."""
    import importlib.util

    if path:
        raise TrapbookError(
            "'open PATH' names one notebook; under --group the members are the --group paths",
            "drop PATH, or open that one notebook with 'trapbook open PATH'",
        )
    if importlib.util.find_spec("textual") is None:
        raise TrapbookError(
            "the terminal UI is not available in this installation", "use the commands listed by 'trapbook --help'"
        )
    with open_group(ctx) as group:  # the paths are checked here, before the screen is taken over
        warn_failing(group, False)
    from ..tui.app import run_app

    run_app(None, author=ctx.author, group=ctx.group)
