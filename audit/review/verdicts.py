"""Verdicts of law findings that know their measurement uncertainty, and their wording.

Verdict of a law finding with margin m (positive = size of the violation), tolerance t and
expanded uncertainty U, from where the interval [m − U, m + U] lies (after the guard-band reading
of JCGM 106:2012 [1, §8]):

* ``violated``: m − U > t, the violation stands beyond tolerance and uncertainty; severity kept;
* ``marginal``: t ≥ m − U > 0, beyond the tolerance but not by more than the uncertainty; the
  severity becomes warning, so the gate does not fail on it unless asked (``--fail-on-marginal``);
* ``consistent``: m − U ≤ 0, the uncertainty covers the whole margin; severity info.

References
----------
.. [1] JCGM 106:2012, *Evaluation of measurement data — The role of measurement uncertainty in
   conformity assessment*.
"""

from __future__ import annotations

from dataclasses import replace

from audit.findings import (
    CONSISTENT,
    INFO,
    MARGINAL,
    SEVERITY_RANK,
    VIOLATED,
    WARNING,
    Contributor,
    Finding,
)


def verdict(margin: float, expanded: float, tolerance: float) -> str:
    """``violated`` when margin − U > tolerance, ``marginal`` when it is above zero only,
    ``consistent`` otherwise (all in the margin's unit); see the module docstring."""
    if margin - expanded > tolerance:
        return VIOLATED
    if margin - expanded > 0.0:
        return MARGINAL
    return CONSISTENT


_PHRASES = {
    VIOLATED: "a violation beyond the uncertainty",
    MARGINAL: "marginal: beyond the tolerance, but not by more than the uncertainty",
    CONSISTENT: "consistent: the uncertainty covers the whole margin",
}


def format_value(value: float, quantity: str | None) -> str:
    """A margin or uncertainty [SI] in the unit of messages (kW, kJ, kW/K, kg/s ...)."""
    if quantity in ("power", "energy"):
        unit_small, unit_large = ("kW", "MW") if quantity == "power" else ("kJ", "MJ")
        if abs(value) < 1e6:
            return f"{value / 1e3:,.4g} {unit_small}"
        return f"{value / 1e6:,.4g} {unit_large}"
    if quantity in ("entropy_rate", "entropy"):
        return f"{value / 1e3:.4g} {'kW/K' if quantity == 'entropy_rate' else 'kJ/K'}"
    if quantity == "mass_flow":
        return f"{value:.4g} kg/s"
    if quantity == "voltage":
        return f"{value * 1e3:.3g} mV"
    if quantity == "temperature":  # a temperature difference
        return f"{value:.4g} K"
    return f"{value:.4g}"


def with_verdict(
    finding: Finding,
    expanded: float,
    k: float,
    contributors: tuple[Contributor, ...] = (),
    monte_carlo_expanded: float | None = None,
) -> Finding:
    """The finding with its expanded uncertainty U [its unit], coverage factor, verdict,
    contributors and severity (marginal: at most warning; consistent: info)."""
    margin = finding.margin or 0.0
    tolerance = finding.tolerance or 0.0
    result = verdict(margin, expanded, tolerance)
    severity = finding.severity
    if result == MARGINAL and SEVERITY_RANK[severity] > SEVERITY_RANK[WARNING]:
        severity = WARNING
    elif result == CONSISTENT:
        severity = INFO
    stop = "" if finding.message.rstrip().endswith(".") else "."
    message = (
        f"{finding.message}{stop} With the declared uncertainties the margin is "
        f"{format_value(margin, finding.quantity)} ± "
        f"{format_value(expanded, finding.quantity)} (k = {k:g}): {_PHRASES[result]}."
    )
    return replace(
        finding,
        severity=severity,
        message=message,
        uncertainty=expanded,
        coverage_factor=k,
        verdict=result,
        contributors=contributors,
        monte_carlo_uncertainty=monte_carlo_expanded,
    )
