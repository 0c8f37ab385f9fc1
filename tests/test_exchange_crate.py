"""RO-Crate export and import: read back by the rocrate library itself, lossless, and safe to unpack."""

from __future__ import annotations

import json
import os
import stat
import zipfile

import pytest
from rocrate.rocrate import ROCrate

from trapbook import attachments
from trapbook.errors import ExchangeError
from trapbook.exchange import export_runs, import_path
from trapbook.store import Notebook


@pytest.fixture
def demo_copy(demo_notebook_path, tmp_path):
    """A writable copy of the demo notebook with one attached file."""
    from trapbook.backup import backup

    dest = tmp_path / "demo-copy.sqlite"
    backup(demo_notebook_path, dest)
    nb = Notebook.open(dest)
    spec = tmp_path / "TB-0003 1H.txt"
    spec.write_bytes(b"# 1H NMR (CDCl3, 400 MHz) fictional test bytes\n" + bytes(range(256)))
    attachments.attach(nb, "TB-0003", spec, author="test")
    yield nb
    nb.close()


@pytest.mark.parametrize("suffix", [".zip", ""])
def test_round_trip_gives_identical_runs(demo_copy, tmp_path, suffix):
    out = tmp_path / f"crate{suffix}"
    export_runs(demo_copy, "rocrate", output=str(out))
    target = Notebook.create(tmp_path / f"empty{suffix or '-dir'}.sqlite")
    report = import_path(target, out)
    assert report["format"] == "rocrate"
    before = [r.to_json_dict() for r in demo_copy.iter_runs()]
    after = [r.to_json_dict() for r in target.iter_runs()]
    assert after == before  # Run.to_json_dict() identical, ids kept
    assert [s.model_dump() for s in target.list_screens()] == [s.model_dump() for s in demo_copy.list_screens()]
    att = target.get_run("TB-0003").attachments[0]
    data = attachments.read_verified(attachments.store_dir(target), att.sha256, att.size)
    assert data.endswith(bytes(range(256)))
    from trapbook.integrity import verify

    assert verify(target).ok
    target.close()


def test_the_rocrate_library_reads_our_crate(demo_copy, tmp_path):
    out = tmp_path / "c.zip"
    export_runs(demo_copy, "rocrate", screen="SC-0001", output=str(out))
    # Source: the rocrate package's own reader (RO-Crate 1.x metadata, JSON-LD)
    crate = ROCrate(str(out))
    ids = {e.id for e in crate.data_entities}
    assert {f"runs/TB-00{n}.json" for n in range(13, 19)} <= ids
    assert "ord/dataset.pbtxt" in ids and "screens/SC-0001.json" in ids
    with zipfile.ZipFile(out) as zf:
        meta = json.loads(zf.read("ro-crate-metadata.json"))
        run = json.loads(zf.read("runs/TB-0013.json"))
    assert meta["@context"].startswith("https://w3id.org/ro/crate/1.")
    assert run["id"] == "TB-0013"


def test_export_refuses_to_overwrite(demo_copy, tmp_path):
    out = tmp_path / "c.zip"
    out.write_bytes(b"keep me")
    with pytest.raises(ExchangeError):
        export_runs(demo_copy, "rocrate", output=str(out))
    assert out.read_bytes() == b"keep me"


def _zip(path, members: dict[str, bytes], links: dict[str, str] | None = None):
    with zipfile.ZipFile(path, "w") as zf:
        for name, data in members.items():
            zf.writestr(zipfile.ZipInfo(name), data)
        for name, target in (links or {}).items():
            info = zipfile.ZipInfo(name)
            info.external_attr = (stat.S_IFLNK | 0o777) << 16
            zf.writestr(info, target)


@pytest.mark.parametrize("evil", ["../escaped.txt", "runs/../../escaped.txt", "/tmp/escaped-abs.txt", "..\\escaped.txt"])
def test_archive_members_cannot_escape(notebook, tmp_path, evil):
    archive = tmp_path / "sub" / "evil.zip"
    archive.parent.mkdir()
    _zip(archive, {"ro-crate-metadata.json": b"{}", evil: b"owned"})
    with pytest.raises(ExchangeError) as exc:
        import_path(notebook, archive)
    assert "outside" in exc.value.message or "absolute" in exc.value.message
    assert not (tmp_path / "escaped.txt").exists()
    assert not os.path.exists("/tmp/escaped-abs.txt")
    assert notebook.count_runs() == 0


def test_symbolic_links_in_archives_are_refused(notebook, tmp_path):
    archive = tmp_path / "link.zip"
    _zip(archive, {"ro-crate-metadata.json": b"{}"}, links={"runs/TB-0001.json": "/etc/passwd"})
    with pytest.raises(ExchangeError) as exc:
        import_path(notebook, archive)
    assert "link" in exc.value.message
    assert notebook.count_runs() == 0


