"""One family of errors, so the CLI and the UI can show any of them as a plain message.

Every error carries enough context (file, line, key, test point) for a technician or a rule
author to find the mistake without a traceback.
"""

from __future__ import annotations


class FieldkitError(Exception):
    """Base of every error fieldkit reports to a person."""


class UnitInputError(FieldkitError, ValueError):
    """Text typed for a reading could not be understood as a quantity."""


class DimensionError(FieldkitError, ValueError):
    """A quantity has the wrong kind (a flow where a pressure is needed, say)."""


class AmbiguousInputError(UnitInputError):
    """Text that reads two plausible ways (``2,500 bar``: 2.5 or 2500?); the caller must ask."""

    def __init__(self, message: str, choices: tuple[object, ...]) -> None:
        super().__init__(message)
        self.choices = choices


class ImpossibleValueError(UnitInputError):
    """A value no instrument can show (below a perfect vacuum, below absolute zero, negative
    flow, too large to compute with): refused with the reason."""


class ConfirmValueError(FieldkitError):
    """A possible but unlikely value (past the gauge, far above the point's maximum): the caller
    must ask, and save only when the person confirms. ``choice`` is what would be saved."""

    def __init__(self, message: str, choice: object, danger: str = "") -> None:
        super().__init__(message)
        self.choice = choice
        #: id of a danger caution the value raises at once (an over-pressure), or ""
        self.danger = danger


class DataFileError(FieldkitError):
    """A profile, rule, visit or CSV file is wrong; the message names file and line or key."""

    def __init__(self, path: str, message: str, line: int | None = None, key: str | None = None) -> None:
        where = str(path)
        if line is not None:
            where += f":{line}"
        if key:
            where += f" [{key}]"
        super().__init__(f"{where}: {message}")
        self.path = str(path)
        self.line = line
        self.key = key
        self.detail = message


class StoreError(FieldkitError):
    """The visit store cannot be opened or written (corrupt, foreign, locked)."""
