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
from audit.results import StreamResult

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
    # the columns written below one by one, and the others: plain cells, each column's reader and
    # number format decided once
    at = {c.key: col for col, c in enumerate(columns, start=1)}
    own = ("id", "findings", "from_step", "to_step")
    plans = [
        (
            col,
            cell_reader(column, record=StreamResult),
            column.fmt or (FORMATS[column.quantity] if column.quantity else None),
            column.wrap,
        )
        for col, column in enumerate(columns, start=1)
        if column.key not in own
    ]
    plain = sh.plain
    for row, s in enumerate(book.result.streams, start=2):
        worst_severity = worst(stream_findings.get(s.id, []))
        fill = FILLS[worst_severity] if worst_severity else None
        sh.put(row, at["id"], s.id, fill=fill)
        if worst_severity:
            sh.put(
                row,
                at["findings"],
                marker(worst_severity, len(stream_findings[s.id])),
                fill=fill,
                link=location(FINDINGS, book.first_finding_row[("stream", s.id)]),
            )
        else:
            plain(row, at["findings"], blame_note(blamed.get(s.id)) or "none")
        for key, steps_of in (("from_step", producer), ("to_step", consumer)):
            step_id = steps_of.get(s.id)
            if step_id:
                sh.put(row, at[key], step_id, link=location(STEPS, book.step_row[step_id]))
        for col, read, fmt, wrap in plans:
            plain(row, col, read(s), fmt, wrap)
    sh.table(len(book.result.streams) + 1)
