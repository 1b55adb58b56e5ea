"""Every workbook prints: landscape A4, one page wide, the header row on every page, a page header
and footer naming the balance, its revision and the page, numbers with number formats (no raw
floats). LibreOffice renders the seeded sample's workbook, the batch summary of the four sample
files and the comparison workbook to PDF, and the page counts stay small."""

from __future__ import annotations

import re
import shutil
import subprocess
import zipfile
from datetime import datetime, timezone
from pathlib import Path

import openpyxl
import pytest
from conftest import SAMPLE
from openpyxl.utils import get_column_letter

import audit
from audit.diff import compare
from audit.outcomes import AUDITED, FileOutcome
from audit.report.batch_workbook import write_batch_workbook
from audit.report.diff_workbook import write_diff_workbook
from audit.report.printing import header_text
from audit.report.workbook import write_workbook

SEEDED = SAMPLE / "quillon-bay-seeded.yaml"
CLEAN = SAMPLE / "quillon-bay-clean.yaml"
SAMPLES = sorted(SAMPLE.glob("*.yaml"))


@pytest.fixture(scope="module")
def results() -> dict[str, audit.AuditResult]:
    return {path.name: audit.run(path) for path in SAMPLES}


@pytest.fixture(scope="module")
def books(results, tmp_path_factory) -> dict[str, Path]:
    """The seeded sample's findings workbook, the batch summary of the four samples and the
    comparison of the clean and seeded revisions."""
    folder = tmp_path_factory.mktemp("books")
    seeded = folder / "seeded.xlsx"
    write_workbook(results[SEEDED.name], seeded)
    outcomes = [
        FileOutcome(str(SAMPLE / name), AUDITED, result, workbook=str(folder / f"{name}.xlsx"))
        for name, result in results.items()
    ]
    summary = write_batch_workbook(
        outcomes, folder / "summary.xlsx", run_at=datetime(2026, 1, 2, 3, 4, 5, tzinfo=timezone.utc)
    )
    diff = write_diff_workbook(compare(results[CLEAN.name], results[SEEDED.name]), folder / "diff.xlsx")
    return {"seeded": seeded, "summary": summary, "diff": diff}


def _sheets(path: Path) -> dict[str, str]:
    """Each worksheet's XML by its title."""
    with zipfile.ZipFile(path) as z:
        workbook = z.read("xl/workbook.xml").decode()
        names = re.findall(r'<sheet name="([^"]*)"', workbook)
        return {
            name: z.read(f"xl/worksheets/sheet{i}.xml").decode() for i, name in enumerate(names, start=1)
        }


def test_every_sheet_prints_landscape_one_page_wide_with_header_and_footer(books, results):
    for kind, path in books.items():
        sheets = _sheets(path)
        with zipfile.ZipFile(path) as z:
            workbook = z.read("xl/workbook.xml").decode()
        for title, xml in sheets.items():
            where = f"{kind}: {title}"
            assert 'orientation="landscape"' in xml, where
            assert 'paperSize="9"' in xml, where  # A4
            assert '<pageSetUpPr fitToPage="1"/>' in xml, where
            assert 'fitToHeight="0"' in xml and "fitToWidth" not in xml, where  # 1 wide, any tall
            assert "&amp;P of &amp;N" in xml, where  # the page in the footer
        # the header row repeats on every page of each table
        titles = re.findall(r"<definedName name=\"_xlnm.Print_Titles\"[^>]*>([^<]*)<", workbook)
        assert titles, kind
    seeded = _sheets(books["seeded"])
    name = results[SEEDED.name].name
    assert name and all(header_text(name) in xml for xml in seeded.values())
    with zipfile.ZipFile(books["seeded"]) as z:
        workbook = z.read("xl/workbook.xml").decode()
    assert "'Findings'!$1:$1" in workbook or "Findings!$1:$1" in workbook


def test_header_text_doubles_ampersands_and_stays_short():
    assert header_text("Tank & pump") == "Tank && pump"
    assert header_text("a\nb\tc") == "a b c"
    long = header_text("x" * 100)
    assert len(long) == 60 and long.endswith("…")


def test_no_number_is_shown_without_a_number_format(books, results, tmp_path):
    """Numbers carry a number format in engineering units: no raw float such as 7258.382067383276
    (the findings workbooks of all four samples, the batch summary, the comparison)."""
    paths = list(books.values())
    for name, result in results.items():
        paths.append(tmp_path / f"{name}.xlsx")
        write_workbook(result, paths[-1])
    for path in paths:
        for ws in openpyxl.load_workbook(path):
            for row in ws.iter_rows():
                for cell in row:
                    if isinstance(cell.value, float):
                        assert cell.number_format != "General", (path.name, ws.title, cell.coordinate)


