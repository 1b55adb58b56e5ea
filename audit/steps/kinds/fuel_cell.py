"""Fuel cell: a reaction (hydrogen with oxygen, by default) delivers electrical work.

Claims: ``power`` (the stack's DC power delivered), ``cell_voltage``, ``current`` (through each
cell), ``cells`` (in series), ``faradaic_efficiency`` (the current over n F times the fuel
consumed), ``heat`` (the heat removed, with its temperature; omit it to infer it from the first
law), ``temperature`` and ``pressure`` of the cells, ``reaction`` (default ``H2 + 1/2 O2 ->
H2O(l)`` when the product water leaves as a liquid stream, ``H2 + 1/2 O2 -> H2O`` otherwise) and
``electrons`` (default 4 per mole of O2).

Checks (:mod:`audit.steps.cells`): the element balance; the laws on the formation basis, whose work
bound is −ΔG of the reaction (``work-above-bound``); the cell voltage not above the reversible
voltage (``voltage-beyond-reversible``); Faraday's law (``faraday-mismatch``); power = V × I ×
cells (``power-mismatch``).
"""

from __future__ import annotations

from typing import Literal

from audit.results import StepResult
from audit.steps.base import StepContext, register
from audit.steps.cells import FUEL_CELL, CellStep, evaluate_cell


class FuelCell(CellStep):
    kind: Literal["fuel_cell"]


def evaluate(step: FuelCell, ctx: StepContext) -> StepResult:
    """Apply the laws of every step (mass, first law, work bound, entropy generation) on the
    formation basis and the cell checks of :mod:`audit.steps.cells` (voltage against the reversible
    voltage, Faraday's law, power = V I N) to a fuel cell.

    Sign convention: Q is heat into the step, W is work delivered by the step: the electrical power
    delivered is W > 0.
    """
    return evaluate_cell(step, ctx, FUEL_CELL)


register(
    "fuel_cell",
    FuelCell,
    evaluate,
    "fuel cell: a reaction (hydrogen with oxygen) delivers electrical work",
)
