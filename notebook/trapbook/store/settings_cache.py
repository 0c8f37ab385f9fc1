"""A notebook's settings (versioned and logged like any save) and its cache of strain results.

A mixin of Notebook (store/notebook.py), kept apart so the run store stays readable. Neither
needs the records module: settings are JSON values and cached results are hashed JSON text.
"""

from __future__ import annotations

import json
from typing import Any

from . import chain
from . import index as run_index


class SettingsCacheStore:
    """Settings and the strain cache of a Notebook; uses its connection, transaction and index."""

    _hashed_cache: bool | None

    def get_setting(self, key: str, default: Any = None) -> Any:
        row = self.conn.execute("SELECT value FROM settings WHERE key = ?", (key,)).fetchone()
        return json.loads(row[0]) if row else default

    def set_setting(self, key: str, value: Any, author: str | None = None, reason: str = "settings changed") -> None:
        """Store a setting as a new version (author, time, reason), logged like any save.

        Editor drafts (`draft:...`) are scratch space and are only kept, not versioned.
        Setting the value it already has adds no version.
        """
        from ..text_rules import clean_reason
        from .notebook import default_author, now_utc  # at call time: store/notebook.py imports this module

        stored = chain.stored_value(value)
        with self.transaction():
            if not chain.is_private_setting(key):
                last = self.conn.execute(
                    "SELECT version, hash, value FROM setting_versions WHERE key = ? ORDER BY version DESC LIMIT 1", (key,)
                ).fetchone()
                if last is not None and last[2] == stored:
                    return
                version, prev = (last[0] + 1, last[1]) if last else (1, None)
                who, why, t = default_author(self, author), clean_reason(reason) or "settings changed", now_utc()
                h = chain.setting_hash(key, version, who, t, why, prev, stored)
                self.db["setting_versions"].insert(
                    {
                        "key": key,
                        "version": version,
                        "value": stored,
                        "author": who,
                        "time": t,
                        "reason": why,
                        "prev_hash": prev,
                        "hash": h,
                    }
                )
                chain.append_save(self.conn, "setting", key, version, h)
            self.db["settings"].upsert({"key": key, "value": stored}, pk="key")

    def setting_history(self, key: str) -> list[dict]:
        """Every version of a setting: value, author, time and reason, oldest first."""
        rows = self.conn.execute(
            "SELECT version, value, author, time, reason FROM setting_versions WHERE key = ? ORDER BY version", (key,)
        ).fetchall()
        return [{"version": v, "value": json.loads(val), "author": a, "time": t, "reason": r} for v, val, a, t, r in rows]

    def set_check_settings(self, values: dict, author: str | None = None, reason: str = "settings changed") -> None:
        """New check thresholds and every run's findings judged by them, in one transaction."""
        from ..settings import CHECKS_KEY

        with self.transaction():
            self.set_setting(CHECKS_KEY, values, author=author, reason=reason)
            run_index.refresh_summaries(self)

    def cache_get(self, key: str) -> dict | None:
        """A cached result, or None; an entry whose content no longer matches its hash is a miss."""
        if not self._cache_is_hashed():
            return None  # a notebook not yet upgraded (read-only here): its entries cannot be checked, so none is served
        row = self.conn.execute(
            "SELECT smiles, tier, engine, result, content_sha256 FROM strain_cache WHERE key = ?", (key,)
        ).fetchone()
        if row is None or row[4] != chain.cache_hash(key, row[0], row[1], row[2], row[3]):
            return None
        return json.loads(row[3])

    def _cache_is_hashed(self) -> bool:
        if self._hashed_cache is None:
            columns = {row[1] for row in self.conn.execute("PRAGMA table_info(strain_cache)")}
            self._hashed_cache = "content_sha256" in columns
        return self._hashed_cache

    def cache_put(self, key: str, smiles: str, tier: str, engine: str, result: dict) -> None:
        from .notebook import now_utc  # at call time: store/notebook.py imports this module

        text = json.dumps(result)
        with self.transaction():
            self.db["strain_cache"].upsert(
                {
                    "key": key,
                    "smiles": smiles,
                    "tier": tier,
                    "engine": engine,
                    "created": now_utc(),
                    "result": text,
                    "content_sha256": chain.cache_hash(key, smiles, tier, engine, text),
                },
                pk="key",
            )
