"""Commands that keep records safe: verify, backup, restore."""

from __future__ import annotations

import sys

import click

from .core import Ctx, emit_json, json_option, main, pass_ctx, say


def _print_problems(problems: list[dict]) -> None:
    for p in problems:
        say(f"  {p['code']:16} {p['record']}: {p['message']}")


@main.command()
@click.option("--no-files", is_flag=True, help="Skip re-hashing the attached files (faster on big stores).")
@click.option(
    "--head",
    "noted_head",
    metavar="COUNT:HASH",
    help="A head printed by an earlier verify and kept outside the notebook: it must still be in the log.",
)
@json_option(
    help='Print {"ok": bool, "path": str, "problems": [{"code", "record", "message"}], '
    '"checked": {"runs", "versions", "screens", "settings", "saves", "cache_entries", "structures", '
    '"summaries", "attachments"}, "head": {"count", "hash"}}.'
)
@pass_ctx
def verify(ctx: Ctx, no_files: bool, noted_head: str | None, as_json: bool) -> None:
    """Check the notebook: every hash chain and the log of saves, current rows, summaries,
    structures and full text (recomputed), the cache, attached files, SQLite's own check.

    Reports any record changed outside Trapbook; reads only. Exit 0 when all is well, 1
    when a problem is found (2 when the notebook cannot be opened at all). Note the head
    (count and hash of the last save) somewhere safe to compare with later: a rewrite of
    the whole history with Trapbook's own code can only be caught that way.
    """
    from ..integrity import verify_path

    report = verify_path(ctx.existing_path(), check_files=not no_files, noted_head=noted_head).to_dict()
    if as_json:
        emit_json(report)
    else:
        c = report["checked"]
        counts = ", ".join(f"{v} {k}" for k, v in c.items())
        if report["ok"]:
            say(f"ok: {report['path']} ({counts})")
            if report["head"] and report["head"]["hash"]:
                say(f"  head: {report['head']['count']}:{report['head']['hash']} (keep it elsewhere; check later with --head)")
        else:
            say(f"NOT OK: {report['path']} has {len(report['problems'])} problem(s) ({counts}):")
            _print_problems(report["problems"])
            say("  what to do: restore from a backup ('trapbook restore BACKUP'), or ask whoever edited the file", err=True)
    if not report["ok"]:
        sys.exit(1)


@main.command()
@click.argument("dest")
@json_option(help='Print {"path", "files_copied", "verified", "problems"}.')
@pass_ctx
def backup(ctx: Ctx, dest: str, as_json: bool) -> None:
    """Copy the notebook and its attached files to DEST (a new file, or a folder).

    Safe while the notebook is open and being saved to (SQLite online backup); the copy
    is verified before it is reported. Never overwrites an existing file.
    """
    from ..backup import backup as do_backup

    res = do_backup(ctx.existing_path(), dest)
    if as_json:
        emit_json(res)
    else:
        say(
            f"backed up to {res['path']} ({res['files_copied']} file(s) copied); "
            + ("verified" if res["verified"] else "COPY DOES NOT VERIFY")
        )
        _print_problems(res["problems"])
    if not res["verified"]:
        sys.exit(1)


@main.command()
@click.argument("src")
@click.option("--force", is_flag=True, help="Restore even if SRC does not pass verify (the current notebook is still kept).")
@json_option(help='Print {"path", "from", "previous_kept_at", "files_copied", "verified", "problems"}.')
@pass_ctx
def restore(ctx: Ctx, src: str, force: bool, as_json: bool) -> None:
    """Put the backup SRC in place of the notebook (--db TARGET, or the default one).

    SRC is verified first; the notebook already at the target is kept under a dated
    name (NAME.before-restore-TIME.sqlite) before it is replaced.
    """
    from ..backup import restore as do_restore

    res = do_restore(src, ctx.db_path(), force=force)
    if as_json:
        emit_json(res)
    else:
        say(f"restored {res['path']} from {res['from']}")
        if res["previous_kept_at"]:
            say(f"  the notebook that was there is kept at {res['previous_kept_at']}")
        if not res["verified"]:
            say("  the restored notebook does NOT verify:")
            _print_problems(res["problems"])
    if not res["verified"]:
        sys.exit(1)
