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
    "splitter-state-differs": "a splitter outlet whose state differs from the inlet's",
    "phase-mismatch": "a stream's declared phase differs from the computed phase",
    "mixer-outlet-pressure": "a mixer outlet above its lowest inlet pressure",
    "stream-unused": "a stream that no step produces or consumes",
    "step-not-evaluated": "a check of the step could not be evaluated",
}


@dataclass(frozen=True)
class Finding:
    """One finding. ``quantity`` names the kind of the values (``power``, ``energy``,
    ``entropy_rate``, ``entropy``, ``temperature``, ``temperature_difference``, ``pressure``,
    ``mass_flow``, ``fraction``) so reports can show them in engineering units."""

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

    def __post_init__(self) -> None:
        if self.name not in NAMES:
            raise ValueError(f"undocumented finding name {self.name!r}")
        if self.severity not in SEVERITY_RANK:
            raise ValueError(f"unknown severity {self.severity!r}")


def relative(margin: float, reference: float) -> float | None:
    """Margin as a fraction of a reference magnitude; None when the reference is zero."""
    return margin / abs(reference) if reference else None


def at_or_above(severity: str, threshold: str) -> bool:
    return SEVERITY_RANK[severity] >= SEVERITY_RANK[threshold]
