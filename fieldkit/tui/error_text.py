"""Plain sentences for errors shown on screen, without a traceback."""

from __future__ import annotations

from pydantic import ValidationError

from fieldkit.errors import FieldkitError


def explain(exc: BaseException, what: str = "") -> str:
    """What went wrong, in one line a technician can act on."""
    if isinstance(exc, ValidationError):
        errors = exc.errors(include_url=False)
        parts = []
        for err in errors[:3]:
            where = ".".join(str(p) for p in err["loc"])
            msg = str(err["msg"]).removeprefix("Value error, ")
            parts.append(f"{where}: {msg}" if where else msg)
        text = "; ".join(parts)
    elif isinstance(exc, FieldkitError):
        text = str(exc)
    else:
        text = f"{type(exc).__name__}: {exc}"
    return f"{what}: {text}" if what else text
