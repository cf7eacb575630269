"""Item 1 of issue 10: the visit screen, driven by Textual's pilot through every test point of
every bundled profile and of a profile built from every circuit template, takes six kinds of
input at each (a typical value, the same in another unit system, a value beyond the gauge, a
wrong kind, garbage and an extreme number) without raising, and says what it did each time."""

from __future__ import annotations

from collections import Counter

from textual.screen import ModalScreen
from textual.widgets import Input

from fieldkit.crash_log import logs_dir
from fieldkit.tui.app import make_app
from fieldkit.tui.screens.visit import VisitScreen

from .every_point import every_point, inputs_for

#: What the screen may do with each kind of input, and words its message must hold.
#: ok = saved at once; ask = a question before saving; error = refused, nothing saved.
EXPECT: dict[str, tuple[set[str], tuple[str, ...]]] = {
    "typical": ({"ok", "ask"}, ()),
    "other-system": ({"ok", "ask"}, ()),
    "beyond-gauge": ({"ask"}, ("Save it as read?",)),
    "large, nothing to judge it by": ({"ok"}, ()),
    "wrong-kind": ({"error"}, ("needs a",)),
    "garbage": ({"error"}, ("does not start with a number",)),
    "extreme": ({"error"}, ("far beyond anything a gauge or meter shows", "nothing saved")),
}


def _mood(widget) -> str:
    return next((m for m in ("ok", "error", "ask", "info") if widget.has_class(f"-{m}")), "none")


def _said(screen: VisitScreen) -> str:
    """The sentence under the entry fields, whole."""
    data = screen.query_one("#parse-msg").data
    return str(data[0]) if data else ""


async def _settle(pilot, condition, tries: int = 50) -> None:
    for _ in range(tries):
        if condition():
            return
        await pilot.pause()
    assert condition(), "the screen never settled"


async def test_every_point_of_every_machine_takes_every_kind_of_input(walk_bench) -> None:
    bench, visits = walk_bench
    points = every_point(bench)
    # 3 demo machines and 9 templates (a new template or point only makes the walk longer).
    assert len({p.id for p, _tp in points}) >= 12 and len(points) >= 80
    app = make_app(bench)
    seen: Counter[tuple[str, str]] = Counter()
    saved = 0
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        for profile in bench.library.profiles():
            screen = VisitScreen(bench, visits[profile.id])
            await app.push_screen(screen)
            await _settle(pilot, lambda s=screen: app.screen is s and s.diagnosis is not None)
            for _circuit, point in profile.all_test_points():
                screen.select_point(point.id)
                await _settle(pilot, lambda s=screen, p=point: s.point_id == p.id)
                for typed in inputs_for(point, screen.entry.gauge):
                    value = screen.query_one("#value", Input)
                    value.value = ""
                    value.focus()
                    before = len(bench.store.get_visit(visits[profile.id]).current_readings())
                    value.insert_text_at_cursor(typed.text)  # as a paste: one change, then Enter
                    await pilot.press("enter")
                    await pilot.pause()
                    where = f"{typed.what} {typed.text!r} at {point.id} ({profile.id})"
                    message = _said(screen)
                    if isinstance(app.screen, ModalScreen):
                        outcome = "ask"
                        await pilot.press("escape")  # the question is answered "do not save"
                        await _settle(pilot, lambda s=screen: app.screen is s)
                    else:
                        outcome = _mood(screen.query_one("#parse-msg"))
                    allowed, words = EXPECT[typed.what]
                    assert outcome in allowed, f"{where}: {outcome}: {message}"
                    assert all(w in message for w in words), f"{where}: {message}"
                    after = len(bench.store.get_visit(visits[profile.id]).current_readings())
                    assert after == before + (outcome == "ok"), (
                        f"{where}: {outcome} but {after - before} saved"
                    )
                    if outcome == "ok":
                        assert "saved" in message, f"{where}: {message}"
                    saved += outcome == "ok"
                    seen[(typed.what, outcome)] += 1
            app.pop_screen()
            await pilot.pause()
        assert app.is_running and app.crash is None
    assert not logs_dir().exists() or not any(logs_dir().iterdir()), "the edge guard had to catch an error"
    print(f"\nwalked {len(points)} points, typed {sum(seen.values())} inputs, saved {saved}: {dict(seen)}")
