"""Attachment records and their files: no record without its bytes, and exports streamed.

A record naming a file the notebook does not hold would fail `verify` for good, so it is
refused wherever it arrives (run file, JSON-lines import, edit). Exported copies are
streamed and checked against the SHA-256 on the way; the digests here are computed by
`hashlib` over the original bytes, independently of the store's own bookkeeping.
"""

from __future__ import annotations

import hashlib
import json
import os
import tracemalloc

import pytest
from click.testing import CliRunner

from trapbook import attachments
from trapbook.cli import main
from trapbook.errors import TrapbookError
from trapbook.integrity import verify
from trapbook.store import Notebook

RUN = {
    "title": "furan trap of the C7 bridgehead alkene",
    "chemist": "A. Trial",
    "lines": [{"name": "furan", "role": "trap", "amount": "1 mmol"}],
}


def _fake_record(data: bytes, name: str = "1H.fid") -> dict:
    # Source: FIPS 180-4 SHA-256, computed here by hashlib over the bytes the record claims
    return {"name": name, "sha256": hashlib.sha256(data).hexdigest(), "size": len(data)}


@pytest.fixture
def db(tmp_path):
    path = tmp_path / "lab.sqlite"
    assert CliRunner().invoke(main, ["init", str(path)]).exit_code == 0
    return path


def _cli(db, *args):
    return CliRunner().invoke(main, ["--db", str(db), "--author", "A. Trial", *args])


def test_a_run_file_naming_a_file_the_notebook_lacks_is_refused(db, tmp_path):
    f = tmp_path / "run.json"
    f.write_text(json.dumps({**RUN, "attachments": [_fake_record(b"spectrum that never came")]}), encoding="utf-8")
    res = _cli(db, "add", str(f))
    assert res.exit_code == 2 and "not in this notebook's attachment store" in res.output
    assert "Traceback" not in res.output
    with Notebook.open(db) as nb:
        assert nb.count_runs() == 0 and verify(nb).ok


def test_a_jsonl_import_with_a_record_but_no_file_writes_nothing(db, tmp_path):
    f = tmp_path / "runs.jsonl"
    lines = [dict(RUN, title="first, fine"), {**RUN, "title": "second", "attachments": [_fake_record(b"x" * 10)]}]
    f.write_text("".join(json.dumps(x) + "\n" for x in lines), encoding="utf-8")
    res = _cli(db, "import", str(f))
    assert res.exit_code == 2 and "1H.fid" in res.output and "nothing was saved" in res.output
    with Notebook.open(db) as nb:
        assert nb.count_runs() == 0  # all or nothing: the good first line is not kept either
        assert verify(nb).ok


def test_an_edit_cannot_add_a_record_but_an_old_damaged_file_does_not_block_edits(db, tmp_path):
    spectrum = tmp_path / "13C.txt"
    spectrum.write_bytes(b"fictional 13C test bytes\n" * 50)
    f = tmp_path / "run.json"
    f.write_text(json.dumps(RUN), encoding="utf-8")
    assert _cli(db, "add", str(f)).exit_code == 0
    assert _cli(db, "attach", "TB-0001", str(spectrum)).exit_code == 0
    with Notebook.open(db) as nb:
        stored = nb.get_run("TB-0001").to_json_dict()
    forged = {**stored, "attachments": [*stored["attachments"], _fake_record(b"never attached", "19F.fid")]}
    f.write_text(json.dumps(forged), encoding="utf-8")
    res = _cli(db, "update", "TB-0001", str(f), "--reason", "add the 19F spectrum")
    assert res.exit_code == 2 and "19F.fid" in res.output
    # the file attached earlier goes missing: verify's to report, but a title fix still saves
    sha = hashlib.sha256(spectrum.read_bytes()).hexdigest()
    blob = attachments.blob_path(attachments.store_dir(db), sha)
    os.chmod(blob, 0o644)
    blob.unlink()
    f.write_text(json.dumps({**stored, "title": "furan trap, corrected"}), encoding="utf-8")
    assert _cli(db, "update", "TB-0001", str(f), "--reason", "title typo").exit_code == 0


def test_records_whose_files_are_in_the_store_import_fine(db, tmp_path):
    spectrum = tmp_path / "1H.txt"
    spectrum.write_bytes(b"fictional 1H test bytes\n" * 20)
    f = tmp_path / "run.json"
    f.write_text(json.dumps(RUN), encoding="utf-8")
    assert _cli(db, "add", str(f)).exit_code == 0
    assert _cli(db, "attach", "TB-0001", str(spectrum)).exit_code == 0
    exported = tmp_path / "out.jsonl"
    assert _cli(db, "export", "-o", str(exported)).exit_code == 0
    res = _cli(db, "import", str(exported), "--json")  # the same notebook holds the file
    assert res.exit_code == 0, res.output
    with Notebook.open(db) as nb:
        assert nb.count_runs() == 2 and verify(nb).ok


def test_export_streams_a_large_file_and_checks_its_hash(db, tmp_path):
    big = tmp_path / "raw-2d.ser"
    chunk = hashlib.sha256(b"seed").digest() * 32768  # 1 MiB of non-repeating-looking bytes
    with big.open("wb") as fh:
        for i in range(24):
            fh.write(bytes([i]) + chunk[1:])
    f = tmp_path / "run.json"
    f.write_text(json.dumps(RUN), encoding="utf-8")
    assert _cli(db, "add", str(f)).exit_code == 0
    with Notebook.open(db) as nb:
        attachments.attach(nb, "TB-0001", big, author="A. Trial")
        tracemalloc.start()
        out = attachments.export_file(nb, "TB-0001", "raw-2d.ser", tmp_path / "copy.ser")
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
    # common practice, no source: a streamed copy holds about one chunk (1 MiB), never the 24 MiB file
    assert peak < 8 * 2**20
    assert hashlib.sha256(out.read_bytes()).hexdigest() == hashlib.sha256(big.read_bytes()).hexdigest()


def test_a_damaged_file_is_not_exported_and_leaves_nothing_behind(db, tmp_path):
    spectrum = tmp_path / "1H.txt"
    spectrum.write_bytes(b"fictional 1H test bytes\n" * 20)
    f = tmp_path / "run.json"
    f.write_text(json.dumps(RUN), encoding="utf-8")
    assert _cli(db, "add", str(f)).exit_code == 0
    assert _cli(db, "attach", "TB-0001", str(spectrum)).exit_code == 0
    blob = attachments.blob_path(attachments.store_dir(db), hashlib.sha256(spectrum.read_bytes()).hexdigest())
    os.chmod(blob, 0o644)
    blob.write_bytes(b"fictional 1H test bytes\n" * 19 + b"fictional 1H TEST bytes\n")  # same size, one byte changed
    res = _cli(db, "attachment", "TB-0001", "1H.txt", "-o", str(tmp_path / "copy.txt"))
    assert res.exit_code == 2 and "no longer match" in res.output
    assert not (tmp_path / "copy.txt").exists()
    with Notebook.open(db) as nb, pytest.raises(TrapbookError):
        attachments.export_file(nb, "TB-0001", "1H.txt", tmp_path / "again.txt")
    assert not (tmp_path / "again.txt").exists()
