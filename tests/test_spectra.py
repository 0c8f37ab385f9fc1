"""NMR yields from raw data: synthetic FIDs with known integrals, written by nmrglue's own
writers, read back, processed and integrated; hostile files refused; the CLI end to end."""

from __future__ import annotations

import io
import json
import zipfile
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from spectra_samples import bruker_zip, fid, jcamp_fid, write_bruker, write_varian
from trapbook.cli import main
from trapbook.errors import SpectrumError
from trapbook.spectra import Processing, Region, process, read_bytes, read_path
from trapbook.spectra.plot import spectrum_png
from trapbook.spectra.readers import unzip_safely
from trapbook.spectra.runs import RegionSet, analyse

# Source: the signals' areas are set when the FID is built (3.00 for the 3H standard, 0.62 for
# the 1H product): the worked qNMR example of docs/sources.md (Pauli et al., J. Med. Chem. 2014,
# 57, 9220; from memory) gives (0.62/1)/(3.00/3) = 0.62 product per standard.
KNOWN_RATIO = (0.62 / 1) / (3.00 / 3)
REGIONS = RegionSet(Region.of(6.00, 6.20), Region.of(5.20, 5.40), 3, 1)


@pytest.fixture(scope="module")
def bruker_bytes(tmp_path_factory) -> bytes:
    return bruker_zip(tmp_path_factory.mktemp("bruker"))


def test_bruker_fid_gives_the_known_ratio(bruker_bytes):
    spec, integ = analyse(bruker_bytes, "exp.zip", REGIONS)
    assert integ.ratio == pytest.approx(KNOWN_RATIO, rel=0.01)
    assert spec.record["digital_filter"] == "removed"
    assert spec.record["phase_found_by"].startswith("automatic")
    assert integ.warnings == []


def test_without_removing_the_digital_filter_nothing_is_integrated(bruker_bytes):
    # the FID was written delayed by GRPDLY points, as a digitally filtered Bruker FID is: leaving
    # the delay in rolls the phase across the spectrum, and the standard's region sums to nothing
    wrong = RegionSet(REGIONS.standard, REGIONS.product, 3, 1, processing=Processing(remove_digital_filter=False))
    with pytest.raises(SpectrumError, match="standard's region .* no signal"):
        analyse(bruker_bytes, "exp.zip", wrong)


def test_varian_fid_gives_the_known_ratio(tmp_path):
    folder = tmp_path / "exp.fid"
    folder.mkdir()
    write_varian(folder, fid(delay=0, phase_deg=-50.0, seed=2))
    raw = read_path(folder)
    assert raw.fmt == "varian"
    spec = process(raw, Processing(), keep_out=[(6.0, 6.2), (5.2, 5.4)])
    from trapbook.spectra import integrate

    integ = integrate(spec, REGIONS.standard, REGIONS.product, 3, 1)
    assert integ.ratio == pytest.approx(KNOWN_RATIO, rel=0.01)


def test_jcamp_dx_fid_gives_the_known_ratio():
    data = jcamp_fid(fid(delay=0, phase_deg=70.0, seed=4))
    spec, integ = analyse(data, "vial.jdx", REGIONS)
    assert spec.record["source"]["format"] == "jcamp-dx"
    assert integ.ratio == pytest.approx(KNOWN_RATIO, rel=0.01)


def test_same_fid_same_integrals_and_stored_phases_reproduce(bruker_bytes):
    a_spec, a = analyse(bruker_bytes, "exp.zip", REGIONS)
    b_spec, b = analyse(bruker_bytes, "exp.zip", REGIONS)
    assert (a.standard_area, a.product_area) == (b.standard_area, b.product_area)
    assert a_spec.record == b_spec.record
    # the phases found, given back as an override, give the same integrals again
    fixed = RegionSet(
        REGIONS.standard,
        REGIONS.product,
        3,
        1,
        processing=Processing(phase0_deg=a_spec.record["phase0_deg"], phase1_deg=a_spec.record["phase1_deg"]),
    )
    _, c = analyse(bruker_bytes, "exp.zip", fixed)
    assert c.ratio == pytest.approx(a.ratio, rel=1e-6)


