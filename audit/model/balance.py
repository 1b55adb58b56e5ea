"""The balance file's model (pydantic v2) and its loading, with errors mapped to file positions.

A balance file has three parts::

    balance:            # metadata: name, revision, site pressure, dead state, tolerances
    streams:            # id -> stream (fluid, two state properties, flow)
    steps:              # a list; each step's `kind` selects its model (audit.steps)

Quantities are strings with units and become SI floats on validation (:mod:`audit.model.quantities`).
Gauge pressures need ``balance.site_pressure``, which is read first and handed to the validators
through the validation context.
"""

from __future__ import annotations

import difflib
import json
from collections.abc import Sequence
from typing import Annotated, Any, ClassVar, Union, get_args

from pydantic import (
    BaseModel,
    ConfigDict,
    Field,
    ValidationError,
    create_model,
    field_validator,
    model_validator,
)

from audit import units, wording
from audit.errors import InputError, InputErrors, Problem, UnitError
from audit.input.document import Document
from audit.input.tables import TableSource
from audit.model.acceptance import Acceptance
from audit.model.editor_schema import SCHEMA_FILE as SCHEMA_FILE  # re-exported
from audit.model.editor_schema import SCHEMA_KEY, balance_schema
from audit.model.humid_air import DEAD_STATE_HUMIDITY, RelativeHumidity
from audit.model.quantities import Pressure, Temperature
from audit.model.references import FormulationField, ReferenceField
from audit.model.steps import StepBase
from audit.model.streams import StreamSpec
from audit.model.tolerances import ToleranceOverrides, Tolerances
from audit.model.uncertainty import BalanceUncertainty

DEAD_STATE_T = (183.0, 333.0)
"""Plausible dead-state temperatures [K]: the lowest and highest air temperatures recorded on Earth,
−89.2 °C and 56.7 °C (World Meteorological Organization archive of weather extremes; from memory),
rounded outwards."""
DEAD_STATE_P = (30e3, 110e3)
"""Plausible dead-state pressures [Pa]: the standard atmosphere at 9 km (about 31 kPa, above any
plant) to the air pressure at the shore of the Dead Sea (about 107 kPa) (ISO 2533 standard
atmosphere; from memory), rounded outwards."""


class DeadState(BaseModel):
    """The environment exergy is measured against: T0, P0 and (for humid air) its humidity."""

    model_config = ConfigDict(extra="forbid")

    T: Temperature = Field("25 degC", validate_default=True, description="dead-state temperature")
    P: Pressure = Field("101.325 kPa", validate_default=True, description="dead-state pressure")
    relative_humidity: RelativeHumidity = Field(
        DEAD_STATE_HUMIDITY, gt=0, description="dead-state relative humidity (humid air's exergy)"
    )

    @field_validator("T")
    @classmethod
    def _plausible_temperature(cls, value: float) -> float:
        if not DEAD_STATE_T[0] <= value <= DEAD_STATE_T[1]:
            raise ValueError(
                f"a dead-state temperature of {wording.celsius(value)} is not an ambient "
                f"temperature on Earth (from {wording.celsius(DEAD_STATE_T[0], 0)} to "
                f"{wording.celsius(DEAD_STATE_T[1], 0)})"
            )
        return value

    @field_validator("P")
    @classmethod
    def _plausible_pressure(cls, value: float) -> float:
        if not DEAD_STATE_P[0] <= value <= DEAD_STATE_P[1]:
            raise ValueError(
                f"a dead-state pressure of {wording.bar(value)} is not an ambient pressure "
                f"on Earth (from {wording.bar(DEAD_STATE_P[0], 2)} to "
                f"{wording.bar(DEAD_STATE_P[1], 2)})"
            )
        return value


