"""Stream and claim tables (audit.input.tables): a balance whose streams live in a spreadsheet audits to
the same results as the same balance written out in YAML, and every malformed table is refused with
a message that names the file, the sheet and the cell.

The oracle of the equivalence tests is the all-YAML clean revision of the sample site, audited by
the same code: the table path must change nothing but where the values were written."""

from __future__ import annotations

import copy
import csv
import importlib.util
import io
import re
import zipfile
from datetime import datetime
from pathlib import Path

import openpyxl
import pytest
import yaml
from conftest import SAMPLE
from openpyxl.worksheet.worksheet import Worksheet

import audit
from audit.commands.convert import resolved_yaml
from audit.commands.main import main
from audit.errors import InputError
from audit.input.document import load_document
from audit.input.tables import CLAIM_HEADERS, column_letter, resolve, table_rows
from audit.model.table_columns import stream_kinds, stream_template_headers
from audit.reading import json_schema, load_balance
from audit.report.machine import to_dict

CLEAN = SAMPLE / "quillon-bay-clean.yaml"
TABLE_BALANCE = SAMPLE / "quillon-bay-table.yaml"
TABLE_FILE = SAMPLE / "quillon-bay-streams.xlsx"

HEADER = """\
balance:
  name: table test
  site_pressure: 1.013 bar
"""


# -- helpers -------------------------------------------------------------------------------------
def comparable(result) -> dict:
    """The JSON of a result without what depends on where the input was written (file names,
    hashes, line numbers) or when it ran (provenance)."""

    def strip(value):
        if isinstance(value, dict):
            return {
                k: strip(v)
                for k, v in value.items()
                if k not in ("file", "sha256", "provenance", "line")
            }
        if isinstance(value, list):
            return [strip(v) for v in value]
        return value

    data = strip(to_dict(result))
    data["streams"] = sorted(data["streams"], key=lambda s: s["id"])
    return data


def write_xlsx(
    path: Path, rows: list[list], sheet: str = "streams", more: dict[str, list[list]] | None = None
) -> Worksheet:
    """Write rows (None for an empty cell) to a one-sheet workbook; return the sheet (for merges,
    which the caller applies before calling ``save_again``)."""
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = sheet
    for row in rows:
        ws.append(row)
    for name, extra_rows in (more or {}).items():
        extra = wb.create_sheet(name)
        for row in extra_rows:
            extra.append(row)
    wb.save(path)
    return ws


def balance_file(
    tmp_path: Path, source: str, body: str = "", name: str = "balance.yaml", header: str = HEADER
) -> Path:
    path = tmp_path / name
    path.write_text(header + source + "\n" + body, encoding="utf-8")
    return path


STREAMS = [
    ["id", "fluid", "T [degC]", "P [bar]", "flow [t/h]", "phase", "description"],
    ["W1", "Water", 20, 5, 10.8, "liquid", "cold water"],
    ["W2", "Water", 80, 4.5, 10.8, "liquid", "warm water"],
]


def error_text(excinfo) -> str:
    return str(excinfo.value)


# -- the sample site -----------------------------------------------------------------------------
def test_table_variant_audits_exactly_like_the_yaml_revision():
    from_yaml = audit.run(CLEAN)
    from_table = audit.run(TABLE_BALANCE)
    assert comparable(from_table) == comparable(from_yaml)
    assert len(from_table.streams) == len(load_document(CLEAN).data["streams"])
    provenance = from_table.provenance
    assert any(key.startswith("table ") and "quillon-bay-streams.xlsx" in key for key in provenance), (
        provenance
    )


def test_table_variant_passes_on_the_command_line(capsys):
    assert main(["check", str(TABLE_BALANCE), "--brief"]) == 0
    assert "0 error, 0 warning" in capsys.readouterr().out


