"""Shared fixtures: the issue's minimal run file, fresh notebooks, the demo notebook."""

from __future__ import annotations

import copy
import json
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

# The minimal run file every version of Trapbook must accept as it is.
MINIMAL_RUN = {
    "title": "Furan trap of an aryne, TBAF in THF",
    "lines": [
        {"role": "precursor", "name": "aryne precursor A", "smiles": "C[Si](C)(C)c1ccccc1OS(=O)(=O)C(F)(F)F", "amount": "0.200 mmol"},
        {"role": "fluoride source", "name": "TBAF 1.0 M in THF", "smiles": "CCCC[N+](CCCC)(CCCC)CCCC.[F-]", "equiv": 3.0, "molarity": "1.0 M"},
        {"role": "trap", "name": "furan", "smiles": "c1ccoc1", "equiv": 10, "density": "0.951 g/mL"},
        {"role": "solvent", "name": "THF", "volume": "2.0 mL"},
    ],
    "steps": [
        {"add": ["aryne precursor A", "furan", "THF"], "temperature": "-78 °C"},
        {"add": ["TBAF 1.0 M in THF"], "temperature": "-78 °C"},
        {"hold": "2 h", "temperature": "23 °C"},
    ],
}


@pytest.fixture
def minimal_run() -> dict:
    return copy.deepcopy(MINIMAL_RUN)


@pytest.fixture
def minimal_run_file(tmp_path, minimal_run) -> Path:
    p = tmp_path / "run.json"
    p.write_text(json.dumps(minimal_run, ensure_ascii=False), encoding="utf-8")
    return p


@pytest.fixture
def notebook(tmp_path):
    from trapbook.store import Notebook

    nb = Notebook.create(tmp_path / "nb.sqlite")
    yield nb
    nb.close()


@pytest.fixture(scope="session")
def demo_notebook_path(tmp_path_factory) -> Path:
    from trapbook.demo import build_demo

    path = tmp_path_factory.mktemp("demo") / "demo.sqlite"
    build_demo(path)
    return path


@pytest.fixture
def demo_notebook(demo_notebook_path):
    from trapbook.store import Notebook

    nb = Notebook.open(demo_notebook_path)
    yield nb
    nb.close()
