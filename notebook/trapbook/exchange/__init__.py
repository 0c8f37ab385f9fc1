"""Import and export of runs: JSON lines here; other formats register beside it."""

from __future__ import annotations

from .jsonl import export_runs, import_path

__all__ = ["export_runs", "import_path"]
