"""Edits made to a notebook file outside Trapbook (plain SQL, as anyone with the file can do):
`verify` must catch every one, except the documented limit, which is shown not to be caught.

Each case copies one freshly built notebook, makes one kind of edit with sqlite3, and asks
`verify` for a problem of the expected code. The expected codes are the ones the README
documents for each kind of record (`integrity.CODES`).
"""

from __future__ import annotations

import copy
import json
import shutil
import sqlite3

import pytest

from trapbook import integrity
from trapbook.settings import update_check_settings
from trapbook.store import Notebook
from trapbook.store.chain import version_hash

#: One intermediate, one result with a yield, one run whose trap goes in after fluoride.
_PRODUCT = {"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"}


def _with_yield(run: dict) -> dict:
    run = copy.deepcopy(run)
    run["title"] = "furan trap with a weighed adduct"
    run["lines"].append(dict(_PRODUCT))
    run["outcome"] = {"products": [{"product": "adduct", "isolated_mass": "20.0 mg"}]}
    return run


def _trap_late(run: dict) -> dict:
    run = copy.deepcopy(run)
    run["title"] = "trap added after the fluoride"
    run["steps"] = [
        {"add": ["aryne precursor A", "THF"], "temperature": "-78 °C"},
        {"add": ["TBAF 1.0 M in THF"], "temperature": "-78 °C"},
        {"add": ["furan"], "temperature": "-78 °C"},
        {"hold": "2 h", "temperature": "23 °C"},
    ]
    return run


_CACHE_KEY = "TEST-KEY|C1=CC=CC=C1|accurate|test-engine"


@pytest.fixture(scope="module")
def template(tmp_path_factory):
    from samples import MINIMAL_RUN

    path = tmp_path_factory.mktemp("tamper") / "template.sqlite"
    with Notebook.create(path) as nb:
        nb.add_run(MINIMAL_RUN, author="A. Trial")  # TB-0001
        y = nb.add_run(_with_yield(MINIMAL_RUN), author="A. Trial")  # TB-0002
        nb.add_run(_trap_late(MINIMAL_RUN), author="B. Trial")  # TB-0003
        edited = nb.get_run(y.run_id).model_copy(update={"notes": "weighed again after drying"})
        nb.save_run(edited, 1, author="A. Trial", reason="second weighing")
        nb.add_screen(
            {"name": "trap screen", "factors": {"trap": ["furan", "2-methylfuran"]}, "runs": ["TB-0001"]}, author="A. Trial"
        )
        update_check_settings(nb, ["trap_min_equiv=5"], author="A. Trial", reason="our lab's minimum")
        nb.cache_put(_CACHE_KEY, "C1=CC=CC=C1", "accurate", "test-engine", {"tier": "accurate", "strain_kcal_mol": 26.7})
    rep = integrity.verify_path(path)
    assert rep.ok, rep.to_dict()
    with sqlite3.connect(path) as conn:
        row = conn.execute("SELECT yield_pct, worst FROM run_index WHERE run_id = 'TB-0003'").fetchone()
    assert row[1] == "stop:trap-late"  # the finding the forgery below drops
    return path


def _copy(template, tmp_path):
    dest = tmp_path / "nb.sqlite"
    shutil.copyfile(template, dest)
    return dest


# --- the edits ------------------------------------------------------------------------------


def edit_version_data(c):
    c.execute("UPDATE versions SET data = replace(data, 'furan', 'furax') WHERE run_id = 'TB-0001' AND version = 1")


def edit_version_hash(c):
    c.execute(
        "UPDATE versions SET hash = (CASE WHEN substr(hash, 1, 1) = '0' THEN '1' ELSE '0' END) || substr(hash, 2) "
        "WHERE run_id = 'TB-0002' AND version = 1"
    )


def edit_version_author(c):
    c.execute("UPDATE versions SET author = 'someone else' WHERE run_id = 'TB-0002' AND version = 2")


