"""Rule files are text from people and are not trusted: a pack that tries to run code, to blow up
the evaluator, to compare a pressure with a flow or to name things that do not exist is refused
when it loads, with a DataFileError that names the file and the line to fix.

The expression language's own limits are tested in test_expr_hostile.py; here the same attacks
arrive the way a rule author would write them, inside a pack in a rules folder.
"""

from __future__ import annotations

import shutil
from collections.abc import Callable
from pathlib import Path

import pytest
from diagnosis_helpers import RULES, VisitBuilder, finding, library

from fieldkit.cli import main
from fieldkit.diagnosis.engine import Knowledge, diagnose
from fieldkit.diagnosis.findings import fill
from fieldkit.errors import DataFileError, FieldkitError
from fieldkit.model.condition import FunctionState
from fieldkit.tomlfile import MAX_FILE_BYTES

PROBE = """# A one-rule pack written by a test.
[[rule]]
id = "probe"
title = "Probe charge pressure"
circuits = ["closed_loop_drive"]
when = ["neutral"]
value = "charge_pressure"
low = "20 bar"
high = "30 bar"
source = "test pack"
say_low = "Charge reads {value}, below {low}."
  [rule.if_low]
  charge_relief_low = 0.9
"""

RulesFolder = Callable[[str], Path]


@pytest.fixture
def rules_folder(tmp_path: Path) -> RulesFolder:
    """A rules folder with the bundled catalogues and one pack of the test's text."""

    def make(pack: str) -> Path:
        folder = tmp_path / "rules"
        (folder / "packs").mkdir(parents=True, exist_ok=True)
        for name in ("faults.toml", "cautions.toml"):
            shutil.copy(RULES / name, folder / name)
        (folder / "packs" / "probe.toml").write_text(pack, encoding="utf-8")
        return folder

    return make


def line_of(text: str, start: str) -> int:
    """1-based line of the first line of ``text`` that starts with ``start`` (after indentation)."""
    return next(i for i, line in enumerate(text.splitlines(), 1) if line.strip().startswith(start))


def refused(folder: Path) -> DataFileError:
    with pytest.raises(DataFileError) as caught:
        Knowledge.load(folder)
    return caught.value


def assert_names_file_and_line(err: DataFileError, folder: Path, line: int) -> None:
    pack = folder / "packs" / "probe.toml"
    assert isinstance(err, FieldkitError)
    assert err.path == str(pack)
    assert err.line == line
    assert str(err).startswith(f"{pack}:{line}")


HOSTILE_VALUES = [
    pytest.param("__import__('os').system('x')", ("'__'",), id="import-call"),
    pytest.param("charge_pressure.__class__", ("'__'",), id="dunder-attribute"),
    pytest.param("open('x')", ("open", "not part of the rule language"), id="open-file"),
    pytest.param("2 ^ 99999", ("exponent", "-4 to 4"), id="exponent-bomb"),
    pytest.param("(" * 5000 + "charge_pressure" + ")" * 5000, ("limit",), id="5000-parentheses"),
    pytest.param("charge_pressure < 5 L/min", ("pressure", "flow"), id="pressure-against-flow"),
    pytest.param("charge_presure", ("unknown name 'charge_presure'", "charge_pressure"), id="misspelt-role"),
    pytest.param(
        "charge_pressure - min_net_charj",
        ("unknown name 'min_net_charj'", "min_net_charge"),
        id="misspelt-parameter",
    ),
]


@pytest.mark.parametrize(("value", "says"), HOSTILE_VALUES)
def test_hostile_rule_expression_is_refused_at_its_line(
    rules_folder: RulesFolder, value: str, says: tuple[str, ...]
) -> None:
    toml_value = value.replace("\\", "\\\\").replace('"', '\\"')
    pack = PROBE.replace('value = "charge_pressure"', f'value = "{toml_value}"')
    folder = rules_folder(pack)
    err = refused(folder)
    assert_names_file_and_line(err, folder, line_of(pack, "value ="))
    for word in says:
        assert word in err.detail


def test_hostile_expression_makes_rules_check_fail_with_the_file_and_line(
    rules_folder: RulesFolder, capsys: pytest.CaptureFixture[str]
) -> None:
    pack = PROBE.replace('value = "charge_pressure"', "value = \"__import__('os').system('x')\"")
    folder = rules_folder(pack)
    code = main(["rules", "check", str(folder)])
    err = capsys.readouterr().err
    assert code != 0
    assert f"{folder / 'packs' / 'probe.toml'}:{line_of(pack, 'value =')}" in err


def test_limit_in_a_flow_unit_for_a_pressure_value_is_refused_at_its_line(rules_folder: RulesFolder) -> None:
    pack = PROBE.replace('low = "20 bar"', 'low = "5 L/min"')
    folder = rules_folder(pack)
    err = refused(folder)
    assert_names_file_and_line(err, folder, line_of(pack, "low ="))
    assert "low" in err.detail


