"""Where visits live between service calls, and how they travel between laptops.

* :mod:`fieldkit.store.sqlite` — the visit store (one SQLite file, crash-safe).
* :mod:`fieldkit.store.transfer` — one visit as a JSON file of our own, for hand-over and backup.
* :mod:`fieldkit.store.csv_import` — readings written by a digital gauge or data logger.

Only this package imports ``sqlite3``; the model, units and physics never do.
"""

from __future__ import annotations

import os
from pathlib import Path

from fieldkit.settings import default_store_path
from fieldkit.store.base import EDITABLE_FIELDS, VisitStore, VisitSummary
from fieldkit.store.sqlite import SqliteVisitStore


def open_store(path: str | os.PathLike[str] | None = None) -> SqliteVisitStore:
    """The user's store: ``path`` (the ``--store`` option), else ``FIELDKIT_STORE``, else the
    user data folder; see :func:`fieldkit.settings.default_store_path`."""

    return SqliteVisitStore(Path(default_store_path(path)))


__all__ = ["EDITABLE_FIELDS", "SqliteVisitStore", "VisitStore", "VisitSummary", "open_store"]
