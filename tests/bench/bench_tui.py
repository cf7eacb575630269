"""Time the terminal UI where a technician waits, measured as what reaches the screen.

Run it by hand (it is not collected by pytest; a full run takes a couple of minutes):

    python tests/bench/bench_tui.py [--rounds 15] [--cold-runs 5] [--open-runs 3] [--profile]

Every measurement runs in a fresh interpreter against throw-away stores in a temporary
FIELDKIT_HOME. Bytecode is compiled once into a scratch folder and reused, as for a package
installed by pip; the second cold line shows the cost when every fieldkit module is compiled
from source at each start (PYTHONDONTWRITEBYTECODE=1 with an editable install, as in the
development sandbox). Times are wall clock on this machine; medians and maxima are printed.

``cold: fieldkit demo → start screen drawn``
    A real ``python -m fieldkit demo`` in a pseudo-terminal (80×24), from spawning the process to
    the moment its output contains the demo's open visit row of the start screen. Includes
    interpreter start-up, every import, opening the store and profiles, and writing the frame to
    the terminal. One uncounted run first seeds the demo store, as after any first start.

``enter → faults on screen``
    Textual's headless driver at the given size. The clock starts when the Enter key event is
    handed to the app the way a terminal driver hands it over (``driver.send_message``; no
    test-pilot waiting or forced repaints), with a charge pressure typed in the value field. It
    stops at the first frame that (a) says "✓ saved <value>", and (b) shows the ranking of an
    independent diagnosis of the visit as read back from the store: the LIKELY line (top fault,
    bar and per cent) and, in the wide layout, the top row of the ranked-fault list. A "frame" is
    a compositor update as Textual would write it to a terminal: the bench turns it into the
    terminal byte string (the cost of ``render_segments`` is included) and replays that onto a
    character grid, so "on screen" means the characters a terminal would show. Only writing the
    bytes to a real terminal is left out. Textual's frame pacing (a repaint at most every 1/60 s)
    is included.

``  of which the Enter handler``
    The part of the above spent inside ``ReadingEntry.save`` and ``VisitScreen.after_save`` (store
    commit, reading the visit back, diagnosis, updating the widgets); the rest is key dispatch,
    Textual's layout, rendering and frame pacing.

``enter → last frame of the round``
    The same clock, stopped at the last frame before the screen goes quiet (no frame for
    0.12 s): the findings, the plan's state glyphs and the step panel are painted by then.

``open visit: r → visit screen drawn``
    From the "r" key on the start screen (resume the latest open visit) to the first frame that
    shows that visit's ranking (LIKELY line and, when wide, the ranked-fault list); one sample
    per fresh process.

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
import json
import os
import pstats
import re
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING

from rich.cells import get_character_cell_size

if TYPE_CHECKING:
    from textual.app import App
    from textual.screen import Screen

    from fieldkit.diagnosis.results import Diagnosis

_ESCAPE = re.compile(
    r"\x1b\[(?P<params>[0-9;:?<=>]*)(?P<final>[@-~])|\x1b\][^\x07\x1b]*(?:\x07|\x1b\\)|\x1b[()][0-9A-Za-z]|\x1b."
)
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
        for m in _ESCAPE.finditer(data):
            self._text(data[pos : m.start()])
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
    driver would, replays it on a Terminal and notes the time. It wraps Textual's private
    ``App._display`` (checked against Textual 8.2.x); a bench may, the package never does."""

    def __init__(self, app: App) -> None:
        from textual._compositor import CompositorUpdate

        self.app = app
        self.frames: list[tuple[float, list[str]]] = []
        self.terminal: Terminal | None = None
        original = app._display

        def display(screen: Screen, renderable: object) -> None:
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

    async def wait_for(self, since: float, shows: Callable[[list[str]], bool], what: str) -> float:
        """Seconds from ``since`` to the first frame that ``shows`` accepts (waits for it with
        plain sleeps, so the app runs undisturbed)."""
        start = time.perf_counter()
        while (took := self.first(since, shows)) is None:
            if time.perf_counter() - start > SCREEN_WAIT:
                last = "\n".join(self.frames[-1][1]) if self.frames else "(no frame)"
                raise TimeoutError(f"no frame showed {what}; the last one:\n{last}")
            await asyncio.sleep(0.01)
        return took


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


