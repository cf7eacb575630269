"""fieldkit's own colours: a dark 'workshop' scheme and a light 'daylight' one for a laptop in the
sun. Colour only ever repeats what a glyph or word already says, so NO_COLOR loses nothing."""

from __future__ import annotations

from textual.theme import Theme

WORKSHOP = Theme(
    name="fieldkit-workshop",
    primary="#E0A526",  # hazard amber
    secondary="#5FA8A0",  # hydraulic-oil teal
    accent="#E0A526",
    warning="#F0C040",
    error="#E2553D",
    success="#6DBE6A",
    foreground="#E6E1D6",
    background="#1B1F22",
    surface="#24292D",
    panel="#2E353A",
    dark=True,
    variables={
        "block-cursor-foreground": "#1B1F22",
        "footer-key-foreground": "#E0A526",
    },
)

DAYLIGHT = Theme(
    name="fieldkit-daylight",
    primary="#8A5A00",
    secondary="#1F6F68",
    accent="#8A5A00",
    warning="#8A6A00",
    error="#B02A15",
    success="#2E7D32",
    foreground="#111111",
    background="#F7F5EF",
    surface="#ECE8DD",
    panel="#DDD7C8",
    dark=False,
    variables={
        "footer-key-foreground": "#8A5A00",
    },
)

THEMES = (WORKSHOP, DAYLIGHT)
