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
from collections.abc import Iterable
from typing import Any

from audit.model.balance import Balance, balance_model
from audit.steps import kinds as _kinds
from audit.steps.base import REGISTRY, StepContext

for _module in sorted(pkgutil.iter_modules(_kinds.__path__), key=lambda m: m.name):
    importlib.import_module(f"{_kinds.__name__}.{_module.name}")

MODELS_KEPT = 8
"""Most models for sets of kinds kept at once: past it (a batch of files using many different sets
of kinds) a file is validated with the model of every kind."""

_models: dict[frozenset[str], type[Balance]] = {}


def model_for(kinds: Iterable[object]) -> type[Balance]:
    """The balance model whose ``steps`` union holds the step kinds named in ``kinds`` (names that
    are no kind are left for the validation to refuse; the first registered kinds stand in when
    fewer than two are named).

    Each kind's schema is built when a model first holds it (about 4 ms a kind): a file using three
    of the kinds does not pay for the others. These models validate a file exactly as the model of
    every kind does: the union is told apart by ``kind``, so no other member is ever tried, and a
    message about an unknown kind lists every registered kind (``step_kinds``).
    """
    names = frozenset(k for k in kinds if isinstance(k, str) and k in REGISTRY)
    if len(names) < 2:  # a union of two at least
        names |= frozenset([k for k in REGISTRY if k not in names][: 2 - len(names)])
    model = _models.get(names)
    if model is None:
        if len(_models) >= MODELS_KEPT:
            names = frozenset(REGISTRY)
            model = _models.get(names)
        if model is None:
            model = balance_model([kind.model for name, kind in REGISTRY.items() if name in names])
            model.step_kinds = {name: kind.model for name, kind in REGISTRY.items()}
            _models[names] = model
    return model


def __getattr__(name: str) -> Any:
    if name == "BALANCE_MODEL":  # the model with every kind, built on first use
        return model_for(REGISTRY)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


__all__ = ["BALANCE_MODEL", "REGISTRY", "StepContext", "model_for"]
