"""The machine builder: describe a machine from its spec sheet without opening an editor.

Pick circuits from the template library (several of a kind), give each the maker's figures in
their own units (checked as they are typed), tick the optional parts fitted, name where the test
points are, and see the plan the figures make, with every range and its source, before saving.
A figure left empty takes the template's typical value, marked so. The screen edits a plain
profile table (the same shape as a TOML file) and resolves it with the profile loader, so what
it shows is exactly what a visit will use. Keyboard-first; fits 80×24 by scrolling.
"""

from __future__ import annotations

import copy
import re
from pathlib import Path
from typing import Any

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Grid, Horizontal, Vertical, VerticalScroll
from textual.widgets import Button, Input, Label, Select, SelectionList, Static

from fieldkit.errors import FieldkitError
from fieldkit.model.loading import profile_from_raw
from fieldkit.model.machine_plan import figures_used, plan_lines, range_words, when_words
from fieldkit.model.parameters import PARAMETERS
from fieldkit.model.parts import PART_LABELS
from fieldkit.model.profile import MachineProfile
from fieldkit.model.quantity import parse_for_kind
from fieldkit.model.toml_edit import update_text
from fieldkit.model.toml_writer import dumps
from fieldkit.session import Workbench
from fieldkit.settings import save_profile_text, user_profiles_dir
from fieldkit.tomlfile import read_text
from fieldkit.tui import keys
from fieldkit.tui.error_text import explain
from fieldkit.tui.safe_text import literal
from fieldkit.tui.screens.base import FieldkitScreen
from fieldkit.tui.screens.dialogs import Dialog
from fieldkit.tui.widgets.keybar import KeyBar

_ID = re.compile(r"^[a-z0-9][a-z0-9_\-]*$")
HEADER = "Machine profile written by fieldkit's machine builder; fieldkit machine check FILE checks it."


def slug(text: str) -> str:
    """A machine or circuit id from a name: lower case, digits, - and _."""
    out = re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-")
    return out[:40] or "machine"


class PlanDialog(Dialog):
    """The whole machine's test plan, every range with its source; Esc closes."""

    def __init__(self, lines: list[str]) -> None:
        super().__init__()
        self._lines = lines

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog dialog-tall"):
            yield Label(Text("Test plan", style="bold"), classes="dialog-title")
            with VerticalScroll():
                yield Static(literal("\n".join(self._lines)), id="plan-text")
        yield KeyBar()