def _ranking_shown(diagnosis: Diagnosis, wide: bool) -> Callable[[list[str]], bool]:
    """True for a screen whose LIKELY line (and, when wide, first ranked-fault row) show the
    top fault of ``diagnosis`` with its bar and per cent."""
    from fieldkit.tui.widgets.faults import fault_text, prob_bar
    from fieldkit.units import percent

    top = diagnosis.faults[0]
    likely = f"LIKELY ▸ {prob_bar(top.probability, 6)} {percent(top.probability)} {top.display_title}"
    row = fault_text(top).plain[:28]

    def shows(lines: list[str]) -> bool:
        line = next((ln.strip() for ln in lines if ln.strip().startswith("LIKELY ▸")), "")
        if not (
            line.startswith(likely)
            or (line.endswith("…") and likely.startswith(line[:-1]) and len(line) > 24)
        ):
            return False
        return not wide or any(row in ln for ln in lines)

    return shows


def _saved_shown(entered: str) -> Callable[[list[str]], bool]:
    return lambda lines: any(f"✓ saved {entered}" in ln for ln in lines)


async def in_process(
    store: Path, rounds: int, size: tuple[int, int], profile: bool
) -> dict[str, list[float]]:
    from textual import events

    from fieldkit.model.condition import Condition
    from fieldkit.session import Workbench, seed_demo
    from fieldkit.tui.app import make_app
    from fieldkit.tui.screens.visit import WIDE_FROM, VisitScreen

    bench = Workbench.open(store)
    seed_demo(bench.store)
    times: dict[str, list[float]] = {
        "enter_to_faults": [],
        "enter_to_settled": [],
        "handler": [],
        "open_visit": [],
        "diagnose_only": [],
        "record_only": [],
    }
    app = make_app(bench, demo=True)
    clock = FrameClock(app)
    wide = size[0] >= WIDE_FROM
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

        from fieldkit.model.visit import VisitStatus

        latest_open = next(v for v in bench.store.list_visits() if v.status is VisitStatus.OPEN)
        visit = bench.store.get_visit(latest_open.id)
        t0 = key("r", "r")
        times["open_visit"].append(
            await clock.wait_for(
                t0, _ranking_shown(bench.diagnose(visit), wide), "the opened visit's ranking"
            )
        )
        await _quiet(clock, lambda: True)
        screen = app.screen
        assert isinstance(screen, VisitScreen) and screen.visit_id == visit.id

        # The Enter handler is two steps now: the entry saves and posts Saved, the screen
        # diagnoses again and redraws; both are timed and added up per round.
        handler: list[float] = []
        entry = screen.entry
        save, after_save = entry.save, screen.after_save

        def timed_save() -> bool:
            t = time.perf_counter()
            try:
                return save()
            finally:
                handler.append(time.perf_counter() - t)

        def timed_after_save(saved: object) -> None:
            t = time.perf_counter()
            try:
                after_save(saved)  # type: ignore[arg-type]
            finally:
                handler.append(time.perf_counter() - t)

        entry.save = timed_save  # type: ignore[method-assign]
        screen.after_save = timed_after_save  # type: ignore[method-assign]
        value = screen.query_one("#value")
        profiler = cProfile.Profile() if profile else None
        for i in range(rounds):
            entered = f"{20 + i * 0.5:.1f} bar"  # charge pressure, drifting down the band and below
            value.value = entered
            await pilot.pause()
            await _quiet(clock, lambda: True)
            clock.frames.clear()
            handler.clear()
            shown_before = screen.visit
            if profiler:
                profiler.enable()
            t0 = key("enter", "\r")
            # Wait on the screen's own copy of the visit (no store reads while the app works).
            await _quiet(clock, lambda before=shown_before: screen.visit is not before)
            stored = bench.store.get_visit(visit.id)
            expected = bench.diagnose(stored)  # independent of what the screen holds
            saved, ranked = _saved_shown(entered), _ranking_shown(expected, wide)
            times["enter_to_faults"].append(
                await clock.wait_for(
                    t0,
                    lambda lines, saved=saved, ranked=ranked: saved(lines) and ranked(lines),
                    f"{entered} saved with the new ranking",
                )
            )
            await _quiet(clock, lambda: True)
            times["enter_to_settled"].append(clock.frames[-1][0] - t0)
            if profiler:
                profiler.disable()
            times["handler"].append(sum(handler))
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