def edit_current_data_and_last_version(c):
    """Both copies of the data changed alike: the hash no longer matches."""
    for table, key in (("runs", "id"), ("versions", "run_id")):
        c.execute(f"UPDATE {table} SET data = replace(data, '20.0', '90.0') WHERE {key} = 'TB-0002'")


def remove_newest_version_and_roll_back(c):
    v1 = c.execute("SELECT hash, data, time FROM versions WHERE run_id = 'TB-0002' AND version = 1").fetchone()
    c.execute("DELETE FROM versions WHERE run_id = 'TB-0002' AND version = 2")
    c.execute("UPDATE runs SET version = 1, hash = ?, data = ?, updated = ? WHERE id = 'TB-0002'", v1)
    c.execute("UPDATE search_state SET hash = ? WHERE run_id = 'TB-0002'", (v1[0],))
    n = c.execute("SELECT n FROM search_state WHERE run_id = 'TB-0002'").fetchone()[0]
    c.execute("UPDATE run_text SET notes = '' WHERE rowid = ?", (n,))


def delete_whole_run(c):
    n = c.execute("SELECT n FROM search_state WHERE run_id = 'TB-0003'").fetchone()[0]
    c.execute("DELETE FROM run_text WHERE rowid = ?", (n,))
    for table, key in (
        ("runs", "id"),
        ("versions", "run_id"),
        ("run_index", "run_id"),
        ("run_structures", "run_id"),
        ("search_state", "run_id"),
    ):
        c.execute(f"DELETE FROM {table} WHERE {key} = 'TB-0003'")


def edit_chemist(c):
    c.execute("UPDATE runs SET chemist = 'Someone Else' WHERE id = 'TB-0001'")


def edit_date(c):
    c.execute("UPDATE runs SET date = '1999-01-01' WHERE id = 'TB-0001'")


def edit_withdrawn(c):
    c.execute("UPDATE runs SET withdrawn = 1 WHERE id = 'TB-0003'")  # hides the run from `list`


def edit_title_column(c):
    c.execute("UPDATE runs SET title = 'a nicer title' WHERE id = 'TB-0001'")


def forge_yield(c):
    c.execute("UPDATE run_index SET yield_pct = 99.0, yield_kind = 'isolated' WHERE run_id = 'TB-0002'")


def drop_stop_finding(c):
    c.execute("UPDATE run_index SET worst = NULL, findings = '[]' WHERE run_id = 'TB-0003'")


def edit_setting_value(c):
    c.execute("UPDATE settings SET value = replace(value, '5.0', '0.5') WHERE key = 'checks'")


def edit_setting_and_its_version(c):
    for table in ("settings", "setting_versions"):
        c.execute(f"UPDATE {table} SET value = replace(value, '5.0', '0.5') WHERE key = 'checks'")


def add_setting_row(c):
    c.execute("INSERT INTO settings (key, value) VALUES ('email', '\"someone@example.org\"')")


def edit_screen_current(c):
    c.execute("UPDATE screens SET data = replace(data, '2-methylfuran', 'anthracene')")


def edit_screen_everywhere(c):
    for table in ("screens", "screen_versions"):
        c.execute(f"UPDATE {table} SET data = replace(data, '2-methylfuran', 'anthracene')")


def edit_screen_name_column(c):
    c.execute("UPDATE screens SET name = 'another screen'")


def edit_screen_time(c):
    c.execute("UPDATE screens SET updated = '2001-01-01T00:00:00+00:00'")


def delete_structure_links(c):
    c.execute("DELETE FROM run_structures WHERE run_id = 'TB-0002'")


def delete_structure_rows(c):
    c.execute("DELETE FROM structures WHERE id = (SELECT min(id) FROM structures)")


def edit_structure_fingerprint(c):
    c.execute("UPDATE structures SET morgan = zeroblob(length(morgan)) WHERE id = (SELECT max(id) FROM structures)")


