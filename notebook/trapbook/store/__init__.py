"""The notebook store: SQLite through sqlite-utils, versions, screens, settings, cache."""

from .notebook import Notebook, SaveResult, VersionInfo, default_author, default_path, diff_runs

__all__ = ["Notebook", "SaveResult", "VersionInfo", "default_author", "default_path", "diff_runs"]
