"""Two-stream heat exchanger: a hot side that releases heat and a cold side that receives it.

Claims: ``duty`` (optional) is the heat transferred from the hot side to the cold side;
``heat_loss`` (default 0) is heat lost to ambient; ``arrangement`` is ``counter-current``
(default) or ``co-current``.

Checks, beyond the laws:

* each side keeps its fluid (``side-changes-fluid``) and its mass (``mass-imbalance``);
* the heat the hot side releases equals the heat the cold side receives plus the loss (the first
  law of the exchanger, ``energy-imbalance``); a claimed duty matches the sides (``duty-mismatch``,
  each side read as its inlet flow times its enthalpy change, within the rounding of the written
  values plus the property-method allowance, :func:`audit.steps.allowances.claim_rule`);
* terminal temperatures do not cross for the arrangement (``temperature-cross``);
* the T–Q profiles of the two sides, compared along the exchanger, do not cross inside it
  (``internal-pinch``: phase change makes the terminals lie) and the smallest approach is not below
  the stated ``min_approach`` (``approach-below-minimum``, warning).

Method: the two sides are compared at equal fractions x of their enthalpy change (the pressure
varying linearly between inlet and outlet), x counted from the cold inlet; T at a point from a
(P, h) flash (CoolProp HEOS). The approach ΔT(x) = T_hot − T_cold is evaluated exactly at both
ends and at every point where a side meets its saturated-liquid or saturated-vapour enthalpy
(where the profiles bend). Between those points both sides are smooth, and the approach is refined
adaptively (:mod:`audit.steps.profile`): each segment's midpoint gives its deviation e from a
straight line, a parabola through the three points bounds the segment's minimum from below by
min(ΔT) + min(e, 0), and only the segment with the lowest bound is halved, until no segment can
hold an approach more than 0.05 K below the smallest one found [1, ch. 11]. The minimum approach
is the smallest evaluated ΔT, within 0.05 K of the true one where the approach is locally
parabolic (tested against a 2000-point profile on condensing, boiling, near-critical CO₂ and
supercritical water exchangers). The points are kept on the step result (``profile``: cumulative
duty from the cold inlet, hot and cold T) for T–Q charts.

References
----------
.. [1] F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine, *Fundamentals of Heat and Mass
   Transfer*, 6th ed., Wiley, 2007, ch. 11.
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field

from audit.errors import StateError
from audit.exchangers import ExchangerProfile, ExchangerValues
from audit.findings import ERROR, WARNING, Finding, relative
from audit.model.steps import DutyClaim, TemperatureClaim
from audit.physics.heat_transfer import log_mean_temperature_difference
from audit.results import StepResult, StreamResult
from audit.steps.allowances import claim_rule, duty_allowance
from audit.steps.base import StepBase, StepContext, finish_flow_step, register
from audit.steps.laws import format_power, side_mass_finding
from audit.steps.machines import heat_loss_flow
from audit.steps.profile import approach_minimum
from audit.wording import to_celsius


class Side(BaseModel):
    model_config = ConfigDict(extra="forbid", defer_build=True)  # built with its step kind

    inlet: str
    outlet: str


class HeatExchanger(StepBase):
    kind: Literal["heat_exchanger"]
    hot: Side
    cold: Side
    arrangement: Literal["counter-current", "co-current"] = "counter-current"
    duty: DutyClaim = Field(None, ge=0, description="heat transferred from hot side to cold side")
    heat_loss: DutyClaim = Field(None, ge=0, description="heat lost to ambient (default 0)")
    heat_loss_temperature: TemperatureClaim = None

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.hot.inlet, self.cold.inlet], [self.hot.outlet, self.cold.outlet]


def evaluate(step: HeatExchanger, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a two-sided
    heat exchanger, then its own checks: each side keeps its fluid and mass (``side-changes-fluid``,
    ``mass-imbalance``), the claimed duty agrees with the sides (``duty-mismatch``), heat flows from
    hot to cold (``temperature-cross``), and the approach and internal pinch stay above the minimum
    (``approach-below-minimum``, ``internal-pinch``).

    Sign convention: Q is heat into the step, W is work delivered by the step: only the heat loss to
    ambient crosses the boundary (Q < 0); W = 0.
    """
    hi, ho = ctx.stream(step.hot.inlet), ctx.stream(step.hot.outlet)
    ci, co = ctx.stream(step.cold.inlet), ctx.stream(step.cold.outlet)
    streams = [hi, ho, ci, co]
    heat = heat_loss_flow(step.heat_loss, step.heat_loss_temperature, ctx.T0, min(s.T for s in streams))
    claimed = ["heat_loss" if step.heat_loss is not None else "no heat loss", "no work"]
    if step.duty is not None:
        claimed.append("duty")
    result, balance = finish_flow_step(
        step, "heat_exchanger", ctx, [hi, ci], [ho, co], heat, 0.0, claimed, [], check_mass=False
    )
    tol = ctx.tolerances
    released = hi.mass_flow * hi.h - ho.mass_flow * ho.h
    received = co.mass_flow * co.h - ci.mass_flow * ci.h
    result.extra.update({"hot_duty": released, "cold_duty": received})
    psi_drop = hi.mass_flow * hi.psi - ho.mass_flow * ho.psi
    psi_gain = co.mass_flow * co.psi - ci.mass_flow * ci.psi
    result.second_law_efficiency = psi_gain / psi_drop if psi_drop > 0 and psi_gain > 0 else None

    for name, inlet, outlet in (("hot", hi, ho), ("cold", ci, co)):
        if inlet.fluid != outlet.fluid:
            ctx.add(
                Finding(
                    ERROR,
                    "side-changes-fluid",
                    step.id,
                    f"the {name} side enters as {inlet.fluid} ({inlet.id}) and leaves as "
                    f"{outlet.fluid} ({outlet.id}); each side keeps its own fluid",
                )
            )
        finding = side_mass_finding(step.id, name, inlet, [outlet], tol)
        if finding is not None:
            ctx.add(finding)
    duty = step.duty
    swapped = released <= 0 and received <= 0  # reported once, as the sides swapped (below)
    if duty is not None and not swapped:
        # the duty is what passes from the hot side to the cold side: the hot side releases it
        # plus the claimed heat loss
        loss = step.heat_loss or 0.0
        # each side's duty with its flow conserved (inlet flow times enthalpy change): a flow's
        # rounding moves it by δṁ Δh, never by δṁ times an absolute (formation-basis) enthalpy
        hot, cold = hi.mass_flow * (hi.h - ho.h), ci.mass_flow * (co.h - ci.h)
        worst = max((hot - loss, cold), key=lambda d: abs(d - duty))
        tol_E, rule, basis = claim_rule(tol, *duty_allowance(worst), result.energy_tolerance)
        result.checks["duty-mismatch"] = worst - duty
        if abs(worst - duty) > tol_E:
            lost = f" ({format_power(loss)} of it lost to ambient)" if loss else ""
            ctx.add(
                Finding(
                    ERROR,
                    "duty-mismatch",
                    step.id,
                    f"the claimed duty {format_power(duty)} differs from the streams: the hot "
                    f"side releases {format_power(hot)}{lost}, the cold side receives "
                    f"{format_power(cold)}",
                    claimed=duty,
                    bound=worst,
                    margin=abs(worst - duty),
                    margin_relative=relative(abs(worst - duty), worst),
                    quantity="power",
                    tolerance=tol_E,
                    tolerance_rule=rule,
                    tolerance_basis=basis,
                )
            )
    if released <= 0 or received <= 0:
        ctx.add(
            Finding(
                ERROR,
                "temperature-cross",
                step.id,
                f"the hot side {'gains' if released <= 0 else 'releases'} heat "
                f"({format_power(released)}) and the cold side "
                f"{'loses' if received <= 0 else 'receives'} heat ({format_power(received)}): "
                "hot and cold sides swapped?",
                quantity="power",
                claimed=released,
                bound=0.0,
            )
        )
        return result
    if not ctx.residuals_only:
        _check_temperatures(step, ctx, result, hi, ho, ci, co)
    return result


