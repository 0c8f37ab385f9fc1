"""Every example in docs/python-api.md runs and prints what the page says (doctest over the Markdown).

The page is run in a fresh folder holding the demo lab's notebook, as a reader would run
it after `trapbook --db demo.sqlite demo --no-ui --strain none`. Its printed values are
checkable by hand: furan C4H4O is 68.07 g/mol (Source: IUPAC standard atomic weights, see
docs/sources.md, "Python API page"), 10 equiv of 0.100 mmol is 1.00 mmol, 68.1 mg of furan
at 0.951 g/mL is 72 µL; run ids and traps are those of demo_lab/runs.
"""

from __future__ import annotations

import doctest
import subprocess
import sys
from pathlib import Path

PAGE = Path(__file__).resolve().parents[1] / "docs" / "python-api.md"


def test_every_example_on_the_python_api_page_runs(tmp_path, monkeypatch):
    subprocess.run(
        [sys.executable, "-m", "trapbook", "--db", str(tmp_path / "demo.sqlite"), "demo", "--no-ui", "--strain", "none"],
        check=True,
        capture_output=True,
        timeout=180,
    )
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("TRAPBOOK_DB", raising=False)
    result = doctest.testfile(
        str(PAGE), module_relative=False, globs={}, report=True, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE
    )
    assert result.attempted >= 20, "the page lost its examples"
    assert result.failed == 0, f"{result.failed} example(s) on {PAGE.name} failed (see the output above)"


def test_the_page_example_can_fail(tmp_path):
    """A wrong printed value is caught: the same runner on a page with one value changed."""
    page = tmp_path / "page.md"
    page.write_text("```python\n>>> 68.075 * 1.0\n68.0\n\n```\n", encoding="utf-8")
    result = doctest.testfile(str(page), module_relative=False, globs={}, report=False)
    assert result.attempted == 1 and result.failed == 1


def test_stored_text_is_escaped_in_the_notebook_display():
    """A title, a name and a note holding markup show as text, never as markup (HTML escaping, per the HTML standard)."""
    import json

    import trapbook
    from trapbook.html_display import ScreenReview, StrainResult

    data = json.loads((PAGE.parents[1] / "examples" / "furan-aryne.json").read_text(encoding="utf-8"))
    data["title"] = "<script>alert(1)</script> & co"
    data["lines"][0]["name"] = "<img src=x onerror=alert(2)>"
    html = trapbook.load_run(data)._repr_html_()
    assert "<script>alert(1)" not in html and "&lt;script&gt;alert(1)&lt;/script&gt; &amp; co" in html
    assert "<img src=x" not in html and "&lt;img src=x onerror=alert(2)&gt;" in html
    assert "<svg" in html  # the structures are drawn
    review = ScreenReview(
        {
            "screen_id": "SC-9",
            "name": "<b>x</b>",
            "factors": {"trap": ["<i>"]},
            "matrix": None,
            "best": None,
            "rows": [
                {
                    "run_id": "TB-1",
                    "factors": {"trap": "<i>"},
                    "status": "done",
                    "isolated_yield_pct": None,
                    "nmr_yield_pct": None,
                    "findings": [],
                }
            ],
            "not_done": [],
        }
    )
    assert "<b>x</b>" not in review._repr_html_() and "&lt;b&gt;x&lt;/b&gt;" in review._repr_html_()
    card = StrainResult({"smiles": "C1=CC1", "tier": "fast", "method": "<u>m</u>", "olefin_strain_kcal_mol": None})
    assert "<u>m</u>" not in card._repr_html_() and "&lt;u&gt;m&lt;/u&gt;" in card._repr_html_()
