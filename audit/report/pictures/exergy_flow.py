"""The plant's exergy flow (Grassmann) diagram as SVG: one band whose width is proportional to
exergy [1, ch. 3; 2]. Exergy enters on the left with feeds and fuels, power and heat (and the
chemical exergy released by reactions); each step's destruction leaves the band downwards, largest
first; what is left leaves on the right with the products, power and heat. A step with an open
error is drawn red, one with a warning amber. Vessels (batch totals, not rates) are left out.

References
----------
.. [1] T. J. Kotas, *The Exergy Method of Thermal Plant Analysis*, Butterworths, 1985, ch. 3.
.. [2] J. Szargut, D. R. Morris, F. R. Steward, *Exergy Analysis of Thermal, Chemical, and
   Metallurgical Processes*, Hemisphere, 1988.
"""

from __future__ import annotations

from audit.accounts import (
    CHEMICAL,
    DESTROYED,
    HEAT,
    POWER,
    STREAM,
    UNACCOUNTED,
    ExergyItem,
    exergy_account,
)
from audit.report.pictures.svg import INK, MUTED, STROKE, document, el, number, points, step_marks, text
from audit.results import AuditResult

BAND = 240.0  # the band's width for all the exergy entering [px]
SMALLEST = 1e-5  # (0.001 %) flows below this fraction of the exergy entering are not drawn
STUB = 56.0  # length of an entering or leaving band [px]
GAP = 14.0  # the least vertical distance between two labels [px]
TOP = 40.0

COLOUR = {
    STREAM: "#8fb3dc",
    POWER: "#a99ad6",
    HEAT: "#e7b07a",
    CHEMICAL: "#d2c270",
    UNACCOUNTED: "#f2c4c0",
    DESTROYED: "#9aa3ab",
}
TRUNK = "#c7d3df"


def exergy_flow_svg(result: AuditResult) -> str:
    """The exergy flow diagram of ``result`` as SVG text."""
    account = exergy_account(result)
    marks = step_marks(result)
    total = max(account.total_in, 1e-9)
    scale = BAND / total
    entering = [i for i in account.entering if i.value >= SMALLEST * total]
    leaving = [i for i in account.leaving if i.value >= SMALLEST * total]
    left = _room(entering)
    slots = [max(i.value * scale, 1.0) for i in account.destroyed]
    x_in = left + STUB  # where the band starts
    x = x_in + 24
    xs = []
    for w in slots:
        xs.append(x)
        x += w + 44
    x_out = x + 12
    width = x_out + STUB + _room(leaving)
    down = TOP + BAND + 60  # where the destruction bands end
    height = down + 130
    body: list[str] = []
    body += _side(entering, scale, left, x_in, "entering")
    remaining = BAND * (1 - sum(i.value for i in account.destroyed) / total)
    body += _side(leaving, scale, x_out, x_out + STUB, "leaving", squeeze=remaining)
    bottom = TOP + BAND
    steps_at = []  # (x, the band's bottom just before the step's destruction leaves)
    for item, xi in zip(account.destroyed, xs, strict=True):
        steps_at.append((xi, bottom))
        bottom -= item.value * scale
    body.append(
        el("polygon", points=points(_trunk(x_in, x_out, xs, account.destroyed, scale)), fill=TRUNK)
    )
    for (xi, base), item, w in zip(steps_at, account.destroyed, slots, strict=True):
        body.append(_destroyed(item, xi, base, w, down, marks.get(item.step or "")))
    title = (
        f"Exergy flow of {result.name}: {number(total / 1e3)} kW entering, "
        f"{number(sum(i.value for i in account.destroyed) / 1e3)} kW destroyed"
    )
    body.insert(0, text(16, 22, title, font_weight="bold", fill=INK))
    note = "Flows under 0.001 % of the exergy entering are not drawn; widths ∝ exergy."
    if account.vessels:
        note += " Vessels left out (batch totals, not rates): " + ", ".join(account.vessels) + "."
    body.append(text(16, height - 12, note, fill=MUTED))
    return document(width, height, body, title, "exergy-flow")


