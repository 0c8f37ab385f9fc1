"""`python -m trapbook` is the `trapbook` command."""

from .cli import main

main(prog_name="trapbook")