def cold_start(home: Path, runs: int, env: dict[str, str]) -> list[float]:
    """`python -m fieldkit demo` in a pseudo-terminal, until the start screen shows the demo's
    open visit; the first run (which seeds the demo store and writes any bytecode cache) is not
    counted."""
    import pexpect

    env = {**env, "FIELDKIT_HOME": str(home), "TERM": "xterm-256color", "COLORTERM": "truecolor"}
    env.pop("NO_COLOR", None)
    out: list[float] = []
    for i in range(runs + 1):
        t0 = time.perf_counter()
        child = pexpect.spawn(
            sys.executable,
            ["-m", "fieldkit", "demo"],
            env=env,
            dimensions=(24, 80),
            encoding="utf-8",
            timeout=30,
        )
        seen = ""
        while DEMO_JOB not in _ESCAPE.sub("", seen):
            seen += child.read_nonblocking(65536, timeout=30)
        took = time.perf_counter() - t0
        child.send("\x11")  # ctrl+q: nothing typed, so it quits at once
        child.expect(pexpect.EOF, timeout=30)
        child.close()
        if i:
            out.append(took)
    return out


def session(
    store: Path, size: tuple[int, int], rounds: int, env: dict[str, str], profile: bool = False
) -> dict[str, list[float]]:
    """One in-process run (open the visit, then ``rounds`` readings) in a fresh interpreter."""
    args = [
        sys.executable,
        __file__,
        "--session",
        f"{size[0]}x{size[1]}",
        "--store",
        str(store),
        "--rounds",
        str(rounds),
    ]
    done = subprocess.run(
        args + (["--profile"] if profile else []), env=env, capture_output=True, text=True, check=False
    )
    if done.returncode:
        raise RuntimeError(f"the {size} session failed:\n{done.stderr[-3000:]}")
    *before, last = done.stdout.strip().splitlines()
    if before:
        print("\n".join(before))
    return json.loads(last)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=15)
    parser.add_argument("--cold-runs", type=int, default=5)
    parser.add_argument(
        "--open-runs", type=int, default=3, help="fresh processes per size that time opening the visit"
    )
    parser.add_argument("--profile", action="store_true", help="cProfile the Enter rounds at 80x24")
    parser.add_argument("--session", help=argparse.SUPPRESS)
    parser.add_argument("--store", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.session:  # the child of session()
        width, height = (int(n) for n in args.session.split("x"))
        print(
            json.dumps(asyncio.run(in_process(Path(args.store), args.rounds, (width, height), args.profile)))
        )
        return 0
    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        # As installed by pip: bytecode compiled once and reused (kept in a scratch folder here).
        cached = {
            **os.environ,
            "PYTHONPYCACHEPREFIX": str(root / "pycache"),
            "FIELDKIT_HOME": str(root / "home"),
        }
        cached.pop("PYTHONDONTWRITEBYTECODE", None)
        # As this sandbox runs an editable install: every fieldkit module compiled at each start.
        sources = {**os.environ, "PYTHONDONTWRITEBYTECODE": "1", "FIELDKIT_HOME": str(root / "home")}
        sources.pop("PYTHONPYCACHEPREFIX", None)
        cold = cold_start(root / "cold-home", args.cold_runs, cached)
        cold_sources = cold_start(root / "cold-home", args.cold_runs, sources)
        session(
            root / "warm-up.sqlite3", (150, 40), 1, cached
        )  # fills the bytecode cache for the visit screen
        results: dict[str, dict[str, list[float]]] = {}
        for size in ((80, 24), (150, 40)):
            label = f"{size[0]}x{size[1]}"
            results[label] = session(
                root / f"{label}.sqlite3", size, args.rounds, cached, args.profile and size == (80, 24)
            )
            for i in range(1, args.open_runs):
                results[label]["open_visit"] += session(root / f"{label}-{i}.sqlite3", size, 0, cached)[
                    "open_visit"
                ]
    rows = [
        ("cold: fieldkit demo → start screen drawn", cold),
        ("  the same, sources compiled at each start", cold_sources),
    ]
    for label, res in results.items():
        rows += [
            (f"enter → faults on screen ({label})", res["enter_to_faults"]),
            (f"  of which the Enter handler ({label})", res["handler"]),
            (f"enter → last frame of the round ({label})", res["enter_to_settled"]),
            (f"open visit: r → visit screen drawn ({label})", res["open_visit"]),
        ]
    rows += [
        ("diagnose only", results["80x24"]["diagnose_only"]),
        ("record only", results["80x24"]["record_only"]),
    ]
    print(f"{'measure':<48}{'n':>4}{'median ms':>11}{'max ms':>9}")
    for name, values in rows:
        if values:
            print(
                f"{name:<48}{len(values):>4}"
                f"{statistics.median(values) * 1000:>11.1f}{max(values) * 1000:>9.1f}"
            )
    return 0


if __name__ == "__main__":
    sys.exit(main())