class MachineBuilderScreen(FieldkitScreen):
    """Dismisses with the saved machine's id, or None when cancelled."""

    BINDINGS = keys.MACHINE_BUILDER

    def __init__(self, bench: Workbench, raw: dict[str, Any] | None = None, path: Path | None = None) -> None:
        super().__init__()
        self.bench = bench
        self.templates = bench.library.templates
        self.raw: dict[str, Any] = copy.deepcopy(raw) if raw else {"circuits": []}
        self.raw.setdefault("circuits", [])
        self.path = path  # the file being edited; None for a new machine or a copy
        self.current = 0
        self.profile: MachineProfile | None = None

    # --- layout -------------------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        title = "Edit machine" if self.path else "New machine"
        yield Static(
            Text(f"{title} · Tab moves · ^n adds the circuit · ^s saves · ^p plan · Esc cancels", end=""),
            id="topbar",
        )
        templates = [(literal(t.name), tid) for tid, (t, _r) in sorted(self.templates.items())]
        with VerticalScroll(id="builder-body"):
            with Grid(classes="form"):
                yield Label("Name")
                yield Input(
                    self.raw.get("name", ""), placeholder="e.g. Yard crane 2", id="m-name", compact=True
                )
                yield Label("Id")
                yield Input(self.raw.get("id", ""), placeholder="from the name", id="m-id", compact=True)
                yield Label("Rated speed")
                yield Input(
                    self.raw.get("rated_speed", ""), placeholder="e.g. 2100 rpm", id="m-speed", compact=True
                )
                yield Label("Max pressure")
                yield Input(
                    self.raw.get("rated_max_pressure", ""),
                    placeholder="e.g. 250 bar",
                    id="m-pressure",
                    compact=True,
                )
                yield Label("Add circuit")
                yield Select(templates, id="template", compact=True, allow_blank=False)
            yield Static("", id="circuit-list")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Add (^n)", id="add")
                yield Button("Next circuit (^o)", id="next-circuit")
                yield Button("Remove (^r)", id="remove")
            yield Vertical(id="circuit-editor")
            yield Static("", id="builder-error", classes="inline-error")
            yield Static("", id="circuit-plan")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Save (^s)", id="save", variant="primary")
                yield Button("Cancel (Esc)", id="cancel")
        yield KeyBar()

    async def on_mount(self) -> None:
        self._show_circuits()
        await self._rebuild_editor()
        self.query_one("#m-name", Input).focus()

    # --- the machine's own figures ----------------------------------------------------------
    @on(Input.Changed, "#m-name, #m-id, #m-speed, #m-pressure")
    def _machine_changed(self, event: Input.Changed) -> None:
        field = {"m-name": "name", "m-id": "id", "m-speed": "rated_speed", "m-pressure": "rated_max_pressure"}
        key = field[event.input.id or ""]
        value = event.value.strip()
        if value:
            self.raw[key] = value
        else:
            self.raw.pop(key, None)
        if key == "name" and not self.query_one("#m-id", Input).value:
            self.raw["id"] = slug(value)
        self._refresh_plan()

    # --- circuits -----------------------------------------------------------------------------
    def _circuit(self) -> dict[str, Any] | None:
        circuits = self.raw["circuits"]
        return circuits[self.current] if 0 <= self.current < len(circuits) else None

    def _show_circuits(self) -> None:
        text = Text(end="")
        circuits = self.raw["circuits"]
        if not circuits:
            text.append("No circuits yet: choose a template above and press ^n (several of a kind are fine).")
        for i, c in enumerate(circuits):
            mark = "▸ " if i == self.current else "  "
            text.append(mark + f"{i + 1}. ", "bold" if i == self.current else "")
            text.append_text(literal(f"{c.get('name', '')} [{c.get('id', '')}, {c.get('template', '')}]"))
            text.append("\n" if i < len(circuits) - 1 else "")
        self.query_one("#circuit-list", Static).update(text)

    async def action_add_circuit(self) -> None:
        tid = self.query_one("#template", Select).value
        if not isinstance(tid, str):
            return
        tmpl, _raw = self.templates[tid]
        taken = {c.get("id") for c in self.raw["circuits"]}
        cid, n = tid, 1
        while cid in taken:
            n += 1
            cid = f"{tid}_{n}"
        circuit: dict[str, Any] = {"id": cid, "name": tmpl.name + (f" {n}" if n > 1 else ""), "template": tid}
        if tmpl.parts:
            circuit["fitted_parts"] = [p.value for p in tmpl.parts]
        self.raw["circuits"].append(circuit)
        self.current = len(self.raw["circuits"]) - 1
        self._show_circuits()
        await self._rebuild_editor()

    async def action_next_circuit(self) -> None:
        if self.raw["circuits"]:
            self.current = (self.current + 1) % len(self.raw["circuits"])
            self._show_circuits()
            await self._rebuild_editor()

    async def action_remove_circuit(self) -> None:
        if self._circuit() is not None:
            del self.raw["circuits"][self.current]
            self.current = max(0, min(self.current, len(self.raw["circuits"]) - 1))
            self._show_circuits()
            await self._rebuild_editor()

    async def _rebuild_editor(self) -> None:
        editor = self.query_one("#circuit-editor", Vertical)
        await editor.remove_children()
        circuit = self._circuit()
        if circuit is None:
            self._refresh_plan()
            return
        widgets: list[Any] = []
        tid = circuit.get("template")
        if tid not in self.templates:
            widgets.append(
                Static(literal(f"Circuit '{circuit.get('id')}' has no template: edit its file by hand."))
            )
            await editor.mount_all(widgets)
            self._refresh_plan()
            return
        tmpl, raw = self.templates[tid]
        widgets.append(Label(literal(f"Circuit {self.current + 1}: {tmpl.name}"), classes="section-title"))
        form = Grid(classes="form")
        rows: list[Any] = [Label("Name"), Input(circuit.get("name", ""), id="c-name", compact=True)]
        if tmpl.sections:
            most = len(tmpl.sections)
            have = tmpl.sections_fitted(list(circuit.get("omit_test_points", [])))
            rows.append(Label("Sections"))
            rows.append(
                Input(str(have), placeholder=f"1 to {most}", id="c-sections", compact=True, max_length=2)
            )
        given = circuit.get("parameters", {})
        for name in figures_used(raw):
            _kind, label = PARAMETERS[name]
            typical = tmpl.parameters.get(name)
            hint = (
                f"typical {typical.typical} ({typical.source.split(':')[0]})"
                if typical
                else "no typical value"
            )
            rows.append(Label(literal(label[:24]), classes="figure-label"))
            rows.append(Input(str(given.get(name, "")), placeholder=hint, id=f"fig-{name}", compact=True))
        widgets.append(form)
        if tmpl.parts:
            fitted = circuit.get("fitted_parts")
            ticked = set(fitted) if isinstance(fitted, list) else {p.value for p in tmpl.parts}
            widgets.append(Label("Parts fitted (space ticks)", classes="section-title"))
            widgets.append(
                SelectionList[str](
                    *[(PART_LABELS[p], p.value, p.value in ticked) for p in tmpl.parts], id="parts"
                )
            )
        widgets.append(
            Label("Where the test points are (empty keeps the template's words)", classes="section-title")
        )
        where = Grid(classes="form")
        own = {tp.get("id"): tp for tp in circuit.get("test_points", []) if isinstance(tp, dict)}
        points: list[Any] = []
        for tp in tmpl.test_points:
            local = tp.id.split(".")[-1]
            points.append(Label(literal(tp.label[:24]), classes="figure-label"))
            points.append(
                Input(
                    str(own.get(local, {}).get("location", "")),
                    placeholder=tp.location[:60],
                    id=f"loc-{local}",
                    compact=True,
                )
            )
        widgets.append(where)
        await editor.mount_all(widgets)
        await form.mount_all(rows)
        await where.mount_all(points)
        self._refresh_plan()

    @on(Input.Changed, "#c-name")
    def _circuit_name(self, event: Input.Changed) -> None:
        circuit = self._circuit()
        if circuit is not None:
            circuit["name"] = event.value.strip() or circuit["id"]
            self._show_circuits()

    @on(Input.Changed, "#c-sections")
    def _sections(self, event: Input.Changed) -> None:
        """How many work sections the bank has: the later sections' points are omitted."""
        event.stop()
        circuit = self._circuit()
        if circuit is None or circuit.get("template") not in self.templates:
            return
        tmpl, _raw = self.templates[circuit["template"]]
        most = len(tmpl.sections)
        text = event.value.strip()
        count = int(text) if text.isdigit() else 0
        if not 1 <= count <= most:
            event.input.set_class(True, "-invalid")
            self.query_one("#builder-error", Static).update(
                literal(
                    f"✗ sections: type a number from 1 to {most}, not '{text}'; for more, add a second "
                    "circuit from this template"
                )
            )
            return
        event.input.set_class(False, "-invalid")
        section_points = {p for points in tmpl.sections for p in points}
        kept = [p for p in circuit.get("omit_test_points", []) if p not in section_points]
        omitted = kept + [p for points in tmpl.sections[count:] for p in points]
        if omitted:
            circuit["omit_test_points"] = omitted
        else:
            circuit.pop("omit_test_points", None)
        self._refresh_plan()

    @on(Input.Changed)
    def _figure_or_place(self, event: Input.Changed) -> None:
        wid = event.input.id or ""
        circuit = self._circuit()
        if circuit is None or not (wid.startswith("fig-") or wid.startswith("loc-")):
            return
        event.stop()
        value = event.value.strip()
        if wid.startswith("fig-"):
            name = wid.removeprefix("fig-")
            params = circuit.setdefault("parameters", {})
            problem = ""
            if value:
                try:
                    parse_for_kind(PARAMETERS[name][0], value)
                except (ValueError, FieldkitError) as exc:
                    problem = f"✗ {PARAMETERS[name][1]}: {exc}"
            event.input.set_class(bool(problem), "-invalid")
            if problem:
                params.pop(name, None)  # the plan keeps the typical value until the figure reads
                self.query_one("#builder-error", Static).update(literal(problem))
                self._refresh_plan(keep_error=True)
                return
            if value:
                params[name] = value
            else:
                params.pop(name, None)
        else:
            local = wid.removeprefix("loc-")
            points = circuit.setdefault("test_points", [])
            entry = next((tp for tp in points if tp.get("id") == local), None)
            if entry is None:
                entry = {"id": local}
                points.append(entry)
            if value:
                entry["location"] = value
            else:
                entry.pop("location", None)
                if set(entry) == {"id"}:
                    points.remove(entry)
        self._refresh_plan()

    @on(SelectionList.SelectedChanged, "#parts")
    def _parts(self, event: SelectionList.SelectedChanged[str]) -> None:
        circuit = self._circuit()
        if circuit is not None:
            circuit["fitted_parts"] = [str(p) for p in event.selection_list.selected]
            self._refresh_plan()

    # --- the plan -------------------------------------------------------------------------------
    def _resolve(self) -> MachineProfile:
        raw = {k: v for k, v in self.raw.items() if v not in ("", None)}
        raw.setdefault("id", "new-machine")
        raw.setdefault("name", raw["id"])
        return profile_from_raw(raw, self.templates, "the machine builder")

    def _refresh_plan(self, keep_error: bool = False) -> None:
        plan = self.query_one("#circuit-plan", Static)
        error = self.query_one("#builder-error", Static)
        if not self.raw["circuits"]:
            self.profile = None
            plan.update("")
            if not keep_error:
                error.update("")
            return
        try:
            self.profile = self._resolve()
        except FieldkitError as exc:
            self.profile = None
            error.update(literal(explain(exc, "✗ not yet a machine")))
            plan.update("")
            return
        if not keep_error:
            error.update("")
        circuit = self._circuit()
        text = Text(end="")
        if circuit is not None:
            c = next(c for c in self.profile.circuits if c.id == circuit["id"])
            text.append("Plan for this circuit (^p shows the whole machine)\n", "bold")
            for tp in c.test_points:
                text.append_text(literal(f"· {tp.label}\n"))
                for rng in tp.expected:
                    mark = f" [{rng.typical}]" if rng.typical else ""
                    text.append_text(literal(f"    {when_words(rng)}: {range_words(rng)}{mark}\n"))
                    text.append_text(literal(f"      {rng.source}\n"))
        plan.update(text)

    def plan_text(self) -> str:
        return "\n".join(plan_lines(self.profile)) if self.profile else ""

    def action_show_plan(self) -> None:
        if self.profile is None:
            self.query_one("#builder-error", Static).update(
                "✗ add a circuit first: the plan comes from the circuits"
            )
            return
        self.app.push_screen(PlanDialog(plan_lines(self.profile)))

    @on(Input.Submitted)
    def _enter(self, event: Input.Submitted) -> None:
        event.stop()
        self.focus_next()

    # --- saving -------------------------------------------------------------------------------
    def action_save(self) -> None:
        error = self.query_one("#builder-error", Static)
        mid = str(self.raw.get("id", ""))
        if not self.raw.get("name"):
            error.update("✗ give the machine a name")
            self.query_one("#m-name", Input).focus()
            return
        if not _ID.match(mid):
            error.update(literal(f"✗ '{mid}' cannot be an id: lower case letters, digits, - and _"))
            self.query_one("#m-id", Input).focus()
            return
        for key, widget in (("rated_speed", "#m-speed"), ("rated_max_pressure", "#m-pressure")):
            if not self.raw.get(key):
                error.update(
                    "✗ the rated speed and the rated maximum pressure are needed (the spec sheet has both)"
                )
                self.query_one(widget, Input).focus()
                return
        if not self.raw["circuits"]:
            error.update("✗ add at least one circuit")
            self.query_one("#template", Select).focus()
            return
        try:
            profile = self._resolve()
            editing_own = self.path is not None and self.path.parent == user_profiles_dir()
            if not editing_own and self.bench.library.has(mid):
                raise FieldkitError(f"a machine with id '{mid}' exists already: choose another id")
            path = self.path if editing_own and self.path else user_profiles_dir() / f"{mid}.toml"
            table = {k: v for k, v in self.raw.items() if v not in ("", None)}
            text = self._text_to_save(table, path if editing_own else None)
            save_profile_text(path, text, replace=editing_own)
        except (FieldkitError, OSError) as exc:
            error.update(literal(explain(exc, "✗ not saved")))
            return
        self.bench.library.add(profile, path)
        self.dismiss(profile.id)

    @staticmethod
    def _text_to_save(table: dict[str, Any], edited: Path | None) -> str:
        """An edited file keeps the person's comments and layout (model.toml_edit); a new
        machine, or a file that no longer reads as TOML, is written afresh with the header."""
        if edited is not None and edited.exists():
            try:
                return update_text(read_text(edited), table)
            except (ValueError, FieldkitError):
                pass
        return dumps(table, HEADER)

    def action_cancel(self) -> None:
        self.dismiss(None)

    @on(Button.Pressed)
    async def _button(self, event: Button.Pressed) -> None:
        actions = {
            "add": self.action_add_circuit,
            "next-circuit": self.action_next_circuit,
            "remove": self.action_remove_circuit,
            "save": self.action_save,
            "cancel": self.action_cancel,
        }
        action = actions.get(event.button.id or "")
        if action is not None:
            event.stop()
            result = action()
            if result is not None:
                await result
