"""The Python API, exporter plugins through entry points, and the CLI of the exchange commands."""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap

import pytest
from click.testing import CliRunner

import trapbook
from trapbook.cli import main
from trapbook.errors import ExchangeError, StaleVersionError
from trapbook.exchange import registry


def test_top_level_api(tmp_path, minimal_run):
    nb = trapbook.open_notebook(tmp_path / "api.sqlite", create=True)
    res = trapbook.add_run(nb, minimal_run, author="ada")
    run = trapbook.get_run(nb, res.run_id)
    table = trapbook.compute_amounts(run)
    # Source: docs/sources.md, equiv_i = n_i / n_limiting: 3.0 equiv TBAF on 0.200 mmol is 0.600 mmol,
    # dispensed from a 1.0 M solution as 600 µL (n = c V)
    assert table.line("TBAF 1.0 M in THF").mmol == pytest.approx(0.6)
    assert table.line("TBAF 1.0 M in THF").volume_ul == pytest.approx(600.0)
    findings = trapbook.run_checks(run, nb)
    assert all(f.severity in ("stop", "warn", "note") for f in findings)
    assert trapbook.verify(nb)["ok"] is True
    edited = run.to_json_dict()
    edited["title"] = "edited"
    trapbook.save_run(nb, edited, 1, reason="retitle")
    with pytest.raises(StaleVersionError):
        trapbook.save_run(nb, edited, 1, reason="again from v1")
    nb.close()


def test_lazy_top_level_names_are_the_api_module_s_names():
    # the lazy table in trapbook/__init__.py is written out (importing api would defeat the
    # laziness), so it is held to api.__all__ here: a name added to one must reach the other
    import trapbook
    from trapbook import api

    assert set(trapbook._API.values()) == set(api.__all__)
    assert all(callable(getattr(trapbook, name)) for name in trapbook._API)


def test_import_trapbook_is_fast_and_lazy():
    code = "import sys, trapbook; print('trapbook.api' in sys.modules, 'pydantic' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    assert out == ["False", "False"]  # nothing heavy until an API name is used


def test_exporter_plugin_through_entry_points(tmp_path, monkeypatch, demo_notebook):
    # A fake installed distribution offering the format "titles" in the trapbook.exporters group.
    site = tmp_path / "site"
    (site / "tb_titles_plugin-1.0.dist-info").mkdir(parents=True)
    (site / "tb_titles_plugin-1.0.dist-info" / "METADATA").write_text(
        "Metadata-Version: 2.1\nName: tb-titles-plugin\nVersion: 1.0\n"
    )
    (site / "tb_titles_plugin-1.0.dist-info" / "entry_points.txt").write_text(
        "[trapbook.exporters]\ntitles = tb_titles_plugin:Exporter\n"
    )
    (site / "tb_titles_plugin.py").write_text(
        textwrap.dedent("""
        class Exporter:
            suffixes = (".titles",)
            @staticmethod
            def export(nb, runs, screen=None, output=None):
                return "".join(r.title + "\\n" for r in runs)
    """)
    )
    monkeypatch.syspath_prepend(str(site))
    assert "titles" in registry.known_formats()
    text = trapbook.export(demo_notebook, "titles", screen="SC-0001")
    assert text.splitlines()[0].startswith("Screen 331")
    assert len(text.splitlines()) == 6
    with pytest.raises(ExchangeError):
        trapbook.export(demo_notebook, "no-such-format")


def test_cli_attach_verify_backup_restore(tmp_path, demo_notebook_path):
    runner = CliRunner()
    db = tmp_path / "nb.sqlite"
    r = runner.invoke(main, ["--db", str(db), "backup", str(tmp_path / "b0.sqlite")])  # no notebook yet
    assert r.exit_code == 2 and "no notebook" in r.output
    from trapbook.backup import backup

    backup(demo_notebook_path, db)
    spec = tmp_path / "photo.jpg"
    spec.write_bytes(b"\xff\xd8\xff\xe0fake jpeg")
    r = runner.invoke(main, ["--db", str(db), "attach", "TB-0002", str(spec), "--json"])
    assert r.exit_code == 0, r.output
    att = json.loads(r.output)
    assert att["version"] == 2 and att["media_type"] == "image/jpeg" and att["size"] == spec.stat().st_size
    r = runner.invoke(main, ["--db", str(db), "verify", "--json"])
    assert r.exit_code == 0 and json.loads(r.output)["ok"] is True
    r = runner.invoke(main, ["--db", str(db), "backup", str(tmp_path / "b1.sqlite"), "--json"])
    assert r.exit_code == 0 and json.loads(r.output)["verified"] is True
    # damage the live notebook, see verify fail, restore the backup, see it pass
    import sqlite3

    con = sqlite3.connect(db)
    con.execute("UPDATE versions SET reason = 'quietly changed' WHERE run_id = 'TB-0002' AND version = 1")
    con.commit()
    con.close()
    r = runner.invoke(main, ["--db", str(db), "verify", "--json"])
    assert r.exit_code == 1
    assert any(p["record"] == "TB-0002 v1" and p["code"] == "hash-mismatch" for p in json.loads(r.output)["problems"])
    r = runner.invoke(main, ["--db", str(db), "restore", str(tmp_path / "b1.sqlite"), "--json"])
    assert r.exit_code == 0, r.output
    res = json.loads(r.output)
    assert res["verified"] and res["previous_kept_at"]
    r = runner.invoke(main, ["--db", str(db), "verify"])
    assert r.exit_code == 0 and r.output.startswith("ok")
    r = runner.invoke(main, ["--db", str(db), "attachment", "TB-0002", "photo.jpg", "-o", str(tmp_path / "out.jpg")])
    assert r.exit_code == 0 and (tmp_path / "out.jpg").read_bytes() == spec.read_bytes()


def test_cli_export_import_formats(tmp_path, demo_notebook_path):
    runner = CliRunner()
    for fmt, name in (("ord", "s.pb"), ("rocrate", "s.zip"), ("jsonl", "s.jsonl")):
        out = tmp_path / name
        r = runner.invoke(
            main, ["--db", str(demo_notebook_path), "export", "--format", fmt, "--screen", "SC-0001", "-o", str(out)]
        )
        assert r.exit_code == 0, r.output
        assert runner.invoke(main, ["init", str(tmp_path / f"in-{fmt}.sqlite")]).exit_code == 0  # only init creates
        r = runner.invoke(main, ["--db", str(tmp_path / f"in-{fmt}.sqlite"), "import", str(out), "--json"])
        assert r.exit_code == 0, r.output
        assert json.loads(r.output)["imported"] == [f"TB-00{n}" for n in range(13, 19)]
    r = runner.invoke(main, ["--db", str(demo_notebook_path), "export", "--format", "nope"])
    assert r.exit_code == 2 and "not known" in r.output
