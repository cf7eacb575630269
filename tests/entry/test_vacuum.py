"""Item 4 of issue 10: vacuum as technicians write it. 1 inHg (conventional, 0 °C) is
3386.389 Pa (NIST SP 811, appendix B.8), so 7 inHg = 23 704.7 Pa = 0.2370 bar below atmosphere."""

from __future__ import annotations

import pytest

from fieldkit import cli
from fieldkit.errors import AmbiguousInputError, FieldkitError
from fieldkit.model.condition import Condition
from fieldkit.model.gauge import Gauge
from fieldkit.session import gauge_span_text
from fieldkit.units import Kind, PressureReference, parse_value, to_canonical

PEBBLERUN = "brindlecombe-pebblerun"


@pytest.mark.parametrize(
    ("text", "bar"),
    [
        ("7 inHg vac", -7 * 3386.389 / 1e5),  # NIST SP 811 B.8
        ("7 inHg vacuum", -7 * 3386.389 / 1e5),
        ("7 in Hg vac", -7 * 3386.389 / 1e5),
        ("200 mbar vac", -0.2),  # 1 mbar = 100 Pa
        ("-0.3 bar", -0.3),
        ("-30 kPa", -0.3),  # 1 kPa = 0.01 bar
    ],
)
def test_vacuum_is_read_as_a_negative_gauge_pressure(text: str, bar: float) -> None:
    parsed = parse_value(text, Kind.PRESSURE)
    assert parsed.reference is PressureReference.GAUGE
    assert to_canonical(parsed.quantity, Kind.PRESSURE) == pytest.approx(bar, rel=1e-6)


def test_an_absolute_reading_at_a_suction_point_stays_absolute() -> None:
    parsed = parse_value("0.7 bar abs", Kind.PRESSURE)
    assert parsed.reference is PressureReference.ABSOLUTE and parsed.quantity.magnitude == 0.7


def test_a_minus_and_vac_together_are_refused() -> None:
    with pytest.raises(FieldkitError, match="not both"):
        parse_value("-7 inHg vac", Kind.PRESSURE)


def test_vac_after_an_absolute_pressure_is_refused() -> None:
    with pytest.raises(FieldkitError, match="gauge pressure unit only"):
        parse_value("7 bar abs vac", Kind.PRESSURE)


def test_a_bare_inhg_at_a_suction_point_is_asked_about_never_taken_as_pressure(walk_bench) -> None:
    bench, visits = walk_bench
    profile = bench.library.get(PEBBLERUN)
    point = next(tp for _c, tp in profile.all_test_points() if tp.role.value == "suction_pressure")
    with pytest.raises(AmbiguousInputError) as caught:
        bench.record(visits[PEBBLERUN], point.id, "7 inHg", Condition())
    message = str(caught.value)
    assert "of vacuum" in message and "above atmosphere" in message and "'7 inHg vac'" in message
    first, second = caught.value.choices
    assert to_canonical(first.quantity, Kind.PRESSURE) == pytest.approx(-0.237039, abs=1e-5)
    assert to_canonical(second.quantity, Kind.PRESSURE) == pytest.approx(0.237039, abs=1e-5)
    assert bench.store.get_visit(visits[PEBBLERUN]).readings == []


def test_7_inhg_vac_at_a_suction_point_is_saved_as_vacuum(walk_bench) -> None:
    bench, visits = walk_bench
    profile = bench.library.get(PEBBLERUN)
    point = next(tp for _c, tp in profile.all_test_points() if tp.role.value == "suction_pressure")
    saved = bench.record(visits[PEBBLERUN], point.id, "7 inHg vac", Condition(), gauge="C1")
    assert to_canonical(saved.value, Kind.PRESSURE) == pytest.approx(-0.237039, abs=1e-5)


def test_the_convert_command_reads_vacuum_and_refuses_an_impossible_absolute(capsys) -> None:
    assert cli.main(["convert", "7 inHg vac", "bar"]) == 0
    assert capsys.readouterr().out.strip() == "-0.237 bar"  # 0.23704 bar to 4 significant digits
    assert cli.main(["convert", "-5 bar abs", "bar"]) == 2
    err = capsys.readouterr().err
    assert "absolute pressure cannot be below zero" in err and "Traceback" not in err


@pytest.mark.parametrize(
    ("start", "top", "printed"),
    [
        ("-1 bar", "1.5 bar", "-1 bar–1.5 bar"),
        ("30 inHg vac", "0 inHg", "30 inHg vac–0"),
        (None, "600 bar", "0–600 bar"),
    ],
)
def test_compound_and_vacuum_gauges_print_their_true_span(start, top, printed) -> None:
    gauge = Gauge(id="V", full_scale=top, scale_start=start, accuracy_class=1.6)
    assert gauge_span_text(gauge) == printed


# --- at a suction point, through the workbench and the visit screen ------------------------------
#: Standard atmosphere 1.01325 bar (SI Brochure, 9th ed., table 8); 1 inHg = 33.8639 hPa (NIST SP 811).
VACUUM_AS_WRITTEN = [
    ("7 inHg vac", -7 * 0.0338639),  # -0.23705 bar
    ("7 inHg vacuum", -7 * 0.0338639),
    ("200 mbar vac", -0.200),
    ("-0.3 bar", -0.300),
    ("-30 kPa", -0.300),
    ("0.7 bar abs", 0.7 - 1.01325),  # -0.31325 bar gauge
]


