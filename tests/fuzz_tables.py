"""The table mode of the loader fuzzer (``tests/fuzz_loader.py --tables``): stream tables, as CSV
text and as .xlsx workbooks, drawn by hypothesis and then damaged, read through a balance that names
them. Whatever the table, the only exception allowed is :class:`audit.errors.InputError`.

* CSV: rows of cells from numbers, quantity strings, odd text (quotes, separators, line breaks,
  digits of other scripts, ``inf``, ``1e999``, invisible characters), with ``,`` or ``;`` and the
  balance's ``delimiter`` sometimes matching, sometimes not;
* workbooks: the same rows written by openpyxl (sometimes on a hidden sheet, sometimes with a second
  sheet), then one part of the archive damaged: cut short, bytes replaced, a DOCTYPE with entities
  added, a cell written twice, a dimension inflated, or a part removed.
"""

from __future__ import annotations

import io
import tempfile
import traceback
import zipfile
from pathlib import Path

import openpyxl
from hypothesis import strategies as st

from audit.api import run as audit_run
from audit.errors import InputError

HEADERS = ["id", "fluid", "T [degC]", "P [bar]", "flow [t/h]", "phase", "description", "x [K]", ""]
CELLS = [
    "W1",
    "W2",
    "Water",
    "Air",
    20,
    80.5,
    -5,
    0,
    1e308,
    "1e999",
    "inf",
    "nan",
    "1٠0",
    "３００",
    "12,5",
    "5 bar",
    '"',
    "a\nb",
    ";",
    ",",
    "\u200b",
    "\x00",
    "\ud800",
    "=1/0",
    "#DIV/0!",
    "liquid",
    "N2: 0.79, O2: 0.21",
    None,
    True,
    "x" * 300,
]

_ROW = st.lists(st.sampled_from(CELLS), min_size=0, max_size=8)
_ROWS = st.tuples(st.permutations(HEADERS).map(lambda h: h[:6]), st.lists(_ROW, max_size=5))


def _csv_text(header: list, rows: list[list], separator: str) -> str:
    def cell(value: object) -> str:
        text = "" if value is None else str(value)
        return f'"{text}"' if separator in text and not text.startswith('"') else text

    return "\n".join(separator.join(cell(v) for v in row) for row in [header, *rows]) + "\n"


@st.composite
def csv_tables(draw) -> tuple[str, bytes, str]:
    header, rows = draw(_ROWS)
    separator = draw(st.sampled_from([",", ";"]))
    option = draw(st.sampled_from(["", ", delimiter: ','", ", delimiter: ';'"]))
    text = _csv_text(header, rows, separator)
    data = text.encode("utf-8", errors="surrogatepass")
    if draw(st.booleans()):
        cut = draw(st.integers(0, len(data)))
        data = data[:cut] + draw(st.sampled_from([b'"', b"\xff", b"\r", b"\n\n", b""])) + data[cut:]
    return ".csv", data, option


def _workbook(header: list, rows: list[list], hidden: str | None, second: bool) -> bytes:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "streams"
    for row in [header, *rows]:
        safe = []
        for value in row:
            if isinstance(value, str):
                value = value.encode("utf-8", "replace").decode("utf-8").replace("\x00", "")
                if value.startswith("="):
                    value = value[1:]
            safe.append(value)
        ws.append(safe)
    if second:
        other = wb.create_sheet("other")
        other.append(["id", "fluid"])
    if hidden:
        if not second:
            wb.create_sheet("visible").append(["id"])
        ws.sheet_state = hidden
    out = io.BytesIO()
    wb.save(out)
    return out.getvalue()


def _damage(data: bytes, how: str, position: float) -> bytes:
    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        parts = {info.filename: archive.read(info.filename) for info in archive.infolist()}
    names = sorted(parts)
    name = names[int(position * (len(names) - 1))]
    part = parts[name]
    at = int(position * len(part))
    if how == "cut":
        parts[name] = part[:at]
    elif how == "bytes":
        parts[name] = part[:at] + b"\xff<&\x00" + part[at + 4 :]
    elif how == "doctype":
        parts[name] = b'<!DOCTYPE x [<!ENTITY a "aaaa">]>' + part
    elif how == "twice" and b'<c r="' in part:
        start = part.index(b'<c r="')
        end = part.find(b"</c>", start)
        if end > 0:
            parts[name] = part[: end + 4] + part[start : end + 4] + part[end + 4 :]
    elif how == "dimension":
        parts[name] = part.replace(b'<dimension ref="', b'<dimension ref="A1:XFD1048576" x="')
    elif how == "remove":
        del parts[name]
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        for part_name, content in parts.items():
            archive.writestr(part_name, content)
    return out.getvalue()


@st.composite
def xlsx_tables(draw) -> tuple[str, bytes, str]:
    header, rows = draw(_ROWS)
    hidden = draw(st.sampled_from([None, None, "hidden", "veryHidden"]))
    data = _workbook(header, rows, hidden, draw(st.booleans()))
    how = draw(
        st.sampled_from(["none", "none", "cut", "bytes", "doctype", "twice", "dimension", "remove"])
    )
    if how != "none":
        data = _damage(data, how, draw(st.floats(0, 1)))
    option = draw(st.sampled_from(["", ", sheet: streams", ", sheet: other"]))
    return ".xlsx", data, option


TABLES = csv_tables() | xlsx_tables()


def check_table(table: tuple[str, bytes, str]) -> str | None:
    """Audit a balance whose streams come from the drawn table; None when it passes or raises
    InputError, else the traceback of the other exception."""
    suffix, data, option = table
    with tempfile.TemporaryDirectory() as folder:
        (Path(folder) / f"streams{suffix}").write_bytes(data)
        balance = Path(folder) / "balance.yaml"
        balance.write_text(
            "balance: {name: fuzzed table, site_pressure: 1.013 bar}\n"
            f"streams_from: {{file: streams{suffix}{option}}}\n"
            "steps:\n  - {id: V1, kind: valve, inlet: W1, outlet: W2}\n",
            encoding="utf-8",
        )
        try:
            audit_run(balance)
        except InputError as exc:
            return None if str(exc) else "an InputError without a message"
        except Exception:
            return traceback.format_exc()
    return None
