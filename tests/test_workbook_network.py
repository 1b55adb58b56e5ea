"""The plant's network as a PNG picture in the workbook's Overview: the same layout as the HTML
report's SVG (one box per step, one arrow per stream), failing steps filled red or amber, and the
workbook still the same bytes for the same input and ``SOURCE_DATE_EPOCH``."""

from __future__ import annotations

import io
import zipfile

import pytest
from conftest import SAMPLE

import audit
from audit.report.pictures.network_layout import BOX_W, network
from audit.report.pictures.network_png import draw
from audit.report.pictures.svg import FILL
from audit.report.workbook import write_workbook

Image = pytest.importorskip("PIL.Image")

SEEDED = SAMPLE / "quillon-bay-seeded.yaml"


@pytest.fixture(scope="module")
def seeded():
    return audit.run(SEEDED)


def _rgb(colour: str) -> tuple[int, int, int]:
    return tuple(int(colour[i : i + 2], 16) for i in (1, 3, 5))  # type: ignore[return-value]


def test_picture_has_every_step_and_stream_and_marks_the_failing_steps(seeded):
    laid = network(seeded)
    assert sorted(b.step for b in laid.boxes) == sorted(s.id for s in seeded.steps)
    arrows = [a.stream for a in laid.arrows] + [a.stream for b in laid.boxes for a in b.stubs()]
    assert sorted(arrows) == sorted(s.id for s in seeded.streams)
    scale = 2.0
    picture = Image.open(io.BytesIO(draw(laid, scale)))
    assert picture.size == (round(laid.width * scale), round(laid.height * scale))
    picture = picture.convert("RGB")
    failing = {s for s, mark in laid.marks.items() if mark == "error"}
    # the seeded sample's steps with an open error (its README lists the seeded mistakes)
    assert {"B1", "T1", "HX1", "EV1"} <= failing
    for box in laid.boxes:
        # inside the box, left of its words: the fill of its worst open finding
        x, y = (box.x - BOX_W / 2 + 8) * scale, box.y * scale
        assert picture.getpixel((round(x), round(y))) == _rgb(FILL[laid.marks[box.step]]), box.step


def test_overview_holds_the_picture_and_the_workbook_stays_reproducible(
    tmp_path, monkeypatch: pytest.MonkeyPatch
):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")  # 2026-01-01 00:00:00 UTC
    paths = []
    for name in ("a.xlsx", "b.xlsx"):  # two audits of the same file
        paths.append(tmp_path / name)
        write_workbook(audit.run(SEEDED), paths[-1])
    assert paths[0].read_bytes() == paths[1].read_bytes()
    with zipfile.ZipFile(paths[0]) as z:
        media = [n for n in z.namelist() if n.startswith("xl/media/")]
        assert media == ["xl/media/image1.png"]
        drawing = z.read("xl/drawings/drawing1.xml").decode()
        assert "Network of Quillon Bay site utility balance" in drawing
        rels = z.read("xl/worksheets/_rels/sheet1.xml.rels").decode()
        assert "drawing1.xml" in rels  # on the Overview, the first sheet
        picture = Image.open(io.BytesIO(z.read(media[0])))
        assert picture.format == "PNG" and not picture.text  # no time, no text chunk
