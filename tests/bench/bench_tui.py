"""Time the terminal UI where a technician waits, measured as what reaches the screen.

Run it by hand (it is not collected by pytest):

    python tests/bench/bench_tui.py [--rounds 15] [--profile]

What each line measures (wall clock, this machine, medians over the rounds):

``cold: fieldkit demo → start screen drawn``
    A real ``python -m fieldkit demo`` in a pseudo-terminal (80×24), from spawning the process to
    the moment its output contains the demo's open visit row of the start screen. Includes
    interpreter start-up, every import, opening the store and profiles, and writing the frame to
    the terminal. The demo store is seeded by one uncounted run first, as after any first start.

``enter → faults on screen``
    In-process, Textual's headless driver at the given size. The clock starts when the Enter key
    event is handed to the app the way a terminal driver hands it over (``driver.send_message``;
    no test-pilot waiting or forced repaints). It stops at the first frame that (a) says
    "✓ saved <value>", and (b) shows the ranking of an independent diagnosis of the visit as
    read back from the store: the LIKELY line (top fault, bar and per cent) and, in the wide
    layout, the top row of the ranked-fault list. A "frame" is a compositor update as Textual
    would write it to a terminal: the bench turns it into the terminal byte string (the cost of
    ``render_segments`` is included) and replays that onto a character grid, so "on screen"
    means the characters a terminal would show. Only writing the bytes to a real terminal is
    left out. Textual's own frame pacing (a repaint at most every 1/60 s) is included.

``  of which the Enter handler``
    The part of the above spent inside ``VisitScreen.save_reading`` (store commit, diagnosis,
    widget updates); the rest is key dispatch, Textual's layout, rendering and frame pacing.

``open visit (r → visit screen drawn)``
    From the "r" key (resume the latest open visit) to the first frame whose LIKELY line shows
    that visit's ranking.

``diagnose only`` / ``record only``
    Workbench.diagnose on the open demo visit, and Workbench.record (one committed reading),
    outside the UI, for scale.

``--profile`` prints cProfile's top functions over the Enter rounds (80×24).
"""

from __future__ import annotations

import argparse
import asyncio
import cProfile
import io
import os
import pstats
import re
import statistics
import sys
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

from rich.cells import get_character_cell_size

_CSI = re.compile(r"\x1b\[(?P<params>[0-9;:?<=>]*)(?P<final>[@-~])|\x1b\][^\x07\x1b]*(?:\x07|\x1b\\)|\x1b[()][0-9A-Za-z]|\x1b.")
_ANY_ESCAPE = _CSI
SCREEN_WAIT = 10.0  # seconds before a round is declared lost
DEMO_JOB = "RHS-25-0301"  # the demo's open visit, first row of the start screen


class Terminal:
    """A character grid that replays what Textual writes: cursor moves, text, and (ignored)
    colours and modes. Enough to read back what a person would see."""

    def __init__(self, width: int, height: int) -> None:
        self.width, self.height = width, height
        self.rows = [[" "] * width for _ in range(height)]
        self.x = self.y = 0

    def feed(self, data: str) -> None:
        pos = 0
        for m in _CSI.finditer(data):
            self._text(data[pos:m.start()])
            pos = m.end()
            if m.group("final") == "H":
                parts = (m.group("params") or "1;1").split(";")
                self.y = int(parts[0] or 1) - 1
                self.x = int(parts[1] or 1) - 1 if len(parts) > 1 else 0
        self._text(data[pos:])

    def _text(self, text: str) -> None:
        for ch in text:
            if ch == "\n":
                self.y += 1
                self.x = 0
            elif ch == "\r":
                self.x = 0
            else:
                w = get_character_cell_size(ch)
                if w == 0:
                    continue
                if 0 <= self.y < self.height and 0 <= self.x < self.width:
                    self.rows[self.y][self.x] = ch
                    if w == 2 and self.x + 1 < self.width:
                        self.rows[self.y][self.x + 1] = ""
                self.x += w

    def lines(self) -> list[str]:
        return ["".join(r) for r in self.rows]