def _suction(bench) -> str:
    profile = bench.library.get(PEBBLERUN)
    return next(tp.id for _c, tp in profile.all_test_points() if tp.role.value == "suction_pressure")


@pytest.mark.parametrize(("text", "gauge_bar"), VACUUM_AS_WRITTEN, ids=[t for t, _ in VACUUM_AS_WRITTEN])
def test_every_way_of_writing_a_vacuum_is_saved_below_atmosphere(walk_bench, text, gauge_bar) -> None:
    from fieldkit.units import to_gauge

    bench, visits = walk_bench
    saved = bench.record(visits[PEBBLERUN], _suction(bench), text, Condition(), gauge="C1")
    assert saved.entered == text
    as_gauge = to_canonical(to_gauge(saved.value, saved.reference), Kind.PRESSURE)
    assert as_gauge == pytest.approx(gauge_bar, abs=1e-5) and as_gauge < 0


async def test_the_visit_screen_asks_vacuum_or_pressure_and_saves_the_vacuum(walk_bench) -> None:
    from textual.widgets import Input, OptionList, Select

    from fieldkit.tui.app import make_app
    from fieldkit.tui.screens.dialogs import ChoiceDialog
    from fieldkit.tui.screens.visit import VisitScreen

    bench, visits = walk_bench
    app = make_app(bench)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        screen = VisitScreen(bench, visits[PEBBLERUN])
        await app.push_screen(screen)
        for _ in range(50):
            if screen.diagnosis is not None:
                break
            await pilot.pause()
        screen.select_point(_suction(bench))
        await pilot.pause()
        screen.query_one("#gauge", Select).value = "C1"  # the compound gauge, -1 to 1.5 bar
        await pilot.pause()
        value = screen.query_one("#value", Input)
        value.focus()
        value.insert_text_at_cursor("7 inHg")
        await pilot.pause()
        said = str(screen.query_one("#parse-msg").data[0])
        assert "of vacuum" in said and "above atmosphere" in said and "Enter asks which" in said
        await pilot.press("enter")
        await pilot.pause()
        dialog = app.screen
        assert isinstance(dialog, ChoiceDialog)
        options = dialog.query_one("#choices", OptionList)
        labels = [str(options.get_option_at_index(i).prompt) for i in range(options.option_count)]
        assert labels == [
            "7 inHg vac   (= -0.237 bar, below atmosphere)",  # 7 × 33.8639 hPa = 0.237 bar (NIST SP 811)
            "7 inHg   (= 0.237 bar, above atmosphere)",
        ]
        assert bench.store.get_visit(visits[PEBBLERUN]).readings == []  # nothing saved while asking
        await pilot.press("enter")  # the first option: the vacuum
        await pilot.pause()
        readings = bench.store.get_visit(visits[PEBBLERUN]).readings
        assert len(readings) == 1 and readings[0].entered == "7 inHg vac"
        assert to_canonical(readings[0].value, Kind.PRESSURE) == pytest.approx(-0.237047, abs=1e-5)


# --- compound and vacuum gauges print their true span in the kit and on the job card -------------
def test_the_kit_lists_a_vacuum_gauge_with_its_dial_span(tmp_path, capsys) -> None:
    store = str(tmp_path / "kit.sqlite3")
    add = ["--store", store, "kit", "add", "V30", "--kind", "pressure_gauge", "--class", "1.6"]
    assert cli.main([*add, "--span", "30 inHg vac..0 inHg"]) == 0
    assert (
        cli.main(
            [
                "--store",
                store,
                "kit",
                "add",
                "C15",
                "--kind",
                "pressure_gauge",
                "--class",
                "1.6",
                "--span",
                "-1..1.5 bar",
            ]
        )
        == 0
    )
    capsys.readouterr()
    assert cli.main(["--store", store, "kit", "list"]) == 0
    out = capsys.readouterr().out
    assert "30 inHg vac to 0" in out and "-1 bar to 1.5 bar" in out


def test_the_job_card_prints_a_vacuum_gauge_with_its_true_span(tmp_path) -> None:
    from fieldkit.report.build import job_card
    from fieldkit.report.jobcard import render_card
    from fieldkit.resources import samples_dir
    from fieldkit.session import Workbench

    bench = Workbench.open(tmp_path / "card.sqlite3")
    try:
        visit, _kit = bench.import_visit_file(samples_dir() / "visits" / "pebblerun-suction-cavitation.json")
        bench.store.reopen_visit(visit.id)
        bench.store.add_gauge(
            visit.id, Gauge(id="V30", full_scale="0 inHg", scale_start="30 inHg vac", accuracy_class=1.6)
        )
        bench.record(visit.id, _suction(bench), "7 inHg vac", Condition(), gauge="V30")
        visit = bench.store.get_visit(visit.id)
        profile = bench.profile_for(visit)
        card = job_card(visit, profile, bench.diagnose(visit, profile))
        for fmt in ("text", "markdown"):
            printed = render_card(card, fmt).decode("utf-8")
            # 30 inHg = 1.0159 bar (NIST SP 811): the metric card shows the bar span and the dial's own.
            assert "-1.016 bar to 0 (dial 30 inHg vac to 0)" in printed, fmt
            assert "-1 bar to 3 bar" in printed, fmt  # the sample's compound gauge C3
    finally:
        bench.close()
