"""T–Q diagram of a heat exchanger as SVG: both sides' temperature against the cumulative duty from
the cold inlet, with the smallest approach (the pinch) marked. Drawn from
:class:`audit.exchangers.ExchangerProfile` as kept by the heat exchanger's evaluation."""

from __future__ import annotations

from audit.exchangers import ExchangerProfile
from audit.report.display import shown
from audit.report.pictures.axes import Frame, nice_ticks
from audit.report.pictures.svg import INK, STROKE, document, el, number, points, text
from audit.results import StepResult

HOT = "#b5452a"  # the hot side's line
COLD = "#2a62b5"  # the cold side's line
WIDTH, HEIGHT = 560.0, 340.0


def tq_svg(step: StepResult, mark: str | None = None) -> str | None:
    """The T–Q diagram of ``step`` as SVG text (None when the step kept no profile); ``mark`` is
    the step's worst open finding (the pinch is drawn in its colour)."""
    profile = step.profile
    if profile is None:
        return None
    duty = [shown(q, "power") or 0.0 for q in profile.duty]
    hot = [shown(t, "temperature") or 0.0 for t in profile.hot_T]
    cold = [shown(t, "temperature") or 0.0 for t in profile.cold_T]
    xticks = nice_ticks(0.0, max(duty[-1], 1e-9))
    yticks = nice_ticks(min(cold + hot), max(cold + hot))
    frame = Frame(
        64, 28, WIDTH - 64 - 24, HEIGHT - 28 - 64, (xticks[0], xticks[-1]), (yticks[0], yticks[-1])
    )
    body = frame.draw(xticks, yticks, "cumulative duty from the cold inlet [kW]", "temperature [°C]")
    for name, values, colour in (("hot", hot, HOT), ("cold", cold, COLD)):
        xy = [(frame.x(q), frame.y(t)) for q, t in zip(duty, values, strict=True)]
        body.append(
            el(
                "polyline",
                points=points(xy),
                fill="none",
                stroke=colour,
                stroke_width=2,
                class_=f"series {name}",
                data_side=name,
                data_points=len(xy),
            )
        )
    body += _pinch(frame, profile, duty, hot, cold, mark)
    body += _legend(frame)
    title = f"T–Q diagram of {step.id}"
    return document(
        WIDTH, HEIGHT, [text(frame.left, 18, title, font_weight="bold", fill=INK), *body], title, "tq"
    )


def _pinch(
    frame: Frame,
    profile: ExchangerProfile,
    duty: list[float],
    hot: list[float],
    cold: list[float],
    mark: str | None,
) -> list[str]:
    i = profile.pinch_index
    x = frame.x(duty[i])
    colour = STROKE[mark]
    approach = profile.hot_T[i] - profile.cold_T[i]
    words = f"smallest approach {approach:.1f} K at {number(duty[i])} kW"
    anchor = "end" if x > frame.left + frame.width / 2 else "start"
    dx = -6 if anchor == "end" else 6
    return [
        el(
            "line",
            x1=f"{x:.1f}",
            x2=f"{x:.1f}",
            y1=frame.top,
            y2=frame.top + frame.height,
            stroke=colour,
            stroke_dasharray="5 4",
            stroke_width=1.5,
        ),
        el("circle", cx=f"{x:.1f}", cy=f"{frame.y(hot[i]):.1f}", r=4, fill=colour),
        el("circle", cx=f"{x:.1f}", cy=f"{frame.y(cold[i]):.1f}", r=4, fill=colour),
        el(
            "g",
            text(
                x + dx,
                frame.top + 14,
                words,
                text_anchor=anchor,
                fill=colour,
                font_weight="bold",
                stroke="#ffffff",
                stroke_width=3,
                paint_order="stroke",
            ),
            class_="pinch",
            data_index=i,
        ),
    ]


def _legend(frame: Frame) -> list[str]:
    y = frame.top + frame.height + 50
    parts = []
    for k, (name, colour) in enumerate((("hot side", HOT), ("cold side", COLD))):
        x = frame.left + k * 110
        parts.append(el("line", x1=x, x2=x + 24, y1=y, y2=y, stroke=colour, stroke_width=2))
        parts.append(text(x + 30, y + 4, name, fill=INK))
    return parts
