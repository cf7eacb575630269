"""The fieldkit terminal app and its factory.

``make_app(bench, demo=...)`` is the one way to build the app, used by the CLI and the tests, so
a test can hand in a Workbench on a temporary store. The app owns no data: every reading goes
through the Workbench to the store, which commits it before the screen says it is saved.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from pathlib import Path

from rich.text import Text
from textual.app import App, SystemCommand
from textual.screen import Screen

from fieldkit.crash_log import plain_message, write_crash_log
from fieldkit.session import Workbench
from fieldkit.tui import keys
from fieldkit.tui.commands import Commanded, FieldkitCommands
from fieldkit.tui.screens.base import FieldkitScreen
from fieldkit.tui.theme import DAYLIGHT, THEMES, WORKSHOP


class FieldkitApp(Commanded, App[None]):
    """Screens: start → visit → (faults, readings, history, finish)."""

    CSS_PATH = "fieldkit.tcss"
    TITLE = "fieldkit"
    BINDINGS = keys.APP
    COMMANDS = App.COMMANDS | {FieldkitCommands}
    COMMAND_PALETTE_BINDING = "f3"
    COMMAND_PALETTE_DISPLAY = "F3"
    ENABLE_COMMAND_PALETTE = True

    def __init__(self, bench: Workbench, *, demo: bool = False) -> None:
        super().__init__()
        self.bench = bench
        self.demo = demo
        self._own_benches: list[Workbench] = []
        #: the error that stopped the app and the log file it was written to, if one did
        self.crash: tuple[BaseException, Path] | None = None

    def on_mount(self) -> None:
        for theme in THEMES:
            self.register_theme(theme)
        self.theme = WORKSHOP.name
        from fieldkit.tui.screens.start import StartScreen

        self.push_screen(StartScreen(self.bench, demo=self.demo))
        problem = settings_problem()
        if problem:
            self.notify(problem, title="Settings", severity="warning", timeout=12, markup=False)

    def _handle_exception(self, error: Exception) -> None:
        """The app's last edge (Textual calls this for any error no screen handled): the details
        go to a log file, the person gets one plain sentence naming it, and the process exits
        non-zero. Every reading was committed before it was shown as saved, so none is lost.
        Under the test pilot the error is also handed on, so a test sees it."""
        log = write_crash_log(error, "running the terminal UI")
        self.crash = (error, log)
        if self.is_headless:
            super()._handle_exception(error)
            return
        self.exit(return_code=1)
        self.panic(Text(plain_message(error, log, "running the terminal UI") + "\nfieldkit had to stop."))

    def on_unmount(self) -> None:
        for bench in self._own_benches:
            bench.close()

    # --- app-wide actions ---------------------------------------------------------------------
    def unsaved_value(self) -> tuple[str, str] | None:
        """A value typed on any open visit screen but not saved."""
        for screen in reversed(self.screen_stack):
            if isinstance(screen, FieldkitScreen):
                found = screen.unsaved_value()
                if found is not None:
                    return found
        return None

    def _visit_screen_with_value(self) -> FieldkitScreen | None:
        for screen in reversed(self.screen_stack):
            if isinstance(screen, FieldkitScreen) and screen.unsaved_value() is not None:
                return screen
        return None

    async def action_quit(self) -> None:
        """Quit, but never lose a typed value without asking (saved readings are already on disk)."""
        self.action_request_quit()

    def action_request_quit(self) -> None:
        from fieldkit.tui.screens.dialogs import QuitDialog

        unsaved = self.unsaved_value()
        if unsaved is None:
            self.exit()
            return
        if isinstance(self.screen, QuitDialog):
            return
        typed, where = unsaved

        def answer(choice: str | None) -> None:
            screen = self._visit_screen_with_value()
            if choice == "discard":
                self.exit()
            elif choice == "save" and screen is not None:
                if screen is not self.screen:
                    while self.screen is not screen and len(self.screen_stack) > 1:
                        self.pop_screen()
                if screen.save_reading():
                    self.exit()

        self.push_screen(QuitDialog(typed, where), answer)

    def action_toggle_keys(self) -> None:
        from fieldkit.tui.screens.dialogs import KeysScreen

        if isinstance(self.screen, KeysScreen):
            self.pop_screen()
            return
        self.push_screen(KeysScreen(key_rows(self, self.screen), "Keys on this screen (F1 or Esc closes)"))

    def action_general_caution(self) -> None:
        from fieldkit.tui.screens.dialogs import CautionScreen
        from fieldkit.tui.step import general_caution

        if isinstance(self.screen, CautionScreen):
            self.pop_screen()
            return
        step: list = []
        where = ""
        for screen in reversed(self.screen_stack):
            if isinstance(screen, FieldkitScreen):
                step, where = screen.step_cautions()
                if step or where:
                    break
        self.push_screen(CautionScreen(general_caution(self.bench.knowledge), step, where))

    def action_toggle_daylight(self) -> None:
        self.theme = DAYLIGHT.name if self.theme == WORKSHOP.name else WORKSHOP.name

    def on_start_screen_demo_wanted(self) -> None:
        self.open_demo()

    def open_demo(self) -> None:
        """Switch to the demo store (a separate file) on top of the user's own; Esc comes back."""
        from fieldkit.session import demo_store_path, seed_demo
        from fieldkit.tui.screens.start import StartScreen

        bench = Workbench(
            store=_open_store(demo_store_path()),
            library=self.bench.library,
            settings=self.bench.settings,
            rules_folder=self.bench.rules_folder,
        )
        seed_demo(bench.store)
        self._own_benches.append(bench)
        self.push_screen(StartScreen(bench, demo=True))

    def say(self, message: str, severity: str = "information") -> None:
        self.notify(message, severity=severity, markup=False)  # type: ignore[arg-type]

    def set_units(self, display: str | None = None, decimal_comma: bool | None = None) -> None:
        """Change and remember the display units or the decimal separator, then redraw."""
        update: dict[str, object] = {}
        if display is not None:
            update["display"] = display
        if decimal_comma is not None:
            update["decimal_comma"] = decimal_comma
        self.bench.settings = self.bench.settings.model_copy(update=update)
        try:
            self.bench.settings.save()
        except OSError as exc:
            self.notify(f"not remembered for next time: {exc}", severity="warning", markup=False)
        if isinstance(self.screen, FieldkitScreen):
            self.screen.reload()
        s = self.bench.settings
        self.notify(
            f"values shown in {self.bench.system.pressure}, {self.bench.system.flow}, "
            f"{self.bench.system.temperature}; '2,500' reads as {'2.5' if s.decimal_comma else '2500'}",
            markup=False,
        )

    def palette_commands(self) -> Iterable[tuple[str, str, Callable[[], object]]]:
        yield (
            "General caution (procedures first)",
            "the machine's own procedures come first",
            self.action_general_caution,
        )
        yield "Units: bar, L/min, °C", "metric display", lambda: self.set_units(display="metric")
        yield "Units: MPa, L/min, °C", "SI display", lambda: self.set_units(display="si")
        yield "Units: psi, gpm, °F", "US display", lambda: self.set_units(display="us")
        comma = self.bench.settings.decimal_comma
        yield (
            f"Decimal comma {'off' if comma else 'on'}",
            "how '2,500' is read when it could be either",
            lambda: self.set_units(decimal_comma=not comma),
        )
        yield (
            "Daylight / workshop colours",
            "light colours for a laptop in the sun",
            self.action_toggle_daylight,
        )
        yield "Keys", "show or hide every key of this screen", self.action_toggle_keys
        yield "Quit fieldkit", "saved readings are already on disk", self.action_request_quit

    def get_system_commands(self, screen: Screen) -> Iterable[SystemCommand]:
        # Textual's own Quit would skip the unsaved-value question; ours replaces it.
        for command in super().get_system_commands(screen):
            if command.title not in ("Quit", "Keys"):
                yield command


