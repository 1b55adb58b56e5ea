"""Electrolyser: electrical work splits a compound (water, by default) into its products.

Claims: ``power`` (the stack's DC power absorbed), ``cell_voltage``, ``current`` (through each
cell), ``cells`` (in series), ``faradaic_efficiency``, ``heat`` (e.g. the heat removed by the
stack's cooling, with its temperature; omit it to infer it from the first law), ``temperature``
and ``pressure`` of the cells, ``reaction`` (default ``H2O(l) -> H2 + 1/2 O2`` for a liquid water
feed, ``H2O -> H2 + 1/2 O2`` for steam) and ``electrons`` (default 4 per mole of O2).

Checks (:mod:`audit.steps.cells`): the element balance; the laws on the formation basis, whose work
bound is the Gibbs-energy minimum (``input-below-minimum``); the cell voltage not below the
reversible voltage (``voltage-beyond-reversible``); below the thermoneutral voltage, the heat the
cells need shown in the balance (``heat-needed-below-thermoneutral``); Faraday's law
(``faraday-mismatch``); power = V × I × cells (``power-mismatch``).
"""

from __future__ import annotations

from typing import Literal

from audit.results import StepResult
from audit.steps.base import StepContext, register
from audit.steps.cells import ELECTROLYSER, CellStep, evaluate_cell


class Electrolyser(CellStep):
    kind: Literal["electrolyser"]


def evaluate(step: Electrolyser, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) on the
    formation basis and the cell checks of :mod:`audit.steps.cells` (voltage against the reversible
    voltage, heat below the thermoneutral voltage, Faraday's law, power = V I N) to an electrolyser.

    Sign convention: Q is heat into the step, W is work delivered by the step: the electrical power
    absorbed is W < 0.
    """
    return evaluate_cell(step, ctx, ELECTROLYSER)


register(
    "electrolyser",
    Electrolyser,
    evaluate,
    "electrolyser: electrical work splits water (or another reaction)",
)
