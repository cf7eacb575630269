"""fieldkit: hydraulic test-point readings checked with physics, faults ranked, job card printed."""

__version__ = "0.1.0"
