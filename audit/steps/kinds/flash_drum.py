"""Flash drum (flash tank, separator): one feed, a vapour outlet and a liquid outlet.

Claims: ``heat``, a list of ``added``/``removed`` heat flows (as on a general step), each with the
``temperature`` at which it crosses the boundary if known. Without it the drum is adiabatic: a
flash drum never infers missing heat, so outlets that carry more or less energy than the feed give
an ``energy-imbalance``.

Checks, besides the laws every step obeys:

* the two outlets leave at one pressure and one temperature (``drum-outlets-differ``);
* each outlet is saturated at its pressure: the vapour neither superheated nor wet, the liquid
  neither subcooled nor flashing (``drum-outlet-not-saturated``);
* the lever rule: the feed, flashed at constant enthalpy (plus any claimed heat per kg of feed)
  to the drum pressure, has the quality x = (h − h′) / (h″ − h′), h′ and h″ the saturated liquid
  and vapour enthalpies at that pressure; the vapour outlet must carry x times the feed
  (``drum-split-off-lever-rule``) [1, §4.3 (throttling), §3.5 (quality)].

Tolerances (common practice, chosen to stay above the rounding of written values): outlet
temperatures within :data:`SATURATION_MATCH` of each other and of saturation, qualities within
:data:`QUALITY_MATCH` of 0 and 1, pressures within :data:`PRESSURE_MATCH` (relative), the vapour
flow within :data:`SPLIT_MATCH` of the feed flow.

References
----------
.. [1] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014.
"""

from __future__ import annotations

from typing import Literal

from audit.errors import StateError
from audit.findings import ERROR, WARNING, Finding, relative
from audit.model.steps import HeatClaim
from audit.physics.phases import lever_rule_quality
from audit.results import StepResult, StreamResult
from audit.steps.base import StepBase, StepContext, finish_flow_step, heat_flows_from_claims, register
from audit.wording import bar, celsius, percent

SATURATION_MATCH = 1.0
"""K: an outlet within this of the saturation temperature (and of the other outlet) is saturated."""
QUALITY_MATCH = 0.01
"""-: a vapour outlet of quality above 1 − this, a liquid outlet below this, counts as saturated."""
PRESSURE_MATCH = 0.005
"""-: the two outlets' pressures may differ by this fraction of the larger (and 1 kPa)."""
SPLIT_MATCH = 0.01
"""-: the vapour flow may differ from the lever rule's by this fraction of the feed flow."""


class FlashDrum(StepBase):
    kind: Literal["flash_drum"]
    inlet: str
    vapour: str
    liquid: str
    heat: list[HeatClaim] | None = None

    def stream_ids(self) -> tuple[list[str], list[str]]:
        return [self.inlet], [self.vapour, self.liquid]