def _trunk(
    x_in: float, x_out: float, xs: list[float], destroyed: list[ExergyItem], scale: float
) -> list:
    """The band's outline: level top, a bottom that steps up where each destruction leaves."""
    pts = [(x_in, TOP), (x_out, TOP)]
    bottom = TOP + BAND - sum(i.value for i in destroyed) * scale
    pts.append((x_out, bottom))
    for xi, item in reversed(list(zip(xs, destroyed, strict=True))):
        pts += [(xi, bottom), (xi, bottom + item.value * scale)]
        bottom += item.value * scale
    pts.append((x_in, TOP + BAND))
    return pts


def _destroyed(item: ExergyItem, x: float, base: float, w: float, down: float, mark: str | None) -> str:
    """One step's destruction: a band leaving the trunk's bottom, downwards."""
    top = base - w
    fill = {"error": "#e57368", "warning": "#f2bf4f"}.get(mark or "", COLOUR[DESTROYED])
    shape = el(
        "polygon",
        points=points([(x, top), (x + w, top), (x + w, down), (x + w / 2, down + 10), (x, down)]),
        fill=fill,
        stroke=STROKE[mark] if mark else "none",
        stroke_width=1.5,
    )
    cx = x + w / 2
    words = f"{item.step} {number(item.value / 1e3)} kW" + (f" ({mark})" if mark else "")
    label = text(
        cx - 4,
        down + 24,
        words,
        fill=STROKE[mark] if mark else INK,
        transform=f"rotate(40 {cx - 4:.1f} {down + 24:.1f})",
    )
    return el("g", [shape, label], class_=f"destroyed {mark or 'ok'}", data_step=item.step)


def _side(
    items: list[ExergyItem], scale: float, x0: float, x1: float, role: str, squeeze: float | None = None
) -> list[str]:
    """The bands entering (stacked from the top at the band's left end) or leaving (at its right
    end), each labelled with its name and value."""
    widths = [max(i.value * scale, 0.8) for i in items]
    if squeeze is not None and sum(widths) > 0:  # what is left of the band after destruction
        widths = [w * min(1.0, squeeze / sum(widths)) if w > 0.8 else w for w in widths]
    centres, y = [], TOP
    for w in widths:
        centres.append(y + w / 2)
        y += w
    labels = _spread(centres)
    parts = []
    for item, w, c, ly in zip(items, widths, centres, labels, strict=True):
        band = el(
            "rect",
            x=f"{x0:.1f}",
            y=f"{c - w / 2:.2f}",
            width=f"{x1 - x0:.1f}",
            height=f"{w:.2f}",
            fill=COLOUR[item.kind],
            stroke="#ffffff",
            stroke_width=0.5,
        )
        words = f"{item.label}: {number(item.value / 1e3)} kW"
        lx = x0 - 10 if role == "entering" else x1 + 10
        anchor = "end" if role == "entering" else "start"
        lead = el(
            "polyline",
            points=points(
                [(lx + (4 if role == "entering" else -4), ly), (x0 if role == "entering" else x1, c)]
            ),
            fill="none",
            stroke=MUTED,
            stroke_width=0.6,
        )
        parts.append(
            el(
                "g",
                [band, lead, text(lx, ly + 4, words, text_anchor=anchor, fill=INK)],
                class_=f"{role} {item.kind}",
                data_step=item.step,
                data_stream=item.stream,
            )
        )
    return parts


def _room(items: list[ExergyItem]) -> float:
    """Width for the labels of ``items`` [px] (about 6.6 px a character at 12 px)."""
    longest = max((len(f"{i.label}: {number(i.value / 1e3)} kW") for i in items), default=10)
    return 24.0 + 6.6 * longest


def _spread(centres: list[float]) -> list[float]:
    """Label heights near ``centres`` (ascending), at least :data:`GAP` apart."""
    out: list[float] = []
    for c in centres:
        out.append(max(c, out[-1] + GAP) if out else c)
    return out
