"""A step's claims are declared once, on its model's fields (:class:`audit.model.steps.ClaimField`).

Every number a step kind's model holds is either declared a claim, and so seen by
:func:`audit.model.steps.claim_fields` (an uncertain input of the review and a candidate for
probable causes), or named below as not a claim with the reason. A new numeric field on a kind
fails here until it says which it is.
"""

from __future__ import annotations

import typing
from typing import Annotated, Any, Literal

import pytest
from pydantic import BaseModel

from audit.input.document import Document
from audit.model import quantities
from audit.model.quantities import Power
from audit.model.steps import ClaimField, StepBase, claim_fields, step_claims
from audit.model.uncertainty import BalanceUncertainty
from audit.review.inputs import claim_inputs
from audit.steps import REGISTRY

NOT_CLAIMS = {
    "isentropic_efficiency": "a ratio the audit checks against 1; it has no kind of spread",
    "faradaic_efficiency": "a ratio the audit checks against 1; it has no kind of spread",
    "cells": "a count of cells in series, exact",
    "electrons": "electrons per mole of reaction, exact",
    "reactions.extent": "a reaction's extent, fitted to the streams when omitted; not a reading",
    "cop": "a datasheet ratio the audit checks against the reversible one; its spread follows "
    "from the duty and the power",
}
"""Numeric fields of step models that are not claims (dotted path without list positions)."""

_UNIT_OF_PARSER = {}
for _name, _kind in (
    ("Temperature", "temperature"),
    ("Pressure", "pressure"),
    ("Power", "power"),
    ("Energy", "energy"),
    ("Mass", "mass"),
    ("MolarFlow", "molar_flow"),
    ("SpecificEnthalpy", "specific_enthalpy"),
    ("SpecificEntropy", "specific_entropy"),
    ("Voltage", "voltage"),
    ("Current", "current"),
):
    for _meta in getattr(quantities, _name).__metadata__:
        if getattr(_meta, "func", None) is not None:
            _UNIT_OF_PARSER[id(_meta.func)] = _kind


def _models_in(annotation: Any) -> list[type[BaseModel]]:
    found = [annotation] if isinstance(annotation, type) and issubclass(annotation, BaseModel) else []
    for argument in typing.get_args(annotation):
        found.extend(_models_in(argument))
    return found


def _number_unit(annotation: Any, metadata: list[Any]) -> tuple[bool, str | None]:
    """(the field holds a number, the kind of unit its parser reads, if any)."""
    metas = list(metadata)
    numeric = False
    for candidate in (annotation, *typing.get_args(annotation)):
        base = typing.get_args(candidate)[0] if hasattr(candidate, "__metadata__") else candidate
        numeric = numeric or base in (int, float)
        metas.extend(getattr(candidate, "__metadata__", ()))
    for meta in metas:
        unit = _UNIT_OF_PARSER.get(id(getattr(meta, "func", None)))
        if unit is not None:
            return True, unit
    return numeric, None


def _numeric_fields(model: type[BaseModel], prefix: str = ""):
    """(dotted path, unit kind or None, declaration or None) of every numeric field, nested
    models included."""
    declared = claim_fields(model)
    for name, info in model.model_fields.items():
        if not prefix and name in StepBase.model_fields:
            continue
        path = f"{prefix}{name}"
        nested = _models_in(info.annotation)
        if nested:
            for sub in nested:
                yield from _numeric_fields(sub, f"{path}.")
            continue
        numeric, unit = _number_unit(info.annotation, info.metadata)
        if numeric:
            yield path, unit, declared.get(name)


@pytest.mark.parametrize("kind", sorted(REGISTRY))
def test_every_numeric_field_of_a_step_kind_is_a_declared_claim_or_named_as_not(kind):
    model = REGISTRY[kind].model
    seen = 0
    for path, unit, declaration in _numeric_fields(model):
        if path in NOT_CLAIMS:
            assert declaration is None, f"{kind}.{path} is declared a claim and listed as not one"
            continue
        assert declaration is not None, (
            f"{kind}.{path} holds a number but is not declared a claim: give it a ClaimField "
            "(audit.model.steps) or add it to NOT_CLAIMS with the reason"
        )
        expected = "quality" if unit is None and path.endswith("quality") else unit
        assert declaration.kind == expected, (kind, path, declaration.kind, unit)
        if declaration.opposite is not None:
            assert path.rsplit(".", 1)[-1] != declaration.opposite
        seen += 1
    # splitters and valves claim nothing; every other kind claims at least one number
    assert seen > 0 or kind in ("splitter", "valve")


def test_a_new_claim_field_is_an_uncertain_input_with_its_declared_default():
    class Drum(StepBase):
        kind: Literal["drum"] = "drum"
        blowdown_duty: Annotated[Power | None, ClaimField("duty")] = None
        shaft_power: Annotated[Power | None, ClaimField("power")] = None
        speed: float | None = None  # not declared: not a claim

    step = Drum(id="D1", blowdown_duty="200 kW", shaft_power="10 kW", speed=50.0)
    assert [(c.key, c.kind, c.category) for c in step_claims(step)] == [
        ("blowdown_duty", "power", "duty"),
        ("shaft_power", "power", "power"),
    ]
    defaults = BalanceUncertainty(duty="2 %", power="1 %")
    found = claim_inputs(0, step, defaults, Document(data={}, file="drum.yaml"))
    # 2 % of 200 kW and 1 % of 10 kW, standard uncertainties (coverage 'standard')
    assert [(i.label, i.u) for i in found] == [
        ("step D1 blowdown_duty", pytest.approx(4.0e3)),
        ("step D1 shaft_power", pytest.approx(100.0)),
    ]


def test_a_claim_of_an_unknown_kind_is_refused():
    with pytest.raises(ValueError, match="unknown kind of claim 'torque'"):
        ClaimField("torque")
