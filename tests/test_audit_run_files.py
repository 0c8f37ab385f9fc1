"""A run file or a file of runs is read with a bound: /dev/zero, a huge (sparse) file or an
endless pipe ends in a message and exit code 2, not in memory running out ("unexpected
MemoryError", exit 1, before). A folder given as a run file is named as a folder.

Source: docs/sources.md, "Bench words, input limits and ids" (limits far beyond any bench:
common practice, no source).
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from samples import MINIMAL_RUN
from trapbook.cli import main
from trapbook.errors import TrapbookError
from trapbook.records import RUN_FILE_MAX_BYTES, read_text_limited


class EndlessZeros:
    """A stream that never ends, counting what was asked of it."""

    def __init__(self) -> None:
        self.given = 0

    def read(self, n: int = -1) -> bytes:
        if n is None or n < 0:
            raise AssertionError("read without a bound would never return")
        self.given += n
        return b"\0" * n


@pytest.fixture
def cli(tmp_path):
    db = str(tmp_path / "nb.sqlite")
    runner = CliRunner()
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0

    def invoke(*args, input=None):
        return runner.invoke(main, ["--db", db, "--author", "t", *args], input=input)

    return invoke


def _count(cli) -> int:
    return len(json.loads(cli("list", "--json").output))


def test_an_endless_stream_is_read_once_with_a_bound():
    stream = EndlessZeros()
    with pytest.raises(TrapbookError) as err:
        read_text_limited("-", limit=1000, stream=stream)
    assert stream.given == 1001
    assert "larger than" in err.value.message


def test_a_huge_sparse_run_file_is_refused_by_size(cli, tmp_path):
    big = tmp_path / "big.json"
    with big.open("wb") as fh:  # sparse: no disk used, but RUN_FILE_MAX_BYTES + 1 bytes long
        fh.truncate(RUN_FILE_MAX_BYTES + 1)
    for command in ("add", "amounts", "check"):
        res = cli(command, str(big))
        assert res.exit_code == 2, (command, res.output)
        assert "larger than 16 MB" in res.output
        assert "Traceback" not in res.output and "unexpected" not in res.output
    assert _count(cli) == 0


def test_standard_input_past_the_bound_is_refused(cli):
    res = cli("add", "-", input=b"\0" * (RUN_FILE_MAX_BYTES + 1))
    assert res.exit_code == 2
    assert "standard input is larger than 16 MB" in res.output
    assert _count(cli) == 0


def test_a_folder_is_named_as_a_folder_and_a_real_file_still_reads(cli, tmp_path):
    folder = tmp_path / "run.json"
    folder.mkdir()
    res = cli("add", str(folder))
    assert res.exit_code == 2 and "is a folder, not a run file" in res.output
    (tmp_path / "ok.json").write_text(json.dumps(MINIMAL_RUN), encoding="utf-8")
    assert cli("add", str(tmp_path / "ok.json")).exit_code == 0
    assert cli("import", "-", input=json.dumps(MINIMAL_RUN) + "\n").exit_code == 0
    assert _count(cli) == 2
