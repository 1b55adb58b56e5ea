"""The usual slips of a balance file, each as a change that undoes it (design note 2.9).

:mod:`audit.review.causes` re-evaluates a failing step with one slip undone at a time; the slips
are:

* on a stream of the step: its pressure read as gauge instead of absolute (P + site pressure) or
  the reverse (P − site pressure), whichever the way it is written allows; its temperature read in
  °F instead of °C or the reverse; its flow ×3.6 or ÷3.6 (kg/s and t/h confused) or ×3600 or
  ÷3600 (kg/s and kg/h); a humid air's relative humidity read as a fraction instead of a
  percentage or the reverse;
* on a claim of the step (the fields its model declares as claims,
  :func:`audit.model.steps.step_claims`): a power or energy ×1000 or ÷1000 (kW and MW, kJ and MJ
  confused), or with the opposite sign (heat added for removed, work delivered for absorbed, when
  the claim declares its opposite field; else a minus sign); a chiller's or heat pump's duty
  ×3.517 or ÷3.517 (refrigeration tons and kW confused); a claimed temperature or pressure (a
  vessel state, a source temperature) read as above;
* the step's inlet and outlet swapped (each inlet/outlet pair, each side of an exchanger).

Each slip says itself the way a reviewer would (``closes if stream S3's pressure '12 bar' is
gauge ...``).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any

from pydantic import BaseModel

from audit.constants import ZERO_CELSIUS
from audit.errors import InputError
from audit.model.steps import Claim, step_claims
from audit.review.resolution import written_text
from audit.review.runner import StepRunner, with_value
from audit.review.verdicts import format_value
from audit.units import STANDARD_ATMOSPHERE, split_number
from audit.wording import bar, to_bar, to_celsius

_GAUGE_UNIT = re.compile(r"^\s*(mbar|bar|Pa|kPa|MPa|psi)\s*(g|\(g\))\s*$")
_CELSIUS = ("degC", "°C", "℃", "celsius", "degree_Celsius")
_FAHRENHEIT = ("degF", "°F", "℉", "fahrenheit", "degree_Fahrenheit")
REFRIGERATION_TON = 12_000 * 1055.05585262 / 3600
"""One ton of refrigeration [W]: 12 000 Btu/h with the international-table Btu (1055.05585262 J,
exact by definition), 3516.85 W."""
REFRIGERATION_DUTIES = ("cooling_duty", "heating_duty")
"""The claims that datasheets give in refrigeration tons as often as in kW."""
_FLOW_SLIPS = (
    (3.6, "3.6 times larger", "kg/s written as t/h"),
    (1 / 3.6, "3.6 times smaller", "t/h written as kg/s"),
    (3600.0, "3600 times larger", "kg/s written as kg/h"),
    (1 / 3600.0, "3600 times smaller", "kg/h written as kg/s"),
)


@dataclass
class Slip:
    """One slip undone: on a stream (``changes`` to its inputs) or on one step (a changed copy
    ``step`` of it); ``sentence`` says it the way a reviewer would."""

    sentence: str
    stream: str | None = None
    changes: dict[str, float] = field(default_factory=dict)
    step_index: int | None = None
    step: Any = None


def _unit_of(text: Any, kind: str) -> str | None:
    try:
        return split_number(text, kind)[1]
    except InputError:
        return None


def _pressure_slips(value: float, text: Any, site: float | None, what: str) -> list[tuple[float, str]]:
    """(P' [Pa], sentence) for a pressure [Pa] written as ``text``: gauge read as absolute and
    the reverse, as the writing allows."""
    unit = _unit_of(text, "pressure") if text is not None else None
    gauge = bool(unit and (_GAUGE_UNIT.match(unit) or unit.strip() == "psig"))
    atmosphere = site if site is not None else STANDARD_ATMOSPHERE
    note = (
        ""
        if site is not None
        else (" (taking the standard atmosphere: the balance declares no site_pressure)")
    )
    shown = f"'{text}'" if text is not None else bar(value)
    slips = []
    if unit is None or not gauge:
        P = value + atmosphere
        slips.append(
            (
                P,
                f"closes if {what} {shown} is gauge ({to_bar(value):.4g} barg, "
                f"{bar(P)} absolute), not absolute{note}",
            )
        )
    if (unit is None or gauge) and value - atmosphere > 0:
        P = value - atmosphere
        slips.append((P, f"closes if {what} {shown} is absolute ({bar(P)}), not gauge{note}"))
    return slips


def _temperature_slips(value: float, text: Any, what: str) -> list[tuple[float, str]]:
    """(T' [K], sentence) for a temperature [K] written as ``text`` in °C or °F."""
    unit = _unit_of(text, "temperature") if text is not None else None
    shown = f"'{text}'" if text is not None else f"{to_celsius(value):.4g} °C"
    slips = []
    written_c = to_celsius(value)
    if unit is None or unit.strip() in _CELSIUS:
        T = (written_c - 32.0) * 5.0 / 9.0 + ZERO_CELSIUS
        slips.append((T, f"closes if {what} {shown} is in °F ({to_celsius(T):.4g} °C), not °C"))
    if unit is None or unit.strip() in _FAHRENHEIT:
        T = (written_c * 9.0 / 5.0 + 32.0) + ZERO_CELSIUS
        slips.append((T, f"closes if {what} {shown} is in °C ({to_celsius(T):.4g} °C), not °F"))
    return [(T, s) for T, s in slips if T > 0]


def _humidity_slips(phi: float, text: Any, stream_id: str) -> list[tuple[float, str]]:
    """(φ' [-], sentence) for a relative humidity φ [-] written as ``text``: a percentage read as a
    fraction, or a fraction read as a percentage."""
    what = f"stream {stream_id}'s relative humidity"
    shown = f"'{text}'" if text is not None else f"{phi:g}"
    if isinstance(text, str) and "%" in text:
        number = phi * 100.0
        if number > 1.0:
            return []
        return [
            (
                number,
                f"closes if {what} {shown} is the fraction {number:g} ({number:.0%}), not a percentage",
            )
        ]
    return [
        (phi / 100.0, f"closes if {what} {shown} is {phi:g} %, not the fraction {phi:g} ({phi:.0%})")
    ]


def stream_slips(runner: StepRunner, stream_id: str) -> list[Slip]:
    """The slips of one stream (see the module docstring)."""
    spec = runner.balance.streams[stream_id]
    document = runner.document
    site = runner.balance.balance.site_pressure
    pair, _, _ = spec.inputs()
    slips = []
    if "P" in pair and spec.P is not None:
        text = written_text(document, ("streams", stream_id, "P"))
        for P, sentence in _pressure_slips(spec.P, text, site, f"stream {stream_id}'s pressure"):
            slips.append(Slip(sentence, stream=stream_id, changes={"P": P}))
    if "T" in pair and spec.T is not None:
        text = written_text(document, ("streams", stream_id, "T"))
        for T, sentence in _temperature_slips(spec.T, text, f"stream {stream_id}'s temperature"):
            slips.append(Slip(sentence, stream=stream_id, changes={"T": T}))
    if spec.relative_humidity is not None:
        text = written_text(document, ("streams", stream_id, "relative_humidity"))
        for phi, sentence in _humidity_slips(spec.relative_humidity, text, stream_id):
            slips.append(Slip(sentence, stream=stream_id, changes={"relative_humidity": phi}))
    text = written_text(document, ("streams", stream_id, "flow"))
    shown = f"'{text}'" if text is not None else "as written"
    for factor, size, words in _FLOW_SLIPS:
        value = spec.flow.value * factor
        unit = " kg/s" if spec.flow.basis == "mass" else ""
        slips.append(
            Slip(
                f"closes if stream {stream_id}'s flow {shown} is {size} ({value:.4g}{unit}: {words})",
                stream=stream_id,
                changes={"flow": value},
            )
        )
    return slips


def _pair_swaps(model: BaseModel, path: tuple[str, ...] = ()) -> list[tuple[tuple[str, ...], str, str]]:
    found = []
    fields = type(model).model_fields
    inlet, outlet = getattr(model, "inlet", None), getattr(model, "outlet", None)
    if "inlet" in fields and "outlet" in fields and isinstance(inlet, str) and isinstance(outlet, str):
        found.append((path, inlet, outlet))
    for name in fields:
        value = getattr(model, name)
        if isinstance(value, BaseModel):
            found.extend(_pair_swaps(value, (*path, name)))
    return found


def step_slips(runner: StepRunner, index: int) -> list[Slip]:
    """The slips of one step's claims and of its inlet/outlet pairs."""
    step = runner.balance.steps[index]
    document = runner.document
    site = runner.balance.balance.site_pressure
    slips = []
    for claim in step_claims(step):
        text = written_text(document, ("steps", index, *claim.path))
        what = f"step {step.id}'s {claim.key}"
        shown = f"'{text}'" if text is not None else format_value(claim.value, claim.kind)
        if claim.kind in ("power", "energy"):
            small, large = ("kW", "MW") if claim.kind == "power" else ("kJ", "MJ")
            for factor, words in (
                (1000.0, f"{small} written for {large}"),
                (1e-3, f"{large} written for {small}"),
            ):
                value = claim.value * factor
                size = "1000 times larger" if factor > 1 else "1000 times smaller"
                slips.append(
                    Slip(
                        f"closes if {what} {shown} is {size} ({format_value(value, claim.kind)}: "
                        f"{words})",
                        step_index=index,
                        step=with_value(step, claim.path, value),
                    )
                )
            slips.append(_sign_slip(step, index, claim, what, shown))
            if claim.key in REFRIGERATION_DUTIES:
                slips.extend(_ton_slips(step, index, claim, what, shown))
        elif claim.kind == "temperature":
            for T, sentence in _temperature_slips(claim.value, text, what):
                slips.append(Slip(sentence, step_index=index, step=with_value(step, claim.path, T)))
        elif claim.kind == "pressure":
            for P, sentence in _pressure_slips(claim.value, text, site, what):
                slips.append(Slip(sentence, step_index=index, step=with_value(step, claim.path, P)))
    for path, inlet, outlet in _pair_swaps(step):
        side = f"the {path[-1]} side's " if path else ""
        target: BaseModel = step
        if path:
            swapped = getattr(step, path[0]).model_copy(update={"inlet": outlet, "outlet": inlet})
            target = with_value(step, path, swapped)
        else:
            target = step.model_copy(update={"inlet": outlet, "outlet": inlet})
        slips.append(
            Slip(
                f"closes if {side}inlet {inlet} and outlet {outlet} are swapped",
                step_index=index,
                step=target,
            )
        )
    return slips


def _ton_slips(step: Any, index: int, claim: Claim, what: str, shown: str) -> list[Slip]:
    """A duty written in kW that the datasheet gives in refrigeration tons, or the reverse."""
    slips = []
    for factor, words in (
        (REFRIGERATION_TON / 1e3, "refrigeration tons written as kW"),
        (1e3 / REFRIGERATION_TON, "kW written as refrigeration tons"),
    ):
        value = claim.value * factor
        slips.append(
            Slip(
                f"closes if {what} {shown} is {format_value(value, claim.kind)} ({words})",
                step_index=index,
                step=with_value(step, claim.path, value),
            )
        )
    return slips


def _sign_slip(step: Any, index: int, claim: Claim, what: str, shown: str) -> Slip:
    """The claim stated the other way round: under its declared opposite field (heat added for
    removed), else with a minus sign."""
    path, value, other = claim.path, claim.value, claim.opposite
    if other is not None:
        leaf = str(path[-1])
        parent_path = path[:-1]
        if parent_path:
            parent = step
            for part in parent_path:
                parent = parent[part] if isinstance(part, int) else getattr(parent, part)
            changed = with_value(step, parent_path, parent.model_copy(update={leaf: None, other: value}))
        else:
            changed = step.model_copy(update={leaf: None, other: value})
        words = other.replace("_", " ")
        return Slip(
            f"closes if {what} {shown} is {words}, not {leaf.replace('_', ' ')} (the sign is wrong)",
            step_index=index,
            step=changed,
        )
    return Slip(
        f"closes if {what} {shown} has the opposite sign",
        step_index=index,
        step=with_value(step, path, -value),
    )
