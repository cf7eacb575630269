"""The fieldkit terminal app and its factory.

``make_app(bench, demo=...)`` is the one way to build the app, used by the CLI and the tests, so
a test can hand in a Workbench on a temporary store. The app owns no data: every reading goes
through the Workbench to the store, which commits it before the screen says it is saved.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable

from textual.app import App, SystemCommand
from textual.screen import Screen

from fieldkit.session import Workbench
from fieldkit.tui import keys
from fieldkit.tui.commands import FieldkitCommands
from fieldkit.tui.theme import DAYLIGHT, THEMES, WORKSHOP


class FieldkitApp(App[None]):
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

    def on_mount(self) -> None:
        for theme in THEMES:
            self.register_theme(theme)
        self.theme = WORKSHOP.name
        from fieldkit.tui.screens.start import StartScreen

        self.push_screen(StartScreen(self.bench, demo=self.demo))

    def on_unmount(self) -> None:
        for bench in self._own_benches:
            bench.close()

    # --- app-wide actions ---------------------------------------------------------------------
    def unsaved_value(self) -> tuple[str, str] | None:
        """A value typed on any open visit screen but not saved."""
        for screen in reversed(self.screen_stack):
            probe: Callable[[], tuple[str, str] | None] | None = getattr(screen, "unsaved_value", None)
            if probe is not None:
                found = probe()
                if found is not None:
                    return found
        return None

    def _visit_screen_with_value(self) -> Screen | None:
        for screen in reversed(self.screen_stack):
            probe = getattr(screen, "unsaved_value", None)
            if probe is not None and probe() is not None:
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
                if screen.save_reading():  # type: ignore[attr-defined]
                    self.exit()

        self.push_screen(QuitDialog(typed, where), answer)

    def action_toggle_keys(self) -> None:
        if self.screen.query("HelpPanel"):
            self.action_hide_help_panel()
        else:
            self.action_show_help_panel()

    def action_general_caution(self) -> None:
        from fieldkit.tui.screens.dialogs import CautionScreen
        from fieldkit.tui.step import general_caution

        if isinstance(self.screen, CautionScreen):
            self.pop_screen()
            return
        step: list = []
        where = ""
        for screen in reversed(self.screen_stack):
            probe = getattr(screen, "step_cautions", None)
            if probe is not None:
                step, where = probe()
                break
        self.push_screen(CautionScreen(general_caution(self.bench.knowledge), step, where))

    def action_toggle_daylight(self) -> None:
        self.theme = DAYLIGHT.name if self.theme == WORKSHOP.name else WORKSHOP.name

    def open_demo(self) -> None:
        """Switch to the demo store (a separate file) on top of the user's own; Esc comes back."""
        from fieldkit.session import demo_store_path, seed_demo
        from fieldkit.tui.screens.start import StartScreen

        bench = Workbench(store=_open_store(demo_store_path()), library=self.bench.library,
                          settings=self.bench.settings, rules_folder=self.bench.rules_folder)
        seed_demo(bench.store)
        self._own_benches.append(bench)
        self.push_screen(StartScreen(bench, demo=True))

    def say(self, message: str, severity: str = "information") -> None:
        self.notify(message, severity=severity, markup=False)  # type: ignore[arg-type]

    def palette_commands(self) -> Iterable[tuple[str, str, Callable[[], object]]]:
        yield "General caution (procedures first)", "the machine's own procedures come first", self.action_general_caution
        yield "Daylight / workshop colours", "light colours for a laptop in the sun", self.action_toggle_daylight
        yield "Keys", "show or hide every key of this screen", self.action_toggle_keys
        yield "Quit fieldkit", "saved readings are already on disk", self.action_request_quit

    def get_system_commands(self, screen: Screen) -> Iterable[SystemCommand]:
        # Textual's own Quit would skip the unsaved-value question; ours replaces it.
        for command in super().get_system_commands(screen):
            if command.title not in ("Quit", "Keys"):
                yield command


def _open_store(path):  # noqa: ANN001, ANN202
    from fieldkit.store import open_store

    return open_store(path)


def make_app(bench: Workbench, demo: bool = False) -> FieldkitApp:
    """The fieldkit app on a Workbench (the CLI's store, or a test's temporary one)."""
    return FieldkitApp(bench, demo=demo)