class BalanceInfo(BaseModel):
    """Metadata of a balance."""

    model_config = ConfigDict(extra="forbid")

    name: str
    id: str | None = Field(
        None,
        description="a stable identity of the balance for the run history (default: its path "
        "relative to the project root)",
    )
    revision: str | None = None
    description: str | None = None
    site_pressure: Pressure | None = Field(
        None,
        description="atmospheric pressure at the site (absolute); needed for gauge "
        "pressures such as '10 barg'",
    )
    dead_state: DeadState = Field(default_factory=DeadState)
    tolerances: Tolerances = Field(default_factory=Tolerances)
    uncertainty: BalanceUncertainty | None = Field(
        None,
        description="measurement uncertainties: defaults per kind of quantity (audit.model.uncertainty)",
    )
    reference: ReferenceField = Field(
        None,
        description="the reference the printed h and s are written on: IIR, ASHRAE, NBP, IAPWS or "
        "{h, s, T/P/quality} (an explicit state), for every pure fluid or as a mapping fluid -> "
        "reference; default: the fluid's own (audit.model.references)",
    )
    formulation: FormulationField = Field(
        None,
        description="the equation of state the balance was computed with: 'reference' (default; "
        "IAPWS-95 for water) or 'IF97' (water and steam), or a mapping fluid -> formulation",
    )

    @field_validator("revision", mode="before")
    @classmethod
    def _revision_text(cls, value: Any) -> Any:
        # a number is kept as written where the loader recorded its text ('1.10', not '1.1')
        return str(value) if isinstance(value, (int, float)) and not isinstance(value, bool) else value


class Balance(BaseModel):
    """A whole balance file (the concrete model with the step kinds: :func:`balance_model`)."""

    model_config = ConfigDict(extra="forbid", title="plant-audit balance", defer_build=True)
    step_kinds: ClassVar[dict[str, type[StepBase]]] = {}

    balance: BalanceInfo
    streams: dict[str, StreamSpec] = Field(
        default_factory=dict,
        description="id -> stream; may be empty (or left out) for a balance of vessels only",
    )
    steps: list[StepBase] = Field(default_factory=list)
    accepted: list[Acceptance] = Field(
        default_factory=list, description="findings a reviewer has accepted (audit.review.acceptance)"
    )
    streams_from: str | TableSource | None = Field(
        None,
        description="a stream table (.xlsx or .csv, relative to the balance file) whose "
        "rows are merged into 'streams' (audit.input.tables)",
    )
    claims_from: str | TableSource | None = Field(
        None,
        description="a claim table (step | field | value | unit) whose rows set fields of "
        "the steps (audit.input.tables)",
    )

    @model_validator(mode="after")
    def _something_to_audit(self) -> Balance:
        if not self.streams and self.streams_from is None and not self.steps:
            raise ValueError(
                "a balance needs 'streams' (or 'streams_from'), or closed steps (kind 'vessel') "
                "that hold no streams"
            )
        return self


def balance_model(step_models: Sequence[type[StepBase]]) -> type[Balance]:
    """The balance file's model whose ``steps`` hold any of ``step_models``, told apart by their
    ``kind`` (a discriminated union). :mod:`audit.steps` calls it once with every discovered kind."""
    union: Any = Annotated[Union[tuple(step_models)], Field(discriminator="kind")]  # noqa: UP007
    model: type[Balance] = create_model(
        "Balance",
        __base__=Balance,
        __module__=__name__,
        steps=(list[union], Field(default_factory=list)),
    )
    model.step_kinds = {get_args(m.model_fields["kind"].annotation)[0]: m for m in step_models}
    return model