class FrameClock:
    """Sits where Textual hands a frame to its driver: renders it to terminal bytes as a real
    driver would, replays it on a Terminal and notes the time."""

    def __init__(self, app) -> None:  # noqa: ANN001
        from textual._compositor import CompositorUpdate

        self.app = app
        self.frames: list[tuple[float, list[str]]] = []
        self.terminal: Terminal | None = None
        original = app._display

        def display(screen, renderable) -> None:  # noqa: ANN001
            original(screen, renderable)  # headless: returns before writing anything
            if renderable is None or app._batch_count or not isinstance(renderable, CompositorUpdate):
                return
            data = renderable.render_segments(app.console)
            now = time.perf_counter()
            if self.terminal is None or (self.terminal.width, self.terminal.height) != tuple(app.size):
                self.terminal = Terminal(*app.size)
            self.terminal.feed(data)
            self.frames.append((now, self.terminal.lines()))

        app._display = display

    def first(self, since: float, shows: Callable[[list[str]], bool]) -> float | None:
        return next((t - since for t, lines in self.frames if t >= since and shows(lines)), None)


async def _quiet(clock: FrameClock, done: Callable[[], bool], quiet: float = 0.12) -> None:
    """Wait (plain sleeps, so the app runs as it would) until ``done`` holds and no frame has
    come for ``quiet`` seconds."""
    start = time.perf_counter()
    while True:
        await asyncio.sleep(0.01)
        last = clock.frames[-1][0] if clock.frames else start
        if done() and time.perf_counter() - last > quiet:
            return
        if time.perf_counter() - start > SCREEN_WAIT:
            raise TimeoutError("the screen never reached the expected state")


def _ranking_shown(diagnosis, wide: bool) -> Callable[[list[str]], bool]:  # noqa: ANN001
    """True for a screen whose LIKELY line (and, when wide, first ranked-fault row) show the
    top fault of ``diagnosis`` with its bar and per cent."""
    from fieldkit.tui.widgets.faults import fault_text, percent, prob_bar

    top = diagnosis.faults[0]
    likely = f"LIKELY ▸ {prob_bar(top.probability, 6)} {percent(top.probability)} {top.display_title}"
    row = fault_text(top).plain[:28]

    def shows(lines: list[str]) -> bool:
        line = next((ln.strip() for ln in lines if ln.strip().startswith("LIKELY ▸")), "")
        if not (line.startswith(likely) or (line.endswith("…") and likely.startswith(line[:-1]) and len(line) > 24)):
            return False
        return not wide or any(row in ln for ln in lines)

    return shows


def _saved_shown(entered: str) -> Callable[[list[str]], bool]:
    return lambda lines: any(f"✓ saved {entered}" in ln for ln in lines)