def edit_strain_cache(c):
    c.execute("UPDATE strain_cache SET result = replace(result, '26.7', '5.0') WHERE key = ?", (_CACHE_KEY,))


def edit_full_text(c):
    c.execute("UPDATE run_text SET title = 'nothing to see' WHERE run_id = 'TB-0001'")


def delete_full_text(c):
    c.execute("DELETE FROM run_text WHERE run_id = 'TB-0001'")


def delete_summary_row(c):
    c.execute("DELETE FROM run_index WHERE run_id = 'TB-0001'")


def delete_newest_setting_version(c):
    c.execute("DELETE FROM setting_versions WHERE key = 'checks'")
    c.execute("DELETE FROM settings WHERE key = 'checks'")


def edit_status(c):
    c.execute("UPDATE runs SET status = 'failed' WHERE id = 'TB-0002'")


def edit_setting_version_author(c):
    c.execute("UPDATE setting_versions SET author = 'someone else'")


def delete_a_middle_save_entry(c):
    c.execute("DELETE FROM saves WHERE n = 2")


def insert_an_extra_version(c):
    """A version added by hand at the end of a chain, linked correctly but hashed with a guess."""
    last = c.execute("SELECT hash, data FROM versions WHERE run_id = 'TB-0001' AND version = 1").fetchone()
    c.execute(
        "INSERT INTO versions (run_id, version, author, time, reason, action, prev_hash, hash, data) "
        "VALUES ('TB-0001', 2, 'x', '2026-01-01T00:00:00+00:00', 'x', 'edit', ?, ?, ?)",
        (last[0], "f" * 64, last[1]),
    )
    c.execute("UPDATE runs SET version = 2, hash = ? WHERE id = 'TB-0001'", ("f" * 64,))


def edit_head(c):
    c.execute("UPDATE head SET count = count - 1")


def delete_newest_save_entry(c):
    c.execute("DELETE FROM saves WHERE n = (SELECT max(n) FROM saves)")


#: (edit, a code verify must report). Source: docs/sources.md, "Store, verify and faults": every
#: kind of edit the README's "Sharing and keeping records safe" section says verify catches.
EDITS = [
    (edit_version_data, "hash-mismatch"),
    (edit_version_hash, "hash-mismatch"),
    (edit_version_author, "hash-mismatch"),
    (edit_current_data_and_last_version, "hash-mismatch"),
    (remove_newest_version_and_roll_back, "log-missing-version"),
    (delete_whole_run, "log-missing-version"),
    (edit_chemist, "current-mismatch"),
    (edit_date, "current-mismatch"),
    (edit_withdrawn, "current-mismatch"),
    (edit_title_column, "current-mismatch"),
    (forge_yield, "index-mismatch"),
    (drop_stop_finding, "index-mismatch"),
    (delete_summary_row, "index-mismatch"),
    (edit_setting_value, "setting-mismatch"),
    (edit_setting_and_its_version, "hash-mismatch"),
    (add_setting_row, "setting-mismatch"),
    (delete_newest_setting_version, "log-missing-version"),
    (edit_screen_current, "screen-mismatch"),
    (edit_screen_everywhere, "hash-mismatch"),
    (edit_screen_name_column, "screen-mismatch"),
    (edit_screen_time, "screen-mismatch"),
    (delete_structure_links, "structure-mismatch"),
    (delete_structure_rows, "structure-mismatch"),
    (edit_structure_fingerprint, "structure-mismatch"),
    (edit_strain_cache, "cache-mismatch"),
    (edit_full_text, "text-mismatch"),
    (delete_full_text, "text-mismatch"),
    (edit_status, "current-mismatch"),
    (edit_setting_version_author, "hash-mismatch"),
    (delete_a_middle_save_entry, "log-broken"),
    (insert_an_extra_version, "unlogged-version"),
    (edit_head, "head-mismatch"),
    (delete_newest_save_entry, "head-mismatch"),
]


def _tamper(path, edit) -> None:
    conn = sqlite3.connect(path)
    try:
        edit(conn)
        conn.commit()
    finally:
        conn.close()


