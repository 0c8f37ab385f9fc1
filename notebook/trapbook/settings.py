"""Notebook-level settings: the check thresholds a lab chooses for itself."""

from __future__ import annotations

from .errors import TrapbookError

CHECKS_KEY = "checks"


def notebook_check_settings(nb):
    """The thresholds in force in this notebook (documented defaults where none is set)."""
    from .checks import CheckSettings
    from .stored_reading import reading_stored

    data = nb.get_setting(CHECKS_KEY, None) if nb is not None else None
    with reading_stored():  # a value stored before its range was checked is still read as it was
        return CheckSettings.from_dict(data) if data else CheckSettings()


def update_check_settings(nb, assignments, reset: bool = False, author: str | None = None, reason: str = "settings changed"):
    """Apply NAME=VALUE changes (validated as a whole) and store them as a new version of the
    notebook's settings (who, when, why); return what is in force.

    Each value given here must lie in its setting's range; the others are kept as stored, so a
    value saved before ranges were checked never blocks an unrelated change.
    """
    from .checks import CheckSettings
    from .stored_reading import reading_stored

    data = {} if reset else notebook_check_settings(nb).to_dict()
    given: list[str] = []
    for item in assignments:
        if "=" not in item:
            raise TrapbookError(f"'{item}' is not NAME=VALUE", "e.g. --set trap_min_equiv=3")
        name, value = (x.strip() for x in item.split("=", 1))
        try:
            data[name] = float(value)
        except ValueError:
            raise TrapbookError(f"setting {name}: '{value}' is not a number", "give a plain number") from None
        given.append(name)
    CheckSettings.refuse_out_of_range({name: data[name] for name in given})
    with reading_stored():
        settings = CheckSettings.from_dict(data)  # raises on unknown names, non-numbers and broken pairs
    nb.set_check_settings(settings.to_dict(), author=author, reason=reason)  # with the findings judged by them
    return settings


# --- who saves --------------------------------------------------------------------------

AUTHOR_KEY = "you_are"
MAX_AUTHOR = 200  # the single-line limit of text_rules


def clean_author(name) -> str:
    """A name to record on versions: one line of plain text (the single-line rule of text_rules)."""
    from .errors import RecordError
    from .text_rules import check_line

    text = name.strip() if isinstance(name, str) else ""
    if not text:
        raise RecordError("the name is empty", "give the name to record on your saves, e.g. 'A. Trial'")
    try:
        return check_line(text, MAX_AUTHOR)
    except ValueError as exc:
        raise RecordError(f"the name {exc}", "type the name as plain text, e.g. 'A. Trial'") from None


def notebook_author(nb) -> str | None:
    """The notebook's "you are" name, if someone has set it."""
    value = nb.get_setting(AUTHOR_KEY, None) if nb is not None else None
    return value if isinstance(value, str) and value.strip() else None


def set_notebook_author(nb, name: str | None, author: str | None = None) -> str | None:
    """Set (or, with None, clear) the name this notebook records on every save.

    The change is itself a versioned setting; it is recorded as made by `author` (--author),
    else by the new name (a chemist saying who they are), else by whoever saved before.
    """
    value = clean_author(name) if name is not None else None
    reason = f"name on saves set to {value}" if value else "name on saves cleared"
    nb.set_setting(AUTHOR_KEY, value, author=author or value, reason=reason)
    return value


def author_for(nb, given: str | None = None) -> tuple[str, str]:
    """(name, where it comes from) for a save: --author, else the notebook's name, else the login.

    The one place every save (command line, terminal UI, imports) asks who is saving.
    """
    if given is not None and str(given).strip():
        return clean_author(given), "given"
    name = notebook_author(nb)
    if name:
        return name, "notebook"
    return login_name(), "login"


def login_name() -> str:
    """The operating-system login, the name of last resort on a save."""
    import getpass
    import os

    try:
        return getpass.getuser() or "unknown"
    except Exception:  # no login name in this environment (some containers): fall back, said as such
        return os.environ.get("USER") or "unknown"


# --- the bench's words ------------------------------------------------------------------


def notebook_bench_words(nb):
    """What this notebook means by 'rt' and 'overnight': its settings `room_temperature_c` and
    `overnight_h` (set like the check thresholds, `trapbook settings --set room_temperature_c=20`).

    Pass the result to `records.load_run(data, words)` or `records.with_bench_words(run, words)`.
    """
    from .bench_words import BenchWords

    s = notebook_check_settings(nb)
    if (s.room_temperature_c, s.overnight_h) == (BenchWords().room_temperature_c, BenchWords().overnight_h):
        return BenchWords()
    return BenchWords(s.room_temperature_c, s.overnight_h, source="this notebook's setting")


def in_lab_words(nb, run):
    """The run as it is saved into `nb`: 'rt' and 'overnight' read with this notebook's meaning.

    The one step every way of saving a run (the CLI's add and update, the Workbench) takes
    before the store, so a run saved from the terminal UI and one saved from a file agree.
    """
    from .records import with_bench_words

    return with_bench_words(run, notebook_bench_words(nb))