def _script():
    spec = importlib.util.spec_from_file_location("make_stream_table", SAMPLE / "make_stream_table.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def _grid(path: Path) -> dict[str, list[tuple]]:
    wb = openpyxl.load_workbook(path)
    return {ws.title: list(ws.iter_rows(values_only=True)) for ws in wb.worksheets}


def test_committed_table_variant_is_what_the_script_writes(tmp_path):
    # If this fails, the clean revision changed: run `python sample_plant/make_stream_table.py`.
    table, balance = tmp_path / TABLE_FILE.name, tmp_path / TABLE_BALANCE.name
    _script().write(CLEAN, table, balance)
    assert balance.read_text(encoding="utf-8") == TABLE_BALANCE.read_text(encoding="utf-8")
    assert _grid(table) == _grid(TABLE_FILE)
    assert table.read_bytes() == TABLE_FILE.read_bytes()  # reproducible bytes


def test_table_variant_keeps_in_yaml_only_what_the_table_cannot_hold():
    data = load_document(TABLE_BALANCE).data
    assert data["streams_from"] == {"file": TABLE_FILE.name, "sheet": "streams"}
    clean_streams = load_document(CLEAN).data["streams"]
    _, rows, left_out = table_rows(clean_streams, stream_template_headers(), stream_kinds())
    assert set(data.get("streams", {})) == set(left_out)
    assert len(rows) + len(left_out) == len(clean_streams)
    assert len(rows) > len(left_out)  # the table variant is mostly a table


# -- well-formed tables --------------------------------------------------------------------------
def test_header_units_become_quantity_strings(tmp_path):
    write_xlsx(tmp_path / "streams.xlsx", STREAMS)
    path = balance_file(tmp_path, "streams_from: streams.xlsx")
    balance, document = load_balance(path)
    assert document.data["streams"]["W1"] == {
        "fluid": "Water",
        "T": "20 degC",
        "P": "5 bar",
        "flow": "10.8 t/h",
        "phase": "liquid",
        "description": "cold water",
    }
    # 20 degC = 293.15 K (the definition of the Celsius scale); 10.8 t/h = 3 kg/s exactly.
    assert balance.streams["W1"].T == pytest.approx(293.15, abs=1e-12)
    assert balance.streams["W1"].flow.value == pytest.approx(3.0, rel=1e-12)


def test_empty_rows_trailing_blank_columns_and_title_rows_are_ignored(tmp_path):
    rows = [
        ["Quillon Bay heat balance, revision C"],  # a title block above the table
        [],
        [*STREAMS[0], None, None],
        [*STREAMS[1], None, ""],
        [None, None, None],
        [],
        [*STREAMS[2], "   "],
    ]
    ws = write_xlsx(tmp_path / "streams.xlsx", rows)
    ws.parent.active["J20"].number_format = "0.00"  # formatted but empty: the used range grows
    ws.merge_cells("A1:E1")  # a merged title above the headers is fine
    ws.parent.save(tmp_path / "streams.xlsx")
    path = balance_file(tmp_path, "streams_from: {file: streams.xlsx, header_row: 3}")
    result = audit.run(path)
    assert [s.id for s in result.streams] == ["W1", "W2"]


def test_column_map_reads_headers_of_another_form(tmp_path):
    rows = [
        ["Stream", "Medium", "Temp (C)", "Press", "Mass flow", "remarks"],
        ["W1", "Water", 20, 5, 3, "anything"],
    ]
    write_xlsx(tmp_path / "hb.xlsx", rows, sheet="HB rev C")
    source = """streams_from:
  file: hb.xlsx
  sheet: HB rev C
  columns:
    id: Stream
    fluid: Medium
    T: {header: Temp (C), unit: degC}
    P: {header: Press, unit: bar}
    flow: {header: Mass flow, unit: kg/s}
  ignore_columns: [remarks]
"""
    _, document = load_balance(balance_file(tmp_path, source))
    assert document.data["streams"]["W1"] == {
        "fluid": "Water",
        "T": "20 degC",
        "P": "5 bar",
        "flow": "3 kg/s",
    }


def test_formula_with_a_saved_value_is_read(tmp_path):
    path = tmp_path / "streams.xlsx"
    write_xlsx(path, [STREAMS[0], ["W1", "Water", "=10+10", 5, 10.8, "liquid", "x"]])
    _cache_value(path, "C2", "20")  # as a spreadsheet program saves it
    _, document = load_balance(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert document.data["streams"]["W1"]["T"] == "20 degC"


def _cache_value(path: Path, coordinate: str, value: str) -> None:
    """Give a formula cell the saved value a spreadsheet program would write beside it."""
    raw = io.BytesIO(path.read_bytes())
    out = io.BytesIO()
    with zipfile.ZipFile(raw) as source, zipfile.ZipFile(out, "w") as target:
        for info in source.infolist():
            content = source.read(info.filename)
            if info.filename == "xl/worksheets/sheet1.xml":
                text = content.decode()
                text, count = re.subn(
                    rf'(<c r="{coordinate}"[^>]*><f>[^<]*</f>)<v\s*/>', rf"\g<1><v>{value}</v>", text
                )
                if count == 0:
                    text, count = re.subn(
                        rf'(<c r="{coordinate}"[^>]*><f>[^<]*</f>)', rf"\g<1><v>{value}</v>", text
                    )
                assert count == 1
                content = text.encode()
            target.writestr(info, content)
    path.write_bytes(out.getvalue())


def test_csv_table(tmp_path):
    with (tmp_path / "streams.csv").open("w", newline="", encoding="utf-8") as stream:
        writer = csv.writer(stream)
        writer.writerows(STREAMS)
        writer.writerow([])
        writer.writerow(["", "", "", "", "", "", "", ""])  # a trailing blank column, blank row
    result = audit.run(balance_file(tmp_path, "streams_from: streams.csv"))
    assert [s.id for s in result.streams] == ["W1", "W2"]


def test_the_reader_takes_the_stream_columns_it_is_handed(tmp_path):
    # The table reader knows no stream model: the fields a stream table may give come from the
    # caller (audit.reading passes audit.model.table_columns.stream_kinds()).
    write_xlsx(tmp_path / "streams.xlsx", STREAMS)
    document = load_document(balance_file(tmp_path, "streams_from: streams.xlsx"))
    merged, tables = resolve(document, stream_kinds())
    assert merged.data["streams"]["W1"]["T"] == "20 degC"
    assert [t.rows for t in tables] == [3]
    kinds = {k: v for k, v in stream_kinds().items() if k != "phase"}
    with pytest.raises(InputError, match=r"cell F1: unknown column header 'phase'"):
        resolve(document, kinds)


def test_yaml_streams_and_table_streams_together(tmp_path):
    write_xlsx(tmp_path / "streams.xlsx", STREAMS)
    body = "streams:\n  W3: {fluid: Water, T: 30 degC, P: 5 bar, flow: 1 kg/s}\n"
    result = audit.run(balance_file(tmp_path, "streams_from: streams.xlsx", body))
    assert sorted(s.id for s in result.streams) == ["W1", "W2", "W3"]


def test_mixture_compositions_and_cells_that_carry_their_own_unit(tmp_path):
    rows = [
        ["id", "composition", "T [degC]", "P [bar]", "flow", "composition_basis"],
        ["G1", "N2: 0.79, O2: 0.21", 25, 1.2, "3.6 t/h", None],
        ["G2", "air", 30, 1.2, "1 kg/s", None],
        ["G3", "{CH4: 0.9, N2: 0.1}", 30, 1.2, "1 kg/s", "mass"],
    ]
    write_xlsx(tmp_path / "streams.xlsx", rows)
    _, document = load_balance(balance_file(tmp_path, "streams_from: streams.xlsx"))
    streams = document.data["streams"]
    assert streams["G1"] == {
        "composition": {"N2": 0.79, "O2": 0.21},
        "T": "25 degC",
        "P": "1.2 bar",
        "flow": "3.6 t/h",
    }
    assert streams["G2"]["composition"] == "air"
    assert streams["G3"]["composition"] == {"CH4": 0.9, "N2": 0.1}
    assert streams["G3"]["composition_basis"] == "mass"


@pytest.mark.parametrize(
    ("cell", "expected"),
    [
        (
            "N2 0.79",
            "'N2 0.79' is not a composition; write it like 'N2: 0.79, O2: 0.21', or give a "
            "name such as 'air'",
        ),
        ("N2: 0.79, N2: 0.21", "'N2' is written twice in the composition"),
        ("N2: most", "'most' (for N2) is not a number"),
    ],
)
def test_malformed_compositions(tmp_path, cell, expected):
    rows = [["id", "composition", "T [degC]", "P [bar]", "flow [kg/s]"], ["G1", cell, 25, 1.2, 1]]
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert f"sheet 'streams', cell B2: stream G1: {expected}" in message


def test_number_in_a_column_without_a_unit(tmp_path):
    rows = copy.deepcopy(STREAMS)
    rows[0][4] = "flow"
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert (
        "cell E2: stream W1: '10.8' has no unit, and the column 'flow' gives none; write the "
        "unit in the header, like 'flow [unit]', or in the cell" in message
    )


def test_two_columns_for_the_same_thing(tmp_path):
    rows = [[*STREAMS[0], "T [degC]"], [*STREAMS[1], None], [*STREAMS[2], None]]
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert (
        "cell H1: the column 'T [degC]' gives the same thing as column C ('T [degC]'); keep "
        "one" in message
    )


def test_table_rows_lay_out_streams_and_leave_out_what_a_table_cannot_hold():
    streams = {
        "G1": {
            "composition": {"N2": 0.79, "O2": 0.21},
            "T": "25 degC",
            "P": "1.2 bar",
            "flow": "1500 Nm3/h",
        },
        "W1": {
            "fluid": "Water",
            "T": "20 degC",
            "P": "5 barg",
            "flow": "3 kg/s",
            "uncertainty": {"T": "0.2 K"},
        },  # a mapping of its own: stays in the YAML file
    }
    headers, rows, left_out = table_rows(
        streams, ["id", "fluid", "T [degC]", "P [barg]"], stream_kinds()
    )
    assert left_out == ["W1"]
    assert headers == ["id", "fluid", "T [degC]", "P [barg]", "P [bar]", "composition", "flow [Nm3/h]"]
    assert rows == [["G1", None, 25, None, 1.2, "N2: 0.79, O2: 0.21", 1500]]


def test_schema_accepts_streams_from_instead_of_streams():
    schema = json_schema()
    # neither is required: a balance of vessels only has no streams (tests/test_vessel_only.py)
    assert "streams" not in schema.get("required", [])
    assert "anyOf" not in schema
    assert "streams_from" in schema["properties"]


# -- malformed tables: every message names the cell ----------------------------------------------
def run_error(path: Path, **options) -> str:
    with pytest.raises(InputError) as excinfo:
        audit.run(path, **options)
    return error_text(excinfo)


def test_text_in_a_numeric_cell_names_sheet_and_cell(tmp_path):
    rows = [STREAMS[0]] + [[f"S{i}", "Water", 20, 5, 1, None, None] for i in range(1, 13)]
    rows[12][2] = "1O5"  # row 13
    rows.append(["S13", "Water", 20, 5, 1, None, None])
    write_xlsx(tmp_path / "streams.xlsx", rows, sheet="HB rev C")
    wb = openpyxl.load_workbook(tmp_path / "streams.xlsx")
    wb["HB rev C"].insert_rows(1)  # the table now starts on row 2; the bad cell is C14
    wb["HB rev C"]["A1"] = "heat balance"
    wb.save(tmp_path / "streams.xlsx")
    path = balance_file(tmp_path, "streams_from: {file: streams.xlsx, sheet: HB rev C, header_row: 2}")
    table = tmp_path / "streams.xlsx"
    message = run_error(path)
    assert message == f"{table}, sheet 'HB rev C', cell C14: stream S12: '1O5' is not a number"


@pytest.mark.parametrize(
    ("cell", "expected"),
    [
        ("10,8", r"'10,8' is not a number; write the decimal point as '\.'"),
        (
            "20 degF",
            r"'20 degF' is not a number; the column 'T \[degC\]' gives the unit \(degC\); "
            r"for another unit, add a column such as 'T \[degF\]'",
        ),
        (datetime(2024, 3, 5), r"'2024-03-05 00:00:00' is a date or time, not a number"),
        (True, r"TRUE is not a number"),
        ("#DIV/0!", r"the cell shows the error value '#DIV/0!'"),
        ("=B2*2", r"the formula '=B2\*2' has no saved value"),
    ],
)
def test_bad_numeric_cells(tmp_path, cell, expected):
    rows = copy.deepcopy(STREAMS)
    rows[2][2] = cell
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert re.search(r"streams\.xlsx, sheet 'streams', cell C3: stream W2: " + expected, message), (
        message
    )


def test_uncalculated_formulas_in_an_otherwise_blank_row_are_not_skipped(tmp_path):
    rows = copy.deepcopy(STREAMS) + [[None, None, "=C2+1"]]
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert "cell A4: this row has values but no stream id" in message


def test_unknown_unit_in_a_header(tmp_path):
    rows = copy.deepcopy(STREAMS)
    rows[0][2] = "T [degCC]"
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert message.endswith("sheet 'streams', cell C1: unknown unit 'degCC' in the header 'T [degCC]'")


def test_unit_of_the_wrong_kind_in_a_header(tmp_path):
    rows = copy.deepcopy(STREAMS)
    rows[0][3] = "P [kg]"
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert "cell D1: the header 'P [kg]' gives the unit 'kg', which is not a unit of pressure" in message


def test_unknown_header_suggests_the_field(tmp_path):
    rows = copy.deepcopy(STREAMS)
    rows[0][5] = "phse"
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert "cell F1: unknown column header 'phse'; did you mean 'phase'?" in message


def test_gauge_header_without_site_pressure(tmp_path):
    rows = copy.deepcopy(STREAMS)
    rows[0][3] = "P [barg]"
    write_xlsx(tmp_path / "streams.xlsx", rows)
    path = balance_file(
        tmp_path, "streams_from: streams.xlsx", header="balance:\n  name: no site pressure\n"
    )
    message = run_error(path)
    assert (
        "cell D1: the header 'P [barg]' gives a gauge pressure unit, but the balance "
        "declares no site_pressure" in message
    )


def test_merged_header_cells(tmp_path):
    ws = write_xlsx(tmp_path / "streams.xlsx", STREAMS)
    ws.merge_cells("C1:D1")
    ws.parent.save(tmp_path / "streams.xlsx")
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert message == (
        f"{tmp_path / 'streams.xlsx'}, sheet 'streams', cell C1: the header cells "
        "C1:D1 are merged; give each column its own header cell"
    )


def test_merged_data_cells(tmp_path):
    ws = write_xlsx(tmp_path / "streams.xlsx", STREAMS)
    ws.merge_cells("E2:E3")  # one flow for two streams: the second would silently lose it
    ws.parent.save(tmp_path / "streams.xlsx")
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert message == (
        f"{tmp_path / 'streams.xlsx'}, sheet 'streams', cell E2: the cells E2:E3 "
        "are merged: a merged cell keeps its value in its first cell only; unmerge "
        "them and write the value in each cell"
    )


def test_duplicate_stream_ids(tmp_path):
    rows = copy.deepcopy(STREAMS)
    rows[2][0] = "W1"
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert (
        "sheet 'streams', cell A3: stream W1: the stream id 'W1' is used twice in the table "
        "(also in sheet 'streams', cell A2)" in message
    )


def test_stream_in_the_table_and_in_the_yaml_file(tmp_path):
    write_xlsx(tmp_path / "streams.xlsx", STREAMS)
    body = "streams:\n  W2: {fluid: Water, T: 30 degC, P: 5 bar, flow: 1 kg/s}\n"
    path = balance_file(tmp_path, "streams_from: streams.xlsx", body)
    message = run_error(path)
    assert (
        f"cell A3: stream W2: stream W2 is written both in the balance file ({path}, line 6) "
        "and in this table; a stream is written in one place" in message
    )


def test_value_in_a_column_without_a_header(tmp_path):
    rows = copy.deepcopy(STREAMS)
    rows[1].append("stray note")
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert "cell H2: stream W1: this cell has a value but column H has no header" in message


def test_same_quantity_twice_in_a_row(tmp_path):
    rows = [[*STREAMS[0], "T [K]"], [*STREAMS[1], 293.15], [*STREAMS[2], None]]
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert (
        "cell H2: stream W1: T is given twice in this row (C2 and H2); leave one of them "
        "empty" in message
    )


def test_validation_errors_point_at_the_cell_or_the_row(tmp_path):
    rows = copy.deepcopy(STREAMS)
    rows[0][2] = "T [K]"
    rows[1][2] = -5  # below absolute zero
    rows[2][5] = "steam"  # not a phase word
    rows.append(["W3", "Water", None, 5, 1, None, None])  # one state property only
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    lines = message.splitlines()
    assert any(
        re.search(
            r"sheet 'streams', cell C2: stream W1, field 'streams\.W1\.T': "
            r"'-5 K' is at or below absolute zero",
            x,
        )
        for x in lines
    ), message
    assert any(
        re.search(r"sheet 'streams', cell F3: stream W2, field 'streams\.W2\.phase': ", x) for x in lines
    ), message
    assert any(
        re.search(
            r"sheet 'streams', row 4: stream W3, field 'streams\.W3': a state "
            r"needs one of the pairs",
            x,
        )
        for x in lines
    ), message


def test_state_errors_point_at_the_row(tmp_path):
    rows = copy.deepcopy(STREAMS)
    rows[2][1] = "Unobtainium"
    write_xlsx(tmp_path / "streams.xlsx", rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert re.search(r"streams\.xlsx, sheet 'streams', row 3: stream W2: .*Unobtainium", message), (
        message
    )


def test_missing_sheet_points_at_the_balance_line(tmp_path):
    write_xlsx(tmp_path / "streams.xlsx", STREAMS)
    path = balance_file(tmp_path, "streams_from: {file: streams.xlsx, sheet: HB rev D}")
    message = run_error(path)
    assert message.startswith(f"{path}:4:")
    assert "the workbook" in message and "has no sheet 'HB rev D'; its sheets are 'streams'" in message


def test_missing_table_file_and_wrong_kinds_of_file(tmp_path):
    path = balance_file(tmp_path, "streams_from: nowhere.xlsx")
    assert "the table" in run_error(path) and "nowhere.xlsx' does not exist" in run_error(path)
    (tmp_path / "old.xls").write_bytes(b"\xd0\xcf\x11\xe0")
    path = balance_file(tmp_path, "streams_from: old.xls")
    assert "is a .xls file, which plant-audit does not read; save it as .xlsx or .csv" in run_error(path)
    (tmp_path / "fake.xlsx").write_text("not a workbook", encoding="utf-8")
    path = balance_file(tmp_path, "streams_from: fake.xlsx")
    assert "cannot be read as an .xlsx workbook" in run_error(path)


def test_unknown_field_under_streams_from(tmp_path):
    write_xlsx(tmp_path / "streams.xlsx", STREAMS)
    path = balance_file(tmp_path, "streams_from: {file: streams.xlsx, shet: streams}")
    assert re.search(
        r":4:\d+: field 'streams_from\.shet': unknown field 'shet'; did you mean "
        r"'sheet'\?",
        run_error(path),
    )


def test_csv_errors_name_row_and_column_without_a_sheet(tmp_path):
    rows = copy.deepcopy(STREAMS)
    rows[2][3] = "4,5"
    with (tmp_path / "streams.csv").open("w", newline="", encoding="utf-8") as stream:
        csv.writer(stream).writerows(rows)
    message = run_error(balance_file(tmp_path, "streams_from: streams.csv"))
    assert message == (
        f"{tmp_path / 'streams.csv'}, cell D3: stream W2: '4,5' is not a number; "
        "write the decimal point as '.'"
    )


def test_table_with_headers_only(tmp_path):
    write_xlsx(tmp_path / "streams.xlsx", [STREAMS[0]])
    message = run_error(balance_file(tmp_path, "streams_from: streams.xlsx"))
    assert "sheet 'streams', row 1: the stream table has a header row but no stream rows" in message


# -- the folder rule -----------------------------------------------------------------------------
def test_table_outside_the_balance_folder_is_refused_unless_allowed(tmp_path, capsys):
    write_xlsx(tmp_path / "streams.xlsx", STREAMS)
    folder = tmp_path / "balances"
    folder.mkdir()
    path = balance_file(folder, "streams_from: ../streams.xlsx")
    message = run_error(path)
    assert message.startswith(f"{path}:4:")
    assert "the table '../streams.xlsx' is outside the balance file's folder" in message
    assert "unless allowed (--allow-outside on the command line" in message
    assert main(["check", str(path), "--brief"]) == 2
    assert "is outside the balance file's folder" in capsys.readouterr().err
    assert [s.id for s in audit.run(path, allow_outside=True).streams] == ["W1", "W2"]
    assert main(["check", str(path), "--brief", "--allow-outside"]) == 0


def test_symbolic_link_out_of_the_folder_is_refused(tmp_path):
    write_xlsx(tmp_path / "streams.xlsx", STREAMS)
    folder = tmp_path / "balances"
    folder.mkdir()
    (folder / "link.xlsx").symlink_to(tmp_path / "streams.xlsx")
    path = balance_file(folder, "streams_from: link.xlsx")
    assert "is outside the balance file's folder" in run_error(path)


def test_subfolder_is_inside(tmp_path):
    (tmp_path / "tables").mkdir()
    write_xlsx(tmp_path / "tables" / "streams.xlsx", STREAMS)
    path = balance_file(tmp_path, "streams_from: tables/streams.xlsx")
    assert len(audit.run(path).streams) == 2


# -- claim tables --------------------------------------------------------------------------------
CLAIMS = [  # the clean revision's claims, as printed there
    ("T1", "shaft_power", 1.120, "MW"),
    ("AC2", "duty", 30.1, "kW"),
    ("B1", "duty", 8.30, "MW"),
    ("HX1", "duty", 4.48, "MW"),
    ("C1", "shaft_power", 152.3, "kW"),
    ("CIP1", "work_absorbed", 1.5, "MJ"),
]


def _table_variant_with_claims(tmp_path: Path) -> Path:
    data = load_document(TABLE_BALANCE).data
    steps = {step["id"]: step for step in data["steps"]}
    for step, field, _, _ in CLAIMS:
        del steps[step][field]
    data["claims_from"] = {"file": "claims.xlsx"}
    path = tmp_path / "balance.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    (tmp_path / TABLE_FILE.name).write_bytes(TABLE_FILE.read_bytes())
    return path


def test_claims_from_a_table_audit_like_the_yaml_revision(tmp_path):
    path = _table_variant_with_claims(tmp_path)
    write_xlsx(
        tmp_path / "claims.xlsx",
        [CLAIM_HEADERS] + [[s, f, v, u, "from the data sheet"] for s, f, v, u in CLAIMS],
        sheet="claims",
    )
    assert comparable(audit.run(path)) == comparable(audit.run(CLEAN))


def test_claim_table_errors_name_the_cell(tmp_path):
    path = _table_variant_with_claims(tmp_path)
    rows = [CLAIM_HEADERS] + [[s, f, v, u, None] for s, f, v, u in CLAIMS]
    rows.append(["HX2", "duty", 1, "MW", None])  # row 8: no such step
    rows.append(["P1", "shaft_power", 18.3, "kW", None])  # row 9: also in the YAML file
    rows.append(["C1", "shaft_powr", 1, "kW", None])  # row 10: no such field
    rows.append(["C1", "shaft_power", 150, "kW", None])  # row 11: given twice
    write_xlsx(tmp_path / "claims.xlsx", rows, sheet="claims")
    message = run_error(path)
    claims = tmp_path / "claims.xlsx"
    assert (
        f"{claims}, sheet 'claims', cell A8: 'HX2' is not a step of the balance file; did "
        "you mean 'HX1'?" in message
    )
    assert re.search(
        r"sheet 'claims', cell C9: step P1: the claim 'shaft_power' of step P1 is "
        r"written both in the balance file \(.*balance\.yaml, line \d+\) and in this "
        r"table",
        message,
    ), message
    assert (
        "sheet 'claims', cell C11: step C1: the claim 'shaft_power' of step C1 is given twice "
        "in the table (also in sheet 'claims', cell C6)" in message
    )
    # the first pass stops at table errors; the unknown field is reported once they are fixed
    rows = rows[:7] + [rows[9]]
    write_xlsx(tmp_path / "claims.xlsx", rows, sheet="claims")
    message = run_error(path)
    assert re.search(
        r"sheet 'claims', cell C8: step C1, field 'steps\[\d+\]\.shaft_powr': "
        r"unknown field 'shaft_powr'; did you mean 'shaft_power'\?",
        message,
    ), message


# -- template ------------------------------------------------------------------------------------
def test_template_has_the_expected_shape(tmp_path, capsys):
    target = tmp_path / "streams.xlsx"
    assert main(["template", "--streams", str(target)]) == 0
    assert "wrote" in capsys.readouterr().out
    wb = openpyxl.load_workbook(target)
    assert wb.sheetnames == ["streams", "claims", "instructions"]
    assert [c.value for c in wb["streams"][1]] == stream_template_headers()
    assert [c.value for c in wb["claims"][1]] == CLAIM_HEADERS
    assert wb["streams"].max_row == 1  # empty
    words = " ".join(str(c.value) for c in wb["instructions"]["A"] if c.value)
    assert "not a safety or code-compliance review" in words
    assert "streams_from" in words
    phase = column_letter(stream_template_headers().index("phase"))
    lists = wb["streams"].data_validations.dataValidation
    assert any(f"{phase}2" in str(v.sqref) and "vapour" in v.formula1 for v in lists)


def test_template_refuses_to_overwrite_and_needs_xlsx(tmp_path, capsys):
    target = tmp_path / "streams.xlsx"
    target.write_bytes(b"precious")
    assert main(["template", "--streams", str(target)]) == 2
    assert (
        "the file exists; writing a template would replace its contents (add --force"
        in capsys.readouterr().err
    )
    assert target.read_bytes() == b"precious"
    assert main(["template", "--streams", str(target), "--force"]) == 0
    assert main(["template", "--streams", str(tmp_path / "streams.csv")]) == 2
    assert "a stream-table template is an .xlsx workbook" in capsys.readouterr().err


def test_template_filled_with_the_sample_streams_audits_cleanly(tmp_path):
    target = tmp_path / "streams.xlsx"
    assert main(["template", "--streams", str(target)]) == 0
    wb = openpyxl.load_workbook(target)
    ws = wb["streams"]
    template_headers = [c.value for c in ws[1]]
    headers, rows, left_out = table_rows(
        load_document(CLEAN).data["streams"], template_headers, stream_kinds()
    )
    assert left_out == []
    ws.delete_rows(1)
    ws.append(headers)  # the template's headers, with a column for each further unit
    for row in rows:
        ws.append(row)
    wb.save(target)
    data = load_document(CLEAN).data
    del data["streams"]
    data["streams_from"] = {"file": "streams.xlsx", "sheet": "streams"}
    path = tmp_path / "balance.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    result = audit.run(path)
    assert result.counts()["error"] == 0 and result.counts()["warning"] == 0
    assert comparable(result) == comparable(audit.run(CLEAN))


# -- convert -------------------------------------------------------------------------------------
def test_converted_yaml_audits_like_the_original(tmp_path, capsys):
    out = tmp_path / "resolved.yaml"
    assert main(["convert", str(TABLE_BALANCE), "--to", "yaml", "-o", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    schema = (SAMPLE.parent / "schemas" / "plant-audit-balance.schema.json").resolve()
    first = text.splitlines()[0]
    assert first.startswith("# yaml-language-server: $schema=")
    assert (out.parent / first.split("=", 1)[1]).resolve() == schema
    data = yaml.safe_load(text)
    assert "streams_from" not in data
    assert set(data["streams"]) == set(load_document(CLEAN).data["streams"])
    assert list(data)[:3] == ["balance", "streams", "steps"]
    assert "duty: 8.30 MW" in text  # the original string, not a float written back
    assert "  S02: {fluid: Water, T: 105.73 degC, P: 41.5 barg, flow: 10.8 t/h" in text
    assert comparable(audit.run(out)) == comparable(audit.run(TABLE_BALANCE))


def test_convert_to_standard_output_and_refuses_invalid_balances(tmp_path, capsys):
    assert main(["convert", str(TABLE_BALANCE)]) == 0
    assert yaml.safe_load(capsys.readouterr().out)["streams"]["S20"]["quality"] == 0.1447
    rows = copy.deepcopy(STREAMS)
    rows[1][2] = "warm"
    write_xlsx(tmp_path / "streams.xlsx", rows)
    path = balance_file(tmp_path, "streams_from: streams.xlsx")
    with pytest.raises(InputError, match=r"cell C2: stream W1: 'warm' is not a number"):
        resolved_yaml(path)
    assert main(["convert", str(path), "-o", str(tmp_path / "out.yaml")]) == 2
    assert not (tmp_path / "out.yaml").exists()