@pytest.mark.parametrize("edit, code", EDITS, ids=[e.__name__ for e, _ in EDITS])
def test_every_edit_is_caught(template, tmp_path, edit, code):
    path = _copy(template, tmp_path)
    _tamper(path, edit)
    rep = integrity.verify_path(path)
    assert not rep.ok, f"{edit.__name__} was not caught"
    assert code in {p.code for p in rep.problems}, rep.to_dict()["problems"]
    assert all(p.code in integrity.CODES for p in rep.problems)


def test_an_edited_cache_entry_is_never_served(template, tmp_path):
    path = _copy(template, tmp_path)
    with Notebook.open(path) as nb:
        assert nb.cache_get(_CACHE_KEY)["strain_kcal_mol"] == 26.7
    _tamper(path, edit_strain_cache)
    with Notebook.open(path) as nb:
        assert nb.cache_get(_CACHE_KEY) is None  # a miss: the strain is computed again when asked for
        nb.cache_put(_CACHE_KEY, "C1=CC=CC=C1", "accurate", "test-engine", {"tier": "accurate", "strain_kcal_mol": 26.7})
        assert nb.cache_get(_CACHE_KEY)["strain_kcal_mol"] == 26.7
    assert integrity.verify_path(path).ok


def test_settings_changes_are_versions_with_author_and_reason(template, tmp_path):
    path = _copy(template, tmp_path)
    with Notebook.open(path) as nb:
        update_check_settings(nb, ["trap_min_equiv=8"], author="C. Trial", reason="stricter after a failed run")
        history = nb.setting_history("checks")
    assert [h["author"] for h in history] == ["A. Trial", "C. Trial"]
    assert history[-1]["reason"] == "stricter after a failed run" and history[-1]["value"]["trap_min_equiv"] == 8
    assert integrity.verify_path(path).ok


def test_the_documented_limit_a_rewrite_with_the_tools_own_code_is_not_caught(template, tmp_path):
    """Rewriting a version and everything after it, hashes and log included, with Trapbook's own
    hash functions: nothing inside the file can tell. The README says so; a backup can."""
    from trapbook.store import chain

    path = _copy(template, tmp_path)
    conn = sqlite3.connect(path)
    row = conn.execute(
        "SELECT run_id, version, author, time, reason, action, prev_hash, data FROM versions WHERE run_id = 'TB-0001'"
    ).fetchone()
    data = row[7].replace("Furan trap", "Furan trap (rewritten)")
    h = version_hash(*row[:7], data)
    conn.execute("UPDATE versions SET data = ?, hash = ? WHERE run_id = 'TB-0001'", (data, h))
    title = json.loads(data)["title"]
    conn.execute("UPDATE runs SET data = ?, hash = ?, title = ? WHERE id = 'TB-0001'", (data, h, title))
    saves = conn.execute("SELECT n, kind, record, version, item_hash FROM saves ORDER BY n").fetchall()
    prev = None
    for n, kind, record, version, item in saves:
        item = h if (kind, record) == ("run", "TB-0001") else item
        new = chain.save_hash(n, kind, record, version, item, prev)
        conn.execute("UPDATE saves SET item_hash = ?, prev = ?, hash = ? WHERE n = ?", (item, prev, new, n))
        prev = new
    conn.execute("UPDATE head SET hash = ?", (prev,))
    conn.execute("UPDATE search_state SET hash = ? WHERE run_id = 'TB-0001'", (h,))
    conn.commit()
    conn.close()
    with Notebook.open(path) as nb:  # the derived rows are rebuilt by the tool too
        nb.reindex(["TB-0001"])
    assert integrity.verify_path(path).ok  # the limit: caught only by comparing with a backup or a noted head hash


def test_verify_reports_the_head_so_it_can_be_noted_elsewhere(template):
    rep = integrity.verify_path(template).to_dict()
    assert rep["head"]["count"] == rep["checked"]["saves"] >= 6
    assert len(rep["head"]["hash"]) == 64


