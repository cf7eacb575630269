"""The fault simulator and the accuracy evaluation: visits a gauge would show on a machine,
healthy or with one catalogued fault, written from the physics core; and how often the
diagnosis engine names the fault it was given."""
