"""``fieldkit rules check``: the bundled packs are clean, and the mistakes that loading alone lets
through (evidence that can never fire, a rule that moves nothing, references to nothing) are
reported as errors with the rule's file and line, and make the command exit 1."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from diagnosis_helpers import RULES

from fieldkit.cli import main
from fieldkit.diagnosis.catalogue import load_cautions, load_faults
from fieldkit.diagnosis.engine import Knowledge
from fieldkit.diagnosis.lint import problems
from fieldkit.diagnosis.rulepack import load_packs

PROBE = """[[rule]]
id = "probe"
title = "Probe charge pressure"
circuits = ["closed_loop_drive"]
value = "charge_pressure"
low = "20 bar"
high = "30 bar"
source = "test pack"
  [rule.if_low]
  charge_relief_low = 0.9
"""


def _folder(tmp_path: Path, pack: str) -> Path:
    folder = tmp_path / "rules"
    (folder / "packs").mkdir(parents=True)
    for name in ("faults.toml", "cautions.toml"):
        shutil.copy(RULES / name, folder / name)
    (folder / "packs" / "probe.toml").write_text(pack, encoding="utf-8")
    return folder


def _knowledge(folder: Path) -> Knowledge:
    """Loaded without the reference check, as the lint command does, so every problem is listed."""
    return Knowledge(
        load_packs(folder),
        load_faults(folder / "faults.toml"),
        load_cautions(folder / "cautions.toml"),
        folder,
    )


@pytest.mark.parametrize(
    "args", [["rules", "check"], ["rules", "check", str(RULES)]], ids=["bundled", "by-path"]
)
def test_bundled_rules_pass_the_check(args: list[str], capsys: pytest.CaptureFixture[str]) -> None:
    assert main(args) == 0
    out = capsys.readouterr().out
    assert " 0 errors" in out
    assert f"{len(load_packs(RULES))} rules" in out


def test_bundled_rules_have_no_lint_errors() -> None:
    errors = [str(p) for p in problems(_knowledge(RULES)) if p.error]
    assert errors == []


MISTAKES = [
    pytest.param('low = "20 bar"\n', "", "has if_low but no low limit", id="if-low-without-low-limit"),
    pytest.param(
        "  [rule.if_low]\n  charge_relief_low = 0.9\n",
        "",
        "names no fault in if_low or if_high",
        id="rule-naming-no-fault",
    ),
    pytest.param(
        'source = "test pack"\n',
        'source = "test pack"\ncautions = ["wear-a-hat"]\n',
        "raises unknown caution 'wear-a-hat'",
        id="unknown-caution",
    ),
    pytest.param(
        "charge_relief_low = 0.9",
        "charge_releif_low = 0.9",
        "names unknown fault 'charge_releif_low'",
        id="unknown-fault",
    ),
    pytest.param(
        "charge_relief_low = 0.9",
        "pilot_supply_low = 0.9",
        "which cannot occur in closed_loop_drive",
        id="fault-of-another-circuit-kind",
    ),
    pytest.param('high = "30 bar"', 'high = "15 bar"', "low limit is not below high limit", id="empty-band"),
]


@pytest.mark.parametrize(("old", "new", "says"), MISTAKES)
def test_rule_mistake_is_a_lint_error_at_the_rule(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], old: str, new: str, says: str
) -> None:
    assert old in PROBE
    folder = _folder(tmp_path, PROBE.replace(old, new))
    pack = folder / "packs" / "probe.toml"
    found = [p for p in problems(_knowledge(folder)) if p.error]
    assert [says in p.message for p in found] == [True], [str(p) for p in found]
    assert found[0].where == f"{pack}:1"  # the rule's [[rule]] line

    assert main(["rules", "check", str(folder)]) == 1
    out = capsys.readouterr().out
    assert f"{pack}:1: error: " in out and says in out
    assert "1 errors" in out


def test_fault_no_rule_speaks_for_is_a_warning_not_an_error(tmp_path: Path) -> None:
    folder = _folder(tmp_path, PROBE)
    found = problems(_knowledge(folder))
    assert not [p for p in found if p.error]
    assert any(not p.error and "no rule gives evidence for fault 'pump_worn'" in p.message for p in found)
