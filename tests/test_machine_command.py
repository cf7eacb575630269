"""`fieldkit machine new | check | show | list`: profiles without an editor's guesswork."""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

from fieldkit.cli import main
from fieldkit.settings import user_profiles_dir


def run(capsys: pytest.CaptureFixture[str], *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def line_of(text: str, needle: str) -> int:
    return next(i for i, line in enumerate(text.splitlines(), start=1) if needle in line)


GOOD = """id = "yard-crane"
name = "Yard crane"
rated_speed = "1800 rpm"
rated_max_pressure = "250 bar"

[[circuits]]
id = "slew"
name = "Slew drive"
template = "closed_loop_drive"
fitted_parts = ["cross_port_reliefs"]

[circuits.parameters]
charge_relief_setting = "24 bar"
pump_displacement = "28 cc/rev"
"""


def test_new_writes_a_skeleton_that_checks_clean_and_shows_typical_ranges(
    capsys: pytest.CaptureFixture[str],
) -> None:
    code, out, _ = run(
        capsys, "machine", "new", "trial-rig", "-t", "closed_loop_drive", "-t", "closed_loop_drive"
    )
    assert code == 0
    path = user_profiles_dir() / "trial-rig.toml"
    raw = tomllib.loads(path.read_text(encoding="utf-8"))
    assert [c["id"] for c in raw["circuits"]] == ["closed_loop_drive", "closed_loop_drive_2"]  # two of a kind
    code, out, _ = run(capsys, "machine", "check", str(path))
    assert code == 0 and "valid: 2 circuits" in out
    code, out, _ = run(capsys, "machine", "show", "trial-rig")
    assert code == 0
    # With no figures, charge in neutral spans the trade's spread of charge relief settings ± 2 bar:
    # 200 psi = 13.8 bar (Machinery Lubrication 2016, field notes) − 2 = 11.8 bar, to 30 + 2 = 32 bar
    # (from memory) [calc], marked as common practice.
    assert "neutral: 11.8 bar to 32 bar [typical (common practice)]" in out
    # A stall rests on the typical cross-port setting 400 bar, marked from memory.
    assert "source: from memory: cross-port (high-pressure) relief setting 400 bar" in out


def test_new_never_overwrites_a_machine(capsys: pytest.CaptureFixture[str]) -> None:
    assert run(capsys, "machine", "new", "twice", "-t", "motor")[0] == 0
    path = user_profiles_dir() / "twice.toml"
    path.write_text(path.read_text(encoding="utf-8") + "# my notes\n", encoding="utf-8")
    code, _out, err = run(capsys, "machine", "new", "twice", "-t", "pilot_supply")
    assert code == 2 and "already exists" in err
    assert path.read_text(encoding="utf-8").endswith("# my notes\n")


def test_show_prints_the_makers_figure_as_the_source(capsys: pytest.CaptureFixture[str]) -> None:
    user_profiles_dir().mkdir(parents=True, exist_ok=True)
    (user_profiles_dir() / "yard-crane.toml").write_text(GOOD, encoding="utf-8")
    code, out, _ = run(capsys, "machine", "show", "yard-crane")
    assert code == 0
    assert "source: from the maker's figure: charge relief setting 24 bar" in out
    # The loop flushing valve is not ticked: in stroke, charge relief 24 − 4 = 20 to 24 + 2 = 26 bar [calc].
    assert "full stroke, under load, stalled: 20 bar to 26 bar" in out


def test_list_shows_your_machines_and_the_demo_only_when_asked(capsys: pytest.CaptureFixture[str]) -> None:
    user_profiles_dir().mkdir(parents=True, exist_ok=True)
    (user_profiles_dir() / "yard-crane.toml").write_text(GOOD, encoding="utf-8")
    _code, out, _ = run(capsys, "machine", "list")
    assert "yard-crane" in out and "tarnhollow-fellborer" not in out
    _code, out, _ = run(capsys, "machine", "list", "--demo")
    assert "yard-crane" in out and "tarnhollow-fellborer" in out


BROKEN = [
    # (what to change, the line it must name, the key it must name, words in the message)
    (
        'charge_relief_setting = "24 bar"',
        'charge_relief_setting = "24 bra"',
        "circuits.0.parameters.charge_relief_setting",
        "bra",
    ),
    (
        'charge_relief_setting = "24 bar"',
        'charge_relif_setting = "24 bar"',
        "circuits.0.parameters.charge_relif_setting",
        "unknown parameter",
    ),
    (
        'charge_relief_setting = "24 bar"',
        'charge_relief_setting = "24 L/min"',
        "circuits.0.parameters.charge_relief_setting",
        "pressure",
    ),
    (
        'fitted_parts = ["cross_port_reliefs"]',
        'fitted_parts = ["cross_port_relief"]',
        "circuits.0.fitted_parts",
        "cross_port_relief",
    ),
    (
        'template = "closed_loop_drive"',
        'template = "closed_loop_drvie"',
        "circuits.0.template",
        "closed_loop_drvie",
    ),
    ('rated_speed = "1800 rpm"', 'rated_speed = "1800 bar"', "rated_speed", "speed"),
]


@pytest.mark.parametrize(("old", "new", "key", "words"), BROKEN)
def test_check_names_file_line_and_key_of_each_mistake(
    capsys: pytest.CaptureFixture[str], tmp_path: Path, old: str, new: str, key: str, words: str
) -> None:
    text = GOOD.replace(old, new)
    assert text != GOOD
    path = tmp_path / "broken.toml"
    path.write_text(text, encoding="utf-8")
    code, _out, err = run(capsys, "machine", "check", str(path))
    assert code == 2
    assert f"{path}:{line_of(text, new)} [{key}" in err, err
    assert words in err


def test_check_names_the_line_of_a_range_that_uses_an_unknown_figure(
    capsys: pytest.CaptureFixture[str], tmp_path: Path
) -> None:
    text = (
        GOOD
        + """
  [[circuits.test_points]]
  id = "charge"
    [[circuits.test_points.expected]]
    when = { function = ["neutral"] }
    low = "charge_setting - 2 bar"
    source = "maker's sheet"
"""
    )
    path = tmp_path / "broken.toml"
    path.write_text(text, encoding="utf-8")
    code, _out, err = run(capsys, "machine", "check", str(path))
    assert code == 2
    assert (
        f"{path}:{line_of(text, 'charge_setting - 2 bar')} [circuits.0.test_points.0.expected.0.low]" in err
    )
    assert "charge_setting" in err


VALVE_BANK = """\
id = "bank"
name = "Bank"
rated_speed = "2000 rpm"
rated_max_pressure = "250 bar"

[[circuits]]
id = "valves"
name = "Valve bank"
template = "open_centre_sections"
reliefs = [
  { id = "main", setting = "180 bar" },
]

[circuits.parameters]
port_2a_relief_setting = "150 bar"
"""


@pytest.mark.parametrize(
    ("old", "new", "key", "words"),
    [
        # Its own reliefs replace the template's, so the work ports' port reliefs must be listed.
        (
            '  { id = "main", setting = "180 bar" },',
            '  { id = "main", setting = "180 bar" },',
            "circuits.0.reliefs",
            "port_1a",
        ),
        (
            'port_2a_relief_setting = "150 bar"',
            'port_2a_relief_setting = "150 L/min"',
            "circuits.0.parameters.port_2a_relief_setting",
            "pressure",
        ),
    ],
)
def test_check_names_file_line_and_key_on_a_broken_valve_bank(
    capsys: pytest.CaptureFixture[str], tmp_path: Path, old: str, new: str, key: str, words: str
) -> None:
    text = VALVE_BANK.replace(old, new)
    path = tmp_path / "bank.toml"
    path.write_text(text, encoding="utf-8")
    code, _out, err = run(capsys, "machine", "check", str(path))
    assert code == 2
    line = line_of(text, "reliefs = [") if key.endswith("reliefs") else line_of(text, new)
    assert f"{path}:{line} [{key}" in err, err
    assert words in err


def test_check_passes_a_valve_bank_that_lists_its_port_reliefs(
    capsys: pytest.CaptureFixture[str], tmp_path: Path
) -> None:
    ports = "".join(f'  {{ id = "port_{n}{s}", setting = "200 bar" }},\n' for n in (1, 2, 3) for s in "ab")
    text = VALVE_BANK.replace(
        '  { id = "main", setting = "180 bar" },\n', '  { id = "main", setting = "180 bar" },\n' + ports
    )
    path = tmp_path / "bank.toml"
    path.write_text(text, encoding="utf-8")
    code, _out, err = run(capsys, "machine", "check", str(path))
    assert code == 0, err


def test_check_and_show_say_when_a_circuit_states_no_parts(
    capsys: pytest.CaptureFixture[str], tmp_path: Path
) -> None:
    # A circuit with no fitted_parts list is taken to have every optional part (no caution lost),
    # and the technician is told so; a stated list, even an empty one, draws no note.
    unstated = GOOD.replace('fitted_parts = ["cross_port_reliefs"]\n', "")
    path = tmp_path / "yard-crane.toml"
    path.write_text(unstated, encoding="utf-8")
    code, out, _ = run(capsys, "machine", "check", str(path))
    assert code == 0
    assert "circuit 'slew' states no fitted_parts, so every optional part is assumed fitted" in out
    user_profiles_dir().mkdir(parents=True, exist_ok=True)
    (user_profiles_dir() / "yard-crane.toml").write_text(unstated, encoding="utf-8")
    code, out, _ = run(capsys, "machine", "show", "yard-crane")
    assert "parts fitted: not stated, so every optional part is assumed fitted" in out
    path.write_text(GOOD.replace('["cross_port_reliefs"]', "[]"), encoding="utf-8")
    code, out, _ = run(capsys, "machine", "check", str(path))
    assert code == 0 and "note:" not in out
