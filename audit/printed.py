"""Printed properties checked against the state they describe (over-determined streams).

A stream fixes its state by one pair of properties (:attr:`audit.model.streams.StreamSpec.pair`);
every other property it prints (T, P, quality, h, s, u, v, rho, T_sat) is a claim about that state.
A claim agrees when the printed value lies within its allowance of the computed one:

    |printed − computed| ≤ r(printed) + Σ |∂computed/∂x_i| r(x_i) + 1e-8 |computed|

r(·) is half a unit of the last written digit (the rounding bound, GUM §F.2.2.1,
:mod:`audit.model.digits`); the sum propagates the rounding of the two fixing properties worst-case
(by evaluating the state at each of them ± its rounding bound); the last term is the numerical
agreement of CoolProp with the published verification tables of the same formulation.

Beyond that, for a fluid with another formulation (water: IAPWS-95 and IAPWS-IF97), a difference no
larger than the other formulation's value differs from this one's is a warning
(``formulation-difference``), never passed in silence; anything larger is an error
(``printed-property-mismatch``). With three or more printed properties, the odd one out is named
when the state fixed by another printed pair makes every other property agree.

References
----------
.. [1] JCGM 100:2008 (GUM), §F.2.2.1: the resolution of a digital indication.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from itertools import combinations
from typing import Any

from audit import units
from audit.errors import InputError, StateError
from audit.findings import ERROR, WARNING, Finding, relative
from audit.model.digits import written_resolution
from audit.model.streams import PAIR_FIELDS, PAIRS, StreamSpec
from audit.properties.engine import PropertyEngine, State
from audit.properties.formulations import NUMERICAL

PROPERTIES = {
    "T": ("temperature", "temperature"),
    "P": ("pressure", "pressure"),
    "h": ("specific_enthalpy", "specific_energy"),
    "s": ("specific_entropy", "specific_entropy"),
    "u": ("specific_enthalpy", "specific_energy"),
    "v": ("specific_volume", "specific_volume"),
    "rho": ("density", "density"),
    "T_sat": ("temperature", "temperature"),
    "quality": (None, "fraction"),
}
"""Each printed property: how it is written (a unit kind of :mod:`audit.units`; quality: a plain
number) and its display quantity in findings."""
_FIXING = ("T", "P", "quality", "h", "s")


@dataclass(frozen=True)
class Printed:
    """One printed property beside the computed one, SI (``digits``: the difference in units of
    the last printed digit; ``verdict``: ``agrees``, ``formulation`` or ``differs``)."""

    printed: float
    computed: float | None
    difference: float | None
    digits: float | None
    allowance: float
    verdict: str
    text: str
    computed_text: str


@dataclass(frozen=True)
class _Written:
    text: str
    value: float  # SI
    rounding: float  # SI, half a unit of the last written digit
    scale: float  # SI per unit as written
    offset: float  # SI of zero as written
    resolution: float  # unit of the last digit, as written


def check_stream(
    stream_id: str,
    spec: StreamSpec,
    state: State,
    engine: PropertyEngine,
    written: dict[str, Any],
    site_pressure: float | None,
    other: PropertyEngine | None,
) -> tuple[dict[str, Printed], list[Finding]]:
    """Every printed claim of a pure-fluid stream against its state. ``written`` is the stream's
    mapping as written (the text of each value); ``other`` evaluates the fluid on its other
    formulation, when it has one. Returns the claims by property and the findings."""
    claims = spec.claims()
    if not claims or spec.fluid is None:
        return {}, []
    fluid = state.fluid
    texts = {n: _written(n, written.get(n), getattr(spec, n), site_pressure) for n in _given(spec)}
    computed = _values(state, engine)
    pair, a, b = spec.inputs()
    spread = _propagated(engine, fluid, pair, a, b, texts, computed, claims)
    alternative = _other_values(other, fluid, pair, a, b) if other is not None else {}
    out: dict[str, Printed] = {}
    findings: list[Finding] = []
    failing: list[str] = []
    for name in claims:
        w = texts[name]
        value = computed.get(name)
        if value is None:
            out[name] = Printed(w.value, None, None, None, 0.0, "differs", w.text, state.phase)
            failing.append(name)
            findings.append(_not_two_phase(stream_id, name, w, state))
            continue
        difference = w.value - value
        allowance = w.rounding + spread.get(name, 0.0) + NUMERICAL * abs(value)
        digits = difference / (w.scale * w.resolution) if w.resolution > 0 else None
        verdict = "agrees"
        if abs(difference) > allowance:
            band = abs(alternative[name] - value) if name in alternative else 0.0
            verdict = "formulation" if abs(difference) <= allowance + band else "differs"
        out[name] = Printed(
            w.value, value, difference, digits, allowance, verdict, w.text, _shown(value, w)
        )
        if verdict == "formulation":
            findings.append(_formulation(stream_id, name, w, out[name], engine, fluid, alternative))
        elif verdict == "differs":
            failing.append(name)
    if failing:
        odd = _odd_one_out(spec, engine, texts, fluid)
        for name in failing:
            if computed.get(name) is not None:
                findings.append(_mismatch(stream_id, name, texts[name], out[name], spec, odd, texts))
    return out, findings


# -- values ----------------------------------------------------------------------------------------
def _given(spec: StreamSpec) -> list[str]:
    return [n for n in PROPERTIES if getattr(spec, n, None) is not None]


def _written(name: str, text: Any, value: float, site: float | None) -> _Written:
    """The printed value's text, SI value, rounding bound and unit scale."""
    kind = PROPERTIES[name][0]
    shown = text if text is not None else repr(value)
    resolution = written_resolution(shown) or 0.0
    if name == "quality" and value in (0.0, 1.0):
        resolution = 0.0  # a saturated liquid or vapour: exact by definition, not a rounded number
    if kind is None or not isinstance(shown, str):
        return _Written(str(shown), float(value), 0.5 * resolution, 1.0, 0.0, resolution)
    try:
        _, unit = units.split_number(shown, kind)
        one = units.to_si(f"1 {unit}", kind, site_pressure=site)
        scale = units.to_si(f"2 {unit}", kind, site_pressure=site) - one
    except InputError:  # the SI value was not written as text (a copy made in review)
        return _Written(str(shown), float(value), 0.0, 1.0, 0.0, 0.0)
    return _Written(shown, float(value), 0.5 * resolution * scale, scale, one - scale, resolution)


