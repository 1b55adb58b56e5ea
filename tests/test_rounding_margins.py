"""The rounding verdict reads each law finding's margin again from re-evaluated steps
(:mod:`audit.review.margins`): the margin function must give the margin the step stage raised, for
every step kind, also when a mass residual within its tolerance shifts the residual through the
mass-conserving reading (:func:`audit.steps.allowances.reference_shift`). A finding whose margin
cannot be read again says so instead of standing on the allowance alone in silence.

States: Ammonia from CoolProp's HEOS (its default reference, the table reference a balance file
writes h on), a named library used as the reference here; the balances close or miss by amounts
chosen here, so every expected number below follows from the first law written out by hand.
Ammonia is read on the formation basis, where Δṁ times an absolute enthalpy is large: the cases
exercise the reference shift.
"""

from __future__ import annotations

import re
from dataclasses import replace

import CoolProp.CoolProp as CP
import pytest
from test_cooling_tower import _case as cooling_tower_case

from audit.api import audit_balance
from audit.reading import parse_balance
from audit.review import rounding
from audit.review.margins import (
    ENERGY_FINDINGS,
    LAW_FINDINGS,
    WORK_FINDINGS,
    flow_groups,
    margin_function,
    reference_shift,
)
from audit.review.passes import _rounding as review_rounding
from audit.review.propagation import propagate
from audit.review.rounding import assess_rounding
from audit.review.runner import StepRunner
from audit.solve import solve
from audit.steps.allowances import ROUNDING

FLUID = "Ammonia"
P_LOW = 5.0e4  # Pa, the inlets' pressure
M_COLD, M_HOT = 1.25, 112.0  # kg/s
T_COLD, T_HOT = 212.0, 362.0  # K: a liquid and a vapour at 0.5 bar
H_COLD = CP.PropsSI("H", "T", T_COLD, "P", P_LOW, FLUID)  # J/kg (CoolProp HEOS)
H_HOT = CP.PropsSI("H", "T", T_HOT, "P", P_LOW, FLUID)
M_IN = M_COLD + M_HOT
H_MIX = (M_COLD * H_COLD + M_HOT * H_HOT) / M_IN  # first law of an adiabatic mixer with no work
LOST = 0.05  # kg/s, a mass residual within the default 0.2 % of the inlet flow

# -- the printed mixer of the report --------------------------------------------------------------
PRINTED_MIXER = """
balance:
  name: generated step
  site_pressure: 101325.0 Pa
streams:
  Ai0: {fluid: Ammonia, T: 212.0 K, P: 5.000e+04 Pa, flow: 1.250 kg/s}
  Ai1: {fluid: Ammonia, T: 362.0 K, P: 5.000e+04 Pa, flow: 112.0 kg/s}
  Ao0: {fluid: Ammonia, P: 5.000e+04 Pa, h: H_OUT J/kg, flow: 113.2 kg/s}
steps:
  - id: A
    kind: mixer
    inlets: [Ai0, Ai1]
    outlet: Ao0
"""


def _printed(h_out: str):
    balance, document = parse_balance(PRINTED_MIXER.replace("H_OUT", h_out), "mixer.yaml")
    return balance, document


def test_a_mixer_written_with_printed_digits_passes_on_its_rounding():
    balance, document = _printed("1.814e+06")
    solution = solve(balance, document)
    (finding,) = solution.findings
    # The step stage raises it beyond the property allowance, with a mass residual of
    # 113.25 - 113.2 = 0.05 kg/s that shifts the raw residual past zero (formation basis) ...
    assert finding.name == "energy-imbalance" and finding.tolerance_rule == ROUNDING
    assert finding.margin > finding.tolerance
    result = solution.results[0]
    shifted = result.energy_residual - reference_shift(result, solution.streams, {})[0]
    assert shifted > 0 > result.energy_residual
    # ... and the rounding of the written values (the outlet's h alone ±500 J/kg × 113 kg/s)
    # explains it: the balance is consistent to the digits written.
    assert audit_balance(balance, document).findings == []


def test_the_same_mixer_with_a_slip_beyond_the_rounding_still_fails():
    # h_out 1.817e6 instead of 1.814e6 J/kg: 3 kJ/kg × 113 kg/s ≈ 340 kW more than the rounding
    (finding,) = audit_balance(*_printed("1.817e+06")).findings
    assert finding.name == "energy-imbalance"
    assert finding.rounding_bound is not None
    # The outlet's h written "1.817e+06" is ±500 J/kg; with the mass-conserving reading its
    # residual moves by the inlet flow 113.25 kg/s per J/kg: 56.6 kW from that number alone.
    assert finding.rounding_bound >= 500.0 * 113.25 * (1 - 1e-3)
    assert (
        finding.margin
        > finding.tolerance
        == pytest.approx(finding.rounding_bound + 12_650.0, abs=1_000.0)
    )
    # 500 J/kg × 113.25 kg/s = 56.625 kW, the largest contribution, named first
    assert re.match(
        r"rounding of the written values \d+ kW \(worst case; stream Ao0 h '1\.817e\+06 J/kg' "
        r"±500 J/kg: 56\.63 kW; ",
        finding.tolerance_basis,
    )
    assert "from the rounding of the written values" in finding.message


