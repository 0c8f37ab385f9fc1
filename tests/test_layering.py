"""The layering rule of the design: the core never imports an interface library, and only
chemistry/ talks to RDKit or tblite."""

import ast
from pathlib import Path

PKG = Path(__file__).resolve().parents[1] / "notebook" / "trapbook"


def _imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(a.name.split(".")[0] for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.add(node.module.split(".")[0])
    return names


def _core_files():
    for p in PKG.rglob("*.py"):
        rel = p.relative_to(PKG).parts
        if rel[0] in ("cli", "tui"):
            continue
        yield p


def test_core_never_imports_interface_libraries():
    offenders = [str(p.relative_to(PKG)) for p in _core_files() if _imports(p) & {"textual", "click", "typer", "textual_plotext"}]
    assert offenders == []


def test_only_chemistry_imports_rdkit_or_tblite():
    offenders = [
        str(p.relative_to(PKG))
        for p in PKG.rglob("*.py")
        if p.relative_to(PKG).parts[0] != "chemistry" and _imports(p) & {"rdkit", "tblite"}
    ]
    assert offenders == []


def test_one_pint_registry():
    makers = [str(p.relative_to(PKG)) for p in PKG.rglob("*.py") if "UnitRegistry(" in p.read_text(encoding="utf-8")]
    assert makers == ["units.py"]
