"""``fieldkit diagnose`` on a terminal: the diagnosis as rich tables.

Every piece of text that came from a person or a data file is handed to rich as plain ``Text``,
never as markup, so a note holding ``[bold]`` or ``[link=…]`` prints as typed; and it is cleaned
(:func:`fieldkit.plaintext.plain`), so an escape sequence or a bidi override in a customer name
is printed written out, never obeyed. The console writes to the real terminal underneath the
command line's cleaning stream, so its own colours still work.
"""

from __future__ import annotations

import os
import sys

from rich.console import Console
from rich.table import Table
from rich.text import Text

from fieldkit.diagnosis.resolution import as_read_with_limit
from fieldkit.diagnosis.results import Diagnosis, Verdict
from fieldkit.model.profile import MachineProfile
from fieldkit.model.visit import Visit
from fieldkit.plaintext import plain, underlying

VERDICT_STYLE = {
    Verdict.IN_RANGE: "green",
    Verdict.LOW: "bold red",
    Verdict.HIGH: "bold red",
    Verdict.INCONCLUSIVE: "yellow",
    Verdict.NOT_MEASURED: "dim",
    Verdict.REPORTED: "cyan",
}


def _t(text: str, style: str = "") -> Text:
    return Text(plain(text), style=style)


def print_diagnosis(
    result: Diagnosis, visit: Visit, profile: MachineProfile, console: Console | None = None
) -> None:
    console = console or Console(
        file=underlying(sys.stdout), no_color=bool(os.environ.get("NO_COLOR")), highlight=False
    )
    console.print(_t(f"{profile.name} — job {visit.job_number} — {visit.customer}", "bold"))
    for c in result.cautions:
        if c.urgent:  # before anything else: a reading says stop now
            console.print(
                _t(f"{c.severity.upper()}: {c.title}. ", "bold red"), _t(c.text), _t(f" ({c.because})", "dim")
            )

    readings = Table(title="Readings", title_justify="left", expand=False)
    for col in ("test point", "condition", "reading", "expected", "gauge ±", "verdict"):
        readings.add_column(col)
    for check in result.checks:
        readings.add_row(
            _t(check.test_point_label),
            _t(check.condition),
            _t(check.value),
            _t(check.expected),
            _t(as_read_with_limit(check)[1]),
            _t(check.verdict.label, VERDICT_STYLE[check.verdict]),
        )
    console.print(readings)

    findings = Table(title="Findings", title_justify="left")
    findings.add_column("verdict")
    findings.add_column("finding")
    for f in result.findings:
        if f.verdict is Verdict.NOT_MEASURED:
            continue
        findings.add_row(_t(f.verdict.label, VERDICT_STYLE[f.verdict]), _t(f.message))
    console.print(findings)

    if result.pair_wins and result.pairs:
        pair = result.pairs[0]
        console.print(
            _t("Two faults at once ", "bold"),
            _t(f"({pair.probability:.0%}): {pair.display_title}; no single fault explains every finding."),
        )
    faults = Table(title="Likely faults", title_justify="left")
    faults.add_column("%", justify="right")
    faults.add_column("fault")
    faults.add_column("why")
    for fault in result.faults[:5]:
        why = "; ".join(e.title for e in fault.supporting[:3]) or "prior only"
        faults.add_row(_t(f"{fault.probability:.0%}"), _t(fault.display_title), _t(why))
    console.print(faults)

    if result.next_tests:
        console.print(_t("Next test", "bold"))
        console.print(_t(result.next_tests[0].why))
    console.print(_t("Cautions", "bold"))
    for caution in result.cautions:
        console.print(
            _t(f"• {caution.title}: ", "bold" if caution.severity == "danger" else ""), _t(caution.text)
        )
    for note in result.notes:
        console.print(_t(f"note: {note}", "dim"))
