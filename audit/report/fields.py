"""The field reference: every part of a balance file, every step kind, and each one's fields with
their unit, default and meaning, generated from the models (docs/fields.md is this text; a test
fails when the two drift apart: regenerate with ``plant-audit fields -o docs/fields.md``).

It also states the reference state of ``h`` and ``s`` of each fluid family, from
:mod:`audit.formation` (the species on the formation basis) and the property layer's basis names.
"""

from __future__ import annotations

from typing import Annotated, Any

from pydantic import BaseModel, TypeAdapter

from audit.formation import SPECIES
from audit.model.acceptance import Acceptance
from audit.model.balance import BalanceInfo, DeadState
from audit.model.streams import StreamSpec
from audit.model.tolerances import ToleranceOverrides, Tolerances
from audit.model.uncertainty import BalanceUncertainty, Correlation
from audit.steps import REGISTRY

TITLE = "# Balance file fields"
GENERATED = (
    "<!-- generated from the models by `plant-audit fields -o docs/fields.md`; do not edit by hand -->"
)


def _type(spec: dict[str, Any], definitions: dict[str, Any]) -> str:
    """A field's type in words: a quantity with its unit example, a number, text, a list, ..."""
    if "$ref" in spec:
        name = spec["$ref"].rsplit("/", 1)[-1]
        return f"{name} (see below)" if name in definitions else name
    if "anyOf" in spec:
        kinds = [_type(s, definitions) for s in spec["anyOf"] if s.get("type") != "null"]
        return " or ".join(dict.fromkeys(kinds)) or "any"
    if "const" in spec:
        return f"`{spec['const']}`"
    if "enum" in spec:
        return " or ".join(f"`{v}`" for v in spec["enum"])
    kind = spec.get("type")
    if kind == "string" and "pattern" in spec and "description" in spec:
        return spec["description"].replace(" with its unit, e.g. ", " (e.g. ").rstrip() + ")"
    if kind == "array":
        return f"list of {_type(spec.get('items', {}), definitions)}"
    if kind == "object":
        extra = spec.get("additionalProperties")
        return f"mapping of {_type(extra, definitions)}" if isinstance(extra, dict) else "mapping"
    if kind == "string" and spec.get("format") == "date":
        return "date (YYYY-MM-DD)"
    words = {"number": "number", "integer": "whole number", "string": "text", "boolean": "true/false"}
    text = words.get(str(kind), str(kind or "any"))
    limits = [
        f"{sign} {spec[key]}"
        for key, sign in (("minimum", "≥"), ("exclusiveMinimum", ">"), ("maximum", "≤"))
        if key in spec
    ]
    return text + (f" ({', '.join(limits)})" if limits else "")


def _cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def model_table(model: type[BaseModel]) -> list[str]:
    """The Markdown table of one model's fields: field, type and unit, default, meaning."""
    schema = model.model_json_schema(mode="validation")
    definitions = schema.get("$defs", {})
    required = set(schema.get("required", []))
    lines = ["| field | type and unit | default | meaning |", "| --- | --- | --- | --- |"]
    for name, spec in schema.get("properties", {}).items():
        if name == "kind":
            continue
        field = model.model_fields[name]
        if field.metadata:  # a quantity: its own schema names the unit (audit.model.quantities)
            annotated: Any = Annotated.__class_getitem__((field.annotation, *field.metadata))  # type: ignore[attr-defined]
            own = TypeAdapter(annotated).json_schema()
            spec = {**spec, **own} if "pattern" in own else spec
        if name in required:
            default = "**required**"
        elif field.default_factory is not None:
            default = "(empty)" if spec.get("type") in ("array", "object") else "see below"
        else:
            default = "—" if field.default is None else f"`{field.default}`"
        meaning = field.description or ""
        lines.append(
            f"| `{name}` | {_cell(_type(spec, definitions))} | {_cell(default)} | {_cell(meaning)} |"
        )
    return lines


def _section(title: str, model: type[BaseModel], intro: str = "") -> list[str]:
    own = model.__doc__ if "__doc__" in vars(model) else None
    doc = " ".join((own or "").strip().split("\n\n")[0].split())
    text = [part for part in (intro, doc) if part]
    return [f"## {title}", "", *(p for t in text for p in (t, "")), *model_table(model), ""]


def reference_text() -> str:
    """The whole field reference as Markdown (docs/fields.md)."""
    lines = [
        TITLE,
        "",
        GENERATED,
        "",
        "Quantities are text with a unit (`'420 degC'`, `'40 barg'`, `'12 t/h'`, `'2.5 MW'`); they "
        "are SI inside. A field marked **required** must be written; `—` means it may be left out.",
        "",
        *_section("balance", BalanceInfo, "The `balance:` mapping at the top of the file."),
        *_section("balance.dead_state", DeadState),
        *_section("balance.tolerances", Tolerances),
        *_section("balance.uncertainty", BalanceUncertainty),
        *_section(
            "balance.uncertainty.correlations",
            Correlation,
            "Each entry of `correlations:`; the reconciliation (`plant-audit reconcile`) builds the "
            "covariance of the readings from them.",
        ),
        *_section("streams.<id>", StreamSpec, "Each entry of `streams:`, keyed by the stream id."),
    ]
    for kind, entry in sorted(REGISTRY.items()):
        lines += _section(f"steps: kind `{kind}`", entry.model, entry.summary)
    lines += _section("steps: tolerances (per step)", ToleranceOverrides)
    lines += _section(
        "accepted (and `*.accepted.yaml`)",
        Acceptance,
        "Each entry of `accepted:` in a balance, or of the list in the file `<balance>.accepted.yaml` "
        "beside it. `expires` is required: an acceptance always ends.",
    )
    lines += _references()
    return "\n".join(lines).rstrip() + "\n"


def _references() -> list[str]:
    formation = ", ".join(f"{s.fluid} ({s.formula})" for s in SPECIES.values())
    return [
        "## Reference state of h and s",
        "",
        "The results report `h`, `s`, `u`, `g`, `a` on the basis named in each stream's `basis`:",
        "",
        "| fluid family | basis | reference of h and s |",
        "| --- | --- | --- |",
        "| water | formation | IAPWS-95 equation of state, shifted so that the ideal gas H2O(g) at "
        "298.15 K and 1 bar has h = ΔfH° and s = S° (CODATA); the liquid then has ΔfH° = −285.83 "
        "kJ/mol |",
        f"| other formation species: {formation} | formation | the fluid's Helmholtz equation of "
        "state, shifted so that the ideal gas at 298.15 K and 1 bar has h = ΔfH° and s = S° "
        "(CODATA or NIST-JANAF, named per species in the source) |",
        "| any other pure fluid (refrigerants, air as a pseudo-pure fluid, ...) | fluid reference | "
        "the equation of state's own reference (the IIR convention for refrigerants: h = 200 kJ/kg, "
        "s = 1 kJ/(kg·K) for saturated liquid at 0 °C); comparable only within the same fluid |",
        "| gas mixtures (`composition:`) | formation (ideal-gas mixture) | ideal-gas mixture of the "
        "species on the formation basis, with the entropy of mixing |",
        "",
        "Values of `h` and `s` written as *inputs* in a balance are read on the fluid's usual table "
        "reference, as printed in steam and refrigerant tables (the IAPWS convention for water: "
        "u = 0 and s = 0 for the saturated liquid at the triple point).",
    ]
