"""Saving an edited profile into the text it was read from, so the person's comments stay.

A profile is a file people write notes in ("# relief re-set 2024 after the hose burst"). The
machine builder edits the table it parsed; writing that table afresh would drop every comment. So
the edited table is merged into the original document (tomlkit keeps comments, blank lines and
key order): a value that did not change is left exactly as written, a changed one is replaced
and keeps its end-of-line comment, a new key is added at the end of its table, a key the edit
removed goes (with its own line), and circuits are matched by their ``id``, so removing or adding
one leaves the comments of the others where they were.
"""

from __future__ import annotations

from typing import Any

import tomlkit
from tomlkit.container import Container
from tomlkit.exceptions import TOMLKitError
from tomlkit.items import AoT, Comment, Item, Table, Whitespace


def _value_item(value: Any, old: Any) -> Any:
    """A new value for a key, carrying the old one's end-of-line comment."""
    item = tomlkit.item(value)
    comment = getattr(getattr(old, "trivia", None), "comment", "")
    if comment and isinstance(item, Item) and not isinstance(item, (Table, AoT)):
        item.comment(comment.lstrip("#").strip())
    return item


def _deepest(table: Table) -> Container:
    """The container whose lines end the table's text (its last sub-table's, if any)."""
    body = table.value.body
    if body and body[-1][0] is not None:
        last = body[-1][1]
        if isinstance(last, Table):
            return _deepest(last)
        if isinstance(last, AoT) and last.body:
            return _deepest(last.body[-1])
    return table.value


def _take_trailing(table: Table) -> list[tuple[Any, Item]]:
    """Comment and blank lines at the end of a table: in the file they sit just above the next
    table's header, so they belong to it (tomlkit files them under the table before)."""
    body = _deepest(table).body
    out: list[tuple[Any, Item]] = []
    while body and body[-1][0] is None and isinstance(body[-1][1], (Comment, Whitespace)):
        out.insert(0, body.pop())
    return out


def _merge_aot(old: AoT, new: list[dict[str, Any]]) -> AoT:
    """Tables of an array matched by ``id`` when they have one, else by position; the comment
    lines above each table's header move with it."""
    olds = list(old.body)
    leads = {id(olds[i]): _take_trailing(olds[i - 1]) for i in range(1, len(olds))}
    tail = _take_trailing(olds[-1]) if olds else []
    by_id = {t.get("id"): t for t in olds if isinstance(t.get("id"), str)}
    tables: list[Table] = []
    for i, value in enumerate(new):
        match = by_id.get(value.get("id")) if "id" in value else (old.body[i] if i < len(old.body) else None)
        if match is None:
            fresh = tomlkit.table()
            for k, v in value.items():
                fresh[k] = v
            tables.append(fresh)
        else:
            _merge(match, value)
            tables.append(match)
    for before, table in zip(tables, tables[1:], strict=False):
        _deepest(before).body.extend(leads.get(id(table), []))
    if tables and id(tables[0]) in leads:
        # Now first in the array, with no table before it to carry its comment lines: they go
        # just above its own header.
        first = tables[0]
        first.trivia.indent = "".join(item.as_string() for _k, item in leads[id(first)]) + first.trivia.indent
    if tables:
        _deepest(tables[-1]).body.extend(tail)
    return AoT(tables)


def _merge(old: Container | Table | Any, new: dict[str, Any]) -> None:
    for key in [k for k in old if k not in new]:
        del old[key]
    for key, value in new.items():
        if key not in old:
            old[key] = value
            continue
        current = old[key]
        plain = current.unwrap() if hasattr(current, "unwrap") else current
        if plain == value:
            continue  # unchanged: exactly as the person wrote it
        if isinstance(value, dict) and isinstance(plain, dict) and not _inline(current):
            _merge(current, value)
        elif (
            isinstance(current, AoT)
            and isinstance(value, list)
            and value
            and all(isinstance(v, dict) for v in value)
        ):
            old[key] = _merge_aot(current, value)
        else:
            old[key] = _value_item(value, current)


def _inline(item: Any) -> bool:
    return type(item).__name__ == "InlineTable"


def update_text(original: str, table: dict[str, Any]) -> str:
    """``original`` TOML text rewritten to hold ``table``, its comments and layout kept.

    Raises:
        ValueError: the original text is not TOML (the caller writes the table afresh).
    """
    try:
        doc = tomlkit.parse(original)
    except TOMLKitError as exc:
        raise ValueError(f"the original file is not TOML: {exc}") from None
    _merge(doc, table)
    return tomlkit.dumps(doc)


__all__ = ["update_text"]
