"""`whoami`: the name this notebook records on every save (the author of each version)."""

from __future__ import annotations

import click

from .core import Ctx, emit_json, json_option, main, pass_ctx, say

_SOURCE_WORDS = {
    "given": "given with --author for this command",
    "notebook": "this notebook's name for you",
    "login": "the computer's login name: no name is set in this notebook",
}


@main.command("whoami")
@click.argument("name", required=False)
@click.option("--clear", is_flag=True, help="Forget the notebook's name (saves fall back to the login name).")
@json_option(help='Print {"name", "source" ("given", "notebook" or "login"), "path"}.')
@pass_ctx
def whoami(ctx: Ctx, name: str | None, clear: bool, as_json: bool) -> None:
    """Show, set (NAME) or --clear the name recorded on every save in this notebook.

    Every version a command or the terminal UI saves records this name as its author;
    --author overrides it for one command. Without a name the login name is recorded.
    """
    from ..errors import RecordError
    from ..settings import author_for, set_notebook_author

    if name is not None and clear:
        raise RecordError("give a NAME or --clear, not both", "e.g. trapbook whoami 'A. Trial'")
    with ctx.notebook() as nb:
        if name is not None or clear:
            set_notebook_author(nb, None if clear else name, author=ctx.author)
        shown, source = author_for(nb, ctx.author)
    if as_json:
        emit_json({"name": shown, "source": source, "path": str(ctx.db_path())})
        return
    say(f"{shown}  ({_SOURCE_WORDS[source]})")
    if source == "login":
        say("  set yours with: trapbook whoami 'YOUR NAME'")
