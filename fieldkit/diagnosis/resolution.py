"""A reading as a technician reads it: to the gauge's resolution, with the gauge's class limit.

The engine keeps each reading's standard uncertainty u = a/√3 for its statistics (a limit of
error ±a read as a rectangular distribution, JCGM 100:2008, 4.3.7). Screens and job cards show
±a itself, the EN 837-1 limit (class % × span) a technician knows from the dial, and the value to
no more figures than that limit allows. Both are made here only, so they never disagree.
"""

from __future__ import annotations

import math

from fieldkit.diagnosis.results import ReadingCheck

#: a = u·√3 for a limit of error read as a rectangular distribution (JCGM 100:2008, 4.3.7).
RECTANGULAR = 3**0.5


def decimals_for(limit: float) -> int:
    """Decimals that show a value no finer than the gauge can tell: the first significant figure
    of its limit of error (±0.6 → 1 decimal, ±6 → none). common practice."""
    if limit <= 0 or not math.isfinite(limit):
        return 1
    return max(0, -math.floor(math.log10(limit)))


def limit_text(limit: float) -> str:
    """A class limit as printed: two significant figures at most (±0.16, ±0.6, ±6)."""
    if limit <= 0 or not math.isfinite(limit):
        return "±0"
    d = max(0, 1 - math.floor(math.log10(limit)))
    text = f"{round(limit, d):.{d}f}"
    return "±" + (text.rstrip("0").rstrip(".") if "." in text else text)


def at_resolution(value: float, limit: float) -> str:
    return f"{value:.{decimals_for(limit)}f}"


def class_limit_of(check: ReadingCheck) -> float:
    """The limit of error ±a of the gauge that took a reading, in the check's unit."""
    return check.uncertainty_num * RECTANGULAR


def as_read_with_limit(check: ReadingCheck) -> tuple[str, str]:
    """The reading to its gauge's resolution and the gauge's class limit ('26.2 bar', '±0.6 bar')."""
    if check.value_num is None or not check.uncertainty_num:
        return check.value, check.uncertainty
    limit = class_limit_of(check)
    return f"{at_resolution(check.value_num, limit)} {check.unit}", f"{limit_text(limit)} {check.unit}"


def as_read(check: ReadingCheck) -> str:
    """A checked reading to its gauge's resolution (the first figure of its limit of error)."""
    return as_read_with_limit(check)[0]


__all__ = [
    "RECTANGULAR",
    "as_read",
    "as_read_with_limit",
    "at_resolution",
    "class_limit_of",
    "decimals_for",
    "limit_text",
]