def test_verify_only_reads(template, tmp_path):
    import hashlib

    path = _copy(template, tmp_path)
    _tamper(path, forge_yield)
    before = hashlib.sha256(path.read_bytes()).hexdigest()
    assert not integrity.verify_path(path).ok
    assert hashlib.sha256(path.read_bytes()).hexdigest() == before  # nothing repaired or rewritten behind the user's back


def test_the_documented_limit_cutting_the_newest_saves_off_the_log_is_not_caught(template, tmp_path):
    """The newest save removed everywhere at once (version, log entry, head set back, current
    row rolled back and re-indexed): the file is then exactly what it was one save earlier."""
    path = _copy(template, tmp_path)
    conn = sqlite3.connect(path)
    n, kind, record, version = conn.execute("SELECT n, kind, record, version FROM saves ORDER BY n DESC LIMIT 1").fetchone()
    assert (kind, record) == ("setting", "checks")  # the newest save in the template
    conn.execute("DELETE FROM setting_versions WHERE key = ? AND version = ?", (record, version))
    conn.execute("DELETE FROM settings WHERE key = ?", (record,))
    conn.execute("DELETE FROM saves WHERE n = ?", (n,))
    prev = conn.execute("SELECT n, hash FROM saves ORDER BY n DESC LIMIT 1").fetchone()
    conn.execute("UPDATE head SET count = ?, hash = ?", prev)
    conn.commit()
    conn.close()
    with Notebook.open(path) as nb:
        nb.reindex()  # summaries judged by the default thresholds again
    assert integrity.verify_path(path).ok  # the limit: only a backup or a head noted elsewhere shows it


def test_a_head_noted_elsewhere_catches_the_rewrite_the_file_alone_cannot(template, tmp_path):
    rep = integrity.verify_path(template)
    noted = f"{rep.head['count']}:{rep.head['hash']}"
    path = _copy(template, tmp_path)
    with Notebook.open(path) as nb:  # later honest saves keep the noted head in the log
        nb.add_run(nb.get_run("TB-0001").model_dump(mode="json", exclude={"id"}), author="A. Trial")
    assert integrity.verify_path(path, noted_head=noted).ok
    (tmp_path / "cut").mkdir()
    test_the_documented_limit_cutting_the_newest_saves_off_the_log_is_not_caught(template, tmp_path / "cut")
    cut = tmp_path / "cut" / "nb.sqlite"
    assert integrity.verify_path(cut).ok
    codes = {p.code for p in integrity.verify_path(cut, noted_head=noted).problems}
    assert codes == {"head-mismatch"}


def test_a_new_alignment_result_rejudges_the_runs_so_verify_stays_clean(tmp_path, monkeypatch):
    """A cached result that changes a run's findings must reach its stored summary at once,
    or the list would show stale findings (and verify would rightly say so)."""
    from samples import MINIMAL_RUN
    from trapbook.chemistry import alignment
    from trapbook.strain_link import get_alignment, run_temperature_c

    # a stand-in result in the engine's own shape: the check reads only the verdict and the angle
    monkeypatch.setattr(
        alignment,
        "precursor_alignment",
        lambda smiles, temperature_c=25.0: {"verdict": "poor alignment", "weighted_dihedral_deg": 95.0},
    )
    path = tmp_path / "nb.sqlite"
    with Notebook.create(path) as nb:
        rid = nb.add_run(MINIMAL_RUN, author="A. Trial").run_id
        # the checks read the alignment at the temperature the run releases its intermediate
        get_alignment(nb, MINIMAL_RUN["lines"][0]["smiles"], temperature_c=run_temperature_c(nb.get_run(rid)))
        codes = json.loads(nb.conn.execute("SELECT findings FROM run_index WHERE run_id = ?", (rid,)).fetchone()[0])
    assert "precursor-misaligned" in codes
    assert integrity.verify_path(path).ok
