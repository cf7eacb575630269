"""The one error the expression language raises, with the source and a caret under the spot.

A rule author sees a TOML file, not a traceback, so every message quotes the expression and
points at the column; the rule loader adds the file and line in front.
"""

from __future__ import annotations

from fieldkit.errors import FieldkitError

# Long expressions are shown as a window around the caret so the message stays readable.
_WINDOW = 72


class ExprError(FieldkitError):
    """An expression that cannot be compiled or evaluated.

    Attributes:
        message: the explanation alone, without the source excerpt.
        source: the whole expression text (may be empty when the text itself was unusable).
        position: 0-based index of the offending character in ``source``, or None.
        line: 1-based line inside the expression (1 unless it spans several lines), or None.
        column: 1-based column inside that line, or None.
    """

    def __init__(self, message: str, source: str = "", position: int | None = None) -> None:
        self.message = message
        self.source = source
        self.position = position
        self.line: int | None = None
        self.column: int | None = None
        if position is not None and source:
            position = max(0, min(position, len(source)))
            self.position = position
            self.line = source.count("\n", 0, position) + 1
            self.column = position - (source.rfind("\n", 0, position) + 1) + 1
        super().__init__(self._render())

    def _render(self) -> str:
        if not self.source or self.position is None or self.column is None:
            return self.message
        start = self.source.rfind("\n", 0, self.position) + 1
        stop = self.source.find("\n", self.position)
        text = self.source[start : len(self.source) if stop < 0 else stop]
        caret = self.column - 1
        if len(text) > _WINDOW:  # show a window around the caret
            left = max(0, min(caret - _WINDOW // 2, len(text) - _WINDOW))
            right = left + _WINDOW
            shown = ("…" if left else "") + text[left:right] + ("…" if right < len(text) else "")
            caret = caret - left + (1 if left else 0)
            text = shown
        text = "".join(" " if ch in "\t\r" else ch for ch in text)
        where = f" (line {self.line}, column {self.column})" if self.line and self.line > 1 else ""
        return f"{self.message}{where}\n  {text}\n  {' ' * caret}^"
