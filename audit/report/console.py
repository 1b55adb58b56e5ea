"""The console report: a stream table and a findings summary, as text (the CLI prints it)."""

from __future__ import annotations

from audit.findings import SEVERITY_RANK
from audit.report.display import shown, unit
from audit.results import AuditResult


def stream_table(result: AuditResult) -> str:
    """One line per stream: T, P, phase, quality, flow, h, s, ψ in engineering units."""
    header = (f"{'stream':<12} {'fluid':<14} {'T [°C]':>9} {'P [bar]':>9} {'phase':<18} "
              f"{'quality':>7} {'flow [kg/s]':>11} {'h [kJ/kg]':>11} {'s [kJ/(kg·K)]':>13} "
              f"{'ψ [kJ/kg]':>10}  basis")
    lines = [header, "-" * len(header)]
    for s in result.streams:
        quality = f"{s.quality:.4f}" if s.quality is not None else ""
        lines.append(
            f"{s.id:<12} {s.fluid:<14} {s.T - 273.15:>9.2f} {s.P / 1e5:>9.4f} {s.phase:<18} "
            f"{quality:>7} {s.mass_flow:>11.4f} {s.h / 1e3:>11.2f} {s.s / 1e3:>13.5f} "
            f"{s.psi / 1e3:>10.2f}  {s.basis}"
        )
    return "\n".join(lines)


def findings_summary(result: AuditResult, fail_on: str = "error") -> str:
    """Counts by severity, then one line per finding with its margin, then the verdict."""
    counts = result.counts()
    title = f"{result.name}" + (f", revision {result.revision}" if result.revision else "")
    lines = [
        f"Audit of {title} ({result.file})",
        f"{len(result.streams)} streams, {len(result.steps)} steps; findings: "
        + ", ".join(f"{counts[s]} {s}" for s in sorted(counts, key=SEVERITY_RANK.get,
                                                        reverse=True)),
    ]
    ordered = sorted(result.findings, key=lambda f: -SEVERITY_RANK[f.severity])
    for f in ordered:
        where = f.step or (f"stream {f.stream}" if f.stream else "plant")
        margin = ""
        if f.margin is not None:
            diff = f.quantity in ("temperature",)
            value = shown(f.margin, f.quantity, difference=diff)
            margin = f" [margin {value:.4g} {unit(f.quantity, difference=diff)}"
            if f.margin_relative is not None:
                margin += f", {f.margin_relative:.1%}"
            margin += "]"
        lines.append(f"  {f.severity.upper():<7} {f.name:<28} {where:<10} {f.message}{margin}")
    verdict = "FAIL" if result.fails(fail_on) else "PASS"
    lines.append(f"Verdict: {verdict} (fails on findings at or above '{fail_on}')")
    lines.append("Consistency check only: not a safety or code-compliance review; defer to local "
                 "codes and licensed engineers.")
    return "\n".join(lines)
