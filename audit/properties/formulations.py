"""Formulations (equations of state) a fluid may be evaluated on, and their citations.

Every fluid is evaluated on its reference equation of state, CoolProp's HEOS back end [1]
(IAPWS-95 for water [2]). Water and steam may instead be evaluated on IAPWS-IF97 [3], the
industrial formulation, through CoolProp's ``IF97`` back end, when a balance declares
``formulation: IF97``.

CoolProp's IF97 back end finds T from (P, h) and (P, s) with the IF97 backward equations, which are
consistent with the forward equations only to about 25 mK in region 1 [3]; :func:`refine` corrects
T with Newton steps on the forward equation T, P → h (or s), so that a state fixed by (P, h) returns
the h it was given.

References
----------
.. [1] I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, Ind. Eng. Chem. Res. 53 (2014) 2498–2508.
.. [2] W. Wagner, A. Pruß, J. Phys. Chem. Ref. Data 31 (2002) 387–535 (IAPWS R6-95).
.. [3] W. Wagner et al., "The IAPWS industrial formulation 1997 for the thermodynamic properties of
   water and steam", J. Eng. Gas Turbines Power 122 (2000) 150–182 (IAPWS R7-97).
"""

from __future__ import annotations

from audit.errors import StateError
from audit.model.references import FORMULATION_FLUIDS
from audit.properties.library import CP, new_state

BACKENDS = {"reference": "HEOS", "IF97": "IF97"}
"""CoolProp back end of each formulation."""

_CITATIONS = {
    ("Water", "reference"): "IAPWS-95 (Wagner & Pruß, J. Phys. Chem. Ref. Data 31 (2002) 387)",
    ("Water", "IF97"): "IAPWS-IF97 (Wagner et al., J. Eng. Gas Turbines Power 122 (2000) 150)",
    ("R134a", "reference"): "Tillner-Roth & Baehr, J. Phys. Chem. Ref. Data 23 (1994) 657",
}
"""Citations written out for the fluids the tests and the README name; others give CoolProp's key."""

FORMULATION_SPREAD = {"Water": {"h": 2e-4, "u": 2e-4, "other": 1e-3}}
"""The known relative difference between the formulations of a fluid, by property (common
practice, measured over IF97 regions 1, 2 and 5: IAPWS-95 and IF97 differ by up to 9e-5 in h and
1e-3 in the other properties away from the critical point)."""

NUMERICAL = 1e-8
"""Relative difference allowed between a published verification value and the same formulation
through CoolProp (CoolProp HEOS vs R6-95 tables ≤ 1.7e-9, IF97 vs R7-97 ≤ 3e-9)."""


def open_state(name: str, formulation: str) -> CP.AbstractState:
    """A CoolProp state object for fluid ``name`` (canonical CoolProp name) on ``formulation``;
    :class:`StateError` when the formulation does not exist for the fluid."""
    if formulation != "reference" and name not in FORMULATION_FLUIDS.get(formulation, ()):
        raise StateError(
            f"the formulation {formulation} exists for "
            f"{', '.join(sorted(FORMULATION_FLUIDS.get(formulation, ())))} only, not for {name}"
        )
    return new_state(BACKENDS[formulation], name)


def citation(name: str, formulation: str) -> str:
    """The equation of state of ``name`` on ``formulation``, with its citation, as one line."""
    known = _CITATIONS.get((name, formulation))
    if known is not None:
        return f"{known}, CoolProp {BACKENDS[formulation]}"
    try:
        key = CP.get_fluid_param_string(name, "BibTeX-EOS")
    except ValueError:  # pragma: no cover - every CoolProp fluid has one
        key = "unknown"
    return f"CoolProp {BACKENDS[formulation]} equation of state ({key})"


def refine(state: CP.AbstractState, pair: str, P: float, target: float) -> None:
    """Newton steps on T at fixed P [Pa] until h [J/kg] (``pair`` ``"Ph"``) or s [J/(kg K)]
    (``"Ps"``) of the forward equation equals ``target``: dT = Δh/c_p, or dT = T Δs/c_p."""
    if state.phase() == CP.iphase_twophase:
        return
    for _ in range(6):
        value = state.hmass() if pair == "Ph" else state.smass()
        if abs(value - target) <= 1e-11 * max(1.0, abs(target)):
            return
        T = state.T()
        step = (target - value) / state.cpmass()
        state.update(CP.PT_INPUTS, P, T + (step if pair == "Ph" else step * T))