def test_metadata_pointing_outside_a_folder_crate_is_refused(notebook, tmp_path, minimal_run):
    outside = tmp_path / "secret.json"
    outside.write_text(json.dumps(minimal_run), encoding="utf-8")
    crate = tmp_path / "crate"
    crate.mkdir()
    meta = {
        "@context": "https://w3id.org/ro/crate/1.1/context",
        "@graph": [
            {"@id": "ro-crate-metadata.json", "@type": "CreativeWork", "about": {"@id": "./"}},
            {"@id": "./", "@type": "Dataset", "hasPart": [{"@id": "runs/../../secret.json"}]},
            {"@id": "runs/../../secret.json", "@type": "File"},
        ],
    }
    (crate / "ro-crate-metadata.json").write_text(json.dumps(meta), encoding="utf-8")
    with pytest.raises(ExchangeError):
        import_path(notebook, crate)
    assert notebook.count_runs() == 0


def test_a_bad_record_in_a_crate_is_named_and_nothing_written(demo_copy, tmp_path):
    out = tmp_path / "crate"
    export_runs(demo_copy, "rocrate", output=str(out))
    rec = out / "runs" / "TB-0007.json"
    data = json.loads(rec.read_text(encoding="utf-8"))
    data["lines"][0]["amount"] = {"value": 1.0, "unit": "mL"}  # a volume where an amount belongs
    rec.write_text(json.dumps(data), encoding="utf-8")
    target = Notebook.create(tmp_path / "t.sqlite")
    with pytest.raises(ExchangeError) as exc:
        import_path(target, out)
    assert "runs/TB-0007.json" in exc.value.message and "amount" in exc.value.message
    assert target.count_runs() == 0 and target.list_screens() == []
    target.close()


def test_a_changed_attachment_in_a_crate_is_refused(demo_copy, tmp_path):
    out = tmp_path / "crate"
    export_runs(demo_copy, "rocrate", output=str(out))
    blob = next((out / "attachments").iterdir())
    os.chmod(blob, 0o644)
    blob.write_bytes(b"not the spectrum")
    target = Notebook.create(tmp_path / "t.sqlite")
    with pytest.raises(ExchangeError) as exc:
        import_path(target, out)
    assert "SHA-256" in exc.value.message
    assert target.count_runs() == 0
    target.close()


# --- version history ---------------------------------------------------------------------


def _history_rows(nb, run_id):
    return [(v.version, v.author, v.time, v.reason, v.action, v.hash, v.prev_hash) for v in nb.history(run_id)]


@pytest.fixture
def edited_copy(demo_copy):
    """The demo copy with a run edited twice by named chemists (TB-0003 has its attachment as v2)."""
    run = demo_copy.get_run("TB-0005")
    demo_copy.save_run(run.model_copy(update={"page": "p. 41"}), 1, author="A. Trial", reason="paper page added")
    demo_copy.save_run(run.model_copy(update={"page": "p. 42"}), 2, author="B. Other", reason="page number corrected")
    return demo_copy


def test_every_version_comes_back_with_author_time_reason_and_hash(edited_copy, tmp_path):
    out = tmp_path / "crate.zip"
    export_runs(edited_copy, "rocrate", output=str(out))
    target = Notebook.create(tmp_path / "t.sqlite")
    report = import_path(target, out)
    for rid in ("TB-0003", "TB-0005", "TB-0013"):
        assert _history_rows(target, rid) == _history_rows(edited_copy, rid)
    assert [v.reason for v in target.history("TB-0005")] == ["demo lab", "paper page added", "page number corrected"]
    # Source: the chain is re-checked by verify, which recomputes every SHA-256 with hashlib
    from trapbook.integrity import verify

    assert verify(target).ok
    assert report["versions"] == sum(len(edited_copy.history(r)) for r in report["imported"])
    target.close()


def _rewrite_zip(src, dest, member, change):
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dest, "w") as zout:
        for info in zin.infolist():
            data = zin.read(info)
            zout.writestr(info, change(data) if info.filename == member else data)


def test_a_changed_reason_in_the_history_is_refused_whole(edited_copy, tmp_path):
    out = tmp_path / "crate.zip"
    export_runs(edited_copy, "rocrate", output=str(out))
    forged = tmp_path / "forged.zip"
    _rewrite_zip(
        out, forged, "runs/TB-0005.history.jsonl", lambda b: b.replace(b"page number corrected", b"nothing changed, honest")
    )
    target = Notebook.create(tmp_path / "t.sqlite")
    with pytest.raises(ExchangeError) as exc:
        import_path(target, forged)
    assert "TB-0005" in exc.value.message and "SHA-256" in exc.value.message
    assert target.count_runs() == 0
    target.close()


