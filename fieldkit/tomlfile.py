"""Reading the TOML files people edit, with errors that point at file and line.

tomllib reports syntax errors with a line but validation errors (pydantic) only know the key
path; :func:`key_lines` maps every key path in the text to its line so a validation error can say
``profiles/drill.toml:42 [circuits.0.test_points.3.role]`` instead of just "invalid".
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path
from typing import Any, TypeVar

from pydantic import BaseModel, ValidationError

from fieldkit.errors import DataFileError

MAX_FILE_BYTES = 1_000_000
M = TypeVar("M", bound=BaseModel)

_HEADER = re.compile(r"^\[\[?\s*(?P<names>[^\]]+?)\s*\]\]?")
_KEY = re.compile(r"^(?P<key>[A-Za-z0-9_\-\"'. ]+?)\s*=")


def read_text(path: Path, limit: int = MAX_FILE_BYTES) -> str:
    """The file's text, refusing huge or binary files with a message rather than a hang."""
    try:
        size = path.stat().st_size
    except OSError as exc:
        raise DataFileError(str(path), f"cannot read: {exc.strerror or exc}") from None
    if size > limit:
        raise DataFileError(str(path), f"file is {size:,} bytes; the limit is {limit:,}")
    try:
        return path.read_text(encoding="utf-8")
    except UnicodeDecodeError as exc:
        raise DataFileError(str(path), f"not UTF-8 text (byte {exc.start})") from None
    except OSError as exc:
        raise DataFileError(str(path), f"cannot read: {exc.strerror or exc}") from None


def parse_toml(text: str, path: str) -> dict[str, Any]:
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = re.search(r"\(at line (\d+), column (\d+)\)", msg)
        line = int(m.group(1)) if m else None
        detail = re.sub(r" \(at line.*", "", msg)
        raise DataFileError(path, f"TOML syntax: {detail}", line=line) from None


def _split_keys(dotted: str) -> list[str]:
    return [part.strip().strip("\"'") for part in dotted.split(".")]


def key_lines(text: str) -> dict[tuple[Any, ...], int]:
    """Line of every table header and key assignment, by its path as pydantic reports it
    (array-of-table elements appear as integer indices)."""
    lines: dict[tuple[Any, ...], int] = {}
    last_index: dict[tuple[Any, ...], int] = {}
    current: tuple[Any, ...] = ()

    def resolve(names: list[str]) -> tuple[Any, ...]:
        path: tuple[Any, ...] = ()
        for name in names:
            path += (name,)
            if path in last_index:
                path += (last_index[path],)
        return path

    for number, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        header = _HEADER.match(line)
        if header and not line.startswith("[[") and "=" in line.split("]")[0]:
            header = None
        if header:
            names = _split_keys(header.group("names"))
            if line.startswith("[["):
                parent = resolve(names[:-1])
                array = parent + (names[-1],)
                index = last_index.get(array, -1) + 1
                last_index[array] = index
                current = array + (index,)
                lines.setdefault(array, number)
            else:
                current = resolve(names)
            lines[current] = number
            continue
        key = _KEY.match(line)
        if key:
            lines[current + tuple(_split_keys(key.group("key")))] = number
    return lines


def line_for(lines: dict[tuple[Any, ...], int], loc: tuple[Any, ...]) -> int | None:
    """The line of the deepest known key on the path (an inline table's key, say)."""
    for end in range(len(loc), 0, -1):
        if loc[:end] in lines:
            return lines[loc[:end]]
    return None


def validate(model: type[M], data: Any, path: str, text: str | None = None) -> M:
    """Validate data with a model; the first errors become one message with file, line and key."""
    try:
        return model.model_validate(data)
    except ValidationError as exc:
        raise validation_error(exc, path, text) from None


def validation_error(
    exc: ValidationError, path: str, text: str | None, prefix: tuple[Any, ...] = ()
) -> DataFileError:
    """One message from a pydantic error; ``prefix`` places a part validated on its own (a test
    point) back at its key path in the file."""
    lines = key_lines(text) if text else {}
    errors: list[dict[str, Any]] = [
        {**err, "loc": prefix + _named_key(err)} for err in exc.errors(include_url=False)
    ]
    first = errors[0]
    loc = tuple(first["loc"])
    key = ".".join(str(p) for p in loc)
    parts = [_plain_message(first)]
    for err in errors[1:4]:
        where = ".".join(str(p) for p in err["loc"]) or "(top level)"
        line = line_for(lines, tuple(err["loc"]))
        at = f"line {line}, " if line else ""
        parts.append(f"{at}{where}: {_plain_message(err)}")
    more = f" (and {len(errors) - 4} more)" if len(errors) > 4 else ""
    return DataFileError(path, "; ".join(parts) + more, line=line_for(lines, loc), key=key or None)


_NAMED = re.compile(r"^(?:Value error, )?(?:unknown )?parameter '([a-z0-9_]+)'")


def _named_key(err: Any) -> tuple[Any, ...]:
    """A table validated as a whole (circuit parameters) names the bad key in its message; put
    that key on the path so the error points at its own line, not the table's header."""
    loc = tuple(err["loc"])
    match = _NAMED.match(str(err["msg"]))
    if match and loc and loc[-1] == "parameters":
        return loc + (match.group(1),)
    return loc


def _plain_message(err: Any) -> str:
    msg = str(err["msg"])
    for prefix in ("Value error, ", "Assertion failed, "):
        if msg.startswith(prefix):
            msg = msg[len(prefix) :]
    if err["type"] == "extra_forbidden":
        return "unknown key (misspelt?)"
    if err["type"] == "missing":
        return "required key is missing"
    return msg


def load_model(model: type[M], path: Path) -> M:
    text = read_text(path)
    return validate(model, parse_toml(text, str(path)), str(path), text)
