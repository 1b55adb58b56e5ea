"""One balance's HTML report: verdict, caution, findings linked to their steps, the network picture
(each box a link to its step's balance), the exergy flow diagram and the exergy destroyed per step,
the heat exchangers' T–Q diagrams, then every step and stream."""

from __future__ import annotations

from pathlib import Path

from audit.reconcile.records import Reconciliation
from audit.report.files import write_text
from audit.report.html.page import caution, page, verdict_badge
from audit.report.html.reconciliation import reconciliation_section
from audit.report.html.sections import (
    exchangers,
    findings_table,
    fired_heaters,
    step_anchor,
    step_section,
    streams_table,
)
from audit.report.pictures.exergy_bars import exergy_bars_svg
from audit.report.pictures.exergy_flow import exergy_flow_svg
from audit.report.pictures.network import network_svg
from audit.report.pictures.svg import esc, step_marks
from audit.results import AuditResult
from audit.wording import bar, celsius

SECTIONS = (
    ("findings", "Findings"),
    ("network", "Network"),
    ("exergy", "Exergy"),
    ("exchangers", "Heat exchangers"),
    ("steps", "Steps"),
    ("streams", "Streams"),
)


def report_html(
    result: AuditResult,
    fail_on: str = "error",
    marginal: bool = False,
    reconciliation: Reconciliation | None = None,
) -> str:
    """The report of ``result`` as one HTML document (text), with a Reconciliation section after
    the findings when a ``reconciliation`` is given."""
    marks = step_marks(result)
    failed = result.fails(fail_on, marginal=marginal)
    counts = result.counts(include_accepted=False)
    accepted = sum(1 for f in result.findings if f.accepted)
    revision = f", revision {result.revision}" if result.revision else ""
    title = f"{result.name}{revision}"
    summary = (
        f"{counts['error']} error, {counts['warning']} warning, {counts['info']} info"
        + (f", {accepted} accepted by a reviewer" if accepted else "")
        + f"; fails on: {fail_on}{' or marginal' if marginal else ''}"
    )
    sections: tuple[tuple[str, str], ...] = SECTIONS
    if reconciliation is not None:
        sections = (SECTIONS[0], ("reconciliation", "Reconciliation"), *SECTIONS[1:])
    nav = "".join(f'<a href="#{key}">{name}</a>' for key, name in sections)
    failing = [s for s, m in marks.items() if m]
    where = (
        "Failing steps: " + ", ".join(f'<a href="{step_anchor(s)}">{esc(s)}</a>' for s in failing)
        if failing
        else "No step has an open error or warning."
    )
    body = [
        f"<h1>{esc(title)}</h1>",
        f"<p>{verdict_badge('FAIL' if failed else 'PASS')} {esc(summary)}</p>",
        f"<p class='muted'>File {esc(result.file)} (sha256 {esc(result.sha256[:12])}…); dead state "
        f"{esc(celsius(result.dead_T))}, {esc(bar(result.dead_P))}; "
        f"plant-audit {esc(result.provenance.get('plant-audit', ''))}</p>",
        caution(),
        f"<nav>{nav}</nav>",
        f'<h2 id="findings">Findings</h2><p>{where}</p>{findings_table(result)}',
        *(
            [
                '<h2 id="reconciliation">Reconciliation</h2>',
                reconciliation_section(reconciliation),
            ]
            if reconciliation is not None
            else []
        ),
        '<h2 id="network">Network</h2><p>Each box links to its step\'s balance; red: an open error, '
        "amber: an open warning.</p>",
        f'<div class="figure">{network_svg(result, step_anchor)}</div>',
        '<h2 id="exergy">Exergy</h2>',
        f'<div class="figure">{exergy_flow_svg(result)}</div>',
        f'<div class="figure">{exergy_bars_svg(result, step_anchor)}</div>',
        f'<h2 id="exchangers">Heat exchangers</h2>{exchangers(result, marks)}{fired_heaters(result)}',
        '<h2 id="steps">Steps</h2>',
        *(step_section(result, s, marks[s.id]) for s in result.steps),
        f'<h2 id="streams">Streams</h2>{streams_table(result)}',
        caution(),
    ]
    return page(f"{title}: {'FAIL' if failed else 'PASS'}", "\n".join(body))


def write_html(
    result: AuditResult,
    path: str | Path,
    fail_on: str = "error",
    marginal: bool = False,
    reconciliation: Reconciliation | None = None,
) -> None:
    """Write the HTML report atomically; raises :class:`audit.errors.ReportError` when the file
    cannot be written."""
    write_text(path, report_html(result, fail_on, marginal, reconciliation), "the HTML report")
