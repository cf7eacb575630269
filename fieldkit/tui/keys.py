"""Every key binding in one place, each with an id so a user keymap can move it.

The value field on the visit screen keeps the focus while a technician works, so the visit
screen's own keys are control keys the text field does not use (and never ctrl+b, which tmux
takes). Plain letters are used only on screens without a text field in focus.
"""

from __future__ import annotations

from textual.binding import Binding, BindingType

APP: list[BindingType] = [
    Binding("ctrl+q", "request_quit", "Quit", id="fieldkit.quit", priority=True),
    Binding("f1", "toggle_keys", "Keys", id="fieldkit.keys", priority=True),
    Binding(
        "f2",
        "general_caution",
        "Safety",
        id="fieldkit.general_caution",
        priority=True,
        tooltip="The general caution: the machine's own procedures, local codes and licensed practice come "
        "first",
    ),
    Binding(
        "f3",
        "command_palette",
        "Find",
        id="fieldkit.commands",
        priority=True,
        show=False,
        tooltip="Search every command by name",
    ),
]

START: list[BindingType] = [
    Binding("enter", "open_selected", "Open", id="start.open", show=True),
    Binding("r", "resume_latest", "Resume", id="start.resume"),
    Binding("n", "new_visit", "New visit", id="start.new"),
    Binding("d", "open_demo", "Demo", id="start.demo"),
    Binding("i", "import_file", "Import", id="start.import"),
    Binding("h", "machine_history", "History", id="start.history"),
    Binding(
        "y",
        "sync",
        "Sync",
        id="start.sync",
        tooltip="Exchange visits with the shop server in the background; keep working meanwhile",
    ),
    Binding("m", "new_machine", "New machine", id="start.new_machine"),
    Binding("k", "open_kit", "Kit", id="start.kit", tooltip="Your gauges and meters: add, edit, retire"),
    Binding("e", "edit_machine", "Edit machine", id="start.edit_machine", show=False),
    Binding("c", "copy_machine", "Copy machine", id="start.copy_machine", show=False),
    Binding("escape", "back", "Back", id="start.back", show=False),
]

KIT: list[BindingType] = [
    Binding("a", "add_item", "Add", id="kit.add"),
    Binding("e", "edit_item", "Edit", id="kit.edit"),
    Binding("x", "retire_item", "Retire", id="kit.retire"),
    Binding("escape", "back", "Back", id="kit.back"),
]

VISIT: list[BindingType] = [
    Binding("ctrl+n", "go_next_test", "Next test", id="visit.next"),
    Binding("ctrl+f", "show_faults", "Faults", id="visit.faults"),
    Binding(
        "ctrl+r",
        "point_readings",
        "Readings",
        id="visit.readings",
        tooltip="Every reading at this point, with corrections and deletions; correct or delete one",
    ),
    Binding("ctrl+g", "add_gauge", "Gauge+", id="visit.add_gauge"),
    Binding(
        "ctrl+s",
        "skip_point",
        "Skip",
        id="visit.skip",
        tooltip="Mark this test point skipped (written to the notes)",
    ),
    Binding("ctrl+l", "machine_history", "History", id="visit.history"),
    Binding("ctrl+t", "edit_notes", "Notes", id="visit.notes"),
    Binding(
        "f4", "complaint", "Complaint", id="visit.complaint", tooltip="The operator's complaint and symptoms"
    ),
    Binding(
        "f5", "observe", "Seen/heard", id="visit.observe", tooltip="Yes/no checks for this step, one key each"
    ),
    Binding(
        "f6", "repair", "Repair", id="visit.repair", tooltip="Work done, re-test mode, the machine's status"
    ),
    Binding("ctrl+o", "finish_visit", "Finish", id="visit.finish"),
    Binding("escape", "leave", "Visits", id="visit.leave"),
    Binding("up", "move_point(-1)", "Previous point", id="visit.point_up", show=False),
    Binding("down", "move_point(1)", "Next point", id="visit.point_down", show=False),
]

DIAGNOSIS: list[BindingType] = [
    Binding("enter", "open_fault", "Why", id="diagnosis.why"),
    Binding("escape", "dismiss_screen", "Back", id="diagnosis.back"),
]

DIALOG: list[BindingType] = [
    Binding("escape", "cancel", "Cancel", id="dialog.cancel"),
]

READINGS: list[BindingType] = [
    Binding("e", "correct", "Correct", id="readings.correct"),
    Binding("x", "delete", "Delete", id="readings.delete"),
    Binding("escape", "cancel", "Back", id="readings.back"),
]

HISTORY: list[BindingType] = [
    Binding("a", "toggle_scope", "This serial / all", id="history.scope"),
    Binding("escape", "cancel", "Back", id="history.back"),
]

FAULT: list[BindingType] = [
    Binding("escape", "back", "Back", id="fault.back"),
]

CONFIRM: list[BindingType] = [
    Binding("y", "answer(True)", "Yes", id="confirm.yes"),
    Binding("n", "answer(False)", "No", id="confirm.no"),
]

QUIT: list[BindingType] = [
    Binding("s", "answer('save')", "Save it and quit", id="quit.save"),
    Binding("q", "answer('discard')", "Quit without it", id="quit.discard"),
]

NOTES: list[BindingType] = [
    Binding("ctrl+s", "save", "Save notes", id="notes.save"),
]

CAUTIONS: list[BindingType] = [
    Binding("f2", "cancel", "Close", id="cautions.close", priority=True),
]

KEYS: list[BindingType] = [
    Binding("f1", "cancel", "Close", id="keys.close", priority=True),
]

FINISH: list[BindingType] = [
    Binding("ctrl+s", "finish", "Close visit + job card", id="finish.close"),
    Binding("escape", "back", "Back", id="finish.back"),
]

JOB_CARD: list[BindingType] = [
    Binding("ctrl+s", "write", "Write", id="jobcard.write"),
]

ADD_GAUGE: list[BindingType] = [
    Binding("ctrl+s", "add", "Add gauge", id="gauge.add"),
]

MACHINE_BUILDER: list[BindingType] = [
    Binding("ctrl+s", "save", "Save", id="builder.save"),
    Binding("ctrl+n", "add_circuit", "Add circuit", id="builder.add"),
    Binding("ctrl+o", "next_circuit", "Next circuit", id="builder.next"),
    Binding("ctrl+r", "remove_circuit", "Remove circuit", id="builder.remove"),
    Binding("ctrl+p", "show_plan", "Plan", id="builder.plan"),
    Binding("escape", "cancel", "Cancel", id="builder.cancel"),
]

COMPLAINT: list[BindingType] = [
    Binding("ctrl+s", "save", "Save", id="complaint.save"),
]

NEW_VISIT: list[BindingType] = [
    Binding("ctrl+s", "create", "Start visit", id="newvisit.create"),
    Binding("escape", "cancel", "Cancel", id="newvisit.cancel"),
]
