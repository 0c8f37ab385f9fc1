"""Notebook-level settings: the check thresholds a lab chooses for itself."""

from __future__ import annotations

from .errors import TrapbookError

CHECKS_KEY = "checks"


def notebook_check_settings(nb):
    """The thresholds in force in this notebook (documented defaults where none is set)."""
    from .checks import CheckSettings

    data = nb.get_setting(CHECKS_KEY, None) if nb is not None else None
    return CheckSettings.from_dict(data) if data else CheckSettings()


def update_check_settings(nb, assignments, reset: bool = False):
    """Apply NAME=VALUE changes (validated as a whole) and store them; return what is in force."""
    from .checks import CheckSettings

    data = {} if reset else notebook_check_settings(nb).to_dict()
    for item in assignments:
        if "=" not in item:
            raise TrapbookError(f"'{item}' is not NAME=VALUE", "e.g. --set trap_min_equiv=3")
        name, value = (x.strip() for x in item.split("=", 1))
        try:
            data[name] = float(value)
        except ValueError:
            raise TrapbookError(f"setting {name}: '{value}' is not a number", "give a plain number") from None
    settings = CheckSettings.from_dict(data)  # raises on unknown names or bad values
    from .store.index import refresh_summaries

    with nb.transaction():  # the new thresholds and the findings judged by them, together
        nb.set_setting(CHECKS_KEY, settings.to_dict())
        refresh_summaries(nb)
    return settings
