"""The HTML report's tables and step sections: findings, heat exchangers, fired heaters, steps (one
section each, the anchor of the network picture's boxes) and streams. Values in engineering units
(:mod:`audit.report.display`); every text from the balance escaped."""

from __future__ import annotations

from audit.findings import Finding
from audit.report.display import shown, unit
from audit.report.pictures.svg import esc, number
from audit.report.pictures.tq import tq_svg
from audit.results import AuditResult, StepResult

NONE = "–"


def step_anchor(step_id: str) -> str:
    return f"#step-{step_id}"


def stream_anchor(stream_id: str) -> str:
    return f"#stream-{stream_id}"


def value(v: float | None, quantity: str | None, difference: bool = False, figures: int = 4) -> str:
    """``v`` [SI] in its display unit, as escaped text ("–" when there is none)."""
    s = shown(v, quantity, difference)
    if s is None:
        return NONE
    if quantity == "fraction":
        return f"{s:.1%}"
    return esc(f"{number(s, figures)} {unit(quantity, difference)}".strip())


def _link(target: str | None, anchor: str) -> str:
    return f'<a href="{esc(anchor)}">{esc(target)}</a>' if target else ""


def findings_table(result: AuditResult) -> str:
    """Every finding, most severe first as reported, each linked to its step (and stream)."""
    if not result.findings:
        return "<p>No findings.</p>"
    rows = []
    for k, f in enumerate(result.findings, start=1):
        margin = value(f.margin, f.quantity, difference=True) if f.margin is not None else NONE
        state = f"accepted: {esc(f.accepted)}" if f.accepted else ""
        causes = "".join(f"<li>{esc(c)}</li>" for c in f.probable_causes)
        rows.append(
            f'<tr id="finding-{k}" class="{esc(f.severity)}" data-step="{esc(f.step or "")}">'
            f"<td>{esc(f.severity)}</td><td>{esc(f.name)}</td>"
            f"<td>{_link(f.step, step_anchor(f.step or ''))}</td>"
            f"<td>{_link(f.stream, stream_anchor(f.stream or ''))}</td>"
            f"<td>{esc(f.message)}{f'<ul>{causes}</ul>' if causes else ''}</td>"
            f'<td class="n">{margin}</td><td>{state}</td></tr>'
        )
    head = "<tr><th>severity</th><th>finding</th><th>step</th><th>stream</th><th>message</th>"
    head += "<th>margin</th><th>review</th></tr>"
    return f'<div class="scroll"><table class="findings">{head}{"".join(rows)}</table></div>'


def exchangers(result: AuditResult, marks: dict[str, str | None]) -> str:
    """Per heat exchanger: its rating values and its T–Q diagram."""
    parts = []
    for step in result.steps:
        rating = step.exchanger
        if rating is None:
            continue
        rows = [
            ("arrangement", esc(rating.arrangement)),
            ("duty", value(rating.duty, "power")),
            *(
                (f"approach at the {end}", value(dT, "temperature_difference"))
                for end, dT in zip(rating.ends, rating.end_approach, strict=True)
            ),
            ("LMTD of the terminals", value(rating.lmtd, "temperature_difference")),
            ("smallest approach", value(rating.min_approach, "temperature_difference")),
            ("where: duty from the cold inlet", value(rating.min_approach_duty, "power")),
            ("where: fraction of the duty", value(rating.min_approach_fraction, "fraction")),
        ]
        table = "".join(f"<tr><th>{name}</th><td class='n'>{v}</td></tr>" for name, v in rows)
        picture = tq_svg(step, marks.get(step.id))
        figure = (
            f'<div class="figure">{picture}</div>'
            if picture
            else (
                '<p class="muted">No temperature profile: the terminals cross or the profile could not '
                "be evaluated.</p>"
            )
        )
        parts.append(
            f'<h3 id="exchanger-{esc(step.id)}">{_link(step.id, step_anchor(step.id))}</h3>'
            f'<table class="exchanger" data-step="{esc(step.id)}">{table}</table>{figure}'
        )
    return "".join(parts) or "<p>No heat exchangers.</p>"


def fired_heaters(result: AuditResult) -> str:
    """Per fired heater or boiler: its efficiency on the stated heating-value basis."""
    rows = []
    for step in result.steps:
        if "efficiency_lhv" not in step.extra:
            continue
        stated = "HHV" if "fuel_hhv" in step.claimed else "LHV" if "fuel_lhv" in step.claimed else None
        lhv, hhv = step.extra.get("efficiency_lhv"), step.extra.get("efficiency_hhv")
        basis = stated or "none stated"
        rows.append(
            f"<tr><td>{_link(step.id, step_anchor(step.id))}</td><td>{esc(basis)}</td>"
            f"<td class='n'>{value(lhv, 'fraction')}</td><td class='n'>{value(hhv, 'fraction')}</td>"
            f"<td class='n'>{value(step.extra.get('heated_duty'), 'power')}</td></tr>"
        )
    if not rows:
        return ""
    head = "<tr><th>step</th><th>stated basis</th><th>efficiency, LHV basis</th>"
    head += "<th>efficiency, HHV basis</th><th>heated-side duty</th></tr>"
    return f"<h3>Fired heaters and boilers</h3><table class='fired'>{head}{''.join(rows)}</table>"


