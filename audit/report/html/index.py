"""A batch's HTML pages: each audited file's own report beside its workbook (same name, ``.html``)
and ``index.html`` listing every file with its verdict, its counts, its worst open finding, a link
to its report and, when a run history is given, its trend over the recorded runs."""

from __future__ import annotations

from pathlib import Path

from audit.history import runs
from audit.outcomes import FileOutcome
from audit.report.files import write_text
from audit.report.html.page import caution, page, verdict_badge
from audit.report.html.report import write_html
from audit.report.pictures.svg import esc

INDEX_NAME = "index.html"
TREND_RUNS = 10  # the recorded runs a trend shows, newest last


def report_names(outcomes: list[FileOutcome]) -> dict[str, str]:
    """Each audited file's report name in the output folder: its workbook's name with ``.html``,
    or its own stem when it has no workbook (numbered when two would clash)."""
    names: dict[str, str] = {}
    taken = {INDEX_NAME}
    for outcome in outcomes:
        if outcome.result is None:
            continue
        base = Path(outcome.workbook).name if outcome.workbook else Path(outcome.path).name
        name, k = str(Path(base).with_suffix(".html")), 2
        while name.lower() in taken:
            name = f"{Path(base).stem}-{k}.html"
            k += 1
        taken.add(name.lower())
        names[outcome.path] = name
    return names


def write_batch_html(
    outcomes: list[FileOutcome],
    folder: str | Path,
    fail_on: str = "error",
    history: str | Path | None = None,
) -> list[Path]:
    """Write each audited file's report and ``index.html`` into ``folder``; the paths written.
    Raises :class:`audit.errors.ReportError` when a file cannot be written."""
    folder = Path(folder)
    names = report_names(outcomes)
    written = []
    for outcome in outcomes:
        if outcome.result is not None:
            target = folder / names[outcome.path]
            write_html(outcome.result, target, fail_on=fail_on)
            written.append(target)
    rows = "".join(_row(o, names.get(o.path), fail_on, history) for o in outcomes)
    head = "<tr><th>file</th><th>verdict</th><th>errors</th><th>warnings</th><th>worst open finding</th>"
    head += "<th>report</th>" + ("<th>trend (oldest → newest)</th>" if history else "") + "</tr>"
    verdicts = [o.verdict(fail_on) for o in outcomes]
    summary = ", ".join(f"{verdicts.count(v)} {v.lower()}" for v in dict.fromkeys(verdicts))
    body = (
        f"<h1>Batch audit: {len(outcomes)} files</h1><p>{esc(summary)}; fails on: {esc(fail_on)}</p>"
        f'{caution()}<div class="scroll"><table class="batch">{head}{rows}</table></div>'
    )
    target = folder / INDEX_NAME
    write_text(target, page(f"Batch audit: {summary}", body), "the batch index")
    return [*written, target]


def _row(outcome: FileOutcome, report: str | None, fail_on: str, history: str | Path | None) -> str:
    verdict = outcome.verdict(fail_on)
    result = outcome.result
    if result is not None:
        counts = result.counts(include_accepted=False)
        errors, warnings = str(counts["error"]), str(counts["warning"])
        worst = outcome.worst_finding()
        detail = f"{worst.severity} {worst.name} at {worst.step}: {worst.message}" if worst else "none"
    else:
        errors = warnings = "–"
        detail = outcome.problems[0] if outcome.problems else ""
    link = f'<a href="{esc(report)}">{esc(report)}</a>' if report else "–"
    trend = f"<td>{_trend(history, outcome.path)}</td>" if history else ""
    return (
        f'<tr data-file="{esc(outcome.path)}" data-verdict="{esc(verdict)}"><td>{esc(outcome.path)}</td>'
        f"<td>{verdict_badge(verdict)}</td><td class='n'>{errors}</td><td class='n'>{warnings}</td>"
        f"<td>{esc(detail)}</td><td>{link}</td>{trend}</tr>"
    )


def _trend(history: str | Path, path: str) -> str:
    """The file's recorded runs, oldest first: a small bar per run (height: open errors, colour:
    verdict) and the counts in words."""
    recorded = list(reversed(runs(history, path, limit=TREND_RUNS)))
    if not recorded:
        return "no recorded runs"
    top = max((r.errors for r in recorded), default=0) or 1
    bars = []
    for k, run in enumerate(recorded):
        h = 4 + 20 * run.errors / top
        colour = {"PASS": "#2e7d32", "FAIL": "#c62828"}.get(run.verdict, "#6d4c41")
        bars.append(
            f'<rect x="{k * 10}" y="{26 - h:.1f}" width="8" height="{h:.1f}" fill="{colour}">'
            f"<title>{esc(run.run_at)}: {esc(run.verdict)}, {run.errors} errors</title></rect>"
        )
    words = " → ".join(f"{r.verdict.lower()} ({r.errors})" for r in recorded)
    picture = (
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{10 * len(recorded)}" height="26" '
        f'role="img" class="trend">{"".join(bars)}</svg>'
    )
    return f'{picture}<br><span class="muted">errors per run: {esc(words)}</span>'
