"""Shared fixtures: the issue's minimal run file, fresh notebooks, the demo notebook."""

from __future__ import annotations

import copy
import json
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

from samples import MINIMAL_RUN  # noqa: E402  (tests/ is on sys.path under pytest)


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


@pytest.fixture
def demo_path(tmp_path) -> Path:
    """A fresh demo notebook of this test's own, to write to (the demo lab names no "you are" chemist,
    so a first save asks for one)."""
    from trapbook.demo import build_demo

    path = tmp_path / "demo.sqlite"
    build_demo(path)
    return path
