"""The command line (thin): `main` is the click group; each module here adds the
commands of one area of the core to it when imported."""

from . import campaign, exchange, integrity, nmr, products, review, search, serve, strain, whoami, write  # noqa: F401  (register their commands)
from .core import main

__all__ = ["main"]
