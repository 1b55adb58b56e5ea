"""The Heat flows sheet: every heat flow across a step's boundary, with its boundary temperature
and whether it was declared, claimed or inferred."""

from __future__ import annotations

import math

from audit.report.display import shown, unit
from audit.report.sheets.context import HEAT, RATE_BASIS, STEPS, TOTAL_BASIS, Book
from audit.report.workbook_cells import FORMATS, location, with_unit


def write(book: Book) -> None:
    sh = book.sheets[HEAT]
    sh.header(
        [
            "step",
            "basis",
            "Q heat in [kW | vessel kJ]",
            "boundary temperature [°C]",
            "boundary",
            "claimed or inferred",
            "note",
        ]
    )
    row = 2
    for s in book.result.steps:
        energy_q = "energy" if s.batch else "power"
        for q in s.heat_flows:
            sh.put(row, 1, s.id, link=location(STEPS, book.step_row[s.id]))
            sh.put(row, 2, TOTAL_BASIS if s.batch else RATE_BASIS)
            sh.put(row, 3, shown(q.Q, energy_q), fmt=with_unit(FORMATS[energy_q], unit(energy_q)))
            if math.isinf(q.temperature):
                sh.put(row, 5, "an infinitely hot source (no temperature declared)")
            else:
                sh.put(row, 4, shown(q.temperature, "temperature"), fmt=FORMATS["temperature"])
                sh.put(
                    row,
                    5,
                    "declared"
                    if "conservative" not in q.note
                    else "conservative choice (none declared)",
                )
            sh.put(row, 6, "claimed" if q.claimed else "inferred from the first law")
            sh.put(row, 7, q.note)
            row += 1
    if row == 2:
        sh.put(2, 1, "no heat flows")
    sh.table(row - 1)
