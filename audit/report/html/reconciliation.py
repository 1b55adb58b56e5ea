"""The Reconciliation section of the HTML report (``plant-audit reconcile FILE --html X``): the
global tests, the gross errors named (each as its set: "one of these"), the audit of the
reconciled balance, then the readings that were flagged (every reading with ``every``). Values in
the display units of :mod:`audit.report.reconciliation_text`; text escaped."""

from __future__ import annotations

from audit.reconcile.records import Reading, Reconciliation
from audit.report.pictures.svg import esc, number
from audit.report.reconciliation_text import shown, unit_of
from audit.report.sheets.reconciliation import test_lines

NONE = "–"
SHOWN_FLAGS = ("gross error", "suspect", "unobservable")


def _v(reading: Reading, value: float | None, spread: bool = False) -> str:
    s = shown(reading, value, spread)
    return NONE if s is None else esc(number(s, 4))


def reconciliation_section(result: Reconciliation, every: bool = False) -> str:
    """The section's HTML (without its heading)."""
    parts = [f'<p class="caution" role="note"><strong>Caution.</strong> {esc(result.caution)}</p>']
    items = [f"<li>{esc(label)}: {esc(text)}</li>" for label, text, _ in test_lines(result)]
    items.append(
        f"<li>normalised corrections tested against {result.critical_value:.3f} "
        f"({esc(result.critical_method)})</li>"
    )
    if not result.converged:
        items.append(f"<li><strong>not converged</strong>: {esc(result.message)}</li>")
    for number_, elim in enumerate(result.eliminations, 1):
        who = (
            esc(elim.removed) if len(elim.named) <= 1 else "one of {" + esc(", ".join(elim.named)) + "}"
        )
        note = esc(elim.note.lstrip("; "))
        items.append(
            f'<li class="error">gross error {number_}: {who}, normalised correction '
            f"{elim.normalised:.3g}{'; ' + note if note else ''}</li>"
        )
    items += [f"<li>phase: {esc(note)}</li>" for note in result.phase_notes]
    items += [
        f"<li>{esc(o.step)} {esc(o.name)}: {esc(o.origin)} ({esc(o.note)})</li>" for o in result.origins
    ]
    parts.append(f"<ul>{''.join(items)}</ul>")
    rows = []
    for r in result.readings:
        if not every and r.flag not in SHOWN_FLAGS:
            continue
        z = NONE if r.normalised is None else f"{r.normalised:.3g}"
        rows.append(
            f"<tr><td>{esc(r.key)}</td><td>{esc(r.flag or 'ok')}</td><td>{esc(unit_of(r))}</td>"
            f'<td class="n">{_v(r, r.measured)}</td><td class="n">{_v(r, r.reconciled)}</td>'
            f'<td class="n">{_v(r, r.u_before, True)}</td><td class="n">{_v(r, r.u_after, True)}</td>'
            f'<td class="n">{z}</td><td>{esc(", ".join(r.equivalent_set))}</td></tr>'
        )
    if rows:
        head = (
            "<tr><th>reading</th><th>flag</th><th>unit</th><th>measured</th><th>reconciled</th>"
            "<th>u before</th><th>u after</th><th>normalised correction</th>"
            "<th>equivalent set</th></tr>"
        )
        parts.append(f'<div class="scroll"><table>{head}{"".join(rows)}</table></div>')
    unchecked = [r.key for r in result.readings if r.flag in ("not checkable", "just determined")]
    if unchecked:
        parts.append(
            "<p>Not checkable (almost no redundancy; not confirmed either): "
            f"{esc(', '.join(unchecked))}</p>"
        )
    return "\n".join(parts)
