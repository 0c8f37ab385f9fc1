"""Trapbook's terminal face (Textual): thin screens over the core.

Nothing here decides chemistry: screens call the core (store, amounts, checks,
strain_link, search, review) and show what it returns. Heavy modules (RDKit through
amounts/checks, the strain engine, plotting) are imported lazily so the notebook opens
fast; slow work runs in workers with a progress indicator.
"""
