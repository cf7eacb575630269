"""Values as a technician types them: spellings, separators, gauge and absolute, display units.

Conversion factors are checked against ``scipy.constants`` (CODATA/NIST values) where it has the
constant, and against NIST SP 811 (2008), Appendix B.8 "Factors for units listed alphabetically"
where it does not; values recalled from SP 811 without the document at hand say ``from memory``.
The bar (1e5 Pa) and the standard atmosphere (101 325 Pa) are exact by definition (SI Brochure,
9th ed., non-SI units accepted for use with the SI).
"""

from __future__ import annotations

import subprocess
import sys

import pint
import pytest
from scipy import constants as sc

from fieldkit.cli import main
from fieldkit.errors import AmbiguousInputError, DimensionError, FieldkitError, UnitInputError
from fieldkit.model.roles import ROLES, Role
from fieldkit.units import (
    Q_,
    SPELLINGS,
    STANDARD_ATMOSPHERE,
    DisplaySystem,
    Kind,
    ParsedValue,
    PressureReference,
    convert,
    format_value,
    kind_of,
    parse_quantity,
    parse_value,
    to_absolute,
    to_canonical,
    to_gauge,
    unit,
)

GAUGE = PressureReference.GAUGE
ABSOLUTE = PressureReference.ABSOLUTE
REL = 1e-12  # float noise only: the factors below are the oracle's, not rounded ones

#: 1 inHg (conventional, 0 °C) = 3.386 389 E+03 Pa — NIST SP 811 B.8 (from memory); scipy has no inHg.
INHG_PA_SP811 = 3386.389
#: 1 psi = 6.894 757 E+03 Pa — NIST SP 811 B.8 (from memory), rounded to 7 digits there.
PSI_PA_SP811 = 6894.757
#: 1 kgf/cm² = 9.806 65 E+04 Pa exactly — NIST SP 811 B.8 (from memory); standard gravity 9.80665 m/s².
KGF_CM2_PA_SP811 = 98066.5
#: 1 US gallon = 3.785 411 784 L exactly (231 in³) — NIST SP 811 B.8 (from memory).
US_GALLON_L_SP811 = 3.785411784


def si_magnitude(text: str, si_unit: str, **kwargs: object) -> float:
    """The typed value in an SI unit, so it can be compared with scipy's SI constants."""
    return float(parse_quantity(text, **kwargs).to(si_unit).magnitude)  # type: ignore[arg-type]


# --- conversion factors -------------------------------------------------------------------


def test_one_psi_is_the_nist_pound_force_per_square_inch() -> None:
    # Oracle: scipy.constants.psi (lbf/in² from the exact pound and inch); NIST SP 811 B.8 6 894.757 Pa.
    assert si_magnitude("1 psi", "pascal") == pytest.approx(sc.psi, rel=REL)
    assert si_magnitude("1 psi", "pascal") == pytest.approx(PSI_PA_SP811, abs=0.0005)


def test_one_bar_is_exactly_one_hundred_kilopascal() -> None:
    # SI Brochure (9th ed.): 1 bar = 100 000 Pa exactly; oracle scipy.constants.bar.
    assert si_magnitude("1 bar", "pascal") == sc.bar == 100_000.0


def test_kgf_per_square_centimetre_is_standard_gravity_on_a_square_centimetre() -> None:
    # NIST SP 811 B.8: 1 kgf/cm² = 98 066.5 Pa exactly (from memory); oracle scipy.constants.kgf / cm².
    assert si_magnitude("1 kgf/cm2", "pascal") == pytest.approx(sc.kgf / sc.centi**2, rel=REL)
    assert si_magnitude("1 kgf/cm2", "pascal") == pytest.approx(KGF_CM2_PA_SP811, rel=REL)


def test_inch_of_mercury_is_the_conventional_one() -> None:
    # NIST SP 811 B.8: inch of mercury, conventional = 3 386.389 Pa (from memory); scipy has no inHg.
    assert si_magnitude("1 inHg", "pascal") == pytest.approx(INHG_PA_SP811, abs=0.001)