def _values(state: State, engine: PropertyEngine) -> dict[str, float | None]:
    """The state's properties on the printed basis (the fluid's table reference, shifted to the
    declared reference)."""
    info = engine.fluid(state.fluid)
    dh, ds = engine.printed_offset(state.fluid)
    return {
        "T": state.T,
        "P": state.P,
        "quality": state.quality if state.quality is not None else _extended_quality(state, engine),
        "h": state.h - info.h_shift - dh,
        "s": state.s - info.s_shift - ds,
        "u": state.u - info.h_shift - dh,
        "v": 1.0 / state.rho,
        "rho": state.rho,
        "T_sat": engine.saturation_temperature(state.fluid, state.P),
    }


def _extended_quality(state: State, engine: PropertyEngine) -> float | None:
    """The thermodynamic quality (h − h')/(h'' − h') at P [-] of a single-phase state below the
    critical pressure: negative for a subcooled liquid, above 1 for a superheated vapour."""
    if state.P >= engine.fluid(state.fluid).P_crit:
        return None
    try:
        liquid = engine.state(state.fluid, "PQ", state.P, 0.0)
        vapour = engine.state(state.fluid, "PQ", state.P, 1.0)
    except StateError:
        return None
    return (state.h - liquid.h) / (vapour.h - liquid.h)


def _evaluate(
    engine: PropertyEngine, fluid: str, pair: str, a: float, b: float
) -> dict[str, float | None]:
    return _values(engine.state(fluid, pair, a, engine.to_tool_basis(fluid, pair, b)), engine)


def _propagated(
    engine: PropertyEngine,
    fluid: str,
    pair: str,
    a: float,
    b: float,
    texts: dict[str, _Written],
    computed: dict[str, float | None],
    claims: list[str],
) -> dict[str, float]:
    """Σ_i max over ± of |computed(x_i ± r_i) − computed| for each claim: the fixing pair's
    rounding carried into the computed value, worst case."""
    first, second = PAIR_FIELDS[pair]
    spread = dict.fromkeys(claims, 0.0)
    for index, name in enumerate((first, second)):
        r = texts[name].rounding
        if r <= 0.0:
            continue
        largest = dict.fromkeys(claims, 0.0)
        for sign in (-1.0, 1.0):
            moved = (a + sign * r, b) if index == 0 else (a, b + sign * r)
            try:
                values = _evaluate(engine, fluid, pair, *moved)
            except StateError:
                continue
            for claim in claims:
                x, x0 = values.get(claim), computed.get(claim)
                if x is not None and x0 is not None:
                    largest[claim] = max(largest[claim], abs(x - x0))
        for claim in claims:
            spread[claim] += largest[claim]
    return spread


def _other_values(other: PropertyEngine, fluid: str, pair: str, a: float, b: float) -> dict[str, float]:
    try:
        values = _evaluate(other, fluid, pair, a, b)
    except StateError:
        return {}
    return {k: v for k, v in values.items() if v is not None}