def test_phase_override_is_used_and_a_wrong_phase_is_noticed(bruker_bytes):
    # the FID carries a +35 degree phase error; -35 given by hand puts the signals upright,
    # -25 leaves 10 degrees of dispersion: a wrong ratio, and a lopsided standard that says so
    good = RegionSet(REGIONS.standard, REGIONS.product, 3, 1, processing=Processing(phase0_deg=-35.0))
    spec, integ = analyse(bruker_bytes, "exp.zip", good)
    assert spec.record["phase_found_by"] == "given" and spec.record["phase0_deg"] == -35.0
    assert integ.ratio == pytest.approx(KNOWN_RATIO, rel=0.01)
    assert integ.warnings == []
    bad = RegionSet(REGIONS.standard, REGIONS.product, 3, 1, processing=Processing(phase0_deg=-25.0))
    _, integ = analyse(bruker_bytes, "exp.zip", bad)
    assert abs(integ.ratio / KNOWN_RATIO - 1) > 0.01
    assert "nmr-standard-distorted" in {w["code"] for w in integ.warnings}


def test_referencing_moves_the_standard_to_its_shift(bruker_bytes):
    # 1,3,5-trimethoxybenzene's aromatic H at 6.09 ppm in CDCl3 (from memory); the FID puts it at 6.10
    ref = RegionSet(
        REGIONS.standard, REGIONS.product, 3, 1, processing=Processing(reference_ppm=6.09, reference_region=(5.9, 6.3))
    )
    spec, _ = analyse(bruker_bytes, "exp.zip", ref)
    assert spec.record["reference_shift_ppm"] == pytest.approx(-0.01, abs=0.001)
    top = spec.ppm[np.argmax(np.where((spec.ppm > 5.9) & (spec.ppm < 6.3), spec.intensity, -np.inf))]
    assert top == pytest.approx(6.09, abs=0.002)


def test_empty_and_overlapping_regions_are_findings(bruker_bytes):
    spec, _ = analyse(bruker_bytes, "exp.zip", REGIONS)
    from trapbook.spectra import integrate

    empty = integrate(spec, REGIONS.standard, Region.of(3.0, 3.2), 3, 1)
    assert "nmr-region-empty" in {w["code"] for w in empty.warnings}
    overlap = integrate(spec, REGIONS.standard, Region.of(6.15, 6.3), 3, 1)
    assert "nmr-regions-overlap" in {w["code"] for w in overlap.warnings}
    with pytest.raises(SpectrumError, match="outside the spectrum"):
        integrate(spec, Region.of(40.0, 41.0), REGIONS.product, 3, 1)


def test_plot_is_a_png(bruker_bytes):
    spec, integ = analyse(bruker_bytes, "exp.zip", REGIONS)
    png = spectrum_png(spec, integ, title="vial A1")
    # Source: PNG signature, ISO/IEC 15948 (PNG specification), section 5.2
    assert png[:8] == b"\x89PNG\r\n\x1a\n"


# --- hostile files -----------------------------------------------------------------------------------


def _zip(members: dict[str, bytes]) -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        for name, data in members.items():
            zf.writestr(name, data)
    return buf.getvalue()