def test_standard_atmosphere_is_exact_and_is_29_92_inches_of_mercury() -> None:
    # SI Brochure: 1 atm = 101 325 Pa exactly; oracle scipy.constants.atm.
    assert STANDARD_ATMOSPHERE.to("pascal").magnitude == sc.atm == 101_325.0
    assert si_magnitude("1 atm", "pascal") == sc.atm
    # 101 325 / 3 386.389 = 29.921 inHg (calc from the SP 811 factor above).
    assert STANDARD_ATMOSPHERE.to(unit("inch_Hg")).magnitude == pytest.approx(29.92, abs=0.005)


def test_us_gallon_is_231_cubic_inches() -> None:
    # NIST SP 811 B.8: gallon (U.S.) = 3.785 411 784 L exactly (from memory); oracle scipy.constants.gallon
    # and 231 · scipy.constants.inch³ (the gallon's definition).
    litres = float(Q_(1, unit("gallon")).to("liter").magnitude)
    assert litres == pytest.approx(sc.gallon / sc.liter, rel=REL)
    assert litres == pytest.approx(231 * sc.inch**3 / sc.liter, rel=REL)
    assert litres == pytest.approx(US_GALLON_L_SP811, rel=REL)


def test_one_inch_is_25_4_millimetres() -> None:
    # Oracle: scipy.constants.inch (0.0254 m exactly, international inch).
    assert si_magnitude("1 in", "meter") == pytest.approx(sc.inch, rel=REL)


def test_megapascal_is_ten_bar() -> None:
    # SI prefixes (SI Brochure): 1 MPa = 1e6 Pa = 10 bar; oracle scipy.constants.mega / bar.
    assert parse_quantity("1 MPa").to("bar").magnitude == pytest.approx(sc.mega / sc.bar, rel=REL)


# --- every spelling the trade writes --------------------------------------------------------

# (typed, kind, reference, SI unit, expected SI magnitude from scipy.constants)
SPELLING_CASES = [
    ("3500 psi", Kind.PRESSURE, GAUGE, "pascal", 3500 * sc.psi),
    ("3,500psi", Kind.PRESSURE, GAUGE, "pascal", 3500 * sc.psi),
    ("245 bar", Kind.PRESSURE, GAUGE, "pascal", 245 * sc.bar),
    ("24,5 bar", Kind.PRESSURE, GAUGE, "pascal", 24.5 * sc.bar),
    ("2.1 MPa", Kind.PRESSURE, GAUGE, "pascal", 2.1 * sc.mega),
    ("2 mpa", Kind.PRESSURE, GAUGE, "pascal", 2 * sc.mega),  # megapascal, never millipascal
    ("35 kgf/cm2", Kind.PRESSURE, GAUGE, "pascal", 35 * sc.kgf / sc.centi**2),
    ("-0.25 bar", Kind.PRESSURE, GAUGE, "pascal", -0.25 * sc.bar),
    ("0.75 bar abs", Kind.PRESSURE, ABSOLUTE, "pascal", 0.75 * sc.bar),
    ("0.75 bara", Kind.PRESSURE, ABSOLUTE, "pascal", 0.75 * sc.bar),
    ("22 barg", Kind.PRESSURE, GAUGE, "pascal", 22 * sc.bar),
    ("320 psig", Kind.PRESSURE, GAUGE, "pascal", 320 * sc.psi),
    ("14.7 psia", Kind.PRESSURE, ABSOLUTE, "pascal", 14.7 * sc.psi),
    ("62 L/min", Kind.FLOW, None, "meter ** 3 / second", 62 * sc.liter / sc.minute),
    ("16.5 gpm", Kind.FLOW, None, "meter ** 3 / second", 16.5 * sc.gallon / sc.minute),
    ("55 °C", Kind.TEMPERATURE, None, "kelvin", sc.convert_temperature(55, "Celsius", "Kelvin")),
    ("55C", Kind.TEMPERATURE, None, "kelvin", sc.convert_temperature(55, "Celsius", "Kelvin")),
    ("131 F", Kind.TEMPERATURE, None, "kelvin", sc.convert_temperature(131, "Fahrenheit", "Kelvin")),
    ("1800 rpm", Kind.SPEED, None, "revolution / second", 1800 / sc.minute),
    ("45 cc/rev", Kind.DISPLACEMENT, None, "meter ** 3 / revolution", 45 * sc.centi**3),
    ("45 cm3/rev", Kind.DISPLACEMENT, None, "meter ** 3 / revolution", 45 * sc.centi**3),
    ("12 mm/min", Kind.VELOCITY, None, "meter / second", 12 * sc.milli / sc.minute),
]


