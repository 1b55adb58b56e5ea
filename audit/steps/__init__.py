"""Step kinds and the machinery they share.

Every module in :mod:`audit.steps.kinds` is one kind of equipment: its input model (a subclass of
:class:`audit.model.steps.StepBase` with ``kind: Literal["..."]``), its ``evaluate(step, ctx)``
and one call to :func:`audit.steps.base.register`. The kinds are discovered here, not listed by
hand: adding a kind is adding one module to ``kinds/`` (and its tests).

Shared machinery lives beside them: :mod:`audit.steps.base` (context, registry, the flow-step
finish), :mod:`audit.steps.laws` (first law, entropy generation, reversible work and their
findings), :mod:`audit.steps.machines` (shaft machines), :mod:`audit.steps.reacting` and
:mod:`audit.steps.reactions` (element balances, reaction properties), :mod:`audit.steps.cells`
(electrochemical cells). One kind never imports another (an import contract checks it).
"""

from __future__ import annotations

import importlib
import pkgutil

from audit.model.balance import Balance, balance_model
from audit.steps import kinds as _kinds
from audit.steps.base import REGISTRY, StepContext

for _module in sorted(pkgutil.iter_modules(_kinds.__path__), key=lambda m: m.name):
    importlib.import_module(f"{_kinds.__name__}.{_module.name}")

BALANCE_MODEL: type[Balance] = balance_model([kind.model for kind in REGISTRY.values()])
"""The balance file's model with every discovered step kind in its ``steps`` union."""

__all__ = ["BALANCE_MODEL", "REGISTRY", "StepContext"]