async def in_process(store: Path, rounds: int, size: tuple[int, int], profile: bool) -> dict[str, list[float]]:
    from textual import events

    from fieldkit.model.condition import Condition
    from fieldkit.session import Workbench, seed_demo
    from fieldkit.tui.app import make_app
    from fieldkit.tui.screens.visit import VisitScreen

    bench = Workbench.open(store)
    seed_demo(bench.store)
    times: dict[str, list[float]] = {"enter_to_faults": [], "handler": [], "open_visit": [],
                                     "diagnose_only": [], "record_only": []}
    app = make_app(bench, demo=True)
    clock = FrameClock(app)
    wide = size[0] >= 118
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        await _quiet(clock, lambda: bool(clock.frames))
        driver = app._driver
        assert driver is not None

        def key(name: str, char: str | None) -> float:
            event = events.Key(name, char)
            event.set_sender(app)
            t = time.perf_counter()
            driver.send_message(event)
            return t

        t0 = key("r", "r")
        await _quiet(clock, lambda: isinstance(app.screen, VisitScreen) and app.screen.diagnosis is not None)
        screen = app.screen
        assert isinstance(screen, VisitScreen) and screen.diagnosis is not None
        opened = clock.first(t0, _ranking_shown(screen.diagnosis, wide))
        assert opened is not None, "the visit screen never showed its ranking"
        times["open_visit"].append(opened)

        handler: list[float] = []
        save = screen.save_reading

        def timed_save() -> bool:
            t = time.perf_counter()
            try:
                return save()
            finally:
                handler.append(time.perf_counter() - t)

        screen.save_reading = timed_save  # type: ignore[method-assign]
        value = screen.query_one("#value")
        profiler = cProfile.Profile() if profile else None
        for i in range(rounds):
            entered = f"{20 + i * 0.5:.1f} bar"  # charge pressure, drifting down the band and below
            value.value = entered
            await pilot.pause()
            await _quiet(clock, lambda: True)
            before = len(screen.visit.current_readings())
            clock.frames.clear()
            handler.clear()
            if profiler:
                profiler.enable()
            t0 = key("enter", "\r")
            await _quiet(clock, lambda: len(screen.visit.current_readings()) > before)
            if profiler:
                profiler.disable()
            stored = bench.store.get_visit(screen.visit_id)
            expected = bench.diagnose(stored)  # independent of what the screen holds
            saved, ranked = _saved_shown(entered), _ranking_shown(expected, wide)
            took = clock.first(t0, lambda lines: saved(lines) and ranked(lines))
            assert took is not None, f"round {i}: no frame showed the saved reading with the new ranking"
            times["enter_to_faults"].append(took)
            times["handler"].append(handler[0])
        for _ in range(rounds):
            t0 = time.perf_counter()
            bench.diagnose(stored)
            times["diagnose_only"].append(time.perf_counter() - t0)
        await pilot.press("ctrl+q")
    for _ in range(rounds):
        t0 = time.perf_counter()
        bench.record(stored.id, "travel.case", "0.8 bar", Condition())
        times["record_only"].append(time.perf_counter() - t0)
    bench.close()
    if profiler:
        out = io.StringIO()
        pstats.Stats(profiler, stream=out).sort_stats("cumulative").print_stats(45)
        print(out.getvalue())
    return times


def cold_start(home: Path, runs: int) -> list[float]:
    """`python -m fieldkit demo` in a pseudo-terminal, until the start screen shows the demo's
    open visit; the first run (which seeds the demo store) is not counted."""
    import pexpect

    env = {**os.environ, "FIELDKIT_HOME": str(home), "TERM": "xterm-256color", "COLORTERM": "truecolor"}
    env.pop("NO_COLOR", None)
    out: list[float] = []
    for i in range(runs + 1):
        t0 = time.perf_counter()
        child = pexpect.spawn(sys.executable, ["-m", "fieldkit", "demo"], env=env, dimensions=(24, 80),
                              encoding="utf-8", timeout=30)
        seen = ""
        while DEMO_JOB not in _ANY_ESCAPE.sub("", seen):
            seen += child.read_nonblocking(65536, timeout=30)
        took = time.perf_counter() - t0
        child.send("\x11")  # ctrl+q: nothing typed, so it quits at once
        child.expect(pexpect.EOF, timeout=30)
        child.close()
        if i:
            out.append(took)
    return out


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=15)
    parser.add_argument("--cold-runs", type=int, default=5)
    parser.add_argument("--profile", action="store_true", help="cProfile the Enter rounds at 80x24")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        os.environ["FIELDKIT_HOME"] = str(Path(tmp) / "home")
        cold = cold_start(Path(tmp) / "cold-home", args.cold_runs)
        narrow = asyncio.run(in_process(Path(tmp) / "narrow.sqlite3", args.rounds, (80, 24), args.profile))
        wide = asyncio.run(in_process(Path(tmp) / "wide.sqlite3", args.rounds, (150, 40), False))
    rows = [("cold: fieldkit demo → start screen drawn", cold)]
    for label, res in (("80x24", narrow), ("150x40", wide)):
        rows += [(f"enter → faults on screen ({label})", res["enter_to_faults"]),
                 (f"  of which the Enter handler ({label})", res["handler"]),
                 (f"open visit: r → visit screen drawn ({label})", res["open_visit"])]
    rows += [("diagnose only", narrow["diagnose_only"]), ("record only", narrow["record_only"])]
    print(f"{'measure':<48}{'n':>4}{'median ms':>11}{'max ms':>9}")
    for name, values in rows:
        print(f"{name:<48}{len(values):>4}{statistics.median(values) * 1000:>11.1f}{max(values) * 1000:>9.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