@pytest.mark.parametrize(
    ("typed", "kind", "reference", "si_unit", "expected"),
    SPELLING_CASES,
    ids=[case[0] for case in SPELLING_CASES],
)
def test_spellings_technicians_write_read_correctly(
    typed: str, kind: Kind, reference: PressureReference | None, si_unit: str, expected: float
) -> None:
    parsed = parse_value(typed)
    assert parsed.kind is kind
    assert parsed.reference is reference
    assert parsed.text == typed
    assert float(parsed.quantity.to(si_unit).magnitude) == pytest.approx(expected, rel=REL)


def test_lower_case_mpa_is_megapascal_not_millipascal() -> None:
    # SI prefixes: M = 1e6, m = 1e-3; '2 mpa' on a gauge is always megapascal (common practice).
    assert si_magnitude("2 mpa", "pascal") == pytest.approx(2 * sc.mega, rel=REL)
    assert parse_value("2 mpa").quantity.units == unit("megapascal")


def test_fahrenheit_and_celsius_oil_temperatures_agree() -> None:
    # Oracle: scipy.constants.convert_temperature: 131 °F = 55 °C.
    assert to_canonical(parse_quantity("131 F"), Kind.TEMPERATURE) == pytest.approx(
        sc.convert_temperature(131, "Fahrenheit", "Celsius"), rel=REL
    )
    assert to_canonical(parse_quantity("55C"), Kind.TEMPERATURE) == 55.0


def test_every_whitelisted_spelling_has_the_kind_its_units_say() -> None:
    # A spelling filed under the wrong kind would let '45 cc' pass as a displacement, say.
    wrong = {
        s: (k, kind_of(Q_(1.0, unit(expr))))
        for s, (expr, k) in SPELLINGS.items()
        if kind_of(Q_(1.0, unit(expr))) is not k
    }
    assert wrong == {}


# --- decimal comma and thousands separators -------------------------------------------------


def test_thousands_comma_reads_as_thousands() -> None:
    parsed = parse_value("3,500 psi")
    assert parsed.quantity.magnitude == 3500.0
    assert parsed.quantity.units == unit("psi")


def test_decimal_comma_reads_as_decimal_not_thousands() -> None:
    assert parse_value("24,5 bar").quantity.magnitude == 24.5


def test_two_comma_five_bar_is_two_and_a_half_not_twenty_five() -> None:
    # pint's own string parser deletes commas and would give 25 bar (shared/style.md, pint pitfalls).
    assert parse_value("2,5 bar").quantity.magnitude == 2.5


def test_comma_before_three_digits_reads_as_thousands_by_default() -> None:
    assert parse_value("2,500 bar").quantity.magnitude == 2500.0


def test_comma_before_three_digits_is_asked_about_when_both_readings_are_plausible() -> None:
    with pytest.raises(AmbiguousInputError) as caught:
        parse_value("2,500 bar", Kind.PRESSURE, plausible=lambda q: True)
    choices = caught.value.choices
    assert all(isinstance(c, ParsedValue) for c in choices)
    assert sorted(c.quantity.to("bar").magnitude for c in choices) == [2.5, 2500.0]  # type: ignore[attr-defined]
    message = str(caught.value)
    assert "2,500 bar" in message and "2.5 bar" in message and "2500 bar" in message


def test_decimal_comma_setting_reads_two_comma_five_hundred_as_two_and_a_half() -> None:
    assert parse_value("2,500 bar", decimal_comma=True).quantity.magnitude == 2.5


def test_decimal_comma_setting_reads_a_dot_before_three_digits_as_thousands() -> None:
    assert parse_value("2.500 bar", decimal_comma=True).quantity.magnitude == 2500.0


