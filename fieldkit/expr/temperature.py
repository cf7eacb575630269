"""Temperatures are absolute (kelvin) inside an expression; this catches °C literals misused
as differences.

``oil_temperature - tank_temperature > 20 °C`` would compare a difference with 293.15 K and
never fire; ``oil_temperature + 10 °C`` would add 283.15 K. Both are refused at compile time
with a hint to write the difference in K. Sums of two readings stay allowed (averages).
"""

from __future__ import annotations

from fieldkit.expr.dims import TempTag

_POINTS = (TempTag.POINT, TempTag.POINT_LITERAL)
HINT = "write a temperature difference in K, e.g. 20 K"


def after_add(op: str, left: TempTag, right: TempTag) -> tuple[TempTag, str | None]:
    """Tag of ``left op right`` and, for a mistake, what is wrong with it."""
    if TempTag.EITHER in (left, right):
        return TempTag.EITHER, None
    if op == "+":
        if left in _POINTS and right in _POINTS:
            if TempTag.POINT_LITERAL in (left, right):
                return TempTag.EITHER, f"adds two temperatures (a °C or °F value is absolute); {HINT}"
            return TempTag.EITHER, None  # a sum of readings, e.g. for an average
        if left is TempTag.DELTA and right is TempTag.DELTA:
            return TempTag.DELTA, None
        return TempTag.POINT, None
    if left in _POINTS and right in _POINTS:
        return TempTag.DELTA, None
    if left in _POINTS:  # point - difference
        return TempTag.POINT, None
    if right is TempTag.DELTA:
        return TempTag.DELTA, None
    if right is TempTag.POINT_LITERAL:
        return TempTag.EITHER, f"subtracts a °C or °F temperature from a temperature difference; {HINT}"
    return TempTag.EITHER, None


def check_alike(tags: list[TempTag]) -> str | None:
    """A problem when a difference meets a °C/°F literal in a comparison, when-branches or min/max."""
    if TempTag.DELTA in tags and TempTag.POINT_LITERAL in tags:
        return f"puts a temperature difference beside a °C or °F temperature (an absolute value); {HINT}"
    return None


def merge(tags: list[TempTag]) -> TempTag:
    """Tag of a value that is one of ``tags`` (a when-branch, min, max, clamp)."""
    plain = {TempTag.POINT if tag is TempTag.POINT_LITERAL else tag for tag in tags}
    return plain.pop() if len(plain) == 1 else TempTag.EITHER
