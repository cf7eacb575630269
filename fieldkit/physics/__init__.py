"""Physics of hydraulic circuits as pure, unit-aware functions, one module per topic.

Every function takes pint quantities, checks each input's kind (a flow where a pressure is
needed raises :class:`fieldkit.errors.DimensionError`, an impossible value raises
:class:`fieldkit.physics.common.OutOfRangeError`), works in SI floats and returns quantities in
the canonical unit of their kind (bar, L/min, kW, N·m…; see ``fieldkit.units.CANONICAL_UNIT``).
Nothing here imports numpy, scipy, the UI, storage or report code.
"""