# -- validation ------------------------------------------------------------------------------------
def validate_document(document: Document, model: type[Balance]) -> Balance:
    """Validate a read document into ``model`` (see :func:`balance_model`); raise
    :class:`InputErrors` whose messages name the file, line, column and field path."""
    data = document.data
    if not isinstance(data, dict):
        raise InputError(
            "a balance file is a mapping with 'balance', 'streams' and 'steps'",
            file=document.file,
            line=1,
        )
    data = {k: v for k, v in data.items() if k != SCHEMA_KEY}  # for editors only
    site = None
    info = data.get("balance")
    if isinstance(info, dict) and info.get("site_pressure") is not None:
        try:
            if units.is_gauge(info["site_pressure"]):
                raise UnitError(
                    f"'{info['site_pressure']}' is a gauge pressure, but the site pressure is the "
                    "atmospheric pressure at the site: write it as absolute, e.g. '1.013 bar'"
                )
            site = units.to_si(info["site_pressure"], "pressure")
        except UnitError as exc:
            line, column = document.position(("balance", "site_pressure"))
            raise InputError(
                exc.problem.message,
                file=document.file,
                line=line,
                column=column,
                field_path="balance.site_pressure",
            ) from None
    written = document.texts.get(("balance", "revision"))
    if written is not None and isinstance(info, dict) and not isinstance(info.get("revision"), str):
        data = {**data, "balance": {**info, "revision": written}}
    try:
        return model.model_validate(data, context={"site_pressure": site})
    except ValidationError as exc:
        raise InputErrors(_problems(exc, document, model)) from None


def _problems(exc: ValidationError, document: Document, model: type[Balance]) -> list[Problem]:
    problems = []
    for error in exc.errors(include_url=False):
        path, missing = _real_path(document.data, error["loc"])
        message = _message(error, missing, path, document.data, model)
        problems.append(
            Problem(
                message=message,
                **document.place(path),
                field_path=_dotted(path, missing),
                where=_where(path, document.data),
            )
        )
    return problems


def _real_path(data: Any, loc: tuple) -> tuple[tuple, str | None]:
    """Follow a pydantic error location through the data, skipping union tags and validator
    names; return the deepest path that exists and the name of a missing last field, if any."""
    node, path = data, []
    missing = None
    for i, part in enumerate(loc):
        if isinstance(node, dict) and part in node:
            node = node[part]
            path.append(part)
        elif isinstance(node, list) and isinstance(part, int) and 0 <= part < len(node):
            node = node[part]
            path.append(part)
        elif (
            i == len(loc) - 1
            and isinstance(part, str)
            and isinstance(node, dict)
            and part != node.get("kind")
        ):  # a step's kind is a union tag, not a field
            missing = part
    return tuple(path), missing


def _dotted(path: tuple, missing: str | None) -> str:
    parts = []
    for part in (*path, missing) if missing else path:
        if isinstance(part, int):
            parts.append(f"[{part}]")
        else:
            parts.append(("." if parts else "") + str(part))
    return "".join(parts)


def _where(path: tuple, data: Any) -> str | None:
    if len(path) >= 2 and path[0] == "streams":
        return f"stream {path[1]}"
    if len(path) >= 2 and path[0] == "steps":
        step = data["steps"][path[1]]
        if isinstance(step, dict) and isinstance(step.get("id"), str):
            return f"step {step['id']}"
        return f"step #{path[1] + 1}"
    return None


