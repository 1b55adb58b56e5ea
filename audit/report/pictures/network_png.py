"""The plant's network as a PNG picture, for the workbook's Overview (a workbook cannot hold SVG):
the same layout as the SVG picture (:mod:`audit.report.pictures.network_layout`), drawn with
Pillow's ImageDraw and the font Pillow carries (no system font, no other program): one box per
step with its id and kind, one arrow per stream labelled with its id; a step with an open error
is drawn red and says ``ERROR``, one with an open warning amber and says ``WARNING``.

Drawn at :data:`SUPERSAMPLE` times the resolution asked for and reduced (lines come out smooth).
The bytes depend only on the result and the Pillow version: the PNG holds no time and no text
chunk. Pillow's import takes about 0.1 s here (a plotting library's about 1.7 s), and it is
imported only when a picture is drawn."""

from __future__ import annotations

import io
import math
from typing import Any

from audit.report.pictures.network_layout import BOX_W, Arrow, Network, network
from audit.report.pictures.svg import FILL, INK, MUTED, STROKE
from audit.results import AuditResult

SUPERSAMPLE = 2
WHITE = "#ffffff"
WORDS = {"error": "ERROR", "warning": "WARNING"}


def network_png(result: AuditResult, scale: float = 2.0) -> tuple[bytes, float, float]:
    """The network picture of ``result`` as PNG bytes, ``scale`` pixels per layout pixel, and its
    size in layout pixels (width, height)."""
    laid = network(result)
    return draw(laid, scale), laid.width, laid.height


def draw(laid: Network, scale: float = 2.0) -> bytes:
    """The laid-out network drawn as PNG bytes."""
    from PIL import Image, ImageDraw, ImageFont

    k = scale * SUPERSAMPLE
    size = (
        max(1, round(laid.width * scale)) * SUPERSAMPLE,
        max(1, round(laid.height * scale)) * SUPERSAMPLE,
    )
    image = Image.new("RGB", size, WHITE)
    pen = ImageDraw.Draw(image)
    fonts = {n: ImageFont.load_default(size=round(n * k)) for n in (11, 12)}
    for arrow in laid.arrows:
        _arrow(pen, arrow, k, fonts[11])
    for box in laid.boxes:
        mark = laid.marks[box.step]
        left, top = (box.x - BOX_W / 2) * k, (box.y - box.height / 2) * k
        right, bottom = (box.x + BOX_W / 2) * k, (box.y + box.height / 2) * k
        pen.rounded_rectangle(
            (left, top, right, bottom),
            radius=4 * k,
            fill=FILL[mark],
            outline=STROKE[mark],
            width=max(1, round((3 if mark else 1.2) * k)),
        )
        _text(pen, box.x * k, (box.y - 6) * k, box.step, fonts[12], INK, bold=True)
        kind = laid.kinds[box.step].replace("_", " ")
        _text(pen, box.x * k, (box.y + 9) * k, kind, fonts[12], MUTED)
        if mark:
            _text(pen, box.x * k, (box.y + 23) * k, WORDS.get(mark, mark), fonts[12], STROKE[mark], True)
        for stub in box.stubs():
            _arrow(pen, stub, k, fonts[11])
    reduced = image.reduce(SUPERSAMPLE)  # each pixel the mean of a square of them
    out = io.BytesIO()
    reduced.save(out, format="PNG", compress_level=6)
    return out.getvalue()


def _text(
    pen: Any, x: float, baseline: float, words: str, font: Any, fill: str, bold: bool = False
) -> None:
    """``words`` centred on ``x`` with their baseline at ``baseline`` (as SVG places text)."""
    pen.text(
        (x, baseline),
        words,
        font=font,
        fill=fill,
        anchor="ms",
        stroke_width=max(1, round(font.size / 24)) if bold else 0,
        stroke_fill=fill,
    )


def _arrow(pen: Any, arrow: Arrow, k: float, font: Any) -> None:
    """A stream's line with its head at the last point, and its id on a white halo."""
    pts = [(x * k, y * k) for x, y in arrow.points]
    (x0, y0), (x1, y1) = pts[-2], pts[-1]
    angle = math.atan2(y1 - y0, x1 - x0)
    length, half = 8 * k, 4 * k
    base = (x1 - length * math.cos(angle), y1 - length * math.sin(angle))
    pen.line(pts[:-1] + [base], fill=INK, width=max(1, round(1.3 * k)), joint="curve")
    normal = (-math.sin(angle) * half, math.cos(angle) * half)
    head = [
        (x1, y1),
        (base[0] + normal[0], base[1] + normal[1]),
        (base[0] - normal[0], base[1] - normal[1]),
    ]
    pen.polygon(head, fill=INK)
    pen.text(
        (arrow.label[0] * k, arrow.label[1] * k),
        arrow.stream,
        font=font,
        fill=INK,
        anchor="ms",
        stroke_width=round(2 * k),
        stroke_fill=WHITE,
    )