def test_limit_in_the_wrong_unit_names_both_kinds_in_trade_words(rules_folder: RulesFolder) -> None:
    folder = rules_folder(PROBE.replace('low = "20 bar"', 'low = "5 L/min"'))
    err = refused(folder)
    assert "flow" in err.detail and "pressure" in err.detail


def test_unknown_key_in_a_rule_is_refused_at_its_line(rules_folder: RulesFolder) -> None:
    pack = PROBE.replace('source = "test pack"', 'source = "test pack"\nrun = "os.system"')
    folder = rules_folder(pack)
    err = refused(folder)
    assert_names_file_and_line(err, folder, line_of(pack, "run ="))
    assert "unknown key" in err.detail


def test_broken_toml_is_refused_at_its_line(rules_folder: RulesFolder) -> None:
    pack = PROBE.replace('title = "Probe charge pressure"', 'title = "Probe charge pressure')
    folder = rules_folder(pack)
    err = refused(folder)
    assert_names_file_and_line(err, folder, line_of(pack, "title ="))
    assert "TOML" in err.detail


def test_unknown_fault_is_refused_naming_the_rule_and_its_line(rules_folder: RulesFolder) -> None:
    pack = PROBE.replace("charge_relief_low = 0.9", "charge_releif_low = 0.9")
    folder = rules_folder(pack)
    err = refused(folder)
    # The reference check points at the rule ([[rule]] line) in the message.
    assert f"{folder / 'packs' / 'probe.toml'}:{line_of(pack, '[[rule]]')}" in str(err)
    assert "unknown fault 'charge_releif_low'" in str(err)


def test_unknown_caution_is_refused_naming_the_rule_and_its_line(rules_folder: RulesFolder) -> None:
    pack = PROBE.replace('source = "test pack"', 'source = "test pack"\ncautions = ["wear-a-hat"]')
    folder = rules_folder(pack)
    err = refused(folder)
    assert f"{folder / 'packs' / 'probe.toml'}:{line_of(pack, '[[rule]]')}" in str(err)
    assert "unknown caution 'wear-a-hat'" in str(err)


@pytest.mark.parametrize(
    ("old", "new", "says"),
    [
        pytest.param(
            "charge_relief_low = 0.9",
            "charge_releif_low = 0.9",
            "unknown fault 'charge_releif_low'",
            id="unknown-fault",
        ),
        pytest.param(
            'source = "test pack"',
            'source = "test pack"\ncautions = ["wear-a-hat"]',
            "unknown caution 'wear-a-hat'",
            id="unknown-caution",
        ),
    ],
)
def test_rules_check_exits_1_on_unknown_references(
    rules_folder: RulesFolder, capsys: pytest.CaptureFixture[str], old: str, new: str, says: str
) -> None:
    pack = PROBE.replace(old, new)
    folder = rules_folder(pack)
    code = main(["rules", "check", str(folder)])
    out = capsys.readouterr().out
    assert code == 1
    assert f"{folder / 'packs' / 'probe.toml'}:{line_of(pack, '[[rule]]')}: error: " in out
    assert says in out


def test_rule_file_over_a_megabyte_is_refused_before_parsing(rules_folder: RulesFolder) -> None:
    padding = "# " + "x" * 1000 + "\n"
    pack = PROBE + padding * (MAX_FILE_BYTES // len(padding) + 10)
    folder = rules_folder(pack)
    err = refused(folder)
    assert err.path == str(folder / "packs" / "probe.toml")
    assert "limit is 1,000,000" in err.detail


def test_message_placeholders_fill_only_plain_names(rules_folder: RulesFolder) -> None:
    """A rule's message is data: ``{value.__class__}``, ``{0}`` or ``{value!r}`` stay as written,
    only ``{value}``-style names are filled (findings.fill)."""
    hostile = "{value.__class__} {0} {value!r} {low.__init__.__globals__} {value:>99999} and {value}"
    pack = PROBE.replace('say_low = "Charge reads {value}, below {low}."', f'say_low = "{hostile}"')
    knowledge = Knowledge.load(rules_folder(pack))
    profile = library().get("tarnhollow-fellborer")
    b = VisitBuilder(profile)
    b.add("travel.charge", 12.0, FunctionState.NEUTRAL)
    f = finding(diagnose(b.build(), profile, knowledge), "probe", "travel")
    assert f.message == hostile.replace(" and {value}", f" and {f.value}")
    assert f.value.startswith("12")


def test_fill_replaces_only_known_plain_names() -> None:
    filled = fill("{value} {nope} {0} {value.real} {{value}}", {"value": "7 bar"})
    assert filled == "7 bar {nope} {0} {value.real} {7 bar}"