def _message(error: Any, missing: str | None, path: tuple, data: Any, balance: type[Balance]) -> str:
    kind = error["type"]
    if kind == "missing":
        return f"'{missing or error['loc'][-1]}' is required here"
    if kind == "extra_forbidden":
        name = str(error["loc"][-1])
        allowed = _allowed_fields(path[:-1], data, balance)
        close = difflib.get_close_matches(name, allowed, n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        return f"unknown field '{name}'{hint}"
    if kind == "union_tag_invalid":
        known = ", ".join(sorted(balance.step_kinds))
        tag = error.get("ctx", {}).get("tag")
        return f"unknown step kind '{tag}'; the known kinds are: {known}"
    if kind == "union_tag_not_found":
        known = ", ".join(sorted(balance.step_kinds))
        return f"a step needs a 'kind', one of: {known}"
    if kind == "too_short":
        ctx = error.get("ctx", {})
        wanted, found = ctx.get("min_length", 1), ctx.get("actual_length", 0)
        return (
            f"needs at least {wanted} {'entry' if wanted == 1 else 'entries'}; "
            f"{'none is' if found == 0 else f'only {found} is' if found == 1 else f'{found} are'}"
            " given"
        )
    if kind in ("model_type", "model_attributes_type", "dict_type"):
        return (
            f"expected a mapping of fields here ('name: value' lines or {{...}}), not "
            f"{_describe(error.get('input'))}"
        )
    if kind == "list_type":
        return f"expected a list here ('- item' lines or [...]), not {_describe(error.get('input'))}"
    if kind == "string_type" and error["loc"] and error["loc"][-1] == "[key]":
        return (
            f"the name {error.get('input')!r} must be text; put it in quotes, e.g. "
            f"'{error.get('input')}'"
        )
    if kind == "string_type":
        value = error.get("input")
        hint = (
            f"; put it in quotes ('{value}') if it is a name"
            if isinstance(value, (int, float)) and not isinstance(value, bool)
            else ""
        )
        return f"expected text here, not {_describe(value)}{hint}"
    if kind == "greater_than_equal" and error.get("ctx", {}).get("ge") == 0:
        return (
            "must not be negative (write amounts without a sign: a claim's name says its "
            "direction, e.g. 'heat_loss' is heat leaving the step)"
        )
    if kind in ("float_parsing", "float_type"):
        hint = (
            " (quality is the vapour mass fraction, a number from 0 to 1, e.g. 0.95)"
            if error["loc"] and error["loc"][-1] == "quality"
            else ""
        )
        return f"expected a plain number here, not {_describe(error.get('input'))}{hint}"
    message = error["msg"]
    for prefix in ("Value error, ", "Assertion failed, "):
        if message.startswith(prefix):
            message = message[len(prefix) :]
    return message


def _describe(value: Any) -> str:
    """A value's kind in words, for messages."""
    if value is None:
        return "an empty value"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, dict):
        return "a mapping"
    if isinstance(value, bool):
        return f"the value {value}"
    if isinstance(value, (int, float)):
        return f"the number {value!r}"
    if isinstance(value, str):
        return f"the text '{value[:40]}'"
    return type(value).__name__


def _allowed_fields(path: tuple, data: Any, balance: type[Balance]) -> list[str]:
    """The field names of the model that owns the mapping at ``path`` (for suggestions)."""
    model: type[BaseModel] | None = None
    if len(path) == 0:
        model = balance
    elif path[0] == "balance":
        model = {1: BalanceInfo}.get(len(path))
        if len(path) == 2 and path[1] == "tolerances":
            model = Tolerances
        elif len(path) == 2 and path[1] == "dead_state":
            model = DeadState
        elif len(path) == 2 and path[1] == "uncertainty":
            model = BalanceUncertainty
    elif path[0] == "streams" and len(path) == 2:
        model = StreamSpec
    elif path[0] == "steps" and len(path) >= 2:
        step = data["steps"][path[1]]
        kind = balance.step_kinds.get(str(step.get("kind"))) if isinstance(step, dict) else None
        if kind is not None:
            model = kind
            if len(path) == 3 and path[2] == "tolerances":
                model = ToleranceOverrides
            elif len(path) == 3:
                annotation = kind.model_fields.get(str(path[2]))
                inner = getattr(annotation, "annotation", None)
                model = inner if isinstance(inner, type) and issubclass(inner, BaseModel) else None
    return sorted(model.model_fields) if model is not None else []


# -- schema --------------------------------------------------------------------------------------
def json_schema(model: type[Balance]) -> dict:
    """The JSON Schema of a balance file (:func:`audit.model.editor_schema.balance_schema`)."""
    return balance_schema(model)


def schema_text(model: type[Balance]) -> str:
    return json.dumps(json_schema(model), indent=2, ensure_ascii=False, sort_keys=True) + "\n"
