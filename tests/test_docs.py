"""The README's command table and the commands' --help stay in step with the CLI itself."""

from __future__ import annotations

import re
from pathlib import Path

import click
import pytest

from trapbook.cli import main

README = Path(__file__).resolve().parents[1] / "README.md"


def _table_commands() -> set[str]:
    """The commands named in the README's `| command | what it does |` table (first words of
    each code span in the first column, and the first two for sub-commands)."""
    text = README.read_text(encoding="utf-8")
    start = text.index("| command | what it does |")
    rows = []
    for line in text[start:].splitlines()[2:]:
        if not line.startswith("|"):
            break
        rows.append(line)
    assert rows, "the README command table is empty"
    names: set[str] = set()
    for row in rows:
        first_cell = re.split(r"(?<!\\)\|", row)[1]
        for span in re.findall(r"`([^`]+)`", first_cell):
            words = span.split()
            names.add(words[0])
            if len(words) > 1:
                names.add(" ".join(words[:2]))
    return names


def _commands() -> list[tuple[str, click.Command]]:
    out = []
    ctx = click.Context(main)
    for name in main.list_commands(ctx):
        cmd = main.get_command(ctx, name)
        if isinstance(cmd, click.Group):
            sub = click.Context(cmd, parent=ctx)
            out += [(f"{name} {s}", cmd.get_command(sub, s)) for s in cmd.list_commands(sub)]
        else:
            out.append((name, cmd))
    return out


COMMANDS = _commands()


def test_the_group_has_commands():
    # the CLI as documented in the README has at least these (a guard against an empty parametrisation)
    names = {n for n, _ in COMMANDS}
    assert {"init", "add", "list", "show", "open", "reindex", "formats", "screen plan"} <= names


@pytest.mark.parametrize("name, cmd", COMMANDS, ids=[n for n, _ in COMMANDS])
def test_every_command_is_in_the_readme_table(name, cmd):
    assert name in _table_commands(), f"'{name}' is missing from the README command table"


@pytest.mark.parametrize("name, cmd", COMMANDS, ids=[n for n, _ in COMMANDS])
def test_every_command_and_option_has_help(name, cmd):
    assert (cmd.help or "").strip(), f"'{name}' has no help text"
    for param in cmd.params:
        if isinstance(param, click.Option) and not param.hidden:
            assert (param.help or "").strip(), f"'{name}' option {param.opts} has no help text"


@pytest.mark.parametrize("name, cmd", COMMANDS, ids=[n for n, _ in COMMANDS])
def test_json_flag_names_its_keys(name, cmd):
    flags = [p for p in cmd.params if isinstance(p, click.Option) and "--json" in p.opts]
    if not flags:
        pytest.skip(f"'{name}' prints no data")
    assert re.search(r"\{|\[", flags[0].help or ""), f"'{name}' --json help does not name its keys"
