"""Text from people and data files, made safe to lay out without changing what it says.

A note, a job number or a rule's message may hold tabs, pasted terminal escapes, bidi overrides or
(from JSON) a lone surrogate. Every writer prints the same cleaned text (:func:`plain`, shared with
the command line's terminal output in :mod:`fieldkit.plaintext`), and none of them interprets it.
"""

from __future__ import annotations

from fieldkit import units
from fieldkit.plaintext import one_line, plain

#: Between a number and its unit sign, so a line never breaks between them.
NBSP = "\u00a0"


def percent(p: float) -> str:
    """A probability as the job card prints it (see :func:`fieldkit.units.percent`), with a
    no-break space before the sign so a line never breaks inside it."""
    return units.percent(p, gap=NBSP)


__all__ = ["NBSP", "one_line", "percent", "plain"]