def test_plausibility_check_picks_the_small_reading_of_a_thousands_comma() -> None:
    # A charge point with a 0-50 bar gauge: 2500 bar is impossible, so '2,500' must be 2.5 bar.
    def fits_a_charge_gauge(q: pint.Quantity) -> bool:
        return abs(q.to("bar").magnitude) <= 50

    assert parse_value("2,500 bar", Kind.PRESSURE, plausible=fits_a_charge_gauge).quantity.magnitude == 2.5


def test_plausibility_check_picks_the_large_reading_under_a_decimal_comma_setting() -> None:
    def fits_a_loop_gauge(q: pint.Quantity) -> bool:
        return 1000 <= abs(q.to("psi").magnitude) <= 9000

    parsed = parse_value("2,500 psi", Kind.PRESSURE, decimal_comma=True, plausible=fits_a_loop_gauge)
    assert parsed.quantity.magnitude == 2500.0


def test_grouped_digits_with_both_separators_read_one_way_only() -> None:
    assert parse_value("12,345.6 psi").quantity.magnitude == 12345.6
    assert parse_value("1.234,5 bar").quantity.magnitude == 1234.5
    assert parse_value("3 500 psi").quantity.magnitude == 3500.0


@pytest.mark.parametrize("typed", ["1,23,456 bar", "1.2.3 bar", "1,2.3,4 bar", "12 34 bar", "1 2345 bar"])
def test_badly_grouped_digits_are_refused_not_guessed(typed: str) -> None:
    with pytest.raises(UnitInputError, match="separat"):
        parse_value(typed)


# --- gauge and absolute ---------------------------------------------------------------------


def test_absolute_reading_becomes_gauge_with_the_standard_atmosphere() -> None:
    # SI Brochure: standard atmosphere 101 325 Pa exactly (scipy.constants.atm).
    gauge = to_gauge(parse_quantity("0.75 bar abs"), ABSOLUTE)
    assert gauge.to("pascal").magnitude == pytest.approx(0.75 * sc.bar - sc.atm, rel=REL)
    assert gauge.units == unit("bar")


def test_vacuum_gauge_reading_becomes_absolute_with_the_standard_atmosphere() -> None:
    absolute = to_absolute(parse_quantity("-0.25 bar"), GAUGE)
    assert absolute.to("pascal").magnitude == pytest.approx(-0.25 * sc.bar + sc.atm, rel=REL)


def test_recorded_barometric_pressure_replaces_the_standard_atmosphere() -> None:
    # A site up a hill: 962 mbar local (demo value); 0.75 bar abs is then 0.212 bar of vacuum.
    local = parse_quantity("962 mbar")
    gauge = to_gauge(parse_quantity("0.75 bar abs"), ABSOLUTE, local)
    assert gauge.to("bar").magnitude == pytest.approx(0.75 - 0.962, rel=REL)
    assert to_absolute(gauge, GAUGE, local).to("bar").magnitude == pytest.approx(0.75, rel=REL)


def test_barometric_pressure_in_inches_of_mercury_converts_with_the_sp811_factor() -> None:
    local = parse_quantity("28.50 inHg")
    absolute = to_absolute(parse_quantity("5 psig"), GAUGE, local)
    # 5 psi (scipy.constants.psi) + 28.50 inHg (NIST SP 811 B.8, from memory).
    assert absolute.to("pascal").magnitude == pytest.approx(5 * sc.psi + 28.50 * INHG_PA_SP811, rel=1e-6)


def test_reference_word_follows_a_unit_spelt_with_a_space() -> None:
    # Regression: "in Hg abs" was split at its first space and refused.
    parsed = parse_value("28.5 in Hg abs")
    assert (parsed.quantity.magnitude, parsed.quantity.units, parsed.reference) == (
        28.5,
        unit("inch_Hg"),
        ABSOLUTE,
    )


def test_gauge_and_differential_readings_pass_to_gauge_unchanged() -> None:
    q = parse_quantity("1.8 bar")
    assert to_gauge(q, GAUGE) == q
    assert to_gauge(q, PressureReference.DIFFERENTIAL) == q
    assert to_absolute(parse_quantity("0.8 bara"), ABSOLUTE).magnitude == 0.8


def test_gauge_conversion_refuses_a_flow() -> None:
    with pytest.raises(DimensionError, match="pressure"):
        to_gauge(parse_quantity("62 L/min"), ABSOLUTE)


