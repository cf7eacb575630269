"""Figures the simulator's circuit kinds share, in one place so they cannot drift apart.

Each says where it comes from; most are the simulator's own choices of a typical machine and a
typical test, not published figures.
"""

from __future__ import annotations

from fieldkit.physics.common import KELVIN_OFFSET
from fieldkit.units import STANDARD_ATMOSPHERE

#: Add to °C for kelvin (SI Brochure, 9th ed., 2.3.1: 0 °C = 273.15 K exactly).
KELVIN = KELVIN_OFFSET
#: The standard atmosphere in bar, for gauge ⇄ absolute (101 325 Pa, exact by definition).
ATM_BAR: float = STANDARD_ATMOSPHERE.m_as("bar")

#: Scatter between machines of one model, as a relative standard deviation (simulator's own
#: estimates, not published figures): spring settings are set on a bench, leakage and line
#: losses vary far more from one machine to the next.
SETTING_SCATTER = 0.01
LEAKAGE_SCATTER = 0.10
RESTRICTION_SCATTER = 0.10
LOAD_SCATTER = 0.05
TYPICAL_SCATTER = 0.03

#: A compound gauge cannot read below a near-perfect vacuum (common practice).
DEEPEST_VACUUM_BAR = 0.9
#: Pressure under load as a share of the cut-off or relief (simulator's choice of test load).
LOAD_SHARE = 0.6
