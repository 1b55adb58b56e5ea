"""Small SVG writing helpers shared by the pictures: escaped elements, the severity colours, the
marks of failing steps, number text."""

from __future__ import annotations

import html
import math
from collections.abc import Iterable

from audit.findings import ERROR, SEVERITY_RANK, WARNING
from audit.results import AuditResult

FONT = "font-family:sans-serif;font-size:12px"
INK = "#222222"
GRID = "#d0d4d8"
MUTED = "#5f6b76"

FILL = {ERROR: "#fbe3e1", WARNING: "#fff1d0", None: "#f2f4f6"}
"""Box fill by the step's worst open finding (None: none)."""
STROKE = {ERROR: "#c62828", WARNING: "#d98c00", None: "#5f6b76"}
"""Outline and mark colour by the step's worst open finding: red for errors, amber for warnings."""


def esc(text: object) -> str:
    """``text`` escaped for SVG/HTML text and attribute values."""
    return html.escape(str(text), quote=True)


def attrs(values: dict[str, object]) -> str:
    """Attribute text (``None`` values left out; names with ``_`` written with ``-``)."""
    return "".join(
        f' {name.rstrip("_").replace("_", "-")}="{esc(value)}"'
        for name, value in values.items()
        if value is not None
    )


def el(tag: str, content: str | Iterable[str] | None = None, **values: object) -> str:
    """One element; ``content`` is markup (already escaped) or a list of it."""
    if content is None:
        return f"<{tag}{attrs(values)}/>"
    body = content if isinstance(content, str) else "".join(content)
    return f"<{tag}{attrs(values)}>{body}</{tag}>"


def text(x: float, y: float, words: object, **values: object) -> str:
    """A text element with ``words`` escaped."""
    return el("text", esc(words), x=f"{x:.1f}", y=f"{y:.1f}", **values)


def document(width: float, height: float, body: Iterable[str], title: str, kind: str) -> str:
    """A whole SVG picture with a title (read by screen readers and shown on hover)."""
    return el(
        "svg",
        [el("title", esc(title)), *body],
        xmlns="http://www.w3.org/2000/svg",
        width=f"{width:.0f}",
        height=f"{height:.0f}",
        viewBox=f"0 0 {width:.0f} {height:.0f}",
        role="img",
        class_=f"picture {kind}",
        style=f"{FONT};background:#ffffff",
    )


def points(pts: Iterable[tuple[float, float]]) -> str:
    """SVG ``points`` text."""
    return " ".join(f"{x:.1f},{y:.1f}" for x, y in pts)


def step_marks(result: AuditResult) -> dict[str, str | None]:
    """Each step's worst finding not accepted by a reviewer (``error``, ``warning``) or None."""
    marks: dict[str, str | None] = {s.id: None for s in result.steps}
    for finding in result.findings:
        if finding.accepted or finding.step not in marks or finding.severity not in (ERROR, WARNING):
            continue
        current = marks[finding.step]
        if current is None or SEVERITY_RANK[finding.severity] > SEVERITY_RANK[current]:
            marks[finding.step] = finding.severity
    return marks


def number(value: float, significant: int = 3) -> str:
    """``value`` with about ``significant`` figures, thousands separated (no exponent)."""
    if value == 0 or not math.isfinite(value):
        return "0" if value == 0 else str(value)
    digits = max(0, significant - 1 - math.floor(math.log10(abs(value))))
    return f"{value:,.{digits}f}"
