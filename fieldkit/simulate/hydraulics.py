"""The simulator's own physics of oil, leakage gaps and relief valves.

Written apart from :mod:`fieldkit.physics` on purpose: the simulator is the world the rule engine
is measured against, so where the two share an assumption an error in it cannot be seen. Here:

* oil viscosity follows the Vogel (Vogel–Cameron) equation for dynamic viscosity,
  μ = A · exp(B / (θ + C)) with θ in °C and C = 95 °C, fitted to the simulator's own 40 °C and
  100 °C grade figures; density falls with temperature (volumetric expansion), so ν = μ / ρ
  differs from a straight ASTM D341 line between the fitting points;
* internal leakage is laminar flow through a narrow slot (plane Poiseuille flow):
  Q = w · h³ · Δp / (12 · μ · L), with Δp across the gap (outlet minus case or low side), so a
  clearance that opens by a quarter leaks nearly twice as much and a cold machine leaks less in
  proportion to its dynamic viscosity;
* a relief valve opens at its cracking pressure and its inlet pressure then rises with the flow
  passing it (override slope, bar per L/min), so a pump that delivers less stalls lower;
  reliefs in series add, parallel branches share the flow at one inlet pressure;
* a closed loop's cross-port relief is a differential valve discharging into the low side, so
  the high-port gauge reads low-side (charge) pressure + differential + override.

Plain floats in canonical units (bar, L/min, °C, cSt) except where SI is named, for the hot loop.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass

# --- oil ------------------------------------------------------------------------------------------

#: Cameron's constant in the Vogel equation for mineral oils, °C (from memory: Vogel–Cameron,
#: μ = a·exp(b/(θ + 95)), as given in tribology texts for mineral lubricating oils).
VOGEL_C = 95.0
#: Density of a mineral hydraulic oil at 15 °C, kg/m³, and its volumetric expansion per kelvin
#: (from memory: 860–890 kg/m³ and about 0.0007 /K are the usual figures).
DENSITY_15C = 875.0
EXPANSION_PER_K = 7.0e-4

#: The simulator's own grade table: kinematic viscosity (cSt) at 40 °C (the ISO 3448 midpoint) and at
#: 100 °C for a mineral oil of viscosity index 100; the 100 °C figures were chosen so that ASTM D2270
#: gives VI ≈ 100 (checked against the chemicals library in tests/simulate/test_hydraulics.py).
GRADES: dict[str, tuple[float, float]] = {
    "VG10": (10.0, 2.66),
    "VG15": (15.0, 3.41),
    "VG22": (22.0, 4.29),
    "VG32": (32.0, 5.36),
    "VG46": (46.0, 6.76),
    "VG68": (68.0, 8.73),
    "VG100": (100.0, 11.38),
    "VG150": (150.0, 15.02),
}


def density(oil_c: float) -> float:
    """Oil density in kg/m³ at a temperature: ρ = ρ15 / (1 + β · (θ − 15))."""
    return DENSITY_15C / (1.0 + EXPANSION_PER_K * (oil_c - 15.0))


@dataclass(frozen=True, slots=True)
class Oil:
    """An oil's dynamic viscosity against temperature, μ = a · exp(b / (θ + C)), μ in Pa·s."""

    a: float
    b: float

    def dynamic(self, oil_c: float) -> float:
        """Dynamic viscosity in Pa·s."""
        return self.a * math.exp(self.b / (oil_c + VOGEL_C))

    def kinematic_cst(self, oil_c: float) -> float:
        """Kinematic viscosity in cSt: ν = μ / ρ."""
        return self.dynamic(oil_c) / density(oil_c) * 1.0e6


def vogel_oil(nu40_cst: float, nu100_cst: float) -> Oil:
    """Fit the Vogel–Cameron curve through an oil's 40 °C and 100 °C kinematic viscosities."""
    if not nu40_cst > nu100_cst > 0:
        raise ValueError(f"an oil thins as it warms: {nu40_cst} cSt at 40 °C, {nu100_cst} cSt at 100 °C")
    mu40 = nu40_cst * 1.0e-6 * density(40.0)
    mu100 = nu100_cst * 1.0e-6 * density(100.0)
    b = math.log(mu40 / mu100) / (1.0 / (40.0 + VOGEL_C) - 1.0 / (100.0 + VOGEL_C))
    return Oil(a=mu40 / math.exp(b / (40.0 + VOGEL_C)), b=b)


def oil_of_grade(name: str) -> Oil:
    """The simulator's oil for a grade written as the profile writes it (``VG46``, ``ISO VG 46``)."""
    key = "VG" + "".join(ch for ch in name if ch.isdigit())
    if key not in GRADES:
        raise ValueError(f"the simulator has no figures for oil grade '{name}'; it knows {', '.join(GRADES)}")
    return vogel_oil(*GRADES[key])


# --- laminar gaps ---------------------------------------------------------------------------------

#: Healthy running clearance of a leakage gap, µm (simulator's own choice, from memory: piston-to-bore
#: and valve-plate clearances of hydraulic pumps are some 5–20 µm).
HEALTHY_GAP_UM = 10.0
_LPM = 60_000.0  # L/min per m³/s


