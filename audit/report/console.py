"""The console report, as text for the command line to print: a stream table, a step table and the
findings, fitted to the terminal's width (80-120 columns and more), messages wrapped at words,
and a plain last line: ``PASS`` or ``FAIL: 3 errors, 1 warning``.

Colour marks the severities (errors red, warnings yellow, information blue) when ``colour`` is
true; :func:`colour_wanted` says when it is (a terminal, ``NO_COLOR`` unset, ``TERM`` not
``dumb``): never when the output is piped or written to a file. Every text that comes from the
balance (ids, fluids, messages naming them) passes through :func:`audit.wording.safe_text`, and is
never read as markup.
"""

from __future__ import annotations

import io
import os
import shutil
from collections.abc import Iterable, Mapping

from rich import box
from rich.console import Console, RenderableType
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from audit.findings import ERROR, INFO, SEVERITY_RANK, WARNING, Finding, at_or_above
from audit.report.display import shown, unit
from audit.results import AuditResult
from audit.wording import percent, safe_text, to_bar, to_celsius

STYLES = {ERROR: "bold red", WARNING: "yellow", INFO: "blue"}
DEFAULT_WIDTH = 100
MIN_WIDTH = 60
DISCLAIMER = (
    "Consistency check only: not a safety or code-compliance review; defer to local codes and "
    "licensed engineers."
)
INDENT = 9


def colour_wanted(is_terminal: bool, environ: Mapping[str, str] | None = None) -> bool:
    """Colour only on a terminal, and not when ``NO_COLOR`` is set (to anything but '') or the
    terminal is ``dumb``."""
    environ = os.environ if environ is None else environ
    return is_terminal and not environ.get("NO_COLOR") and environ.get("TERM") != "dumb"


def terminal_width() -> int:
    """The terminal's width in columns (``COLUMNS`` when set; :data:`DEFAULT_WIDTH` when the
    output is not a terminal), at least :data:`MIN_WIDTH`."""
    return max(MIN_WIDTH, shutil.get_terminal_size((DEFAULT_WIDTH, 24)).columns)


def render(parts: Iterable[RenderableType], width: int | None = None, colour: bool = False) -> str:
    """``parts`` as text ``width`` columns wide, with colour codes only when ``colour``."""
    console = Console(
        file=io.StringIO(),
        width=width or terminal_width(),
        force_terminal=colour,
        no_color=not colour,
        color_system="standard" if colour else None,
        highlight=False,
        emoji=False,
        markup=False,
    )
    for part in parts:
        console.print(part)
    text = console.file.getvalue()  # type: ignore[attr-defined]
    return "\n".join(line.rstrip() for line in text.splitlines())


def _table(title: str) -> Table:
    return Table(
        title=title,
        title_justify="left",
        title_style="bold",
        box=box.SIMPLE_HEAD,
        padding=(0, 1, 0, 0),
        pad_edge=False,
        collapse_padding=True,
        expand=False,
    )


def _number(value: float | None, digits: str) -> str:
    """``value`` formatted, '' for None; never '-0.0' (a value that rounds to zero)."""
    if value is None:
        return ""
    text = format(value, digits)
    return text[1:] if text.startswith("-") and not text.strip("-0.") else text


def stream_table_view(result: AuditResult) -> Table:
    """The streams: T, absolute P, phase (with the quality x of a two-phase state), flow, h, s, ψ
    in engineering units; the basis of h and s is named under the table (:func:`basis_note`)."""
    table = _table("Streams (pressures absolute)")
    longest = max((len(s.id) for s in result.streams), default=6)
    for name, numeric, least in (
        ("stream", False, max(min(longest, 8), 6)),
        ("fluid", False, 8),
        ("T\n[°C]", True, None),
        ("P abs\n[bar]", True, None),
        ("phase", False, 9),
        ("flow\n[kg/s]", True, None),
        ("h\n[kJ/kg]", True, None),
        ("s [kJ/\n(kg·K)]", True, None),
        ("ψ\n[kJ/kg]", True, None),
    ):
        table.add_column(
            name,
            justify="right" if numeric else "left",
            no_wrap=numeric,
            min_width=least,
            overflow="fold",
        )
    for s in result.streams:
        table.add_row(
            Text(safe_text(s.id)),
            Text(
                safe_text(s.fluid).replace("(", " (", 1)
                if s.fluid.startswith("mixture(")
                else safe_text(s.fluid)
            ),
            _number(to_celsius(s.T), ".2f"),
            f"{to_bar(s.P):.3f}",
            s.phase if s.quality is None else f"{s.phase} x = {s.quality:.4f}",
            f"{s.mass_flow:.4f}",
            _number(s.h / 1e3, ".1f"),
            f"{s.s / 1e3:.4f}",
            _number(s.psi / 1e3, ".1f"),
        )
    return table