# --- clear messages for wrong input ---------------------------------------------------------


def test_a_mass_typed_for_charge_pressure_says_what_it_is_and_what_is_needed() -> None:
    with pytest.raises(DimensionError) as caught:
        parse_value("12 kg", Kind.PRESSURE, role_name=ROLES[Role.CHARGE_PRESSURE].label)
    assert str(caught.value) == "'12 kg' is a mass; charge pressure needs a pressure such as '22 bar'"


def test_a_flow_typed_where_a_temperature_is_needed_is_refused() -> None:
    with pytest.raises(
        DimensionError, match="'62 L/min' is a flow; this needs a temperature such as '55 °C'"
    ):
        parse_value("62 L/min", Kind.TEMPERATURE)


@pytest.mark.parametrize(
    ("typed", "unknown", "suggested"),
    [
        ("22 bars", "bars", "'bar'"),
        ("62 lpmm", "lpmm", "'lpm'"),
        ("55 degrees", "degrees", "'degC'"),
    ],
)
def test_unknown_unit_is_named_with_suggestions(typed: str, unknown: str, suggested: str) -> None:
    with pytest.raises(UnitInputError) as caught:
        parse_value(typed)
    message = str(caught.value)
    assert f"'{unknown}' is not a unit fieldkit knows" in message
    assert suggested in message


def test_unknown_unit_with_nothing_close_suggests_common_units() -> None:
    with pytest.raises(
        UnitInputError, match="'furlongs' is not a unit fieldkit knows; try e.g. 'bar', 'psi'"
    ):
        parse_value("3 furlongs")


def test_a_number_without_a_unit_asks_for_the_unit() -> None:
    with pytest.raises(UnitInputError, match="a unit is missing"):
        parse_value("22")


@pytest.mark.parametrize("typed", ["bar 22", "", "   ", "abc", "22\tbar", "9" * 70 + " bar"])
def test_text_that_is_not_a_reading_gets_a_fieldkit_error(typed: str) -> None:
    with pytest.raises(FieldkitError):
        parse_value(typed)


def test_pint_is_never_given_user_text_for_bar_gram() -> None:
    # pint parses 'bar(g)' as bar·gram (shared/style.md); ours reads it as gauge bar.
    parsed = parse_value("10 bar(g)")
    assert (parsed.kind, parsed.reference, parsed.quantity.magnitude) == (Kind.PRESSURE, GAUGE, 10.0)


# --- display --------------------------------------------------------------------------------


def test_metric_display_shows_bar_to_four_figures() -> None:
    # 3500 psi = 3500 · 6894.757293 Pa = 241.3165 bar (scipy.constants.psi / bar).
    assert 3500 * sc.psi / sc.bar == pytest.approx(241.3165, abs=5e-5)
    assert format_value(parse_quantity("3500 psi")) == "241.3 bar"


def test_si_display_shows_megapascal() -> None:
    assert format_value(parse_quantity("3500 psi"), DisplaySystem.named("si")) == "24.13 MPa"


def test_us_display_shows_psi_gpm_and_fahrenheit() -> None:
    us = DisplaySystem.named("us")
    # Oracles: scipy.constants.psi, gallon, convert_temperature; rounded to 4 significant figures.
    assert 245 * sc.bar / sc.psi == pytest.approx(3553.4, abs=0.05)
    assert format_value(parse_quantity("245 bar"), us) == "3553 psi"
    assert 62 * sc.liter / sc.gallon == pytest.approx(16.379, abs=5e-4)
    assert format_value(parse_quantity("62 L/min"), us) == "16.38 gpm"
    assert format_value(parse_quantity("55 °C"), us) == "131 °F"


def test_display_keeps_small_values_visible() -> None:
    assert format_value(parse_quantity("0.004 bar")) == "0.004 bar"
    assert format_value(parse_quantity("90 %")) == "90%"


def test_unknown_display_system_lists_the_choices() -> None:
    with pytest.raises(UnitInputError, match="metric, si, us"):
        DisplaySystem.named("imperial")


def test_display_spellings_parse_back() -> None:
    for name in ("metric", "si", "us"):
        system = DisplaySystem.named(name)
        for kind in Kind:
            assert SPELLINGS[system.spelling_for(kind)][1] is kind


