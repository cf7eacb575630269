"""Gas-charged accumulators: precharge against working pressure, and the oil delivered between two pressures.

Gas laws work in absolute pressure: a gauge reading of 0 bar is still a full atmosphere of
gas. Every pressure here is taken as a gauge reading (what the technician sees) and converted
with the standard atmosphere, or a given barometric pressure, before a gas law is applied.

For whoever acts on these numbers: an accumulator holds its charge after the pump stops. Its
oil and gas must be released before any line is opened (WorkSafeNB hazard alert, 2014; OSHA
29 CFR 1910.147(d)(5)).
"""

from __future__ import annotations

from fieldkit.physics.common import (
    Check,
    Level,
    OutOfRangeError,
    Ratio,
    fraction,
    kelvin,
    out,
    percent,
    shown,
    si,
)
from fieldkit.units import Kind, PressureReference, Quantity, to_absolute

#: Gas precharge ≈ 90 % of the minimum working pressure for energy storage (from memory).
PRECHARGE_RATIO = 0.9
#: Polytropic exponents: 1 for slow (isothermal) changes, 1.4 for fast (adiabatic) ones with
#: nitrogen treated as an ideal diatomic gas; real nitrogen deviates at a few hundred bar.
ISOTHERMAL = 1.0
ADIABATIC_NITROGEN = 1.4
#: Precharge figures are commonly stated for the gas at 20 °C (from memory); a profile may give
#: its maker's own reference temperature (``precharge_reference_temperature``).
PRECHARGE_REFERENCE_C = 20.0


def _absolute(gauge: Quantity, what: str, barometric: Quantity | None) -> float:
    """Absolute pressure in Pa of a gauge reading; a reading below vacuum is refused."""
    si(gauge, Kind.PRESSURE, what)
    if barometric is not None:
        si(barometric, Kind.PRESSURE, "barometric pressure", positive=True)
    value = si(to_absolute(gauge, PressureReference.GAUGE, barometric), Kind.PRESSURE, what)
    if value <= 0:
        raise OutOfRangeError(f"{what} {shown(gauge)} (gauge) is below a perfect vacuum")
    return value


def expected_precharge(min_working_pressure: Quantity, ratio: Ratio = PRECHARGE_RATIO) -> Quantity:
    """Gas precharge for energy storage: about 0.9 × the minimum working pressure (from memory).

    Just below the minimum working pressure, so a little oil stays in the shell when the
    system is at its lowest and the bladder or piston never slams into the oil port. The rule
    is applied to gauge readings; applying it to absolute pressures instead changes the answer
    by about 0.1 bar, well inside the rule's own looseness. Precharge is checked with the oil
    side drained and at the temperature the figure was set for.
    """
    p_min = si(min_working_pressure, Kind.PRESSURE, "minimum working pressure", positive=True)
    return out(p_min * fraction(ratio, "precharge ratio"), Kind.PRESSURE)


def precharge_ratio(precharge: Quantity, min_working_pressure: Quantity) -> Quantity:
    """Measured precharge as a share of the minimum working pressure (gauge readings)."""
    p0 = si(precharge, Kind.PRESSURE, "gas precharge", non_negative=True)
    p_min = si(min_working_pressure, Kind.PRESSURE, "minimum working pressure", positive=True)
    return percent(p0 / p_min)


def check_precharge(precharge: Quantity, min_working_pressure: Quantity) -> Check:
    """Whether a measured precharge lets the accumulator work down to the minimum pressure.

    At or above the minimum working pressure the accumulator is empty before the system
    pressure falls that far, so it delivers less than designed; no precharge at all points to
    a ruptured bladder or a leaking gas valve.
    """
    p0 = si(precharge, Kind.PRESSURE, "gas precharge", non_negative=True)
    p_min = si(min_working_pressure, Kind.PRESSURE, "minimum working pressure", positive=True)
    if p0 == 0.0:
        return Check(Level.WARNING, "no gas precharge: suspect a ruptured bladder or a leaking gas valve")
    if p0 >= p_min:
        return Check(
            Level.WARNING,
            f"precharge {shown(precharge)} is not below the minimum working "
            f"pressure {shown(min_working_pressure)}: the accumulator empties before "
            f"the pressure falls that far and delivers less than designed",
        )
    return Check(Level.OK, f"precharge is {100.0 * p0 / p_min:.0f} % of the minimum working pressure")


def delivered_volume(
    size: Quantity,
    precharge: Quantity,
    min_pressure: Quantity,
    max_pressure: Quantity,
    exponent: float = ISOTHERMAL,
    barometric: Quantity | None = None,
) -> Quantity:
    """Oil an accumulator gives out as the pressure falls from ``max_pressure`` to ``min_pressure``.

    Boyle's law, polytropic: p0 · V0ⁿ = p · Vⁿ, so the gas fills V = V0 · (p0 / p)^(1/n) and
    ΔV = V0 · (p0 / p_min)^(1/n) − V0 · (p0 / p_max)^(1/n), all pressures absolute. ``size``
    is the gas volume at precharge (the shell's nominal volume). n = 1 (isothermal) for slow
    cycles, 1.4 (adiabatic, nitrogen) for fast ones. If the precharge is above the minimum
    pressure the accumulator is empty from the precharge down, so the delivery stops there.
    """
    v0 = si(size, Kind.VOLUME, "accumulator size", positive=True)
    if isinstance(exponent, bool) or not isinstance(exponent, (int, float)) or not 1.0 <= exponent <= 1.67:
        raise OutOfRangeError(f"polytropic exponent must lie from 1 (isothermal) to 1.67; got {exponent!r}")
    p0 = _absolute(precharge, "gas precharge", barometric)
    p_low = _absolute(min_pressure, "minimum pressure", barometric)
    p_high = _absolute(max_pressure, "maximum pressure", barometric)
    if p_high < p_low:
        raise OutOfRangeError(
            f"maximum pressure {shown(max_pressure)} is below minimum pressure {shown(min_pressure)}"
        )
    inverse = 1.0 / exponent

    def gas_volume(p: float) -> float:
        return v0 * float((p0 / max(p, p0)) ** inverse)

    return out(gas_volume(p_low) - gas_volume(p_high), Kind.VOLUME)


def precharge_at_temperature(
    precharge: Quantity,
    gas_temperature: Quantity,
    reference_temperature: Quantity,
    barometric: Quantity | None = None,
) -> Quantity:
    """A precharge read with the gas at one temperature, as it would read at another.

    The gas is shut in a shell of fixed volume, so by the ideal gas law (Gay-Lussac's law)
    p / T is constant, in absolute pressure and kelvin: p_ref = p · T_ref / T. A figure stated
    at 20 °C and read on a cold morning reads low without any gas being lost (about 1 % for every
    3 K at these pressures), so the reading is brought to the figure's temperature before it is
    judged. Nitrogen at precharge pressures is close enough to ideal for this correction.
    """
    p = _absolute(precharge, "gas precharge", barometric)
    t = kelvin(gas_temperature, "gas temperature")
    t_ref = kelvin(reference_temperature, "reference temperature")
    atmosphere = _absolute(out(0.0, Kind.PRESSURE), "atmosphere", barometric)
    return out(p * t_ref / t - atmosphere, Kind.PRESSURE)
