"""A notebook's screens: the named sets of runs a chemist compares, versioned like runs.

A mixin of Notebook (store/notebook.py), kept apart so the run store stays readable. Like the
rest of the store it imports the records module only where a screen is read or written.
"""

from __future__ import annotations

import json
from typing import TYPE_CHECKING

from ..errors import NotFoundError, RecordError
from . import chain

if TYPE_CHECKING:  # pragma: no cover - typing only
    from ..records import Run, Screen


class ScreenStore:
    """Screens kept in a Notebook; uses its connection, transaction, ids and runs."""

    def add_screen(self, screen: Screen | dict, author: str | None = None, reason: str = "created") -> str:
        from ..records import Screen, load_screen
        from .notebook import default_author  # at call time: store/notebook.py imports this module

        screen = load_screen(screen) if not isinstance(screen, Screen) else screen
        with self.transaction():
            sid = screen.id
            if sid and self.conn.execute("SELECT 1 FROM screens WHERE id = ?", (sid,)).fetchone():
                raise RecordError(f"screen id {sid} is already in this notebook", "choose another id")
            sid = sid or self._next_id("screen", "SC-")
            screen = screen.model_copy(update={"id": sid})
            self._write_screen(screen, default_author(self, author), reason, 1)
        return sid

    def save_screen(self, screen: Screen, author: str | None = None, reason: str = "updated") -> int:
        from .notebook import default_author  # at call time: store/notebook.py imports this module

        with self.transaction():
            row = self.conn.execute("SELECT version FROM screens WHERE id = ?", (screen.id,)).fetchone()
            if row is None:
                raise NotFoundError(f"no screen {screen.id} in this notebook", "list screens with 'trapbook screens'")
            self._write_screen(screen, default_author(self, author), reason, row[0] + 1)
            return row[0] + 1

    def _write_screen(self, screen: Screen, author: str, reason: str, version: int) -> None:
        from ..text_rules import clean_reason
        from .notebook import now_utc  # at call time: store/notebook.py imports this module

        reason = clean_reason(reason)
        # not canonical: the order of the factors is the order the chemist gave them in
        data = json.dumps(screen.model_dump(mode="json", exclude_none=True), ensure_ascii=False)
        t = now_utc()
        prev = None
        if version > 1:
            prev = self.conn.execute(
                "SELECT hash FROM screen_versions WHERE screen_id = ? AND version = ?", (screen.id, version - 1)
            ).fetchone()[0]
        h = chain.screen_hash(screen.id, version, author, t, reason, prev, data)
        self.db["screen_versions"].insert(
            {
                "screen_id": screen.id,
                "version": version,
                "author": author,
                "time": t,
                "reason": reason,
                "data": data,
                "prev_hash": prev,
                "hash": h,
            }
        )
        chain.append_save(self.conn, "screen", screen.id, version, h)
        row = {"name": screen.name, "version": version, "updated": t, "data": data}
        if version == 1:
            self.db["screens"].insert({"id": screen.id, **row, "created": t})
        else:
            self.db["screens"].update(screen.id, row)

    def get_screen(self, key: str) -> Screen:
        row = self.conn.execute("SELECT data FROM screens WHERE id = ? OR name = ? ORDER BY id LIMIT 1", (key, key)).fetchone()
        if row is None:
            raise NotFoundError(f"no screen '{key}' in this notebook", "list screens with 'trapbook screens'")
        from ..records import stored_screen

        return stored_screen(row[0])

    def list_screens(self) -> list[Screen]:
        from ..records import stored_screen

        return [stored_screen(r[0]) for r in self.conn.execute("SELECT data FROM screens ORDER BY id")]

    def screen_runs(self, screen: Screen) -> list[Run]:
        """Runs of a screen: those listed in it plus any run that names the screen."""
        ids = list(screen.runs)
        for (rid,) in self.conn.execute("SELECT id FROM runs WHERE screen = ? AND withdrawn = 0 ORDER BY id", (screen.id,)):
            if rid not in ids:
                ids.append(rid)
        out = []
        for rid in ids:
            meta = self.conn.execute("SELECT withdrawn FROM runs WHERE id = ?", (rid,)).fetchone()
            if meta is None or meta[0]:
                continue
            out.append(self.get_run(rid))
        return out
