"""Exergy destroyed per flow step as an SVG bar chart on a logarithmic scale, largest first, so the
small steps stay readable beside the largest; each bar says its value, and a step with an open
error is drawn red, one with a warning amber (and says so). A negative destruction (a second-law
violation) cannot be drawn on a log scale: its row says so in words."""

from __future__ import annotations

import math
from collections.abc import Callable

from audit.report.pictures.svg import (
    FILL,
    GRID,
    INK,
    MUTED,
    STROKE,
    document,
    el,
    number,
    step_marks,
    text,
)
from audit.results import AuditResult

ROW = 24.0
LEFT = 90.0
PLOT = 460.0
RIGHT = 190.0


def exergy_bars_svg(result: AuditResult, link: Callable[[str], str] | None = None) -> str:
    """The chart as SVG text; ``link(step_id)``, when given, is the target of each step's row."""
    marks = step_marks(result)
    flow = sorted((s for s in result.steps if not s.batch), key=lambda s: -s.exergy_destroyed)
    kilowatts = [s.exergy_destroyed / 1e3 for s in flow]
    positive = [v for v in kilowatts if v > 0]
    low = 10 ** math.floor(math.log10(min(positive))) if positive else 0.1
    high = 10 ** math.ceil(math.log10(max(positive))) if positive else 1.0
    high = max(high, low * 10)

    def x(value: float) -> float:
        return LEFT + (math.log10(value) - math.log10(low)) / (math.log10(high) - math.log10(low)) * PLOT

    top = 44.0
    height = top + ROW * len(flow) + 56
    body = [
        text(12, 20, "Exergy destroyed per step [kW], logarithmic scale", font_weight="bold", fill=INK)
    ]
    decade = low
    while decade <= high * 1.0001:
        gx = x(decade)
        body.append(
            el("line", x1=f"{gx:.1f}", x2=f"{gx:.1f}", y1=top - 4, y2=top + ROW * len(flow), stroke=GRID)
        )
        body.append(
            text(gx, top + ROW * len(flow) + 16, number(decade, 1), text_anchor="middle", fill=INK)
        )
        decade *= 10
    for k, (step, value) in enumerate(zip(flow, kilowatts, strict=True)):
        mark = marks[step.id]
        y = top + k * ROW
        row = [
            text(
                LEFT - 8,
                y + 16,
                step.id,
                text_anchor="end",
                fill=STROKE[mark] if mark else INK,
                font_weight="bold" if mark else None,
            )
        ]
        if value > 0:
            end = max(x(max(value, low)), LEFT + 1)
            row.append(
                el(
                    "rect",
                    x=LEFT,
                    y=f"{y + 4:.1f}",
                    width=f"{end - LEFT:.1f}",
                    height=ROW - 8,
                    fill=STROKE[mark] if mark else "#8a949e",
                    fill_opacity=0.85 if mark else 1,
                )
            )
            words = f"{number(value)} kW" + (f" ({mark})" if mark else "")
            row.append(text(end + 6, y + 16, words, fill=STROKE[mark] if mark else INK))
        else:
            words = f"{number(value)} kW: negative, a second-law violation ({mark or 'no finding'})"
            row.append(
                el("rect", x=LEFT, y=f"{y + 4:.1f}", width=PLOT, height=ROW - 8, fill=FILL["error"])
            )
            row.append(text(LEFT + 6, y + 16, words, fill=STROKE["error"]))
        group = el("g", row, class_=f"bar {mark or 'ok'}", data_step=step.id)
        body.append(el("a", group, href=link(step.id)) if link else group)
    if not flow:
        body.append(text(LEFT, top + 16, "no flow steps: nothing to chart", fill=MUTED))
    body.append(
        text(
            LEFT + PLOT / 2,
            height - 14,
            "exergy destroyed T0·Ṡ_gen [kW]",
            text_anchor="middle",
            fill=INK,
        )
    )
    title = f"Exergy destroyed per step of {result.name}"
    return document(LEFT + PLOT + RIGHT, height, body, title, "exergy-bars")
