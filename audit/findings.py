"""A finding: one thing a step claims that thermodynamics does not permit, or that does not close.

Every finding carries the step, the check's plain name, a severity, the claimed value, the bound or
expected value, the margin (claimed minus bound, signed so that a positive margin is the size of the
violation) absolute and relative, the kind of quantity (which sets its display unit), the tolerance
used and one sentence a reviewer understands. Values are SI.
"""

from __future__ import annotations

from dataclasses import dataclass

ERROR = "error"
WARNING = "warning"
INFO = "info"

SEVERITY_RANK = {ERROR: 3, WARNING: 2, INFO: 1}

# Finding names, each documented in the README's table of findings.
NAMES: dict[str, str] = {
    "work-above-bound": "a step claims to deliver more work than the drop in its exergy allows",
    "input-below-minimum": "a step claims to absorb less work than the reversible minimum",
    "negative-entropy-generation": "the step's entropy generation comes out below zero",
    "energy-imbalance": "the first law does not close within tolerance",
    "mass-imbalance": "mass of a fluid appears or vanishes in the step",
    "efficiency-above-one": "isentropic efficiency above 1",
    "section-efficiency-above-one": "a turbine section between extractions with an isentropic "
    "efficiency above 1",
    "efficiency-mismatch": "a claimed isentropic efficiency differs from the streams' one",
    "wet-exhaust": "turbine exhaust wetter than the moisture limit",
    "liquid-at-suction": "liquid or two-phase fluid at a compressor suction",
    "pump-inlet-not-liquid": "a pump inlet that is not liquid",
    "pump-near-saturation": "a pump inlet too close to saturation (cavitation risk)",
    "pressure-wrong-way": "outlet pressure on the wrong side of the inlet pressure for the kind",
    "valve-not-isenthalpic": "a throttle valve whose outlet enthalpy differs from its inlet's",
    "source-too-cold": "heat received from a source colder than the stream it heats",
    "sink-too-hot": "heat rejected to a sink hotter than the stream it cools",
    "side-changes-fluid": "a heat-exchanger side whose outlet fluid differs from its inlet fluid",
    "duty-mismatch": "a claimed duty that differs from the duty the streams carry",
    "temperature-cross": "heat-exchanger terminal temperatures cross for the arrangement",
    "internal-pinch": "the two sides' temperatures cross inside the exchanger",
    "approach-below-minimum": "the smallest approach temperature is below the stated minimum",
    "drum-outlets-differ": "a flash drum's vapour and liquid outlets at different pressures or "
    "temperatures",
    "drum-outlet-not-saturated": "a flash drum outlet that is not saturated (superheated or wet "
    "vapour, subcooled or flashing liquid)",
    "drum-split-off-lever-rule": "a flash drum's vapour flow that differs from the lever rule's "
    "share of the feed",
    "splitter-state-differs": "a splitter outlet whose state differs from the inlet's",
    "phase-mismatch": "a stream's declared phase differs from the computed phase",
    "printed-property-mismatch": "a printed stream property that its state does not have, beyond the "
    "rounding of its digits",
    "formulation-difference": "a printed stream property, or a step's first law or bound, that "
    "differs beyond rounding, by no more than the difference between two formulations of the fluid",
    "mixer-outlet-pressure": "a mixer outlet above its lowest inlet pressure",
    "stream-unused": "a stream that no step produces or consumes",
    "step-not-evaluated": "a check of the step could not be evaluated",
    "below-freezing-point": "a liquid solution (brine, glycol) colder than its freezing point",
    "below-dew-point": "a gas mixture with a species above its saturation pressure (it would condense)",
    "element-imbalance": "atoms of an element appear or vanish in a reacting step",
    "species-imbalance": "species flows that the step's written reactions and extents do not explain",
    "heating-value-mismatch": "a claimed fuel heating value that differs from the one computed "
    "from formation data",
    "voltage-beyond-reversible": "a fuel cell above, or an electrolyser below, the reversible "
    "cell voltage",
    "heat-needed-below-thermoneutral": "an electrolyser below the thermoneutral voltage whose "
    "balance does not bring in the heat it needs",
    "faraday-mismatch": "current and production (or consumption) that disagree with Faraday's "
    "law, or a faradaic efficiency above 1",
    "power-mismatch": "a claimed electrical power that differs from voltage × current × cells",
    "cop-above-reversible": "a chiller's or heat pump's COP above the reversible one between its "
    "two sides' streams",
    "machine-side-wrong-way": "a chiller or heat pump side heated that should be cooled, or the reverse",
    "water-below-wet-bulb": "a cooling tower's water leaving colder than the inlet air's wet-bulb "
    "temperature (the limit of evaporative cooling)",
    "acceptance-unmatched": "a reviewer's acceptance that matches no finding of the audit",
    "acceptance-expired": "a reviewer's acceptance past its expiry date: the finding counts again",
}


