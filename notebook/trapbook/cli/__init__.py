"""The command line (thin): `main` is the click group; each module here adds the
commands of one area of the core to it."""

from .core import main  # noqa: F401

# Area modules register their commands on `main` at import; a missing one (an area not
# built yet) must not break the commands that exist.
import importlib as _importlib

for _name in ("strain", "search", "review", "exchange", "integrity"):
    try:
        _importlib.import_module(f"{__name__}.{_name}")
    except ModuleNotFoundError as _exc:  # pragma: no cover - only while an area is absent
        if _exc.name != f"{__name__}.{_name}":
            raise

__all__ = ["main"]