def test_summary_header_row_is_tall_enough_for_its_wrapped_titles(books):
    ws = openpyxl.load_workbook(books["summary"])["Summary"]
    header = next(r for r in range(1, 12) if ws.cell(r, 1).value == "File")
    assert ws.row_dimensions[header].height >= 30  # "Exergy destroyed [kW]" wraps to two lines
    assert ws.cell(header + 1, 10).number_format == "#,##0.000"


# -- LibreOffice renders the workbooks ----------------------------------------------------------------
PAGE = re.compile(rb"/Type\s*/Page(?![A-Za-z])")
MEDIA_BOX = re.compile(rb"/MediaBox\s*\[\s*([\d.]+)\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)\s*\]")


def _only(path: Path, title: str, target: Path) -> Path:
    """A copy of the workbook at ``path`` with every sheet but ``title`` hidden and ``title``
    active: LibreOffice prints only that sheet."""
    with zipfile.ZipFile(path) as source, zipfile.ZipFile(target, "w", zipfile.ZIP_DEFLATED) as out:
        for info in source.infolist():
            data = source.read(info.filename)
            if info.filename == "xl/workbook.xml":
                text = data.decode()
                names = re.findall(r'<sheet name="([^"]*)"', text)
                text = re.sub(
                    r"<sheet [^>]*/>",
                    lambda m: (
                        m.group(0)
                        if f'name="{title}"' in m.group(0)
                        else m.group(0).replace("<sheet ", '<sheet state="hidden" ')
                    ),
                    text,
                )
                text = text.replace(
                    "<workbookView ", f'<workbookView activeTab="{names.index(title)}" ', 1
                )
                data = text.encode()
            out.writestr(info, data)
    return target


def _pages(pdf: Path) -> list[tuple[float, float]]:
    """The (width, height) of every page of ``pdf`` [pt] (LibreOffice writes uncompressed page
    dictionaries: one /Type /Page and one /MediaBox each)."""
    data = pdf.read_bytes()
    boxes = [
        (float(x1) - float(x0), float(y1) - float(y0)) for x0, y0, x1, y1 in MEDIA_BOX.findall(data)
    ]
    count = len(PAGE.findall(data))
    assert count and boxes, pdf
    return boxes[:count] if len(boxes) >= count else boxes * count


def test_libreoffice_prints_each_workbook_on_few_landscape_pages(books, tmp_path):
    soffice = shutil.which("soffice") or shutil.which("libreoffice")
    if soffice is None:
        pytest.skip(
            "LibreOffice (soffice) is not installed: the printing check renders the workbooks to "
            "PDF with it (apt-get install libreoffice-calc)"
        )
    findings = _only(books["seeded"], "Findings", tmp_path / "findings.xlsx")
    inputs = [books["seeded"], findings, books["summary"], books["diff"]]
    profile = tmp_path / "profile"
    out = tmp_path / "pdf"
    completed = subprocess.run(
        [
            soffice,
            "--headless",
            "--norestore",
            f"-env:UserInstallation={profile.as_uri()}",
            "--convert-to",
            "pdf",
            "--outdir",
            str(out),
            *map(str, inputs),
        ],
        capture_output=True,
        text=True,
        timeout=240,
        check=False,
    )
    pages = {}
    for path in inputs:
        pdf = out / path.with_suffix(".pdf").name
        assert pdf.exists(), completed.stdout + completed.stderr
        pages[path.stem] = _pages(pdf)
    for name, sizes in pages.items():
        assert all(w > h for w, h in sizes), name  # landscape
        assert all(abs(w - 841.9) < 1 for w, _ in sizes), name  # A4 (297 mm = 841.9 pt)
    # Before printing was set up: Findings, Steps and Streams printed on 19 pages, the batch
    # summary on 15 and the comparison on 12.
    assert len(pages["findings"]) == 1  # 13 findings: one page wide, one page tall
    assert len(pages["seeded"]) <= 14  # every sheet of the findings workbook
    assert len(pages["summary"]) <= 4
    assert len(pages["diff"]) <= 4


def test_overview_text_stays_within_its_columns(books):
    """Text running on past its cell widens the printed page (LibreOffice prints it): the
    Overview's long values (the property library's versions, a long path) wrap in their cell."""
    ws = openpyxl.load_workbook(books["seeded"])["Overview"]
    widths = [ws.column_dimensions[get_column_letter(c)].width for c in range(1, ws.max_column + 1)]
    for row in ws.iter_rows(min_row=2):
        for cell in row:
            if not isinstance(cell.value, str) or cell.coordinate in ws.merged_cells:
                continue
            room = sum(widths[cell.column - 1 :])  # up to the last column of the sheet
            if len(cell.value) > room:
                assert cell.alignment.wrap_text, (cell.coordinate, cell.value)