def _rating(
    step: HeatExchanger, received: float, ends: list[tuple[str, StreamResult, StreamResult]]
) -> ExchangerValues:
    """Duty, terminal approaches and LMTD (the profile's values are added once it is known)."""
    (end1, hot1, cold1), (end2, hot2, cold2) = ends
    dT1, dT2 = hot1.T - cold1.T, hot2.T - cold2.T
    return ExchangerValues(
        duty=received,
        arrangement=step.arrangement,
        ends=(end1, end2),
        end_approach=(dT1, dT2),
        lmtd=log_mean_temperature_difference(dT1, dT2),
    )


def _check_temperatures(
    step: HeatExchanger,
    ctx: StepContext,
    result: StepResult,
    hi: StreamResult,
    ho: StreamResult,
    ci: StreamResult,
    co: StreamResult,
) -> None:
    counter = step.arrangement == "counter-current"
    # Terminal differences: (end name, hot T, cold T)
    if counter:
        ends = [("hot end", hi, co), ("cold end", ho, ci)]
    else:
        ends = [("inlet end", hi, ci), ("outlet end", ho, co)]
    received = co.mass_flow * co.h - ci.mass_flow * ci.h
    result.exchanger = rating = _rating(step, received, ends)
    for end, hot, cold in ends:
        gap = hot.T - cold.T
        if gap < 0:
            ctx.add(
                Finding(
                    ERROR,
                    "temperature-cross",
                    step.id,
                    f"at the {end} of this {step.arrangement} exchanger the hot stream {hot.id} "
                    f"({to_celsius(hot.T):.1f} °C) is {-gap:.1f} K colder than the cold stream "
                    f"{cold.id} ({to_celsius(cold.T):.1f} °C): heat cannot flow that way",
                    claimed=cold.T,
                    bound=hot.T,
                    margin=-gap,
                    quantity="temperature",
                )
            )
            return
    try:
        fractions, hot_T, cold_T = approach_profile(ctx, hi, ho, ci, co, counter)
    except StateError as exc:
        ctx.add(
            Finding(
                WARNING,
                "step-not-evaluated",
                step.id,
                f"the temperature profiles could not be evaluated: {exc.problem.message}",
            )
        )
        return
    approach = [h - c for h, c in zip(hot_T, cold_T, strict=True)]
    i_min = min(range(len(approach)), key=approach.__getitem__)
    minimum = approach[i_min]
    result.extra["min_approach"] = minimum
    result.extra["min_approach_at_duty_fraction"] = fractions[i_min]
    duty = [f * received for f in fractions]
    result.profile = ExchangerProfile(duty=duty, hot_T=hot_T, cold_T=cold_T, pinch_index=i_min)
    rating.min_approach = minimum
    rating.min_approach_duty = duty[i_min]
    rating.min_approach_fraction = fractions[i_min]
    terminal = min(hot.T - cold.T for _, hot, cold in ends)
    required = ctx.tolerances.min_approach
    if minimum < 0:
        ctx.add(
            Finding(
                ERROR,
                "internal-pinch",
                step.id,
                f"the terminal temperatures leave {terminal:.1f} K, but inside the exchanger the "
                f"profiles cross: at {fractions[i_min]:.0%} of the duty (from the cold inlet) the hot "
                f"side is {-minimum:.1f} K colder than the cold side",
                claimed=minimum,
                bound=max(required, 0.0),
                margin=max(required, 0.0) - minimum,
                quantity="temperature_difference",
                tolerance=required,
            )
        )
    elif minimum < required:
        ctx.add(
            Finding(
                WARNING,
                "approach-below-minimum",
                step.id,
                f"the smallest approach is {minimum:.2f} K (at {fractions[i_min]:.0%} of the duty "
                f"from the cold inlet), below the stated minimum of {required:g} K",
                claimed=minimum,
                bound=required,
                margin=required - minimum,
                quantity="temperature_difference",
                tolerance=required,
            )
        )


