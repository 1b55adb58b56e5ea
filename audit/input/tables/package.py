"""A workbook's package checked before any spreadsheet library reads it.

An .xlsx file is a zip archive of XML parts. A hostile or broken one can declare parts that expand
to gigabytes (a zip bomb), a sheet of millions of cells in a few hundred kilobytes, XML entities
(entity expansion, external entities), or the same cell twice. :func:`check_package` reads the
archive's directory and streams each part once, with bounded memory, and refuses all of these with a
message naming the table, before the workbook is loaded. It also says which sheets are hidden, so
that a hidden sheet is never read in place of a visible one.
"""

from __future__ import annotations

import io
import posixpath
import re
import zipfile
from collections.abc import Callable
from dataclasses import dataclass
from xml.etree import ElementTree as ET

MAX_UNCOMPRESSED = 200 * 2**20
"""Largest total size of a workbook's parts once uncompressed [bytes] (a workbook of a few
thousand cells is well under 1 MiB)."""
MAX_RATIO = 200
"""Largest compression ratio of a part: ordinary XML compresses 5 to 20 times; a part that expands
more than this is a zip bomb."""
_CHUNK = 1 << 16
_DECLARATION = re.compile(rb"<!(?:DOCTYPE|ENTITY)", re.IGNORECASE)
_NS = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
_REL = "{http://schemas.openxmlformats.org/officeDocument/2006/relationships}id"
_CELL_REF = re.compile(r"^([A-Z]{1,3})([0-9]{1,7})$")

Fail = Callable[[str], Exception]


@dataclass(frozen=True)
class SheetInfo:
    """A sheet as the workbook declares it: its name, its state and its part in the archive."""

    name: str
    state: str  # "visible", "hidden" or "veryHidden"
    part: str | None


def check_package(raw: bytes, display: str, max_cells: int, fail: Fail) -> list[SheetInfo]:
    """Check the archive of a workbook (see the module docstring) and return its sheets in order."""
    try:
        archive = zipfile.ZipFile(io.BytesIO(raw))
        members = archive.infolist()
    except (zipfile.BadZipFile, OSError, ValueError, EOFError) as exc:
        raise fail(f"the table '{display}' cannot be read as an .xlsx workbook ({exc})") from None
    total = sum(m.file_size for m in members)
    if total > MAX_UNCOMPRESSED:
        raise fail(
            f"the workbook '{display}' expands to {total / 2**20:,.0f} MiB, more than the "
            f"{MAX_UNCOMPRESSED / 2**20:.0f} MiB a table may hold"
        )
    for member in members:
        if member.file_size > 1 << 20 and member.file_size > MAX_RATIO * max(member.compress_size, 1):
            raise fail(
                f"the part '{member.filename}' of the workbook '{display}' expands "
                f"{member.file_size / max(member.compress_size, 1):,.0f} times; refusing it as "
                "a zip bomb"
            )
    sheets = _sheets(archive, display, fail)
    for member in members:
        if member.filename.endswith((".xml", ".rels", ".vml")):
            _scan(archive, member, display, fail)
    for sheet in sheets:
        if sheet.part is not None:
            _cells(archive, sheet, display, max_cells, fail)
    return sheets


def _read(archive: zipfile.ZipFile, name: str, display: str, fail: Fail) -> bytes:
    try:
        return archive.read(name)
    except (KeyError, zipfile.BadZipFile, OSError, ValueError, EOFError) as exc:
        raise fail(f"the workbook '{display}' has a broken part '{name}' ({exc})") from None


