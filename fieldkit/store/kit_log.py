"""Which version of a kit item stands when two laptops changed it: the rule, in one pure function.

A kit item is one physical instrument. Its fields hang together (the kind fixes the unit of the
scale, the start sits below the end), so two edits are never mixed field by field: the whole
newest version stands (newest ``changed_at``, ties broken by the larger version id, the same
order as the header log), and every older version stays in the log as history.

One exception, because an instrument taken out of service must not come back by accident: a
retirement sticks. An edit made on a laptop that had not yet seen the retirement (a new
calibration date typed in the van) still stands for its fields, but the item stays retired, on
the earliest retirement date any version gives. Nothing in fieldkit un-retires an instrument;
a replacement gets a new id.

Kits belong to logins: ana's ``g60`` and ben's ``g60`` are two gauges. Versions are grouped by
(owner, item id) before this rule is applied.

This module is pure (no SQL); the laptop store's sync side uses it.
"""

from __future__ import annotations

import json
from collections.abc import Iterable
from dataclasses import dataclass


@dataclass(frozen=True, slots=True)
class KitVersion:
    """One saved state of one kit item: the item as JSON, when and where it was written."""

    id: str
    item_id: str
    item_json: str
    retired_on: str | None  # ISO date, or None while in service
    changed_at: str  # fixed-width ISO-8601 UTC text, so text order is time order
    origin: str
    owner: str = ""
    author: str = ""


def standing(versions: Iterable[KitVersion]) -> str | None:
    """The item the versions of one instrument stand for, as JSON text (None: no versions)."""
    listed = list(versions)
    if not listed:
        return None
    newest = max(listed, key=lambda v: (v.changed_at, v.id))
    retired = sorted(v.retired_on for v in listed if v.retired_on)
    if not retired or newest.retired_on == retired[0]:
        return newest.item_json
    item = json.loads(newest.item_json)
    item["retired_on"] = retired[0]
    return json.dumps(item, ensure_ascii=False)


def history(versions: Iterable[KitVersion]) -> list[KitVersion]:
    """Every version of one instrument, oldest first; the rule above says which one stands."""
    return sorted(versions, key=lambda v: (v.changed_at, v.id))