# Verdicts of a law finding on a balance with declared uncertainties (audit.review.uncertainty): the
# interval margin ± U (U the expanded uncertainty) lies wholly beyond the tolerance, reaches into it,
# or reaches zero.
VIOLATED = "violated"
MARGINAL = "marginal"
CONSISTENT = "consistent"
VERDICTS = (VIOLATED, MARGINAL, CONSISTENT)


@dataclass(frozen=True)
class Contributor:
    """One input's part in a finding's uncertainty (GUM, JCGM 100:2008, §5.1.3): its standard
    uncertainty u [SI of the input], the sensitivity c = ∂margin/∂input, the contribution c·u [SI of
    the margin] and its share of the margin's variance (c·u)²/u_c² [-]."""

    input: str
    quantity: str | None
    standard_uncertainty: float
    sensitivity: float
    contribution: float
    share: float


@dataclass(frozen=True)
class Finding:
    """One finding. ``quantity`` names the kind of the values (``power``, ``energy``,
    ``entropy_rate``, ``entropy``, ``temperature``, ``temperature_difference``, ``pressure``,
    ``mass_flow``, ``fraction``) so reports can show them in engineering units. ``accepted`` holds
    a reviewer's acceptance of the finding: it is still shown in every report but no longer fails
    the gate (:meth:`audit.results.AuditResult.fails`)."""

    severity: str
    name: str
    step: str | None
    message: str
    claimed: float | None = None
    bound: float | None = None
    margin: float | None = None
    margin_relative: float | None = None
    quantity: str | None = None
    tolerance: float | None = None
    stream: str | None = None
    # A reviewer's acceptance (reason, who, until); see audit.review.acceptance.
    accepted: str | None = None
    # With declared uncertainties (audit.review.uncertainty): the expanded uncertainty of the margin
    # [its unit], the coverage factor k, the verdict (VERDICTS), the largest contributors and,
    # as a cross-check, the Monte Carlo expanded uncertainty (k times the sample deviation).
    uncertainty: float | None = None
    coverage_factor: float | None = None
    verdict: str | None = None
    contributors: tuple[Contributor, ...] = ()
    monte_carlo_uncertainty: float | None = None
    # Single slips that would make the step close (audit.review.causes), one sentence each.
    probable_causes: tuple[str, ...] = ()
    # How the tolerance was found: "rounding" (the default verdict: the rounding bound of the
    # written values plus a property-method allowance, audit.review.rounding) or "declared" (the
    # balance's own written tolerances); its make-up in words; the rounding part [its unit].
    tolerance_rule: str | None = None
    tolerance_basis: str | None = None
    rounding_bound: float | None = None

    def __post_init__(self) -> None:
        if self.name not in NAMES:
            raise ValueError(f"undocumented finding name {self.name!r}")
        if self.severity not in SEVERITY_RANK:
            raise ValueError(f"unknown severity {self.severity!r}")
        if self.verdict is not None and self.verdict not in VERDICTS:
            raise ValueError(f"unknown verdict {self.verdict!r}")


def relative(margin: float, reference: float) -> float | None:
    """Margin as a fraction of a reference magnitude; None when the reference is zero."""
    return margin / abs(reference) if reference else None


def at_or_above(severity: str, threshold: str) -> bool:
    return SEVERITY_RANK[severity] >= SEVERITY_RANK[threshold]
