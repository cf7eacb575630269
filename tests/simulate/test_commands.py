"""``fieldkit simulate`` and ``fieldkit evaluate`` as a person runs them."""

from __future__ import annotations

import io
from pathlib import Path

from rich.console import Console

from fieldkit.cli import main
from fieldkit.model.visit import Visit
from fieldkit.simulate.command import render
from fieldkit.simulate.evaluate import Case, EvaluationReport


def test_simulate_prints_a_visit_by_profile_id(capsys):
    assert main(["simulate", "tarnhollow-fellborer", "--fault", "charge_relief_low", "--seed", "4"]) == 0
    visit = Visit.model_validate_json(capsys.readouterr().out)
    assert visit.machine == "tarnhollow-fellborer"
    assert visit.scenario is not None and visit.scenario.fault == "charge_relief_low"


def test_simulate_writes_to_a_file_from_a_profile_path(tmp_path: Path, capsys):
    from fieldkit.resources import samples_dir

    out = tmp_path / "visit.json"
    profile = samples_dir() / "profiles" / "oskerfield-loamshifter.toml"
    assert (
        main(["simulate", str(profile), "--fault", "ls_signal_leak", "--severity", "0.8", "--out", str(out)])
        == 0
    )
    said = capsys.readouterr().out
    assert "ls_signal_leak in circuit 'work'" in said
    visit = Visit.model_validate_json(out.read_text(encoding="utf-8"))
    assert visit.machine == "oskerfield-loamshifter" and len(visit.readings) > 10


def test_simulate_refuses_what_it_cannot_do(capsys):
    assert main(["simulate", "no-such-machine"]) == 2
    assert "no machine profile" in capsys.readouterr().err
    assert main(["simulate", "brindlecombe-pebblerun", "--fault", "hp_relief_low"]) == 2
    assert "cannot show on machine 'brindlecombe-pebblerun'" in capsys.readouterr().err
    assert main(["simulate", "brindlecombe-pebblerun", "--severity", "9"]) == 2
    assert "severity" in capsys.readouterr().err


def test_evaluate_prints_the_figures(capsys):
    assert main(["evaluate", "--cases", "1", "--seed", "2"]) == 0
    out = capsys.readouterr().out
    for heading in (
        "Diagnosis accuracy on simulated visits",
        "Per fault and machine",
        "Per fault family",
        "Pairs most often mistaken",
        "Reliability of the top probability",
        "Faults skipped",
    ):
        assert heading in out
    assert "healthy machines with no false alarm" in out


def test_figures_from_data_are_never_read_as_markup():
    odd = "[bold red]x[/]"
    report = EvaluationReport(
        1,
        1,
        (1.0, 1.0),
        cases=[
            Case(
                profile=odd,
                fault=odd,
                circuit=None,
                severity=1.0,
                seed=0,
                top="no_fault",
                top_probability=0.5,
                top3=("no_fault",),
                found=False,
                in_top3=False,
                named=False,
            )
        ],
        skipped={odd: {"pump_worn": "because [link=x]y[/link]"}},
    )
    buffer = io.StringIO()
    render(report, Console(file=buffer, width=200, color_system=None))
    text = buffer.getvalue()
    assert odd in text and "because [link=x]y[/link]" in text


def test_evaluate_double_prints_how_often_the_pair_is_named(capsys):
    assert main(["evaluate", "--double", "--cases", "1", "--seed", "2"]) == 0
    out = capsys.readouterr().out
    assert "Two faults at once" in out
    for row in (
        "injected pair is the top pair",
        "injected pair among the top 3 pairs",
        "injected pair shown",
        "brindlecombe-pebblerun",
    ):
        assert row in out
    # One visit per pair: the Pebblerun alone shows some pairs, so the count is well above zero.
    visits = next(line for line in out.splitlines() if "visits diagnosed" in line)
    assert int(visits.split()[-1].strip("│")) > 50


def test_evaluate_double_refuses_zero_cases(capsys):
    assert main(["evaluate", "--double", "--cases", "0"]) == 2
    assert "at least 1" in capsys.readouterr().err
