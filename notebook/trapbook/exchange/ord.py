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

from .ord_common import ROLE_TO_ORD, digest
from .ord_export import (
    _email,  # noqa: F401  (kept for callers of the old single module)
    build_dataset,
    export,
    ord_dataset_id,
    ord_reaction_id,
    run_to_reaction,
    serialise,
    validate,
)
from .ord_import import MAX_IMPORT_BYTES, import_path, parse_bytes, reaction_to_run, read_path, runs_from_dataset

__all__ = [
    "MAX_IMPORT_BYTES",
    "ROLE_TO_ORD",
    "build_dataset",
    "digest",
    "export",
    "import_path",
    "ord_dataset_id",
    "ord_reaction_id",
    "parse_bytes",
    "reaction_to_run",
    "read_path",
    "run_to_reaction",
    "runs_from_dataset",
    "serialise",
    "validate",
]