# -- the odd one out -------------------------------------------------------------------------------
def _odd_one_out(
    spec: StreamSpec,
    engine: PropertyEngine,
    texts: dict[str, _Written],
    fluid: str,
) -> str | None:
    """The one printed property that disagrees when the state is fixed by another printed pair
    that makes all the others agree (within rounding, on the balance's own formulation); None
    when no pair, or more than one culprit, does."""
    given = [n for n in _FIXING if n in texts]
    if len(texts) < 3:
        return None
    culprits = set()
    for first, second in combinations(given, 2):
        pair = PAIRS.get(frozenset((first, second)))
        if pair is None:
            continue
        a_name, b_name = PAIR_FIELDS[pair]
        a, b = texts[a_name].value, texts[b_name].value
        try:
            values = _evaluate(engine, fluid, pair, a, b)
        except StateError:
            continue
        rest = [n for n in texts if n not in (a_name, b_name)]
        spread = _propagated(engine, fluid, pair, a, b, texts, values, rest)
        wrong = []
        for n in rest:
            x = values.get(n)
            if x is None:
                wrong.append(n)
                continue
            allowance = texts[n].rounding + spread[n] + NUMERICAL * abs(x)
            if abs(texts[n].value - x) > allowance:
                wrong.append(n)
        if len(wrong) == 1:
            culprits.add(wrong[0])
    return culprits.pop() if len(culprits) == 1 else None


# -- findings --------------------------------------------------------------------------------------
def _shown(value: float, w: _Written, extra: int = 1) -> str:
    """A SI value in the printed unit, one digit finer than printed."""
    number = (value - w.offset) / w.scale
    unit = w.text.split(None, 1)[1] if " " in w.text.strip() else ""
    decimals = max(0, -int(math.floor(math.log10(w.resolution))) + extra) if w.resolution > 0 else 6
    return f"{number:.{decimals}f}{' ' + unit if unit else ''}"


def _difference(difference: float, w: _Written) -> str:
    number = difference / w.scale
    unit = w.text.split(None, 1)[1] if " " in w.text.strip() else ""
    unit = "K" if unit in ("degC", "°C", "degF", "°F") and w.scale == 1.0 else unit
    return f"{number:+.3g}{' ' + unit if unit else ''}"


def _in_digits(claim: Printed, before: str, after: str = "") -> str:
    """The difference in units of the last printed digit, for messages ('' for an exact value)."""
    if claim.digits is None:
        return ""
    return f"{before}{claim.digits:+.3g} units of the last printed digit{after}"


def _mismatch(
    stream_id: str,
    name: str,
    w: _Written,
    claim: Printed,
    spec: StreamSpec,
    odd: str | None,
    texts: dict[str, _Written],
) -> Finding:
    fixing = ", ".join(PAIR_FIELDS[spec.pair])
    assert claim.computed is not None and claim.difference is not None
    message = (
        f"stream {stream_id} prints {name} = {w.text}, but the state fixed by ({fixing}) has "
        f"{name} = {_shown(claim.computed, w)}: a difference of {_difference(claim.difference, w)}"
        f"{_in_digits(claim, ', ')} (allowed: rounding and the fixing pair's rounding, "
        f"{_difference(claim.allowance, w).lstrip('+')})"
    )
    others = [n for n in texts if n != name]
    if odd == name:
        message += f"; {', '.join(others)} agree with each other, so {name} is the odd one out"
    elif odd is not None:
        message += f"; {odd} is the odd one out of the printed properties"
    elif len(texts) == 3:
        message += (
            f"; {', '.join(texts)} do not all agree, and a further printed property would tell "
            "which one is wrong"
        )
    return Finding(
        ERROR,
        "printed-property-mismatch",
        None,
        message,
        claimed=claim.printed,
        bound=claim.computed,
        margin=claim.difference,
        margin_relative=relative(claim.difference, claim.computed),
        quantity=PROPERTIES[name][1],
        tolerance=claim.allowance,
        stream=stream_id,
    )


def _formulation(
    stream_id: str,
    name: str,
    w: _Written,
    claim: Printed,
    engine: PropertyEngine,
    fluid: str,
    alternative: dict[str, float],
) -> Finding:
    this = engine.formulation_of(fluid)
    names = {"reference": "IAPWS-95", "IF97": "IAPWS-IF97"}
    other = "IF97" if this == "reference" else "reference"
    assert claim.computed is not None and claim.difference is not None
    return Finding(
        WARNING,
        "formulation-difference",
        None,
        f"stream {stream_id} prints {name} = {w.text}; {names[this]} gives "
        f"{_shown(claim.computed, w)}, a difference of {_difference(claim.difference, w)}"
        f"{_in_digits(claim, ' (', ')')}, beyond rounding but within the "
        f"known difference between formulations ({names[other]} gives "
        f"{_shown(alternative[name], w)}): the balance was probably computed with "
        f"{names[other]}; declare 'formulation: {other}' under 'balance:' if so",
        claimed=claim.printed,
        bound=claim.computed,
        margin=claim.difference,
        margin_relative=relative(claim.difference, claim.computed),
        quantity=PROPERTIES[name][1],
        tolerance=claim.allowance,
        stream=stream_id,
    )


def _not_two_phase(stream_id: str, name: str, w: _Written, state: State) -> Finding:
    return Finding(
        ERROR,
        "printed-property-mismatch",
        None,
        f"stream {stream_id} prints quality = {w.text}, but its state is {state.phase}, not two-phase",
        claimed=w.value,
        quantity="fraction",
        stream=stream_id,
    )
