"""Named circuit parameters: the maker's figures a profile carries and rules compute with.

A circuit's ``parameters`` table maps these names to values; a name not listed here is a typo
and is refused with the list of known names. Adding a parameter is one line here.
"""

from __future__ import annotations

from fieldkit.units import Kind

PARAMETERS: dict[str, tuple[Kind, str]] = {
    "pump_displacement": (Kind.DISPLACEMENT, "main pump maximum displacement"),
    "motor_displacement": (Kind.DISPLACEMENT, "motor displacement (high-torque setting)"),
    "motor_low_displacement": (Kind.DISPLACEMENT, "two-speed motor displacement in high speed"),
    "charge_pump_displacement": (Kind.DISPLACEMENT, "charge pump displacement"),
    "charge_relief_setting": (Kind.PRESSURE, "charge relief setting"),
    "flushing_relief_setting": (Kind.PRESSURE, "loop flushing relief setting"),
    "flushing_flow": (Kind.FLOW, "loop flushing flow at rated speed"),
    "high_pressure_relief_setting": (Kind.PRESSURE, "cross-port (high-pressure) relief setting"),
    "main_relief_setting": (Kind.PRESSURE, "main relief setting"),
    "secondary_relief_setting": (Kind.PRESSURE, "second relief setting (series or parallel with the main)"),
    "parallel_relief_setting": (
        Kind.PRESSURE,
        "setting of a lower relief in parallel with the main one (a port or auxiliary relief)",
    ),
    # Port (work-port) reliefs of a multi-section open-centre valve: one per section and port.
    **{
        f"port_{n}{side}_relief_setting": (
            Kind.PRESSURE,
            f"port relief setting, valve section {n}, port {side.upper()}",
        )
        for n in (1, 2, 3)
        for side in ("a", "b")
    },
    "open_centre_pressure_max": (
        Kind.PRESSURE,
        "highest pump outlet pressure with every spool of an open-centre valve centred",
    ),
    "steering_relief_setting": (
        Kind.PRESSURE,
        "steering relief setting (priority valve or steering unit), below the pump's cut-off",
    ),
    "steering_standby_setting": (
        Kind.PRESSURE,
        "steering supply (CF) pressure with the wheel at rest (priority valve spring)",
    ),
    "priority_flow": (Kind.FLOW, "priority (CF) flow to the steering at rated speed"),
    "compensator_setting": (Kind.PRESSURE, "pressure compensator setting"),
    "ls_standby_setting": (Kind.PRESSURE, "load-sensing standby (low-pressure standby) setting"),
    "ls_margin_setting": (Kind.PRESSURE, "load-sensing margin setting"),
    "pilot_relief_setting": (Kind.PRESSURE, "pilot supply relief setting"),
    "brake_release_min": (Kind.PRESSURE, "pressure for full brake release"),
    "accumulator_min_working_pressure": (Kind.PRESSURE, "accumulator minimum working pressure"),
    "accumulator_max_working_pressure": (Kind.PRESSURE, "accumulator maximum working pressure"),
    "accumulator_volume": (Kind.VOLUME, "accumulator gas volume"),
    "precharge_reference_temperature": (
        Kind.TEMPERATURE,
        "gas temperature the accumulator precharge figure is stated at",
    ),
    "cylinder_bore": (Kind.LENGTH, "cylinder bore"),
    "cylinder_rod": (Kind.LENGTH, "cylinder rod diameter"),
    "max_case_pressure": (Kind.PRESSURE, "highest continuous case pressure the shaft seals accept"),
    "min_net_charge": (Kind.PRESSURE, "least charge pressure above case pressure"),
    "case_drain_baseline": (Kind.FLOW, "case drain flow when the machine was new, at reference temperature"),
    "return_back_pressure_max": (Kind.PRESSURE, "highest return line pressure at full flow"),
    "low_idle_speed": (Kind.SPEED, "engine (pump) speed at low idle"),
    "filter_bypass_setting": (Kind.PRESSURE, "return filter bypass valve setting"),
    "min_suction_pressure": (Kind.PRESSURE, "lowest pump inlet pressure (gauge; negative is vacuum)"),
    "max_drift_rate": (Kind.VELOCITY, "highest acceptable cylinder drift under the test load"),
    "oil_volume": (Kind.VOLUME, "oil in the circuit (tank and lines)"),
    "rated_flow": (Kind.FLOW, "pump flow at rated speed and no load"),
    "min_volumetric_efficiency": (Kind.RATIO, "least pump volumetric efficiency at test pressure"),
    "max_case_drain_share": (
        Kind.RATIO,
        "highest case drain as a share of the pump's flow, at rated pressure",
    ),
}