def basis_note(result: AuditResult) -> Text:
    """Which streams' h and s are on which basis (docs/fields.md, "Reference state of h and s")."""
    by_basis: dict[str, list[str]] = {}
    for s in result.streams:
        by_basis.setdefault(s.basis, []).append(safe_text(s.id))
    parts = [f"{basis}: {', '.join(ids)}" for basis, ids in by_basis.items()]
    return Text("Basis of h and s. " + "; ".join(parts) + ".", style="dim")


def stream_table(result: AuditResult, width: int | None = None, colour: bool = False) -> str:
    """The stream table as text (see :func:`stream_table_view`)."""
    return render([stream_table_view(result), basis_note(result)], width, colour)


def _counted(findings: list[Finding]) -> Text:
    text = Text()
    for severity in (ERROR, WARNING, INFO):
        number = sum(1 for f in findings if f.severity == severity)
        if number:
            if text:
                text.append(", ")
            text.append(_plural(number, severity), style=STYLES[severity])
    return text


def _plural(number: int, word: str) -> str:
    return f"{number} {word}" + ("" if number == 1 else "s")


def step_table_view(result: AuditResult) -> Table:
    """One row per step: kind, heat in, work out, exergy destroyed, second-law efficiency and its
    open findings (a vessel's amounts are totals in kJ, a flow step's rates in kW)."""
    table = _table("Steps (a vessel's amounts in kJ)")
    longest = max((len(s.id) for s in result.steps), default=6)
    kinds = max((len(s.kind) for s in result.steps), default=6)
    least = {"step": max(min(longest, 8), 4), "kind": kinds}
    for name, numeric in (
        ("step", False),
        ("kind", False),
        ("Q in\n[kW]", True),
        ("W out\n[kW]", True),
        ("exergy\ndestroyed\n[kW]", True),
        ("second-law\nefficiency", True),
        ("open findings", False),
    ):
        table.add_column(
            name,
            justify="right" if numeric else "left",
            no_wrap=numeric,
            min_width=least.get(name),
            overflow="fold",
        )
    for step in result.steps:
        quantity = "energy" if step.batch else "power"
        efficiency = step.second_law_efficiency
        own = [f for f in result.findings if f.step == step.id and not f.accepted]
        table.add_row(
            Text(safe_text(step.id)),
            step.kind,
            _number(shown(step.Q, quantity), ".1f"),
            _number(shown(step.W, quantity), ".1f"),
            _number(shown(step.exergy_destroyed, quantity), ".1f"),
            "" if efficiency is None else f"{efficiency:.1%}",
            _counted(own) if own else Text("ok"),
        )
    return table


def step_table(result: AuditResult, width: int | None = None, colour: bool = False) -> str:
    """The step table as text (see :func:`step_table_view`)."""
    return render([step_table_view(result)], width, colour)


def _margin(f: Finding) -> str:
    if f.margin is None:
        return ""
    difference = f.quantity in ("temperature",)
    value = shown(f.margin, f.quantity, difference=difference)
    text = f"margin {value:.4g} {unit(f.quantity, difference=difference)}"
    if f.margin_relative is not None:
        text += f" ({percent(f.margin_relative)})"
    return text


