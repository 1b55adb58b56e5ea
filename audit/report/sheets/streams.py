"""The Streams sheet: every stream's state and flow, its columns from the column registry
(:data:`audit.report.columns.STREAMS`); the step that makes a stream and the step that takes it
link to their rows."""

from __future__ import annotations

from audit.findings import Finding
from audit.report.blame import blame_note, blamed_streams
from audit.report.columns import STREAMS as COLUMNS
from audit.report.sheets.context import (
    FINDINGS,
    STEPS,
    STREAMS,
    Book,
    cell_reader,
    marker,
    worst,
)
from audit.report.workbook_cells import FILLS, FORMATS, location

WIDTHS = {"description": 32}


def write(book: Book) -> None:
    sh = book.sheets[STREAMS]
    columns = COLUMNS.sheet_columns()
    sh.header(COLUMNS.headers())
    for key, width in WIDTHS.items():
        sh.fix(COLUMNS.sheet_order.index(key) + 1, width)
    steps = book.result.steps
    producer = {o: s.id for s in steps for o in s.outlets}
    consumer = {i: s.id for s in steps for i in s.inlets}
    blamed = blamed_streams(book.result)
    stream_findings: dict[str, list[Finding]] = {}
    for f in book.result.findings:
        if f.stream:
            stream_findings.setdefault(f.stream, []).append(f)
    # each column's reader and number format, decided once
    plans = [
        (
            column.key,
            cell_reader(column),
            column.fmt or (FORMATS[column.quantity] if column.quantity else None),
            column.wrap,
        )
        for column in columns
    ]
    plain = sh.plain
    for row, s in enumerate(book.result.streams, start=2):
        worst_severity = worst(stream_findings.get(s.id, []))
        fill = FILLS[worst_severity] if worst_severity else None
        for col, (key, read, fmt, wrap) in enumerate(plans, start=1):
            if key == "id":
                sh.put(row, col, s.id, fill=fill)
            elif key == "findings":
                if worst_severity:
                    sh.put(
                        row,
                        col,
                        marker(worst_severity, len(stream_findings[s.id])),
                        fill=fill,
                        link=location(FINDINGS, book.first_finding_row[("stream", s.id)]),
                    )
                else:
                    sh.put(row, col, blame_note(blamed.get(s.id)) or "none")
            elif key in ("from_step", "to_step"):
                step_id = (producer if key == "from_step" else consumer).get(s.id)
                if step_id:
                    sh.put(row, col, step_id, link=location(STEPS, book.step_row[step_id]))
            else:
                plain(row, col, read(s), fmt, wrap)
    sh.table(len(book.result.streams) + 1)
