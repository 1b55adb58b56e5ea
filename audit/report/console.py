"""The console report: a stream table and a findings summary, as text (the CLI prints it)."""

from __future__ import annotations

from audit.findings import SEVERITY_RANK, Finding
from audit.printable import escaped
from audit.report.display import shown, unit
from audit.results import AuditResult
from audit.wording import percent, to_bar, to_celsius


def stream_table(result: AuditResult) -> str:
    """One line per stream: T, P, phase, quality, flow, h, s, ψ in engineering units."""
    header = (
        f"{'stream':<8} {'T [°C]':>9} {'P [bar]':>9} {'phase':<13} "
        f"{'quality':>7} {'flow [kg/s]':>11} {'h [kJ/kg]':>11} {'s [kJ/(kg·K)]':>13} "
        f"{'ψ [kJ/kg]':>10}  {'basis':<15}  fluid"
    )
    lines = [header, "-" * len(header)]
    for s in result.streams:
        quality = f"{s.quality:.4f}" if s.quality is not None else ""
        lines.append(
            f"{escaped(s.id):<8} {to_celsius(s.T):>9.2f} {to_bar(s.P):>9.4f} {escaped(s.phase):<13} "
            f"{quality:>7} {s.mass_flow:>11.4f} {s.h / 1e3:>11.2f} {s.s / 1e3:>13.5f} "
            f"{s.psi / 1e3:>10.2f}  {escaped(s.basis):<15}  {escaped(s.fluid)}"
        )
    return "\n".join(lines)


def _uncertainty_lines(f: Finding) -> list[str]:
    """Indented lines under a finding: its verdict with the expanded uncertainty, the inputs to
    check first, and its probable causes."""
    indent = " " * 10
    lines = []
    if f.verdict is not None:
        text = f"{indent}verdict: {f.verdict}"
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
            f"{escaped(c.input)} ({c.share:.0%})"
            for c in f.contributors[:3]
            if c.share != c.share or c.share >= 0.005
        ]  # not evaluated (NaN), or ≥ 0.5 %
        if first:
            lines.append(f"{indent}check first: " + ", ".join(first))
    lines.extend(f"{indent}probable cause: {escaped(cause)}" for cause in f.probable_causes)
    return lines


def findings_summary(result: AuditResult, fail_on: str = "error", marginal: bool = False) -> str:
    """Counts by severity, then one line per finding with its margin, then the verdict."""
    counts = result.counts()
    title = escaped(f"{result.name}" + (f", revision {result.revision}" if result.revision else ""))
    lines = [
        f"Audit of {title} ({escaped(result.file)})",
        f"{len(result.streams)} streams, {len(result.steps)} steps; findings: "
        + ", ".join(
            f"{counts[s]} {s}" for s in sorted(counts, key=SEVERITY_RANK.__getitem__, reverse=True)
        )
        + (
            f" ({accepted} accepted by a reviewer)"
            if (accepted := sum(1 for f in result.findings if f.accepted))
            else ""
        ),
    ]
    ordered = sorted(result.findings, key=lambda f: -SEVERITY_RANK[f.severity])
    for f in ordered:
        where = escaped(f.step or (f"stream {f.stream}" if f.stream else "plant"))
        margin = ""
        if f.margin is not None:
            diff = f.quantity in ("temperature",)
            value = shown(f.margin, f.quantity, difference=diff)
            margin = f" [margin {value:.4g} {unit(f.quantity, difference=diff)}"
            if f.margin_relative is not None:
                margin += f", {percent(f.margin_relative)}"
            margin += "]"
        if f.accepted:
            margin += f" ACCEPTED: {escaped(f.accepted)}"
        lines.append(f"  {f.severity.upper():<7} {f.name:<28} {where:<10} {escaped(f.message)}{margin}")
        lines.extend(_uncertainty_lines(f))
    verdict = "FAIL" if result.fails(fail_on, marginal=marginal) else "PASS"
    lines.append(
        f"Verdict: {verdict} (fails on findings at or above '{fail_on}'"
        + (", and on marginal ones)" if marginal else ")")
    )
    lines.append(
        "Consistency check only: not a safety or code-compliance review; defer to local "
        "codes and licensed engineers."
    )
    return "\n".join(lines)
