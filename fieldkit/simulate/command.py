"""``fieldkit simulate`` and ``fieldkit evaluate``: a simulated visit as JSON, and the accuracy table.

Every string that comes from a file (profile ids, fault ids, circuit ids) goes into the table as
plain :class:`rich.text.Text`, never as markup.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from rich.console import Console
from rich.table import Table
from rich.text import Text

from fieldkit.errors import FieldkitError
from fieldkit.model.profile import MachineProfile


def load_profile_arg(name: str, extra_folders: list[Path] | None = None) -> MachineProfile:
    """A profile by id from the library (bundled, the user's, ``--profiles`` folders), or a TOML file."""
    path = Path(name)
    if path.suffix.lower() == ".toml":
        if not path.is_file():
            raise FieldkitError(f"{name}: no such profile file")
        from fieldkit.model.loading import load_profile, load_templates
        from fieldkit.resources import rules_dir

        return load_profile(path, load_templates(rules_dir() / "templates"))
    from fieldkit.settings import default_library

    return default_library(extra_folders or []).get(name)


def run_simulate(args: argparse.Namespace) -> int:
    from fieldkit.simulate.simulator import Simulator

    profile = load_profile_arg(args.profile, getattr(args, "profiles", None))
    result = Simulator(profile).simulate(args.fault, args.severity, args.seed)
    text = result.visit.model_dump_json(indent=2)
    out: Path | None = args.out
    if out is None:
        sys.stdout.write(text + "\n")
        return 0
    try:
        out.write_text(text + "\n", encoding="utf-8")
    except OSError as exc:
        raise FieldkitError(f"{out}: cannot write the visit ({exc.strerror or exc})") from None
    where = f" in circuit '{result.circuit}'" if result.circuit else ""
    what = f"{result.fault}{where}, severity {result.severity:g}, seed {result.seed}"
    print(f"wrote {out}: {what}: {result.change}")
    return 0


def _pct(x: float) -> Text:
    return Text(f"{100.0 * x:.0f} %", justify="right")


def _table(title: str, *columns: str) -> Table:
    table = Table(title=Text(title, style="bold"), title_justify="left", show_lines=False, pad_edge=False)
    for c in columns:
        table.add_column(Text(c))
    return table


def render(report: object, console: Console) -> None:
    """The figures of an :class:`~fieldkit.simulate.evaluate.EvaluationReport` as tables."""
    from fieldkit.simulate.evaluate import EvaluationReport

    assert isinstance(report, EvaluationReport)
    r = report
    overall, faulty, healthy = r.overall(), r.faulty(), r.healthy()
    head = _table("Diagnosis accuracy on simulated visits", "figure", "value")
    head.add_row(Text("visits per fault and machine"), Text(str(r.cases_per_fault), justify="right"))
    head.add_row(
        Text("seed; fault severity drawn from"),
        Text(f"{r.seed}; {r.severity[0]:g}–{r.severity[1]:g}", justify="right"),
    )
    head.add_row(Text("visits diagnosed"), Text(str(overall.n), justify="right"))
    head.add_row(Text("top-1 accuracy, faulty machines"), _pct(faulty.top1_rate))
    head.add_row(Text("top-3 accuracy, faulty machines"), _pct(faulty.top3_rate))
    head.add_row(Text("healthy machines with no false alarm"), _pct(healthy.top1_rate))
    head.add_row(Text("top-1 accuracy, all visits"), _pct(overall.top1_rate))
    head.add_row(
        Text("Brier score of the top probability (0 is perfect)"), Text(f"{r.brier():.3f}", justify="right")
    )
    head.add_row(Text("one-fault visits shown as two faults at once"), _pct(r.pairs_shown()))
    head.add_row(Text("time"), Text(f"{r.seconds:.1f} s", justify="right"))
    console.print(head)

    per = _table("Per fault and machine", "machine", "fault", "n", "top-1", "top-3", "most often taken for")
    for (profile, fault), s in sorted(r.by_profile_fault().items()):
        wrong = ", ".join(f"{k} ×{n}" for k, n in r.mistaken_for(profile, fault)[:2])
        per.add_row(
            Text(profile),
            Text(fault),
            Text(str(s.n), justify="right"),
            _pct(s.top1_rate),
            _pct(s.top3_rate),
            Text(wrong),
        )
    console.print(per)

    fam = _table("Per fault family", "family", "n", "top-1", "top-3")
    for name, s in r.by_family().items():
        fam.add_row(Text(name), Text(str(s.n), justify="right"), _pct(s.top1_rate), _pct(s.top3_rate))
    console.print(fam)

    conf = _table("Pairs most often mistaken for each other", "fault", "taken for / taken as", "cases")
    for a, b, n in r.confusions():
        conf.add_row(Text(a), Text(b), Text(str(n), justify="right"))
    console.print(conf)

    rel = _table("Reliability of the top probability", "top probability", "visits", "mean stated", "right")
    for bin_ in r.reliability():
        rel.add_row(
            Text(f"{bin_.low:.1f}–{bin_.high:.1f}"),
            Text(str(bin_.n), justify="right"),
            _pct(bin_.mean_probability) if bin_.n else Text("—"),
            _pct(bin_.accuracy) if bin_.n else Text("—"),
        )
    console.print(rel)

    rules = _table(
        "Rules whose stated likelihoods the simulated visits contradict most",
        "fault injected",
        "rule",
        "visits",
        "seen low / in / high",
        "rule states",
    )
    for fault, rule, tally, _gap in r.rule_mismatches(limit=10):
        seen = " / ".join(f"{x:.2f}" for x in tally.measured)
        said = " / ".join(f"{x:.2f}" for x in tally.stated)
        rules.add_row(Text(fault), Text(rule), Text(str(tally.n), justify="right"), Text(seen), Text(said))
    console.print(rules)

    unnamed = r.unnamed()
    if unnamed:
        gap = _table(
            "Injected faults the engine has no hypothesis for (catalogue lists no such circuit kind)",
            "machine",
            "fault",
            "cases",
        )
        for (profile, fault), n in sorted(unnamed.items()):
            gap.add_row(Text(profile), Text(fault), Text(str(n), justify="right"))
        console.print(gap)

    skipped = _table(
        "Faults skipped: they cannot show on the machine's test points", "machine", "fault", "why"
    )
    for profile, faults in sorted(r.skipped.items()):
        for fault, why in faults.items():
            skipped.add_row(Text(profile), Text(fault), Text(why))
    console.print(skipped)


def render_double(report: object, console: Console) -> None:
    """The figures of a :class:`~fieldkit.simulate.evaluate.DoubleReport` as tables."""
    from fieldkit.simulate.evaluate import DoubleReport

    assert isinstance(report, DoubleReport)
    r = report
    head = _table("Two faults at once: diagnosis of simulated visits", "figure", "value")
    head.add_row(Text("visits per pair of faults and machine"), Text(str(r.cases_per_pair), justify="right"))
    head.add_row(
        Text("seed; fault severity drawn from"),
        Text(f"{r.seed}; {r.severity[0]:g}–{r.severity[1]:g}", justify="right"),
    )
    head.add_row(Text("visits diagnosed"), Text(str(len(r.cases)), justify="right"))
    head.add_row(Text("injected pair is the top pair"), _pct(r.rate("pair_top")))
    head.add_row(Text("injected pair among the top 3 pairs"), _pct(r.rate("pair_top3")))
    head.add_row(Text("injected pair shown (more likely than any single fault)"), _pct(r.rate("pair_shown")))
    head.add_row(Text("top single fault is one of the two"), _pct(r.rate("single_names_one")))
    head.add_row(Text("both among the top 3 single faults"), _pct(r.rate("singles_hold_both")))
    head.add_row(Text("time"), Text(f"{r.seconds:.1f} s", justify="right"))
    console.print(head)
    per = _table("Per machine", "machine", "visits", "top pair", "top-3 pairs", "pair shown")
    for profile, cases in r.by_profile().items():
        n = len(cases)
        per.add_row(
            Text(profile),
            Text(str(n), justify="right"),
            _pct(sum(c.pair_top for c in cases) / n),
            _pct(sum(c.pair_top3 for c in cases) / n),
            _pct(sum(c.pair_shown for c in cases) / n),
        )
    console.print(per)


def run_evaluate(args: argparse.Namespace) -> int:
    from fieldkit.diagnosis.engine import default_knowledge
    from fieldkit.simulate.evaluate import DEFAULT_CASES, evaluate, evaluate_double

    rules = getattr(args, "rules", None)  # the global --rules folder, to measure a rule change
    profiles = None
    if getattr(args, "templates", False):
        from fieldkit.model.loading import load_templates
        from fieldkit.model.machine_plan import template_machine
        from fieldkit.resources import rules_dir

        templates = load_templates((rules or rules_dir()) / "templates")
        profiles = [template_machine(templates, tid) for tid in sorted(templates)]
    knowledge = default_knowledge(rules) if rules else None
    console = Console(highlight=False)
    if not console.is_terminal:
        console = Console(highlight=False, width=max(console.width, 120))  # files and pipes: no cramped wrap
    if getattr(args, "double", False):
        double = evaluate_double(
            profiles,
            cases_per_pair=2 if args.cases is None else args.cases,
            seed=args.seed,
            knowledge=knowledge,
        )
        render_double(double, console)
        return 0
    report = evaluate(
        profiles,
        cases_per_fault=DEFAULT_CASES if args.cases is None else args.cases,
        seed=args.seed,
        knowledge=knowledge,
    )
    render(report, console)
    return 0


__all__ = ["load_profile_arg", "render", "render_double", "run_evaluate", "run_simulate"]
