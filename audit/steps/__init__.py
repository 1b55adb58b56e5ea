"""Step kinds, one module each; importing this package registers them all.

See :mod:`audit.steps.base` for what a kind provides and DEVELOPERS.md for how to add one.
"""

from audit.steps import (  # noqa: F401  (imported to register)
    compressor,
    cooler,
    electrolyser,
    fired_heater,
    fuel_cell,
    general,
    heat_exchanger,
    heater,
    mixer,
    pump,
    reactor,
    splitter,
    turbine,
    valve,
    vessel,
)
from audit.steps.base import REGISTRY, StepBase, StepContext

__all__ = ["REGISTRY", "StepBase", "StepContext"]