def test_truncated_bruker_fid_is_refused(tmp_path):
    folder = write_bruker(tmp_path / "exp", fid(delay=0))
    data = (folder / "fid").read_bytes()
    (folder / "fid").write_bytes(data[: len(data) // 2])
    with pytest.raises(SpectrumError, match="truncated"):
        read_path(folder)


def test_fid_larger_than_acqus_says_is_refused(tmp_path):
    folder = write_bruker(tmp_path / "exp", fid(delay=0))
    (folder / "fid").write_bytes((folder / "fid").read_bytes() * 2)
    with pytest.raises(SpectrumError, match="do not belong together"):
        read_path(folder)


def test_truncated_varian_fid_is_refused(tmp_path):
    folder = tmp_path / "exp.fid"
    folder.mkdir()
    write_varian(folder, fid(delay=0))
    data = (folder / "fid").read_bytes()
    (folder / "fid").write_bytes(data[:-1000])
    with pytest.raises(SpectrumError, match="truncated"):
        read_path(folder)


def test_random_bytes_are_refused():
    rng = np.random.default_rng(7)
    with pytest.raises(SpectrumError, match="not raw NMR data"):
        read_bytes(rng.bytes(4096), "noise.bin")
    with pytest.raises(SpectrumError, match="not a readable zip"):
        read_bytes(b"PK\x03\x04" + rng.bytes(4096), "broken.zip")


@pytest.mark.parametrize("evil", ["../../outside/fid", "/etc/acqus", "exp/../../fid", "C:/temp/fid"])
def test_zip_with_escaping_paths_is_refused_and_writes_nothing(tmp_path, evil):
    dest = tmp_path / "dest"
    dest.mkdir()
    data = _zip({"exp/acqus": b"##TITLE= x\n", evil: b"\x00" * 64})
    with pytest.raises(SpectrumError, match="outside the folder|absolute path"):
        unzip_safely(data, dest, "evil.zip")
    assert list(dest.rglob("*")) == []
    assert not (tmp_path / "outside").exists()


def test_zip_with_a_symlink_is_refused(tmp_path):
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        info = zipfile.ZipInfo("exp/fid")
        info.external_attr = 0o120777 << 16  # a symbolic link, as zip keeps it
        zf.writestr(info, "/etc/passwd")
    with pytest.raises(SpectrumError, match="symbolic link"):
        read_bytes(buf.getvalue(), "link.zip")


def test_garbled_or_odd_acqus_is_refused(tmp_path):
    folder = write_bruker(tmp_path / "exp", fid(delay=0))
    text = (folder / "acqus").read_text()
    (folder / "acqus").write_text(text.replace("##$SW_h=", "##$SW_x="))
    with pytest.raises(SpectrumError, match="SW_h"):
        read_path(folder)
    (folder / "acqus").write_text(text.replace(f"##$TD= {2 * 16384}", "##$TD= 32767"))
    with pytest.raises(SpectrumError, match="odd number"):
        read_path(folder)


def test_fid_of_not_numbers_is_refused(tmp_path):
    x = fid(delay=0)
    x[100] = np.nan
    with pytest.raises(SpectrumError, match="not numbers"):
        read_path(write_bruker(tmp_path / "exp", x))


def test_zip_member_larger_than_a_data_set_is_refused(tmp_path, monkeypatch):
    from trapbook.spectra import readers

    monkeypatch.setattr(readers, "MAX_MEMBER_BYTES", 1000)
    dest = tmp_path / "dest"
    dest.mkdir()
    with pytest.raises(SpectrumError, match="more than a raw 1D data set"):
        unzip_safely(_zip({"exp/fid": b"\x00" * 5000, "exp/acqus": b"##TITLE= x"}), dest, "big.zip")
    assert list(dest.rglob("*")) == []


def test_zip_without_an_experiment_is_refused():
    with pytest.raises(SpectrumError, match="holds no experiment"):
        read_bytes(_zip({"notes.txt": b"hello"}), "notes.zip")


def test_processed_jcamp_spectrum_is_refused_with_a_hint():
    text = (
        "##TITLE= test\n##JCAMP-DX= 5.01\n##DATA TYPE= NMR SPECTRUM\n##XUNITS= HZ\n##YUNITS= ARBITRARY UNITS\n"
        "##FIRSTX= 0\n##LASTX= 3\n##NPOINTS= 4\n##XYDATA= (X++(Y..Y))\n0 1 2 3 4\n##END=\n"
    )
    with pytest.raises(SpectrumError, match="not an NMR FID"):
        read_bytes(text.encode(), "spectrum.jdx")


# --- the notebook and the command line ------------------------------------------------------------------


QNMR_RUN = {
    # the worked example's amounts: 0.100 mmol of standard at 0.100 mmol scale
    "title": "qNMR from the spectrum",
    "lines": [
        {"role": "precursor", "name": "P", "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "amount": "0.100 mmol"},
        {"role": "internal standard", "name": "TMB", "smiles": "COc1cc(OC)cc(OC)c1", "amount": "0.100 mmol"},
        {"role": "product", "name": "adduct", "smiles": "C1=CC2OC1c1ccccc12"},
    ],
}


@pytest.fixture
def cli(tmp_path):
    runner = CliRunner()
    db = str(tmp_path / "nb.sqlite")
    assert runner.invoke(main, ["--db", db, "init"]).exit_code == 0

    def invoke(*args):
        return runner.invoke(main, ["--db", db, "--author", "tester", *args], catch_exceptions=False)

    return invoke


def test_cli_integrates_an_attached_bruker_zip(cli, tmp_path, bruker_bytes):
    run_file = tmp_path / "run.json"
    run_file.write_text(json.dumps(QNMR_RUN))
    assert cli("add", str(run_file)).exit_code == 0
    zipped = tmp_path / "vial-A1.zip"
    zipped.write_bytes(bruker_bytes)
    assert cli("attach", "TB-0001", str(zipped)).exit_code == 0
    png = tmp_path / "a1.png"
    res = cli(
        "nmr",
        "TB-0001",
        "--standard",
        "6.00..6.20",
        "--product",
        "5.20..5.40",
        "--standard-protons",
        "3",
        "--product-protons",
        "1",
        "--png",
        str(png),
        "--json",
    )
    assert res.exit_code == 0, res.output
    out = json.loads(res.output)
    # Source: worked qNMR example, docs/sources.md: 62 % at 0.100 mmol scale
    assert out["yield_pct"] == pytest.approx(62.0, abs=1.0)
    assert out["ratio"] == pytest.approx(KNOWN_RATIO, rel=0.01)
    assert out["standard_integral"] == 3.0 and out["version"] == 3
    assert png.read_bytes()[:4] == b"\x89PNG"
    history = json.loads(cli("history", "TB-0001", "--json").output)
    assert history[-1]["reason"] == "integrated from the attached spectrum"
    shown = json.loads(cli("show", "TB-0001", "--json").output)
    q = shown["run"]["outcome"]["products"][0]["qnmr"] if "run" in shown else shown["outcome"]["products"][0]["qnmr"]
    assert q["spectrum"]["attachment_sha256"] == out["sha256"]
    assert q["spectrum"]["processing"]["phase0_deg"] == out["processing"]["phase0_deg"]
    # the same data and regions again: the same numbers, so no new version
    again = json.loads(cli("nmr", "TB-0001", "--standard", "6.00..6.20", "--product", "5.20..5.40", "--json").output)
    assert again["saved"] is False and again["version"] == 3 and again["ratio"] == out["ratio"]


def test_stored_findings_are_bench_check_findings_and_the_report_draws_the_spectrum(cli, tmp_path, bruker_bytes):
    from trapbook.checks import run_checks
    from trapbook.reports import run_report_html
    from trapbook.store import Notebook

    run_file = tmp_path / "run.json"
    run_file.write_text(json.dumps(QNMR_RUN))
    cli("add", str(run_file))
    zipped = tmp_path / "v.zip"
    zipped.write_bytes(bruker_bytes)
    cli("attach", "TB-0001", str(zipped))
    # a product region with no peak in it: stored as a finding with the integrals
    res = cli(
        "nmr",
        "TB-0001",
        "--standard",
        "6.00..6.20",
        "--product",
        "3.00..3.20",
        "--standard-protons",
        "3",
        "--product-protons",
        "1",
        "--json",
    )
    assert res.exit_code == 0, res.output
    with Notebook.open(tmp_path / "nb.sqlite") as nb:
        run = nb.get_run("TB-0001")
        codes = {f.code for f in run_checks(run)}
        page = run_report_html(nb, "TB-0001")
    assert "nmr-region-empty" in codes
    assert page.count("data:image/png;base64,") == 1


def test_cli_refuses_random_bytes_and_changes_nothing(cli, tmp_path):
    run_file = tmp_path / "run.json"
    run_file.write_text(json.dumps(QNMR_RUN))
    cli("add", str(run_file))
    junk = tmp_path / "junk.zip"
    junk.write_bytes(np.random.default_rng(3).bytes(2048))
    cli("attach", "TB-0001", str(junk))
    res = cli(
        "nmr",
        "TB-0001",
        "--standard",
        "6.00..6.20",
        "--product",
        "5.20..5.40",
        "--standard-protons",
        "3",
        "--product-protons",
        "1",
        "--json",
    )
    assert res.exit_code == 2
    assert "not raw NMR data" in json.loads(res.output)["error"]
    assert len(json.loads(cli("history", "TB-0001", "--json").output)) == 2


#: The regions every screen test integrates: the standard's 3H singlet and the product's 1H signal.
SCREEN_REGIONS = ("--standard", "6.00..6.20", "--product", "5.20..5.40", "--standard-protons", "3", "--product-protons", "1")


def test_screen_uses_one_set_of_regions_for_every_vial(cli, tmp_path, bruker_bytes):
    from trapbook.spectra.runs import integrate_screen
    from trapbook.store import Notebook

    run_file = tmp_path / "run.json"
    run_file.write_text(json.dumps(QNMR_RUN))
    for _ in range(2):
        cli("add", str(run_file))
    cli("add", str(run_file))  # a vial without a spectrum
    zipped = tmp_path / "v.zip"
    zipped.write_bytes(bruker_bytes)
    for rid in ("TB-0001", "TB-0002"):
        cli("attach", rid, str(zipped))
    with Notebook.open(tmp_path / "nb.sqlite") as nb:
        sid = nb.add_screen({"name": "trap screen", "runs": ["TB-0001", "TB-0002", "TB-0003"]})
    res = cli("nmr", sid, *SCREEN_REGIONS, "--json")
    out = json.loads(res.output)
    assert [r["run_id"] for r in out["integrated"]] == ["TB-0001", "TB-0002"] and out["skipped"] == ["TB-0003"]
    assert all(r["yield_pct"] == pytest.approx(62.0, abs=1.0) for r in out["integrated"])
    stages = []
    with Notebook.open(tmp_path / "nb.sqlite") as nb:
        again = integrate_screen(nb, sid, progress=lambda stage, fraction: stages.append(fraction))  # the stored regions
    assert again["regions"]["standard"] == [6.0, 6.2] and stages[-1] == 1.0
    assert all(not r["saved"] for r in again["integrated"])


def test_screen_with_a_refused_vial_does_not_exit_as_done(cli, tmp_path, bruker_bytes):
    from trapbook.cli.nmr import REFUSED_EXIT
    from trapbook.store import Notebook

    run_file = tmp_path / "run.json"
    run_file.write_text(json.dumps(QNMR_RUN))
    for _ in range(2):
        cli("add", str(run_file))
    good, junk = tmp_path / "v.zip", tmp_path / "junk.zip"
    good.write_bytes(bruker_bytes)
    junk.write_bytes(np.random.default_rng(5).bytes(2048))
    cli("attach", "TB-0001", str(good))
    cli("attach", "TB-0002", str(junk))
    with Notebook.open(tmp_path / "nb.sqlite") as nb:
        sid = nb.add_screen({"name": "trap screen", "runs": ["TB-0001", "TB-0002"]})
    res = cli("nmr", sid, *SCREEN_REGIONS, "--json")
    out = json.loads(res.output)
    assert [r["run_id"] for r in out["integrated"]] == ["TB-0001"]
    assert [r["run_id"] for r in out["refused"]] == ["TB-0002"]
    assert res.exit_code == REFUSED_EXIT != 0


def test_only_the_spectra_package_reads_raw_nmr_data():
    # one place owns the reading library, as chemistry/ owns RDKit
    import ast

    pkg = Path(__file__).resolve().parents[1] / "notebook" / "trapbook"
    users = set()
    for path in pkg.rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = (
                [a.name for a in node.names]
                if isinstance(node, ast.Import)
                else [node.module or ""]
                if isinstance(node, ast.ImportFrom)
                else []
            )
            if any(n.split(".")[0] == "nmrglue" for n in names):
                users.add(path.relative_to(pkg).parts[0])
    assert users == {"spectra"}


@pytest.mark.parametrize(
    "bad",
    [
        {"line_broadening_hz": float("nan")},
        {"baseline_order": "3"},
        {"zero_fill_factor": True},
        {"reference_ppm": 6.09, "reference_region": ("x", 1.0)},
        {"phase_region": (6.0, float("inf"))},
        {"reverse": "yes"},
        {"phase_method": ["acme"]},
    ],
)
def test_processing_parameters_from_a_hand_written_record_are_refused_in_words(bad):
    with pytest.raises(SpectrumError):
        Processing(**bad)


def test_a_hand_written_processing_record_is_said_in_the_report_not_a_crash():
    from trapbook.spectra.figures import processing_from_record

    for record in ({"parameters": [1, 2]}, {"parameters": {"no_such": 1}}, {"parameters": {"reference_region": 5}}):
        with pytest.raises(SpectrumError, match="cannot be read"):
            processing_from_record(record)


def test_zip_member_names_the_system_cannot_hold_are_refused(tmp_path):
    dest = tmp_path / "dest"
    dest.mkdir()
    with pytest.raises(SpectrumError, match="cannot be unpacked"):
        unzip_safely(_zip({"exp/" + "a" * 300 + "/fid": b"1", "exp/acqus": b"##TITLE= x"}), dest, "long.zip")
