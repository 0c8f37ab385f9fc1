"""Trapbook: a lab notebook for trapping experiments of strained, short-lived intermediates."""

__version__ = "0.1.0"

#: The Python API (trapbook.api), loaded on first use so that `import trapbook` stays fast.
#: Three API names are also names of core modules (amounts, checks, backup), so at the
#: top level they are spelled compute_amounts, run_checks and backup_notebook.
_API = {
    name: name
    for name in (
        "open_notebook",
        "load_run",
        "add_run",
        "save_run",
        "get_run",
        "list_runs",
        "yields",
        "strain",
        "find_runs",
        "review_screen",
        "open_group",
        "verify",
        "attach",
        "export",
        "import_file",
    )
}
_API.update({"compute_amounts": "amounts", "run_checks": "checks", "backup_notebook": "backup"})


def __getattr__(name: str):
    if name in _API:
        from . import api

        return getattr(api, _API[name])
    raise AttributeError(f"module 'trapbook' has no attribute {name!r}")


def __dir__():
    return sorted([*globals(), *_API])
