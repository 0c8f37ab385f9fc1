"""Open Reaction Database (ORD) export and import, through the ``ord-schema`` package.

This module only gathers the names: the export (run or screen to a validated ORD
``Reaction``/``Dataset``) lives in ``ord_export``, the import (ORD to runs, with notes on
what did not map) in ``ord_import``, the outcome both ways (products, analyses, work-up)
in ``ord_outcome``, and what all must agree on (role maps, feature and metadata keys,
units) in ``ord_common``. It stays so that ``trapbook.exchange.ord:export`` and
``trapbook.exchange.ord:import_path`` in the format registry, and ``from
trapbook.exchange import ord``, keep working unchanged.
"""

from __future__ import annotations

from .ord_common import ROLE_TO_ORD
from .ord_export import build_dataset, export, run_to_reaction, validate
from .ord_import import import_path, parse_bytes, reaction_to_run, read_path, runs_from_dataset

__all__ = [
    "run_to_reaction",
    "build_dataset",
    "validate",
    "export",
    "import_path",
    "parse_bytes",
    "runs_from_dataset",
    "reaction_to_run",
    "read_path",
    "ROLE_TO_ORD",
]
