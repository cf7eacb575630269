"""Writing a profile table back as TOML a person can read and edit.

Only what profiles hold: strings, numbers, booleans, lists, tables and lists of tables. Scalars
and short lists come first in each table, then sub-tables, then arrays of tables, so the file
reads top-down like the hand-written demo profiles. The result is parsed back in the tests.
"""

from __future__ import annotations

import json
import math
import re
from typing import Any

_BARE_KEY = re.compile(r"^[A-Za-z0-9_-]+$")


def _key(name: str) -> str:
    return name if _BARE_KEY.match(name) else json.dumps(name, ensure_ascii=False)


def inline(value: Any) -> str:
    """One value as inline TOML."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            raise ValueError(f"{value} cannot be written to a profile")
        return repr(value)
    if isinstance(value, str):
        # JSON string escapes are valid TOML basic-string escapes for everything we write.
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(inline(v) for v in value) + "]"
    if isinstance(value, dict):
        return (
            "{ " + ", ".join(f"{_key(k)} = {inline(v)}" for k, v in value.items()) + " }" if value else "{}"
        )
    raise TypeError(f"cannot write a {type(value).__name__} to TOML")


def _is_table_list(value: Any) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, dict) for v in value)


def _table(
    out: list[str], path: list[str], table: dict[str, Any], indent: str, inline_keys: set[str]
) -> None:
    for k, v in table.items():
        if isinstance(v, dict) and k not in inline_keys:
            continue
        if _is_table_list(v) and k not in inline_keys:
            continue
        out.append(f"{indent}{_key(k)} = {inline(v)}")
    for k, v in table.items():
        if isinstance(v, dict) and k not in inline_keys:
            out.append("")
            out.append(f"{indent}[{'.'.join(_key(p) for p in [*path, k])}]")
            _table(out, [*path, k], v, indent, inline_keys)
    for k, v in table.items():
        if _is_table_list(v) and k not in inline_keys:
            for item in v:
                out.append("")
                out.append(f"{indent}[[{'.'.join(_key(p) for p in [*path, k])}]]")
                _table(out, [*path, k], item, indent + "  ", inline_keys)


#: Keys whose tables read best inline (a condition, a relief, a relief layout).
INLINE_KEYS = {"when", "relief_layout", "reliefs"}


def dumps(table: dict[str, Any], header: str = "") -> str:
    """A whole profile table as TOML text, with an optional comment header."""
    out = [f"# {line}" if line else "#" for line in header.splitlines()]
    if out:
        out.append("")
    _table(out, [], table, "", INLINE_KEYS)
    return "\n".join(out).strip("\n") + "\n"


__all__ = ["INLINE_KEYS", "dumps", "inline"]
