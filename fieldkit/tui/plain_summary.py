"""A plain-text findings summary for the job card, written when the report writers are not
installed (fieldkit.report.jobcard). Our own layout; UTF-8; written to a temporary file and
renamed into place so a half-written summary never sits beside the real ones."""

from __future__ import annotations

import os
import re
import textwrap
from pathlib import Path

from fieldkit.diagnosis.results import Diagnosis, Verdict
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit
from fieldkit.tui.safe_text import visible

WIDTH = 78


def summary_text(visit: Visit, profile: MachineProfile, diagnosis: Diagnosis) -> str:
    def wrap(text: str, indent: str = "") -> str:
        return "\n".join(
            textwrap.fill(visible(part), WIDTH, initial_indent=indent, subsequent_indent=indent)
            for part in str(text).splitlines() or [""]
        )

    lines: list[str] = []
    title = f"FINDINGS SUMMARY — job {visible(visit.job_number)}"
    lines += [title, "=" * len(title)]
    lines.append(
        wrap(
            f"Machine: {profile.name} ({profile.id})"
            + (f", serial {visit.machine_serial}" if visit.machine_serial else "")
            + (f", {visit.hour_meter:g} h" if visit.hour_meter is not None else "")
        )
    )
    lines.append(wrap(f"Customer: {visit.customer or '—'}   Site: {visit.site or '—'}"))
    lines.append(
        wrap(
            f"Technician: {visit.technician or '—'}   Date: {visit.date.isoformat()}   "
            f"Oil: {visit.oil or '—'}   Status: {visit.status.value}"
        )
    )
    lines += ["", "READINGS", "--------"]
    if not diagnosis.checks:
        lines.append("No readings.")
    for c in diagnosis.checks:
        flag = "" if c.verdict in (Verdict.IN_RANGE,) else "  <--"
        lines.append(
            wrap(
                f"{c.test_point_label} ({c.condition}): {c.value} {c.uncertainty}; expected {c.expected}; "
                f"{c.verdict.label}{' (not counted: ' + c.discounted + ')' if c.discounted else ''}{flag}"
            )
        )
    lines += ["", "FINDINGS", "--------"]
    measured = [f for f in diagnosis.findings if f.verdict is not Verdict.NOT_MEASURED]
    for f in measured:
        lines.append(wrap(f"[{f.verdict.label}] {f.message}"))
    if not measured:
        lines.append("None.")
    lines += ["", "LIKELY FAULTS", "-------------"]
    for fault in diagnosis.faults[:5]:
        lines.append(wrap(f"{fault.probability:6.0%}  {fault.display_title}"))
    if diagnosis.faults:
        top = diagnosis.faults[0]
        lines += ["", wrap(f"Confirm: {top.confirm}"), wrap(f"Usual fix: {top.fix}")]
        if top.parts:
            lines.append(wrap("Parts: " + ", ".join(top.parts)))
    if diagnosis.next_tests:
        lines += ["", "NEXT TEST", "---------", wrap(diagnosis.next_tests[0].why)]
    lines += ["", "SUMMARY", "-------", wrap(visit.summary or "—")]
    lines += ["", "NOTES", "-----", wrap(visit.notes or "—")]
    lines += ["", "CAUTIONS", "--------"]
    for caution in diagnosis.cautions:
        lines.append(wrap(f"* {caution.title}: {caution.text}"))
    lines += [
        "",
        wrap(
            "This summary was written by fieldkit's terminal UI because the job card writer "
            "(fieldkit.report.jobcard) is not installed."
        ),
    ]
    return "\n".join(lines) + "\n"


def safe_file_stem(job_number: str) -> str:
    stem = re.sub(r"[^A-Za-z0-9_.\-]+", "_", job_number).strip("._") or "visit"
    return stem[:60]


def write_plain_summary(visit: Visit, profile: MachineProfile, diagnosis: Diagnosis, folder: Path) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    target = folder / f"{safe_file_stem(visit.job_number)}-summary.txt"
    tmp = target.with_name(target.name + ".tmp")
    with open(tmp, "w", encoding="utf-8") as fh:
        fh.write(summary_text(visit, profile, diagnosis))
        fh.flush()
        os.fsync(fh.fileno())
    os.replace(tmp, target)
    return target