def settings_problem() -> str:
    """A sentence when the settings file exists but cannot be read (Settings.load then falls
    back to defaults silently; the technician should know their defaults were not used)."""
    import json

    from pydantic import ValidationError

    from fieldkit.settings import Settings, data_home

    path = data_home() / "settings.json"
    if not path.exists():
        return ""
    try:
        Settings.model_validate(json.loads(path.read_text(encoding="utf-8")))
    except (OSError, ValueError, ValidationError) as exc:
        first = str(exc).splitlines()[0][:120]
        return (
            f"{path} could not be read ({first}); default settings are used and it is rewritten when you "
            "change one."
        )
    return ""


def key_rows(app: App, screen: Screen) -> list[tuple[str, str]]:
    """The keys a person can press here: the screen's hints, its bindings, then the app's."""
    rows: list[tuple[str, str]] = list(screen.KEY_HINTS) if isinstance(screen, FieldkitScreen) else []
    seen: set[str] = set()
    for key, active in screen.active_bindings.items():
        if not isinstance(active.node, (Screen, App)) or not active.binding.description or key in seen:
            continue
        seen.add(key)
        what = active.binding.description
        if active.binding.tooltip:
            what += f": {active.binding.tooltip}"
        rows.append((app.get_key_display(active.binding), what))
    return rows


def _open_store(path):
    from fieldkit.store import open_store

    return open_store(path)


def make_app(bench: Workbench, demo: bool = False) -> FieldkitApp:
    """The fieldkit app on a Workbench (the CLI's store, or a test's temporary one)."""
    return FieldkitApp(bench, demo=demo)
