"""Optional parts a circuit may have fitted.

Faults, rules, test points and cautions that belong to a part apply only where the part is
fitted: no accumulator fault on a machine without an accumulator. Adding a part is one line here;
templates say which parts their kind usually has, and a profile's circuit states what is fitted.
"""

from __future__ import annotations

from enum import StrEnum


class Part(StrEnum):
    ACCUMULATOR = "accumulator"
    LOOP_FLUSHING_VALVE = "loop_flushing_valve"
    TWO_SPEED_MOTOR = "two_speed_motor"
    SPRING_APPLIED_BRAKE = "spring_applied_brake"
    LOAD_HOLDING_VALVE = "load_holding_valve"
    COUNTERBALANCE_VALVE = "counterbalance_valve"
    COOLER = "cooler"
    RETURN_FILTER_BYPASS = "return_filter_bypass"
    CHARGE_FILTER = "charge_filter"
    CROSS_PORT_RELIEFS = "cross_port_reliefs"
    PRIORITY_VALVE = "priority_valve"
    RETURN_CHECK_VALVE = "return_check_valve"


#: A plain label for screens and job cards.
PART_LABELS: dict[Part, str] = {
    Part.ACCUMULATOR: "gas-charged accumulator",
    Part.LOOP_FLUSHING_VALVE: "loop flushing valve",
    Part.TWO_SPEED_MOTOR: "two-speed motor",
    Part.SPRING_APPLIED_BRAKE: "spring-applied, pressure-released brake",
    Part.LOAD_HOLDING_VALVE: "load-holding valve",
    Part.COUNTERBALANCE_VALVE: "counterbalance valve",
    Part.COOLER: "oil cooler",
    Part.RETURN_FILTER_BYPASS: "return filter with bypass",
    Part.CHARGE_FILTER: "charge filter",
    Part.CROSS_PORT_RELIEFS: "cross-port (high-pressure) reliefs",
    Part.PRIORITY_VALVE: "priority valve",
    Part.RETURN_CHECK_VALVE: "return check valve",
}
