"""The characters on a running app's screen, as lines of text, read from Textual's own SVG
screenshot (``App.export_screenshot``), so tests can look at what a person would see without
touching Textual internals."""

from __future__ import annotations

import html
import re

from textual.app import App

_TEXT = re.compile(
    r'<text class="[^"]*" x="(?P<x>[\d.]+)" y="[\d.]+" textLength="[\d.]+" '
    r'clip-path="url\(#[^)]*-line-(?P<line>\d+)\)">(?P<text>[^<]*)</text>'
)
CHAR_WIDTH = 12.2  # Rich's SVG export: 0.61 × the 20 px font


def screen_lines(app: App) -> list[str]:
    width, height = app.size
    grid = [[" "] * width for _ in range(height)]
    for m in _TEXT.finditer(app.export_screenshot()):
        row = int(m.group("line"))
        col = round(float(m.group("x")) / CHAR_WIDTH)
        for i, ch in enumerate(html.unescape(m.group("text")).replace("\u00a0", " ")):
            if 0 <= row < height and 0 <= col + i < width:
                grid[row][col + i] = ch
    return ["".join(r).rstrip() for r in grid]


def screen_text(app: App) -> str:
    return "\n".join(screen_lines(app))


def static_text(widget) -> str:
    """The whole text a Static was given (not cut to the window), for long messages."""
    content = widget.content
    return getattr(content, "plain", str(content))