def test_exact_text_of_tiny_and_long_magnitudes_reads_back_the_same_float() -> None:
    # Regression: '{:.17f}' wrote 1.2345678901234e-05 with its last digits cut and 1e-20 as '0';
    # the extremes of IEEE 754 doubles must still fit in one typed value.
    for magnitude in (
        1.2345678901234e-05,
        1e-20,
        -3.3e-07,
        1.2345678901234568e17,
        0.1 + 0.2,
        1e-300,
        5e-324,
        -1.7976931348623157e308,
    ):
        text = format_value(Q_(magnitude, unit("bar")), exact=True)
        assert parse_value(text).quantity.magnitude == magnitude, text


def test_converting_a_pressure_to_a_flow_unit_is_refused() -> None:
    with pytest.raises(DimensionError, match="cannot be shown in L/min"):
        convert(parse_quantity("3 bar"), "L/min")
    with pytest.raises(UnitInputError, match="'furlongs' is not a unit"):
        convert(parse_quantity("3 bar"), "furlongs")


# --- the convert command (done-criterion) ---------------------------------------------------


def test_convert_command_prints_3500_psi_as_241_3_bar(capsys: pytest.CaptureFixture[str]) -> None:
    # 3500 · scipy.constants.psi / 1e5 = 241.3165 bar, shown to 4 significant figures.
    assert main(["convert", "3,500 psi", "bar"]) == 0
    assert capsys.readouterr().out == "241.3 bar\n"


def test_convert_command_keeps_the_absolute_reference(capsys: pytest.CaptureFixture[str]) -> None:
    # 0.75 bar = 75 000 / 6894.757293 psi = 10.878 psi (scipy.constants.psi).
    assert main(["convert", "0.75 bar abs", "psi"]) == 0
    assert capsys.readouterr().out == "10.88 psi (absolute)\n"


def test_convert_command_reports_bad_input_with_exit_code_2(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["convert", "3,500 psi", "L/min"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("fieldkit: ") and "L/min" in err


def test_convert_runs_as_a_module_from_the_shell() -> None:
    done = subprocess.run(
        [sys.executable, "-m", "fieldkit", "convert", "3,500 psi", "bar"],
        capture_output=True,
        text=True,
        timeout=60,
        check=False,
    )
    assert done.returncode == 0, done.stderr
    assert done.stdout == "241.3 bar\n"


# percent(): rounding half up is worked by hand below; the "<1%"/">99%" rule for a probability
# that is neither 0 nor 1 is our own choice (common practice: never print certainty you do not have).
@pytest.mark.parametrize(
    ("p", "shown"),
    [
        (0.0, "0%"),  # impossible: says so
        (1.0, "100%"),  # certain: says so
        (1e-9, "<1%"),  # 0.0000001 % rounds to 0, but it is not impossible
        (0.004999, "<1%"),  # 0.4999 % rounds to 0
        (0.005, "1%"),  # 0.5 % rounds half up to 1
        (0.83, "83%"),
        (0.8349, "83%"),  # 83.49 % → 83
        (0.995, ">99%"),  # 99.5 % rounds to 100, but it is not certain
        (0.999999, ">99%"),
        (0.994, "99%"),  # 99.4 % → 99
        (-1e-12, "0%"),  # floating point noise below 0 counts as 0
        (1 + 1e-12, "100%"),  # and above 1 as 1
    ],
)
def test_a_probability_reads_in_whole_per_cent_and_never_claims_certainty_it_lacks(
    p: float, shown: str
) -> None:
    from fieldkit.units import percent

    assert percent(p) == shown


def test_the_job_card_and_the_screen_print_the_same_per_cent() -> None:
    from fieldkit.report.usertext import percent as card_percent
    from fieldkit.units import percent

    for p in (0.0, 0.003, 0.4, 0.997, 1.0):
        assert card_percent(p) == percent(p).replace("%", "\u00a0%")


def test_a_probability_that_is_not_a_number_is_refused() -> None:
    from fieldkit.units import percent

    with pytest.raises(ValueError, match="NaN"):
        percent(float("nan"))
