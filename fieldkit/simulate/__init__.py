"""The fault simulator and the accuracy evaluation: visits a gauge would show on a machine,
healthy or with one catalogued fault, written from the physics core
(:mod:`fieldkit.simulate.simulator`); and how often the diagnosis engine names the fault it
was given (:mod:`fieldkit.simulate.evaluate`, imported on its own because it loads the engine
and its rule packs, which simulating alone never touches)."""

from __future__ import annotations

from fieldkit.simulate.simulator import Simulation, Simulator, simulate, simulate_visit

__all__ = ["Simulation", "Simulator", "simulate", "simulate_visit"]