def step_section(result: AuditResult, step: StepResult, mark: str | None) -> str:
    """One step: what it is, its streams, its balance and its findings."""
    p, e = ("energy", "entropy") if step.batch else ("power", "entropy_rate")
    balance = [
        ("heat in Q", value(step.Q, p)),
        ("work out W", value(step.W, p)),
        ("enthalpy in", value(step.H_in, p)),
        ("enthalpy out", value(step.H_out, p)),
        ("first-law residual", value(step.energy_residual, p)),
        ("energy tolerance", value(step.energy_tolerance, p)),
        (
            "largest mass residual",
            value(max((abs(v) for v in step.mass_residual.values()), default=0.0), "mass_flow"),
        ),
        ("entropy generated", value(step.S_gen, e)),
        ("exergy destroyed T0·S_gen", value(step.exergy_destroyed, p)),
        ("reversible work W_rev", value(step.W_rev, p)),
        ("second-law efficiency", value(step.second_law_efficiency, "fraction")),
        ("isentropic efficiency", value(step.isentropic_efficiency, "fraction")),
    ]
    table = "".join(f"<tr><th>{name}</th><td class='n'>{v}</td></tr>" for name, v in balance)
    extra = "".join(
        f"<tr><th>{esc(k)}</th><td class='n'>{esc(number(v, 4)) if isinstance(v, float) else esc(v)}"
        "</td></tr>"
        for k, v in step.extra.items()
    )
    if extra:
        table += f"<tr><th colspan='2' class='muted'>kind-specific values (SI)</th></tr>{extra}"
    ins = ", ".join(_link(s, stream_anchor(s)) for s in step.inlets) or NONE
    outs = ", ".join(_link(s, stream_anchor(s)) for s in step.outlets) or NONE
    found = result.findings_for(step.id)
    listed = "".join(_finding_item(f) for f in found)
    words = f' <span class="mark">({"✖" if mark == "error" else "⚠"} {esc(mark)})</span>' if mark else ""
    return (
        f'<section id="step-{esc(step.id)}" class="step {esc(mark or "ok")}" data-step="{esc(step.id)}" '
        f'data-severity="{esc(mark or "none")}"><h3>{esc(step.id)}: {esc(step.kind.replace("_", " "))}'
        f"{words}</h3>"
        + (f"<p>{esc(step.description)}</p>" if step.description else "")
        + f"<p>in: {ins}; out: {outs}"
        + (f"; line {step.line} of the file" if step.line else "")
        + "</p>"
        + f'<div class="scroll"><table class="balance">{table}</table></div>'
        + (f"<ul>{listed}</ul>" if listed else "<p class='muted'>No findings.</p>")
        + '<p><a href="#network">back to the network</a></p></section>'
    )


def _finding_item(f: Finding) -> str:
    accepted = f" (accepted: {esc(f.accepted)})" if f.accepted else ""
    head = f"<b>{esc(f.severity)} {esc(f.name)}</b>"
    return f"<li class='{esc(f.severity)}'>{head}: {esc(f.message)}{accepted}</li>"


def streams_table(result: AuditResult) -> str:
    """Every stream's state and flow, each row an anchor."""
    head = "<tr><th>stream</th><th>fluid</th><th>T</th><th>P</th><th>phase</th><th>mass flow</th>"
    head += "<th>h</th><th>s</th><th>ψ</th><th>description</th></tr>"
    rows = [
        f'<tr id="stream-{esc(s.id)}"><td>{esc(s.id)}</td><td>{esc(s.fluid)}</td>'
        f"<td class='n'>{value(s.T, 'temperature')}</td><td class='n'>{value(s.P, 'pressure')}</td>"
        f"<td>{esc(s.phase)}</td><td class='n'>{value(s.mass_flow, 'mass_flow')}</td>"
        f"<td class='n'>{value(s.h, 'specific_energy')}</td>"
        f"<td class='n'>{value(s.s, 'specific_entropy')}</td>"
        f"<td class='n'>{value(s.psi, 'specific_energy')}</td><td>{esc(s.description or '')}</td></tr>"
        for s in result.streams
    ]
    return f'<div class="scroll"><table class="streams">{head}{"".join(rows)}</table></div>'