def test_a_finding_whose_margin_cannot_be_read_again_says_so():
    balance, document = _printed("1.814e+06")
    solution = solve(balance, document)
    (finding,) = solution.findings
    wrong = replace(finding, margin=2.0 * finding.margin)  # no margin function gives this one
    verdict = assess_rounding(StepRunner(solution), 0, [(0, wrong)], solution.results[0])
    kept = verdict[0]
    assert kept is not None and kept.tolerance == wrong.tolerance
    assert kept.rounding_bound is None
    assert kept.tolerance_basis.startswith(
        "the rounding of the written values was not propagated: its margin could not be read "
        "again from a re-evaluated step + property-method allowance"
    )
    assert kept.message.endswith(
        "(the rounding of the written values was not propagated: its margin could not be read "
        "again from a re-evaluated step; judged on the allowance alone.)"
    )


# -- every energy and work finding's margin, on mixers, splitters and a vented mixer -------------
def _h(P: float, h: float) -> str:
    return f"{{fluid: {FLUID}, P: {P!r} Pa, h: {h!r} J/kg"


def _mixer(r: float, lost: float, P_out: float = P_LOW, vent: bool = False) -> str:
    """A mixer whose first law misses by ``r`` [W] on the mass-conserving reading (its outlets at
    h_mix − r / ṁ_in), losing ``lost`` [kg/s]; with a vent, 10 kg/s of the outlet flow leaves by it."""
    h_out = H_MIX - r / M_IN
    m_out = M_IN - lost - (10.0 if vent else 0.0)
    vent_stream = f"  Av0: {_h(P_out, h_out)}, flow: 10.0 kg/s}}\n" if vent else ""
    return f"""
streams:
  Ai0: {{fluid: {FLUID}, T: {T_COLD!r} K, P: {P_LOW!r} Pa, flow: {M_COLD!r} kg/s}}
  Ai1: {{fluid: {FLUID}, T: {T_HOT!r} K, P: {P_LOW!r} Pa, flow: {M_HOT!r} kg/s}}
  Ao0: {_h(P_out, h_out)}, flow: {m_out!r} kg/s}}
{vent_stream}steps:
  - {{id: A, kind: mixer, inlets: [Ai0, Ai1], outlet: Ao0{", vent: Av0" if vent else ""}}}
"""


def _splitter(r: float, lost: float, P_out: float = P_LOW) -> str:
    """A splitter of the hot stream into 60 kg/s and the rest, missing by ``r`` [W] and losing
    ``lost`` [kg/s]."""
    h_out = H_HOT - r / M_HOT
    return f"""
streams:
  Si: {{fluid: {FLUID}, T: {T_HOT!r} K, P: {P_LOW!r} Pa, flow: {M_HOT!r} kg/s}}
  So0: {_h(P_out, h_out)}, flow: 60.0 kg/s}}
  So1: {_h(P_out, h_out)}, flow: {M_HOT - 60.0 - lost!r} kg/s}}
steps:
  - {{id: S, kind: splitter, inlet: Si, outlets: [So0, So1]}}
"""


def _cooling_tower() -> str:
    """The analytic tower of tests/test_cooling_tower.py with its water leaving at 30.1 °C
    instead of 30 °C and 0.05 kg/s of it lost: humid air exchanges water with the water streams,
    so the four streams are one group of the mass-conserving reading, not two pairs."""
    text = cooling_tower_case(30.0)
    return re.sub(
        r"(CW2: \{fluid: Water, T: )30.0( degC, P: 2 bar, flow: )([0-9.]+)",
        lambda m: f"{m[1]}30.1{m[2]}{float(m[3]) - LOST:.6f}",
        text,
    )


# (balance, law findings it must raise). Energy: ±30 kW on the mass-conserving reading with
# ∓0.05 kg/s lost, so that the raw residual (shifted by Δṁ h_out, about ∓129 kW on the formation
# basis) has the other sign. Work: the outlets at 2 bar with the mixed enthalpy, an entropy drop of
# about R ln 4 per kg: exergy created, "input-below-minimum" (no work: W = 0).
CASES = {
    "mixer, energy +": (_mixer(30e3, LOST), {"energy-imbalance"}),
    "mixer, energy -": (_mixer(-30e3, -LOST), {"energy-imbalance"}),
    "mixer, work": (_mixer(0.0, LOST, P_out=2e5), {"input-below-minimum"}),
    "vented mixer, energy +": (_mixer(30e3, LOST, vent=True), {"energy-imbalance"}),
    "vented mixer, energy -": (_mixer(-30e3, -LOST, vent=True), {"energy-imbalance"}),
    "vented mixer, work": (_mixer(0.0, LOST, P_out=2e5, vent=True), {"input-below-minimum"}),
    "splitter, energy +": (_splitter(30e3, LOST), {"energy-imbalance"}),
    "splitter, energy -": (_splitter(-30e3, -LOST), {"energy-imbalance"}),
    "splitter, work": (_splitter(0.0, LOST, P_out=2e5), {"input-below-minimum"}),
}