def slot_flow(width_over_length: float, gap_um: float, dp_bar: float, mu_pa_s: float) -> float:
    """Laminar flow through a narrow slot, L/min: Q = (w/L) · h³ · Δp / (12 · μ).

    Plane Poiseuille flow between parallel walls, valid while the gap is narrow against its width
    and the flow laminar (it is, at these clearances). Callers give Δp from the high side (pump
    outlet, loop high side) to the low side (case, inlet); none or negative passes nothing."""
    if dp_bar <= 0.0:
        return 0.0
    h = gap_um * 1.0e-6
    return width_over_length * h**3 * dp_bar * 1.0e5 / (12.0 * mu_pa_s) * _LPM


def slot_for(leak_lpm: float, dp_bar: float, mu_pa_s: float, gap_um: float = HEALTHY_GAP_UM) -> float:
    """The slot width over length (w/L) that leaks ``leak_lpm`` at ``dp_bar`` through ``gap_um``:
    how a healthy machine's leakage figure becomes a geometry."""
    h = gap_um * 1.0e-6
    return leak_lpm / _LPM * 12.0 * mu_pa_s / (h**3 * max(dp_bar, 1e-6) * 1.0e5)


def gap_growth_for(leak_ratio: float) -> float:
    """By how much a clearance must open for its leakage to grow ``leak_ratio``-fold (Q ∝ h³)."""
    return max(leak_ratio, 0.0) ** (1.0 / 3.0)


# --- relief valves --------------------------------------------------------------------------------

#: Override slope when the profile states none: the inlet rises 1.5 % of the setting from cracking
#: to the pump's rated flow (simulator's own estimate for a pilot-operated relief; a direct-acting
#: one overrides more).
DEFAULT_OVERRIDE_SHARE = 0.015


@dataclass(frozen=True, slots=True)
class Valve:
    """A relief valve: cracking pressure (bar), override slope (bar per L/min), drain."""

    cracking: float
    slope: float
    external_drain: bool = False

    def inlet(self, flow: float, back: float) -> float:
        """Inlet pressure passing ``flow`` with ``back`` on its outlet. Back pressure acts on the
        back of an internally drained poppet, so it adds; an externally drained one only cannot
        sit below its own outlet."""
        own = self.cracking + self.slope * max(flow, 0.0)
        return max(own, back) if self.external_drain else own + back


#: A relief network: a valve id, or ("series", members pump side first) or ("parallel", branches).
Network = str | tuple[str, Sequence["Network"]]


def network_inlet(net: Network, valves: Mapping[str, Valve], flow: float, back: float) -> float:
    """Pressure upstream of a relief network passing ``flow`` (L/min) with ``back`` downstream."""
    if isinstance(net, str):
        return valves[net].inlet(flow, back)
    kind, members = net
    if kind == "series":
        p = back
        for m in reversed(members):
            p = network_inlet(m, valves, flow, p)
        return p
    return _parallel_inlet(members, valves, flow, back)


def _branch_flow(net: Network, valves: Mapping[str, Valve], inlet: float, back: float, cap: float) -> float:
    """Flow a branch passes at a given inlet pressure (bisection on its rising p(Q); a lone
    valve is solved directly)."""
    if isinstance(net, str):
        v = valves[net]
        if inlet <= (v.cracking if v.external_drain else v.cracking + back) or inlet <= back:
            return 0.0
        if v.slope <= 0.0:
            return cap
        own = inlet if v.external_drain else inlet - back
        return min(cap, (own - v.cracking) / v.slope)
    if network_inlet(net, valves, 0.0, back) >= inlet:
        return 0.0
    if network_inlet(net, valves, cap, back) <= inlet:
        return cap
    return _bisect(lambda q: network_inlet(net, valves, q, back) - inlet, 0.0, cap)


def _parallel_inlet(
    members: Sequence[Network], valves: Mapping[str, Valve], flow: float, back: float
) -> float:
    """Branches share one inlet pressure; the flows they pass at it add up to ``flow``."""
    cracks = [network_inlet(m, valves, 0.0, back) for m in members]
    low = min(cracks)
    if flow <= 0.0:
        return low
    high = min(network_inlet(m, valves, flow, back) for m in members)
    if high <= low:
        return low

    def excess(p: float) -> float:
        return sum(_branch_flow(m, valves, p, back, flow) for m in members) - flow

    return _bisect(excess, low, high)


def _bisect(f: Callable[[float], float], lo: float, hi: float, iterations: int = 40) -> float:
    """Root of a rising function between ``lo`` and ``hi``."""
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        if f(mid) > 0.0:
            hi = mid
        else:
            lo = mid
    return 0.5 * (lo + hi)


__all__ = [
    "DEFAULT_OVERRIDE_SHARE",
    "GRADES",
    "HEALTHY_GAP_UM",
    "Network",
    "Oil",
    "Valve",
    "density",
    "gap_growth_for",
    "network_inlet",
    "oil_of_grade",
    "slot_flow",
    "slot_for",
    "vogel_oil",
]
