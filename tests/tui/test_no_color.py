"""NO_COLOR: Textual turns the screen monochrome, and nothing on it needed colour to be read."""

from __future__ import annotations

import re

import pytest
from textual.filter import Monochrome, NoColor

from fieldkit.tui.screens.visit import VisitScreen

from .conftest import wait_until
from .screen_text import screen_text


async def test_no_color_engages_textuals_monochrome_filter_and_every_state_still_reads(
    demo_app, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setenv("NO_COLOR", "1")
    app = demo_app()
    async with app.run_test() as pilot:
        await pilot.pause()
        await pilot.press("r")
        await wait_until(pilot, lambda: isinstance(app.screen, VisitScreen))
        await pilot.pause()
        assert app.no_color
        assert any(isinstance(f, (Monochrome, NoColor)) for f in app.get_line_filters())
        text = screen_text(app)
        # States, verdicts and the band read in glyphs and words, not in colour.
        # (a "→" after the state glyph marks the recommended next test)
        assert re.search(r"✓ (→ )?charge pressure", text) and re.search(r"· (→ )?loop A pressure", text)
        assert "in range" in text and "●" in text and "[" in text


async def test_without_no_color_the_screen_keeps_its_colours(
    demo_app, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.delenv("NO_COLOR", raising=False)
    app = demo_app()
    async with app.run_test() as pilot:
        await pilot.pause()
        assert not app.no_color
        assert not any(isinstance(f, (Monochrome, NoColor)) for f in app.get_line_filters())
