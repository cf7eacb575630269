"""The start screen's line about the shop server: when the last sync was, what waits to go up."""

from __future__ import annotations

import os

from rich.text import Text

from fieldkit.errors import FieldkitError
from fieldkit.store.replica import Replica
from fieldkit.store.sqlite import SqliteVisitStore
from fieldkit.tui.safe_text import literal


def _plural(n: int, word: str) -> str:
    return f"{n} {word}" + ("" if n == 1 else "s")


def sync_status_text(store: SqliteVisitStore, progress: str = "") -> Text:
    """One line; plain text only (the login name and counts are never read as markup)."""
    try:
        status = Replica(store).status()
    except FieldkitError as exc:
        return literal(f"sync: cannot read this laptop's sync state ({exc})")
    w = status.waiting
    parts = [_plural(w.get("visit", 0), "visit"), _plural(w.get("reading", 0), "reading")]
    if w.get("kit_item_version", 0):
        parts.append(_plural(w["kit_item_version"], "kit change"))
    others = w.get("header_change", 0) + w.get("reading_deletion", 0) + w.get("profile_version", 0)
    if others:
        parts.append(_plural(others, "other change"))
    waiting = (
        "nothing waits to go up" if status.waiting_total == 0 else "waiting to go up: " + ", ".join(parts)
    )
    configured = any(os.environ.get(k) for k in ("FIELDKIT_SERVER", "PGSERVICE", "PGHOST", "PGDATABASE"))
    if status.last_sync is None:
        when = "never synced" if configured else "no shop server set up (FIELDKIT_SERVER)"
    else:
        when = f"last sync {status.last_sync:%Y-%m-%d %H:%M} UTC as {status.login}"
    line = f"{when} · {waiting}"
    if progress:
        line += f" · sync: {progress}"
    elif configured:
        line += " · y syncs"
    return literal(line)
