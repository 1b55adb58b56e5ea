"""Writing the findings workbook's file: openpyxl's parts with each formula's cached value, fixed
entry and document times (the same result gives the same bytes). Used by
:mod:`audit.report.workbook`, which writes the bytes with :mod:`audit.report.files`."""

from __future__ import annotations

import io
import re
import zipfile
from datetime import datetime
from typing import BinaryIO

from openpyxl import Workbook
from openpyxl.writer.excel import ExcelWriter

from audit.results import AuditResult

_ZIP_EPOCH = (1980, 1, 1, 0, 0, 0)  # the earliest time a zip entry can hold


def run_time(result: AuditResult) -> datetime:
    """The run time recorded in ``result.provenance`` ("run at (UTC)"), naive UTC; the zip epoch
    (1980-01-01) when it is missing, so the file stays reproducible."""
    text = result.provenance.get("run at (UTC)", "")
    try:
        when = datetime.strptime(text, "%Y-%m-%d %H:%M:%S")
    except ValueError:
        when = datetime(*_ZIP_EPOCH)
    return max(when, datetime(*_ZIP_EPOCH))


def package(
    wb: Workbook, formulas: dict[str, list[tuple[str, float]]], when: datetime, stream: BinaryIO
) -> None:
    """Write the workbook to ``stream``: openpyxl's parts, with cached formula values and fixed
    entry times."""
    raw = io.BytesIO()
    with zipfile.ZipFile(raw, "w", zipfile.ZIP_DEFLATED, allowZip64=True) as archive:
        ExcelWriter(wb, archive).write_data()  # save_workbook would stamp 'modified' with now
    parts = {ws.path.lstrip("/"): formulas.get(ws.title, []) for ws in wb.worksheets}
    stamp = when.timetuple()[:6]
    with (
        zipfile.ZipFile(raw) as source,
        zipfile.ZipFile(stream, "w", zipfile.ZIP_DEFLATED, allowZip64=True) as target,
    ):
        for info in source.infolist():
            content = source.read(info.filename)
            if parts.get(info.filename):
                content = cache_formula_values(content, parts[info.filename])
            entry = zipfile.ZipInfo(info.filename, date_time=stamp)
            entry.compress_type = zipfile.ZIP_DEFLATED
            entry.create_system = 0
            target.writestr(entry, content)


def cache_formula_values(xml: bytes, cached: list[tuple[str, float]]) -> bytes:
    """Put each formula cell's value into its empty ``<v/>`` (openpyxl writes none)."""
    text = xml.decode("utf-8")
    values: dict[str, str] = {}
    for coordinate, value in cached:
        values.setdefault(coordinate, f"<v>{float(value)!r}</v>")

    def fill(match: re.Match) -> str:
        # the first formula cell of each coordinate takes its value (one pass over the sheet)
        value = values.pop(match.group(2), None)
        return match.group(0) if value is None else match.group(1) + value

    # A coordinate without a match: an openpyxl that writes cells differently; the formula stays
    # uncached and spreadsheet programs still compute it on load (the tests catch the change).
    return _FORMULA_CELL.sub(fill, text).encode("utf-8")


_FORMULA_CELL = re.compile(r'(<c r="([A-Z]+[0-9]+)"[^>]*><f>[^<]*</f>)(?:<v\s*/>|<v></v>)')
