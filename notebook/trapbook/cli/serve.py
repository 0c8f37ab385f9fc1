"""`trapbook serve`: the terminal UI in a web browser (textual-serve), for a reviewer without a terminal.

Each browser tab starts its own `trapbook ... open` process, and textual-serve relays its
screen over a websocket. The server listens on the loopback address unless --host names
another, and then it says plainly that anyone who can reach that address can use the
notebook: there is no login. --read-only (always so under --group) opens the notebook so
that nothing can be written and hides the keys that would write.
"""

from __future__ import annotations

import ipaddress
import shlex
import sys

import click

from ..errors import TrapbookError
from .core import Ctx, main, pass_ctx, say

LOOPBACK = "127.0.0.1"


def is_loopback(host: str) -> bool:
    """Whether `host` is reachable from this computer only (127.0.0.0/8, ::1, 'localhost')."""
    if host == "localhost":
        return True
    try:
        return ipaddress.ip_address(host).is_loopback
    except ValueError:
        return False


def open_command(ctx: Ctx, read_only: bool) -> str:
    """The shell command each browser session runs: this Python, this notebook (or group), the UI."""
    argv = [sys.executable, "-m", "trapbook"]
    if ctx.group:
        for path in ctx.group:
            argv += ["--group", str(path)]
    else:
        argv += ["--db", str(ctx.existing_path())]
    if ctx.author:
        argv += ["--author", ctx.author]
    argv += ["open"] + (["--read-only"] if read_only else [])
    return shlex.join(argv)


@main.command("serve")
@click.option("--read-only", is_flag=True, help="Open the notebook for reading only; keys that would write are hidden.")
@click.option("--port", type=click.IntRange(1, 65535), default=8000, show_default=True, help="TCP port to listen on.")
@click.option(
    "--host",
    default=LOOPBACK,
    show_default=True,
    help="Address to listen on. Anything but the loopback address lets others on that network use the notebook.",
)
@pass_ctx
def serve_cmd(ctx: Ctx, read_only: bool, port: int, host: str) -> None:
    """Show the terminal UI in a web browser (http://HOST:PORT); Ctrl+C stops it.

    With --group the members' notebooks are shown together, read-only.
    """
    import importlib.util

    if importlib.util.find_spec("textual_serve") is None:
        raise TrapbookError(
            "the browser view needs the textual-serve package, which is not installed",
            "install it (pip install textual-serve) or use 'trapbook open' in a terminal",
        )
    if ctx.group:
        from .group_view import open_group, warn_failing

        with open_group(ctx) as group:  # the paths and chains are checked before anything listens
            warn_failing(group, False)
        read_only = True
    command = open_command(ctx, read_only)
    if not is_loopback(host):
        say(
            f"WARNING: listening on {host}: anyone who can reach this address on the network can use the notebook"
            + (" (read-only)" if read_only else ", and change it")
            + "; there is no login.",
            err=True,
        )
        say("  what to do: stop it (Ctrl+C) when done; prefer the default 127.0.0.1 with an SSH tunnel", err=True)
    from textual_serve.server import Server

    say(f"serving the {'read-only ' if read_only else ''}Trapbook UI on http://{host}:{port}  (Ctrl+C stops it)", err=True)
    Server(command, host=host, port=port, title="Trapbook" + (" (read-only)" if read_only else "")).serve()