def evaluate(step: FlashDrum, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) to a flash
    drum with no work and, unless heat is claimed, no heat; then its own checks: the outlets at one
    pressure and temperature (``drum-outlets-differ``), each at saturation
    (``drum-outlet-not-saturated``), and the vapour flow by the lever rule
    (``drum-split-off-lever-rule``).

    Sign convention: Q is heat into the step (claimed ``added`` > 0, ``removed`` < 0), W = 0.
    """
    feed, vapour, liquid = ctx.stream(step.inlet), ctx.stream(step.vapour), ctx.stream(step.liquid)
    coldest = min(s.T for s in (feed, vapour, liquid))
    heat = heat_flows_from_claims(step.heat, ctx.T0, coldest) if step.heat is not None else []
    claimed = ["heat" if step.heat is not None else "adiabatic", "no work"]
    result, _ = finish_flow_step(
        step, "flash_drum", ctx, [feed], [vapour, liquid], heat, 0.0, claimed, []
    )
    _outlets_together(step, ctx, vapour, liquid)
    _saturated(step, ctx, vapour, 1.0)
    _saturated(step, ctx, liquid, 0.0)
    _lever_rule(step, ctx, feed, vapour, liquid, sum(q.Q for q in heat))
    return result


def _outlets_together(
    step: FlashDrum, ctx: StepContext, vapour: StreamResult, liquid: StreamResult
) -> None:
    dP = abs(vapour.P - liquid.P)
    allowed = max(PRESSURE_MATCH * max(vapour.P, liquid.P), 1e3)
    if dP > allowed:
        ctx.add(
            Finding(
                ERROR,
                "drum-outlets-differ",
                step.id,
                f"the vapour outlet {vapour.id} leaves at {bar(vapour.P)} and the liquid outlet "
                f"{liquid.id} at {bar(liquid.P)}: the two phases of one drum leave at one pressure",
                claimed=vapour.P,
                bound=liquid.P,
                margin=dP,
                quantity="pressure",
                tolerance=allowed,
            )
        )
    dT = abs(vapour.T - liquid.T)
    if dT > SATURATION_MATCH:
        ctx.add(
            Finding(
                ERROR,
                "drum-outlets-differ",
                step.id,
                f"the vapour outlet {vapour.id} leaves at {celsius(vapour.T)} and the liquid outlet "
                f"{liquid.id} at {celsius(liquid.T)}: the two phases of one drum are in equilibrium, "
                "at one temperature",
                claimed=vapour.T,
                bound=liquid.T,
                margin=dT,
                quantity="temperature_difference",
                tolerance=SATURATION_MATCH,
            )
        )


def _saturated(step: FlashDrum, ctx: StepContext, outlet: StreamResult, quality: float) -> None:
    """Add a finding unless the outlet is saturated (vapour: ``quality`` 1, liquid: 0)."""
    which = "vapour" if quality == 1.0 else "liquid"
    if outlet.quality is not None:
        off = abs(outlet.quality - quality)
        if off <= QUALITY_MATCH:
            return
        words = (
            f"is two-phase with quality {outlet.quality:.3g}: it carries {percent(off)} liquid"
            if quality == 1.0
            else f"is two-phase with quality {outlet.quality:.3g}: it carries {percent(off)} vapour"
        )
        _not_saturated(step, ctx, outlet, which, words, outlet.quality, quality, off, "fraction")
        return
    try:
        T_sat = ctx.engine.saturation_temperature(outlet.fluid, outlet.P)
    except StateError:
        T_sat = None
    if T_sat is None:
        words = f"has no saturation state at {bar(outlet.P)} (above the critical pressure)"
        _not_saturated(step, ctx, outlet, which, words, outlet.P, None, None, "pressure")
        return
    dT = outlet.T - T_sat
    if abs(dT) <= SATURATION_MATCH:
        return
    state = "superheated" if dT > 0 else "subcooled"
    words = (
        f"is {abs(dT):.3g} K {state} ({celsius(outlet.T)} against the saturation temperature "
        f"{celsius(T_sat)} at {bar(outlet.P)})"
    )
    _not_saturated(step, ctx, outlet, which, words, outlet.T, T_sat, abs(dT), "temperature_difference")


def _not_saturated(
    step: FlashDrum,
    ctx: StepContext,
    outlet: StreamResult,
    which: str,
    words: str,
    claimed: float,
    bound: float | None,
    margin: float | None,
    quantity: str,
) -> None:
    ctx.add(
        Finding(
            ERROR,
            "drum-outlet-not-saturated",
            step.id,
            f"the {which} outlet {outlet.id} {words}; a flash drum's outlets leave saturated",
            claimed=claimed,
            bound=bound,
            margin=margin,
            quantity=quantity,
            stream=outlet.id,
            tolerance=SATURATION_MATCH if quantity == "temperature_difference" else QUALITY_MATCH,
        )
    )


def _lever_rule(
    step: FlashDrum,
    ctx: StepContext,
    feed: StreamResult,
    vapour: StreamResult,
    liquid: StreamResult,
    Q: float,
) -> None:
    """The vapour flow against the lever rule at the drum pressure (the vapour outlet's)."""
    if not feed.fluid == vapour.fluid == liquid.fluid or feed.mass_flow <= 0.0:
        return
    P = vapour.P
    try:
        h_liquid = ctx.engine.state(feed.fluid, "PQ", P, 0.0).h
        h_vapour = ctx.engine.state(feed.fluid, "PQ", P, 1.0).h
    except StateError as exc:
        ctx.add(
            Finding(
                WARNING,
                "step-not-evaluated",
                step.id,
                f"the lever rule is not checked: {exc.problem.message}",
            )
        )
        return
    h_feed = feed.h + Q / feed.mass_flow
    x = lever_rule_quality(h_feed, h_liquid, h_vapour)
    expected = x * feed.mass_flow
    off = vapour.mass_flow - expected
    allowed = SPLIT_MATCH * feed.mass_flow
    if abs(off) <= allowed:
        return
    heat = " with the claimed heat" if Q else " at constant enthalpy"
    ctx.add(
        Finding(
            ERROR,
            "drum-split-off-lever-rule",
            step.id,
            f"the vapour outlet {vapour.id} carries {vapour.mass_flow:.4g} kg/s, "
            f"{percent(vapour.mass_flow / feed.mass_flow)} of the feed, but the feed {feed.id} "
            f"flashed{heat} to {bar(P)} has the quality {x:.4g}: the lever rule puts "
            f"{expected:.4g} kg/s in the vapour and {feed.mass_flow - expected:.4g} kg/s in the "
            "liquid",
            claimed=vapour.mass_flow,
            bound=expected,
            margin=abs(off),
            margin_relative=relative(abs(off), feed.mass_flow),
            quantity="mass_flow",
            tolerance=allowed,
            stream=vapour.id,
        )
    )


register(
    "flash_drum", FlashDrum, evaluate, "flash drum or separator: vapour and liquid outlets, adiabatic"
)
