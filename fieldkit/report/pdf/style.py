"""The PDF job card's look in one place: colours, the font family and its files, type sizes.

A leaf module (it imports nothing of fieldkit), so every part of the PDF writer can use it
without importing another part back.
"""

from __future__ import annotations

from pathlib import Path

Colour = tuple[int, int, int]

INK: Colour = (33, 37, 41)
MUTED: Colour = (96, 106, 116)
#: Hairlines: table rules, the band picture's axis, the probability bar's track.
RULE: Colour = (196, 204, 212)
ACCENT: Colour = (22, 86, 110)
RANGE_FILL: Colour = (196, 228, 204)
RANGE_EDGE: Colour = (84, 150, 100)
OUT: Colour = (178, 34, 24)
OUT_FILL: Colour = (251, 226, 222)
UNSURE: Colour = (166, 104, 0)
UNSURE_FILL: Colour = (255, 240, 200)
OK: Colour = (36, 112, 58)
ZEBRA: Colour = (244, 246, 248)

FAMILY = "fieldkit-sans"
FONTS = Path(__file__).parent / "fonts"
REGULAR_FONT = FONTS / "DejaVuSans.ttf"
BOLD_FONT = FONTS / "DejaVuSans-Bold.ttf"

# Type sizes in points.
BODY = 8.0
SMALL = 6.8
TINY = 6.0