def approach_profile(
    ctx: StepContext,
    hi: StreamResult,
    ho: StreamResult,
    ci: StreamResult,
    co: StreamResult,
    counter: bool,
) -> tuple[list[float], list[float], list[float]]:
    """Fractions of duty from the cold inlet [-] (the ends, the phase-change points and the
    adaptive refinement, in order), and the hot and cold sides' temperatures there [K]."""
    breaks = {0.0, 1.0}
    for side_in, side_out in ((ci, co), (hi, ho)):
        for f in _saturation_fractions(ctx, side_in, side_out):
            # fraction along this side from its inlet; the profile coordinate runs from the
            # cold inlet, which is the hot outlet end in counter-current flow
            breaks.add(1.0 - f if (side_in is hi and counter) else f)
    temperatures: dict[float, tuple[float, float]] = {}

    def approach(x: float) -> float:
        cold_T = _side_T(ctx, ci, co, x)
        hot_T = _side_T(ctx, hi, ho, 1.0 - x if counter else x)  # hot side from its inlet
        temperatures[x] = (hot_T, cold_T)
        return hot_T - cold_T

    points = approach_minimum(approach, sorted(breaks))
    return points, [temperatures[x][0] for x in points], [temperatures[x][1] for x in points]


def _side_T(ctx: StepContext, inlet: StreamResult, outlet: StreamResult, f: float) -> float:
    """T [K] at fraction f of a side's enthalpy change from its inlet."""
    if f <= 0.0:
        return inlet.T
    if f >= 1.0:
        return outlet.T
    h = inlet.h + f * (outlet.h - inlet.h)
    P = inlet.P + f * (outlet.P - inlet.P)
    return ctx.engine.state(inlet.fluid, "Ph", P, h, table_basis=False).T


def _saturation_fractions(ctx: StepContext, inlet: StreamResult, outlet: StreamResult) -> list[float]:
    """Fractions of a side's enthalpy change at which it meets its bubble and dew points."""
    if inlet.fluid != outlet.fluid or outlet.h == inlet.h:
        return []
    P = 0.5 * (inlet.P + outlet.P)
    found = []
    for quality in (0.0, 1.0):
        try:
            h_sat = ctx.engine.state(inlet.fluid, "PQ", P, quality).h
            f = (h_sat - inlet.h) / (outlet.h - inlet.h)
            if 0.0 < f < 1.0 and inlet.P != outlet.P:
                # once more at the pressure the side has there: the bend lies exactly on it
                P_f = inlet.P + f * (outlet.P - inlet.P)
                h_sat = ctx.engine.state(inlet.fluid, "PQ", P_f, quality).h
                f = (h_sat - inlet.h) / (outlet.h - inlet.h)
        except StateError:
            return []
        if 0.0 < f < 1.0:
            found.append(f)
    return found


register(
    "heat_exchanger",
    HeatExchanger,
    evaluate,
    "two-stream heat exchanger: hot side releases, cold side receives",
)
