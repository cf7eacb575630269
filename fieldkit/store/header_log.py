"""A visit header as a log of field changes, so two laptops can edit it offline and still agree.

Why a log and not the header itself: when the same visit's customer is changed on two laptops
that were both offline, there is no single "right" header to send. Each change is kept as its
own record (a global id, the field, the value as JSON, when and where it was made), and the
header is what the log *folds* to: for every field, the newest change wins; ties on the time
are broken by the change id, so every laptop and the server fold to the same header. The values
that lost stay in the log: that is the history a supervisor can read.

Gauges are fields of their own (``gauge:<id>``), so a gauge added on one laptop and another
gauge added on a second laptop both survive; a gauge removed on one laptop but used by a reading
taken on another is kept, because the reading needs it.

This module is pure (no SQL); both stores and the sync use it.
"""

from __future__ import annotations

import json
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

#: Header keys that are not merged field by field: the identity, the machine (a visit never
#: moves to another machine), the readings (append-only records of their own) and the model's
#: own format number.
NOT_LOGGED: frozenset[str] = frozenset({"id", "machine", "readings", "schema_version"})
GAUGE_PREFIX = "gauge:"
#: Header lists whose items carry their own id: each item is a field of its own (``gauge:g60``),
#: so items added on two laptops both survive. A list the model does not have is simply absent.
ITEM_LISTS: dict[str, str] = {"gauges": GAUGE_PREFIX, "observations": "observation:", "work": "work:"}
_PREFIXES = tuple(ITEM_LISTS.values())


@dataclass(frozen=True, slots=True)
class FieldChange:
    """One change of one header field; ``value`` is canonical JSON text (``null`` removes a gauge)."""

    id: str
    visit_id: str
    field: str
    value: str
    changed_at: str  # fixed-width ISO-8601 UTC text, so text order is time order
    origin: str
    author: str = ""


def canonical(value: Any) -> str:
    """One JSON spelling per value, so "changed?" is a string comparison."""
    return json.dumps(value, sort_keys=True, separators=(",", ":"), ensure_ascii=False)


def logged_fields(header: Mapping[str, Any]) -> dict[str, str]:
    """A header (the model's JSON form, without readings) as field -> canonical JSON value."""
    out: dict[str, str] = {}
    for key, value in header.items():
        if key in NOT_LOGGED:
            continue
        if key in ITEM_LISTS:
            for item in value or []:
                out[ITEM_LISTS[key] + str(item["id"])] = canonical(item)
        else:
            out[key] = canonical(value)
    return out


def changed_fields(before: Mapping[str, Any] | None, after: Mapping[str, Any]) -> dict[str, str]:
    """Fields whose value differs between two headers; an item (a gauge…) that went away becomes ``null``."""
    old = logged_fields(before) if before is not None else {}
    new = logged_fields(after)
    out = {field: value for field, value in new.items() if old.get(field) != value}
    for field in old.keys() - new.keys():
        if field.startswith(_PREFIXES):
            out[field] = "null"
    return out


def winners(changes: Iterable[FieldChange]) -> dict[str, FieldChange]:
    """For each field, the change that stands: the newest, ties broken by the larger id."""
    best: dict[str, FieldChange] = {}
    for change in changes:
        held = best.get(change.field)
        if held is None or (change.changed_at, change.id) > (held.changed_at, held.id):
            best[change.field] = change
    return best


def fold(
    visit_id: str, machine: str, changes: Iterable[FieldChange], gauges_in_use: Iterable[str] = ()
) -> dict[str, Any]:
    """The header the log stands for, as a dict the Visit model validates (readings empty).

    Items of a list (gauges, observations, work) keep the order in which they first appeared. A
    gauge whose newest change removed it is kept when a reading names it (the reading came from a
    laptop that still had it)."""
    all_changes = list(changes)
    first_seen: dict[str, tuple[str, str]] = {}
    last_present: dict[str, tuple[tuple[str, str], str]] = {}
    for change in all_changes:
        if change.field.startswith(_PREFIXES):
            key = (change.changed_at, change.id)
            if change.field not in first_seen or key < first_seen[change.field]:
                first_seen[change.field] = key
            held = last_present.get(change.field)
            if change.value != "null" and (held is None or key > held[0]):
                last_present[change.field] = (key, change.value)
    header: dict[str, Any] = {"id": visit_id, "machine": machine}
    items: dict[str, list[tuple[tuple[str, str], Any]]] = {"gauges": []}
    used = {GAUGE_PREFIX + g for g in gauges_in_use}
    for field, change in winners(all_changes).items():
        name = next((n for n, prefix in ITEM_LISTS.items() if field.startswith(prefix)), None)
        if name is None:
            header[field] = json.loads(change.value)
            continue
        value = change.value
        if value == "null" and field in used and field in last_present:
            value = last_present[field][1]
        listed = items.setdefault(name, [])
        if value != "null":
            listed.append((first_seen[field], json.loads(value)))
    for name, listed in items.items():
        header[name] = [item for _, item in sorted(listed, key=lambda pair: pair[0])]
    header["readings"] = []
    return header


def history(changes: Iterable[FieldChange], field: str) -> list[FieldChange]:
    """Every value a field has had, oldest first; the last one stands."""
    return sorted((c for c in changes if c.field == field), key=lambda c: (c.changed_at, c.id))