@pytest.mark.parametrize("case", list(CASES))
def test_each_energy_and_work_margin_function_gives_the_step_margin(case):
    text, expected = CASES[case]
    balance, document = parse_balance("balance: {name: margins}\n" + text, "margins.yaml")
    solution = solve(balance, document)
    (result,) = solution.results
    T0 = balance.balance.dead_state.T
    laws = [f for f in solution.findings if f.name in LAW_FINDINGS]
    assert expected <= {f.name for f in laws}, solution.findings
    assert reference_shift(result, solution.streams, {})[0] != 0.0  # the shift is read
    for finding in laws:
        assert finding.tolerance_rule == ROUNDING
        margin = margin_function(finding, result, solution.streams, T0)
        assert margin is not None, finding
        assert margin(result, solution.streams) == pytest.approx(finding.margin, rel=1e-9)
    assert {f.name for f in laws} & {*ENERGY_FINDINGS, *WORK_FINDINGS}


def test_a_vented_mixer_is_one_group_of_its_fluid():
    # two inlets and two outlets of one fluid, but the vent is no inlet's outlet
    balance, document = parse_balance(
        "balance: {name: margins}\n" + _mixer(30e3, LOST, vent=True), "margins.yaml"
    )
    solution = solve(balance, document)
    (result,) = solution.results
    assert flow_groups(result, solution.streams) == [(("Ai0", "Ai1"), ("Ao0", "Av0"))]


def test_a_tower_whose_air_takes_up_water_says_its_rounding_was_not_propagated():
    """Humid air and water are one group of the mass-conserving reading, read per conserved part
    (water, dry air); the review does not yet follow a change of one written flow through those
    parts: not propagated, and said. (The water left 0.1 K warm is a real energy imbalance of about
    42 kW; the lost 0.05 kg/s, priced at water's enthalpy, creates no work-bound finding.)"""
    balance, document = parse_balance("balance: {name: tower}\n" + _cooling_tower(), "tower.yaml")
    solution = solve(balance, document)
    (result,) = solution.results
    laws = [f for f in solution.findings if f.name in LAW_FINDINGS]
    assert {f.name for f in laws} == {"energy-imbalance"}
    for finding in laws:
        assert margin_function(finding, result, solution.streams, 298.15) is None
    reviewed = [f for f in audit_balance(balance, document).findings if f.name in LAW_FINDINGS]
    assert {f.name for f in reviewed} == {"energy-imbalance"}
    words = (
        "the rounding of the written values was not propagated: humid air exchanges water with the "
        "step's water streams, and a change of one written flow cannot yet be followed through it"
    )
    for finding in reviewed:
        assert finding.tolerance_basis.startswith(words + " + property-method allowance")
        assert finding.message.endswith(f"({words}; judged on the allowance alone.)")
        assert finding.rounding_bound is None


def test_a_step_without_a_result_says_its_rounding_was_not_propagated():
    balance, document = _printed("1.814e+06")
    solution = solve(balance, document)
    kept, _ = review_rounding(StepRunner(solution), solution.findings, {})
    (finding,) = kept
    assert finding.message.endswith(
        "(the rounding of the written values was not propagated: its step could not be evaluated "
        "again; judged on the allowance alone.)"
    )


def test_written_values_that_cannot_be_re_evaluated_are_counted(monkeypatch):
    balance, document = _printed("1.817e+06")
    solution = solve(balance, document)

    def some_fail(f, x, u):
        found = propagate(f, x, u)
        return replace(found, contributions=[None, None, *found.contributions[2:]])

    monkeypatch.setattr(rounding, "propagate", some_fail)
    (finding,) = solution.findings
    verdict = assess_rounding(StepRunner(solution), 0, [(0, finding)], solution.results[0])
    assert "; 2 written values could not be re-evaluated and are left out) + " in (
        verdict[0].tolerance_basis
    )


def test_a_measured_tower_says_its_finding_has_no_uncertainty_verdict():
    """The same tower as a measured balance (declared uncertainties): its energy-imbalance cannot be
    followed through a re-evaluation either, so it says it stands without an uncertainty verdict —
    never a finding silently left without one."""
    head = (
        "balance:\n  name: tower\n  uncertainty: {basis: measured, temperature: 0.1 K, "
        "pressure: 0.25 %, flow: 1 %, power: 0.5 %}\n"
    )
    balance, document = parse_balance(head + _cooling_tower(), "tower.yaml")
    findings = [f for f in audit_balance(balance, document).findings if f.name == "energy-imbalance"]
    assert findings
    for finding in findings:
        assert finding.verdict is None
        assert "the uncertainty of the readings was not propagated" in finding.message
        assert finding.message.endswith("it stands without an uncertainty verdict)")
