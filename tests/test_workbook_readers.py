"""The workbook's column readers (``audit.report.sheets.context.cell_reader``) give what
``cell_value`` gives, for every column of the Streams and Steps sheets, on flow steps and on a
vessel (whose energy columns are totals): the large sheets read their cells through them."""

from __future__ import annotations

import math

import pytest
from conftest import SAMPLE

import audit
from audit.report.columns import STEPS, STREAMS, VESSEL_QUANTITY
from audit.report.sheets.context import cell_reader, cell_value
from audit.results import StepResult, StreamResult

VESSEL = """\
balance:
  name: one vessel
steps:
  - id: V1
    kind: vessel
    fluid: Water
    mass: 100 kg
    initial: {T: 20 degC, P: 1 bar}
    final: {T: 80 degC, P: 1 bar}
    heat:
      - added: 25120 kJ
"""


def _same(a, b) -> bool:
    if isinstance(a, float) and isinstance(b, float) and math.isnan(a) and math.isnan(b):
        return True
    return type(a) is type(b) and a == b


@pytest.fixture(scope="module")
def seeded():
    return audit.run(SAMPLE / "quillon-bay-seeded.yaml")


def test_stream_readers_agree_with_cell_value(seeded):
    checked = 0
    for column in STREAMS.sheet_columns():
        if not column.machine:
            continue
        for record in (None, StreamResult):
            read = cell_reader(column, record=record)
            for stream in seeded.streams:
                assert _same(read(stream), cell_value(column, stream)), (column.key, stream.id)
                checked += 1
    assert checked > 500


@pytest.mark.parametrize("source", ["seeded", "vessel"])
def test_step_readers_agree_with_cell_value(seeded, tmp_path, source):
    if source == "vessel":
        path = tmp_path / "vessel.yaml"
        path.write_text(VESSEL, encoding="utf-8")
        steps = audit.run(path).steps
        assert all(s.batch for s in steps)
    else:
        steps = seeded.steps
    for column in STEPS.sheet_columns():
        if column.key in ("findings", "basis", "residual_formula"):
            continue  # written by the sheet itself
        for step in steps:
            quantity = column.quantity
            if step.batch and quantity in VESSEL_QUANTITY:
                quantity = VESSEL_QUANTITY[quantity]
            read = cell_reader(column, quantity, StepResult)
            expected = cell_value(column, step, quantity)
            assert _same(read(step), expected), (column.key, step.id)