def _details(f: Finding) -> list[str]:
    """The lines under a finding: margin, verdict with its uncertainty, the inputs to check
    first, probable causes, and the reviewer's acceptance."""
    lines = []
    margin = _margin(f)
    if f.verdict is not None:
        text = f"verdict: {f.verdict}"
        if f.uncertainty is not None:
            size = shown(f.uncertainty, f.quantity, difference=True)
            text += (
                f" (margin ± {size:.3g} {unit(f.quantity, difference=True)}, k = {f.coverage_factor:g})"
            )
        if f.monte_carlo_uncertainty is not None:
            size = shown(f.monte_carlo_uncertainty, f.quantity, difference=True)
            text += f"; Monte Carlo ± {size:.3g} {unit(f.quantity, difference=True)}"
        lines.append(text)
        first = [
            f"{safe_text(c.input)} ({c.share:.0%})"
            for c in f.contributors[:3]
            if c.share != c.share or c.share >= 0.005
        ]  # not evaluated (NaN), or ≥ 0.5 %
        if first:
            lines.append("check first: " + ", ".join(first))
    if margin and not lines:
        lines.append(margin)
    elif margin:
        lines[0] = f"{margin}; {lines[0]}"
    lines.extend(f"probable cause: {safe_text(cause)}" for cause in f.probable_causes)
    if f.accepted:
        lines.append(f"ACCEPTED: {safe_text(f.accepted)}")
    return lines


def finding_view(f: Finding) -> list[RenderableType]:
    """A finding: its severity, name and place on one line, then its message and details wrapped
    at words under it."""
    where = (
        f"step {safe_text(f.step)}"
        if f.step
        else (f"stream {safe_text(f.stream)}" if f.stream else "plant")
    )
    head = Text()
    head.append(f"{f.severity.upper():<{INDENT - 1}}", style=STYLES.get(f.severity, ""))
    head.append(f"{f.name}", style="bold")
    head.append(f" at {where}")
    body = [Text(safe_text(f.message))] + [Text(line, style="dim") for line in _details(f)]
    return [head, *(Padding(b, (0, 0, 0, INDENT)) for b in body)]


def verdict_line(result: AuditResult, fail_on: str = "error", marginal: bool = False) -> Text:
    """``PASS`` or ``FAIL: 3 errors, 1 warning`` (the open findings at or above the gate)."""
    if not result.fails(fail_on, marginal=marginal):
        return Text("PASS", style="bold green")
    failing = [
        f
        for f in result.findings
        if not f.accepted
        and (at_or_above(f.severity, fail_on) or (marginal and f.verdict == "marginal"))
    ]
    text = Text("FAIL", style="bold red")
    text.append(": ")
    text.append_text(_counted(failing))
    return text


def findings_summary(
    result: AuditResult,
    fail_on: str = "error",
    marginal: bool = False,
    width: int | None = None,
    colour: bool = False,
) -> str:
    """The audit's title and counts, one block per finding (most severe first), the scope note
    and the verdict line."""
    counts = result.counts()
    title = safe_text(result.name) + (
        f", revision {safe_text(result.revision)}" if result.revision else ""
    )
    accepted = sum(1 for f in result.findings if f.accepted)
    summary = (
        f"{len(result.streams)} streams, {len(result.steps)} steps; findings: "
        + ", ".join(
            f"{counts[s]} {s}" for s in sorted(counts, key=SEVERITY_RANK.__getitem__, reverse=True)
        )
        + (f" ({accepted} accepted by a reviewer)" if accepted else "")
    )
    parts: list[RenderableType] = [
        Text(f"Audit of {title} ({safe_text(result.file)})", style="bold"),
        Text(summary),
    ]
    for f in sorted(result.findings, key=lambda f: -SEVERITY_RANK[f.severity]):
        parts.extend(finding_view(f))
    gate = f"fails on findings at or above '{fail_on}'" + (", and on marginal ones" if marginal else "")
    parts += [
        Text(f"{DISCLAIMER} The check {gate}.", style="dim"),
        verdict_line(result, fail_on, marginal),
    ]
    return render(parts, width, colour)
