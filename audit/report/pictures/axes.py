"""Plot frames for the charts: nice tick values and a frame with ticks, grid and axis titles."""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

from audit.report.pictures.svg import GRID, INK, el, number, text


def nice_ticks(low: float, high: float, count: int = 6) -> list[float]:
    """Round tick values covering [low, high] (steps of 1, 2 or 5 times a power of ten)."""
    if not (math.isfinite(low) and math.isfinite(high)) or high <= low:
        high = low + 1.0
    raw = (high - low) / max(count - 1, 1)
    power = 10 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1, 2, 5, 10) if m * power >= raw)
    first = math.floor(low / step) * step
    ticks = []
    value = first
    while value < high + step * 0.999:
        ticks.append(round(value, 12))
        value += step
    return ticks


def tick(value: float) -> str:
    """A tick value as text: whole numbers without decimals, others with up to three figures."""
    return f"{value:,.0f}" if float(value).is_integer() else number(value)


@dataclass
class Frame:
    """A plot area at (left, top) of size (width, height) with linear axes x ∈ xs, y ∈ ys."""

    left: float
    top: float
    width: float
    height: float
    xs: tuple[float, float]
    ys: tuple[float, float]

    def x(self, value: float) -> float:
        lo, hi = self.xs
        return self.left + (value - lo) / (hi - lo) * self.width

    def y(self, value: float) -> float:
        lo, hi = self.ys
        return self.top + self.height - (value - lo) / (hi - lo) * self.height

    def draw(
        self,
        xticks: list[float],
        yticks: list[float],
        xtitle: str,
        ytitle: str,
        ylabel: Callable[[float], str] | None = None,
    ) -> list[str]:
        """The frame, grid lines, tick labels and axis titles."""
        parts = []
        for t in xticks:
            x = self.x(t)
            parts.append(
                el(
                    "line",
                    x1=f"{x:.1f}",
                    x2=f"{x:.1f}",
                    y1=self.top,
                    y2=self.top + self.height,
                    stroke=GRID,
                )
            )
            parts.append(text(x, self.top + self.height + 15, tick(t), text_anchor="middle", fill=INK))
        for t in yticks:
            y = self.y(t)
            parts.append(
                el(
                    "line",
                    x1=self.left,
                    x2=self.left + self.width,
                    y1=f"{y:.1f}",
                    y2=f"{y:.1f}",
                    stroke=GRID,
                )
            )
            parts.append(text(self.left - 6, y + 4, (ylabel or tick)(t), text_anchor="end", fill=INK))
        parts.append(
            el(
                "rect",
                x=self.left,
                y=self.top,
                width=self.width,
                height=self.height,
                fill="none",
                stroke=INK,
            )
        )
        parts.append(
            text(
                self.left + self.width / 2,
                self.top + self.height + 34,
                xtitle,
                text_anchor="middle",
                fill=INK,
            )
        )
        cy = self.top + self.height / 2
        parts.append(
            text(14, cy, ytitle, text_anchor="middle", fill=INK, transform=f"rotate(-90 14 {cy:.1f})")
        )
        return parts