def _sheets(archive: zipfile.ZipFile, display: str, fail: Fail) -> list[SheetInfo]:
    """The sheets of ``xl/workbook.xml`` with the archive part of each (through its relations)."""
    names = set(archive.namelist())
    if "xl/workbook.xml" not in names:
        return []  # not a workbook openpyxl reads: its own error says so
    workbook = _read(archive, "xl/workbook.xml", display, fail)
    rels_name = "xl/_rels/workbook.xml.rels"
    rels = _read(archive, rels_name, display, fail) if rels_name in names else b""
    for part in (workbook, rels):
        if _DECLARATION.search(part):
            raise _declaration(display, fail)
    try:
        targets: dict[str | None, str] = {}
        if rels:
            for rel in ET.fromstring(rels):
                target = rel.get("Target", "")
                where = target.lstrip("/") if target.startswith("/") else posixpath.join("xl", target)
                targets[rel.get("Id")] = posixpath.normpath(where)
        found = []
        for sheet in ET.fromstring(workbook).iter(f"{_NS}sheet"):
            sheet_part = targets.get(sheet.get(_REL))
            found.append(
                SheetInfo(
                    sheet.get("name", ""),
                    sheet.get("state", "visible"),
                    sheet_part if sheet_part in names else None,
                )
            )
    except ET.ParseError as exc:
        raise fail(f"the workbook '{display}' has a malformed part ({exc})") from None
    return found


def _declaration(display: str, fail: Fail) -> Exception:
    return fail(
        f"the workbook '{display}' declares XML entities (a DOCTYPE), which no spreadsheet "
        "program writes; refusing it"
    )


def _scan(archive: zipfile.ZipFile, member: zipfile.ZipInfo, display: str, fail: Fail) -> None:
    """Stream one part looking for a DOCTYPE or ENTITY declaration (bounded memory)."""
    tail = b""
    try:
        with archive.open(member) as handle:
            while chunk := handle.read(_CHUNK):
                if _DECLARATION.search(tail + chunk):
                    raise _declaration(display, fail)
                tail = chunk[-16:]
    except (zipfile.BadZipFile, OSError, ValueError, EOFError) as exc:
        raise fail(f"the workbook '{display}' has a broken part '{member.filename}' ({exc})") from None


def _cells(archive: zipfile.ZipFile, sheet: SheetInfo, display: str, max_cells: int, fail: Fail) -> None:
    """Stream a sheet's XML: refuse a declared or real size over ``max_cells``, a cell written
    twice, and XML that does not parse (a truncated part)."""
    assert sheet.part is not None
    seen: set[str] = set()
    count = 0
    try:
        with archive.open(sheet.part) as handle:
            for _, element in ET.iterparse(handle, events=("end",)):
                tag = element.tag
                if tag == f"{_NS}dimension":
                    _declared(element.get("ref", ""), sheet, display, max_cells, fail)
                elif tag == f"{_NS}c":
                    count += 1
                    if count > max_cells:
                        raise fail(
                            f"the sheet '{sheet.name}' of '{display}' holds more than "
                            f"{max_cells:,} cells, more than a table may have"
                        )
                    ref = element.get("r")
                    if ref is not None:
                        if ref in seen:
                            raise fail(
                                f"the sheet '{sheet.name}' of '{display}' writes cell {ref} twice; "
                                "the file is damaged or was edited by hand (save it again from a "
                                "spreadsheet program)"
                            )
                        seen.add(ref)
                    element.clear()
                elif tag == f"{_NS}row":
                    element.clear()
    except ET.ParseError as exc:
        raise fail(
            f"the sheet '{sheet.name}' of '{display}' is not well-formed XML ({exc}); the file is "
            "damaged or truncated"
        ) from None
    except (zipfile.BadZipFile, OSError, EOFError) as exc:
        raise fail(f"the workbook '{display}' has a broken part '{sheet.part}' ({exc})") from None


def _declared(ref: str, sheet: SheetInfo, display: str, max_cells: int, fail: Fail) -> None:
    """Refuse a sheet whose declared dimension (``A1:Z100000``) spans more than ``max_cells``."""
    corners = [_CELL_REF.match(part) for part in ref.split(":")]
    if len(corners) != 2 or not all(corners):
        return
    (a_col, a_row), (b_col, b_row) = (m.groups() for m in corners)  # type: ignore[union-attr]
    width = abs(_column_number(b_col) - _column_number(a_col)) + 1
    height = abs(int(b_row) - int(a_row)) + 1
    if width * height > max_cells:
        raise fail(
            f"the sheet '{sheet.name}' of '{display}' spans {height:,} rows and {width:,} "
            f"columns, more than the {max_cells:,} cells a table may have; delete the unused rows "
            "and columns"
        )


def _column_number(letters: str) -> int:
    number = 0
    for letter in letters:
        number = number * 26 + ord(letter) - ord("A") + 1
    return number
