"""A campaign's background job: plan it, run it on a Dask cluster, store each result as it arrives.

Runs in a worker thread on a notebook connection of its own (a SQLite connection belongs to
the thread that uses it; WAL lets the screen keep reading meanwhile). It calls the core as
`trapbook campaign` does (`campaign.plan`, then `campaign.run_campaign`), so the same
skeleton gives the same campaign id, the same cache entries and the same record whichever
started it.
"""

from __future__ import annotations

import threading
from collections.abc import Callable
from pathlib import Path


class CampaignStopped(Exception):
    """Raised in the worker when the chemist stops the campaign (x) or the app quits."""


def _resource_tracker_on_the_terminal() -> None:
    """Start multiprocessing's resource tracker with the terminal's stderr.

    The local cluster's worker processes need it, and it is handed `sys.stderr`'s file
    descriptor; inside the app `sys.stderr` is Textual's capture, which has none, so every
    worker would fail to start. It is started once per process, here, for the moment it takes.
    """
    import contextlib
    import sys
    from multiprocessing import resource_tracker

    with contextlib.redirect_stderr(sys.__stderr__):
        resource_tracker.ensure_running()


class ClusterOnDemand:
    """The Dask client, made on first use: a campaign the cache already answers starts no cluster.

    `given` (a test's small client) is used as it is and never closed here. `stop` closes the
    cluster this made, which wakes the worker waiting for the next result.
    """

    def __init__(self, given=None, on_start: Callable[[], None] | None = None) -> None:
        self.given = given
        self.client = given
        self.on_start = on_start
        self.stopped = False
        self._lock = threading.Lock()

    def __getattr__(self, name: str):
        with self._lock:
            if self.stopped:
                raise CampaignStopped()
            if self.client is None:
                from ..campaign import open_client

                if self.on_start is not None:
                    self.on_start()
                _resource_tracker_on_the_terminal()
                self.client = open_client()
        return getattr(self.client, name)

    def stop(self) -> None:
        self.stopped = True
        self.release()

    def release(self) -> None:
        """Close the cluster this made (in the background: a cluster takes a while to shut down)."""
        from ..campaign import close_client

        with self._lock:
            client, self.client = self.client, None
        if client is not None and client is not self.given:
            threading.Thread(target=close_client, args=(client,), name="campaign-cluster-close").start()


def plan_and_run(
    path: Path,
    source: str,
    tier: str,
    kinds: tuple[str, ...],
    precursors: bool,
    cluster: ClusterOnDemand,
    progress: Callable[[str | None, int, int, int], None],
    author: str | None = None,
) -> tuple[str, dict]:
    """(campaign id, run_campaign's summary). `progress(id, done, failed, left)` is called as
    results arrive; once the cluster is stopped it raises CampaignStopped instead, which leaves
    run_campaign before it records anything more (what was stored stays)."""
    from ..campaign import plan, run_campaign
    from ..store import Notebook

    record = plan(source, tier=tier, kinds=kinds, precursors=precursors)

    def told(done: int, failed: int, left: int) -> None:
        if cluster.stopped:
            raise CampaignStopped()
        progress(record["id"], done, failed, left)

    progress(record["id"], 0, 0, 0)  # planned: the id is known before any result
    with Notebook.open(path) as nb:
        return record["id"], run_campaign(nb, record, progress=told, client=cluster, author=author)