def test_a_dropped_newest_version_is_refused(edited_copy, tmp_path):
    out = tmp_path / "crate.zip"
    export_runs(edited_copy, "rocrate", output=str(out))
    forged = tmp_path / "forged.zip"
    _rewrite_zip(out, forged, "runs/TB-0005.history.jsonl", lambda b: b"".join(b.splitlines(keepends=True)[:-1]))
    target = Notebook.create(tmp_path / "t.sqlite")
    with pytest.raises(ExchangeError) as exc:
        import_path(target, forged)
    assert "disagree" in exc.value.message
    assert target.count_runs() == 0
    target.close()


def test_a_taken_id_gets_a_new_one_with_its_whole_history(edited_copy, tmp_path):
    out = tmp_path / "crate.zip"
    export_runs(edited_copy, "rocrate", screen="SC-0001", output=str(out))
    target = Notebook.create(tmp_path / "t.sqlite")
    import_path(target, out)
    again = import_path(target, out)  # every id is taken now
    assert len(again["imported"]) == len(set(again["imported"]))
    first_new = again["imported"][0]
    assert first_new not in {f"TB-00{n}" for n in range(13, 19)}
    old = [(v.author, v.time, v.reason, v.action) for v in target.history("TB-0013")]
    assert [(v.author, v.time, v.reason, v.action) for v in target.history(first_new)] == old
    assert target.get_run(first_new).id == first_new
    from trapbook.integrity import verify

    assert verify(target).ok
    target.close()


def test_a_record_whose_file_is_not_in_the_crate_is_refused(demo_copy, tmp_path):
    out = tmp_path / "crate.zip"
    export_runs(demo_copy, "rocrate", output=str(out))
    stripped = tmp_path / "stripped.zip"
    with zipfile.ZipFile(out) as zin, zipfile.ZipFile(stripped, "w") as zout:
        for info in zin.infolist():
            if not info.filename.startswith("attachments/"):
                zout.writestr(info, zin.read(info))
    target = Notebook.create(tmp_path / "t.sqlite")
    with pytest.raises(ExchangeError) as exc:
        import_path(target, stripped)
    assert "not in the crate" in exc.value.message
    assert target.count_runs() == 0
    target.close()


def _forge(run_id, versions):
    """A history whose hashes are recomputed after the change: only the content rules can refuse it."""
    from trapbook.store.chain import version_hash

    prev = None
    for v in versions:
        v["prev_hash"] = prev
        v["hash"] = version_hash(run_id, v["version"], v["author"], v["time"], v["reason"], v["action"], prev, v["data"])
        prev = v["hash"]
    return versions


@pytest.mark.parametrize(
    "case",
    [
        "gap",
        "escape-in-author",
        "newline-in-reason",
        "path-id",
        "unknown-action",
        "not-a-time",
        "not-canonical",
        "other-run",
        "empty",
    ],
)
def test_crafted_histories_are_refused_with_words(demo_copy, tmp_path, case):
    from trapbook.errors import RecordError

    rows = [
        dict(zip(["version", "author", "time", "reason", "action", "prev_hash", "hash", "data"], r))
        for r in demo_copy.conn.execute(
            "SELECT version, author, time, reason, action, prev_hash, hash, data FROM versions "
            "WHERE run_id = 'TB-0003' ORDER BY version"
        )
    ]
    run_id = "TB-0003"
    if case == "gap":
        rows[1]["version"] = 3
    elif case == "escape-in-author":
        rows[1]["author"] = "A. Trial\x1b]52;c;b3duZWQ=\x07"
    elif case == "newline-in-reason":
        rows[1]["reason"] = "fine\nv9  2020-01-01  admin  edit: forged row"
    elif case == "path-id":
        run_id = "../../x"
    elif case == "unknown-action":
        rows[1]["action"] = "purge"
    elif case == "not-a-time":
        rows[1]["time"] = "yesterday"
    elif case == "not-canonical":
        rows[1]["data"] = rows[1]["data"].replace('{"', '{ "', 1)
    elif case == "other-run":
        run_id = "TB-0004"
    elif case == "empty":
        rows = []
    rows = _forge(run_id, rows)
    target = Notebook.create(tmp_path / "t.sqlite")
    with pytest.raises(RecordError) as exc:
        target.import_history(run_id, rows)
    assert exc.value.message and "nothing was imported" in (exc.value.hint or "")
    assert target.count_runs() == 0
    assert target.conn.execute("SELECT count(*) FROM versions").fetchone()[0] == 0
    target.close()
