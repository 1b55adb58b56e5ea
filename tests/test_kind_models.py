"""A file is validated with the model of the step kinds it names (audit.steps.model_for), built on
first use: the verdict, the validated balance and every message must be those of the model of
every kind (audit.steps.BALANCE_MODEL)."""

from __future__ import annotations

from pathlib import Path
from typing import get_args

import pytest

from audit import steps
from audit.errors import InputError, InputErrors
from audit.input.document import Document, load_document, parse_document
from audit.model import balance as _balance
from audit.reading import resolve_tables, validate_document

HERE = Path(__file__).parent
FILES = sorted((HERE / "bad_inputs").glob("*.yaml")) + sorted(
    (HERE.parent / "sample_plant").glob("quillon-bay-*.yaml")
)

STREAMS = """
balance: {name: kinds, revision: A}
streams:
  S1: {fluid: Water, flow: 1 kg/s, T: 80 °C, P: 2 bar}
  S2: {fluid: Water, flow: 1 kg/s, T: 80 °C, P: 1.5 bar}
"""


def outcome(document: Document, model: type[_balance.Balance] | None) -> object:
    """The validated balance as data, or the messages of the refusal."""
    try:
        if model is None:
            balance = validate_document(document)
        else:
            balance = _balance.validate_document(document, model)
    except InputErrors as exc:
        return ("refused", [str(p) for p in exc.problems])
    except InputError as exc:
        return ("refused", [str(exc)])
    return ("valid", balance.model_dump(warnings=False))


@pytest.mark.parametrize("path", FILES, ids=lambda p: p.name)
def test_files_validate_as_with_every_kind(path: Path) -> None:
    try:
        document, _ = resolve_tables(load_document(path))
    except (InputError, InputErrors):
        return  # refused before validation: no model involved
    assert outcome(document, None) == outcome(document, steps.BALANCE_MODEL)


@pytest.mark.parametrize(
    "steps_text",
    [
        "steps:\n  - {id: V1, kind: valve, inlet: S1, outlet: S2}",
        "steps:\n  - {id: V1, kind: vlave, inlet: S1, outlet: S2}",  # unknown kind
        "steps:\n  - {id: V1, inlet: S1, outlet: S2}",  # no kind
        "steps:\n  - {id: V1, kind: 7, inlet: S1, outlet: S2}",  # not a name
        "steps:\n  - 3",  # not a mapping
        "steps: 5",
        "steps:\n  - {id: V1, kind: valve, inlet: S1, outlet: S2, duty: 3 kW}",  # unknown field
        "steps:\n  - {id: V1, kind: valve, inlet: S1, outlet: S2}\n"
        "  - {id: P1, kind: pump, inlet: S2, outlet: S1, shaft_power: x}",
    ],
)
def test_hand_made_steps_validate_as_with_every_kind(steps_text: str) -> None:
    document = parse_document(STREAMS + steps_text + "\n", "kinds.yaml")
    expected = outcome(document, steps.BALANCE_MODEL)
    assert outcome(document, None) == expected
    if expected[0] == "refused" and "vlave" in steps_text:  # every kind is offered
        assert all(kind in expected[1][0] for kind in steps.REGISTRY)


def test_a_file_naming_one_kind_validates_as_with_every_kind() -> None:
    # the first registered kind alone: its model still holds a union of two kinds
    first = next(iter(steps.REGISTRY))
    item = get_args(steps.model_for([first]).model_fields["steps"].annotation)[0]  # Annotated
    union = get_args(item)[0]
    assert len(get_args(union)) >= 2
    document = parse_document(STREAMS + f"steps:\n  - {{id: X1, kind: {first}}}\n", "one.yaml")
    assert outcome(document, None) == outcome(document, steps.BALANCE_MODEL)


def test_models_are_shared_and_bounded() -> None:
    first = steps.model_for(["valve", "pump"])
    assert steps.model_for(["pump", "valve", "pump", "no such kind"]) is first
    assert set(first.step_kinds) == set(steps.REGISTRY)
    for name in steps.REGISTRY:  # many different sets: past the bound, the model of every kind
        steps.model_for([name])
    assert len(steps._models) <= steps.MODELS_KEPT + 1
