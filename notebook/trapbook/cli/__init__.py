"""The command line (thin): `main` is the click group; each module here adds the
commands of one area of the core to it when imported."""

from . import (  # noqa: F401  (register their commands)
    campaign,
    exchange,
    integrity,
    nmr,
    notebook_cmds,
    products,
    review,
    runs,
    search,
    serve,
    strain,
    whoami,
    write,
)
from .core import main

__all__ = ["main"]
