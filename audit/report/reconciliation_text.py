"""The reconciliation as text: the console section and the display units of its values (read
from the records; nothing is computed here)."""

from __future__ import annotations

from audit.reconcile.records import Reading, Reconciliation
from audit.wording import to_bar, to_celsius

# quantity (as the uncertainty inputs name it) -> (unit, scale of a value, scale of a spread)
_UNITS: dict[str, tuple[str, float, float]] = {
    "pressure": ("bar", 1e-5, 1e-5),
    "mass_flow": ("kg/s", 1.0, 1.0),
    "molar_flow": ("mol/s", 1.0, 1.0),
    "volume_flow": ("m3/s", 1.0, 1.0),
    "power": ("kW", 1e-3, 1e-3),
    "energy": ("MJ", 1e-6, 1e-6),
    "mass": ("kg", 1.0, 1.0),
    "fraction": ("-", 1.0, 1.0),
    "specific_energy": ("kJ/kg", 1e-3, 1e-3),
    "specific_entropy": ("kJ/(kg K)", 1e-3, 1e-3),
}


def unit_of(reading: Reading) -> str:
    """The display unit of a reading's values."""
    if reading.quantity == "temperature_difference":
        return "°C"
    return _UNITS.get(reading.quantity or "", ("SI", 1.0, 1.0))[0]


def shown(reading: Reading, value: float | None, spread: bool = False) -> float | None:
    """A value (or, with ``spread``, an uncertainty or correction) of ``reading`` in its display
    unit (a temperature in °C, its spread in K)."""
    if value is None:
        return None
    if reading.quantity == "temperature_difference":
        return value if spread else to_celsius(value)
    if reading.quantity == "pressure" and not spread:
        return to_bar(value)
    return value * _UNITS.get(reading.quantity or "", ("SI", 1.0, 1.0))[1]


def _num(value: float | None, digits: int = 4) -> str:
    return "—" if value is None else f"{value:.{digits}g}"


def console_section(result: Reconciliation, all_readings: bool = False) -> str:
    """The console section: global test, gross errors (as sets), suspect and not-checkable
    readings, the audit of the reconciled balance and the caution."""
    lines = [f"Reconciliation of {result.name} ({result.file})"]
    solver = (
        f"converged in {result.iterations} iterations (tolerance {result.tolerance:g} in "
        "standard uncertainties)"
        if result.converged
        else f"NOT CONVERGED: {result.message}"
    )
    lines.append(f"  solver: {solver}; {result.evaluations} balance evaluations")
    first = result.first
    lines.append(
        f"  global test on the readings as read: γ = {first.statistic:.4g} against "
        f"χ²({first.dof}, {first.confidence:.0%}) = {first.critical:.4g}: "
        f"{'passed' if first.passed else 'FAILED'}"
    )
    by_key = {r.key: r for r in result.readings}
    for number, elim in enumerate(result.eliminations, 1):
        reading = by_key[elim.removed]
        note = "; " + elim.note.lstrip("; ") if elim.note else ""
        who = elim.removed if len(elim.named) <= 1 else ("one of {" + ", ".join(elim.named) + "}")
        lines.append(
            f"  gross error {number}: {who}, normalised correction "
            f"{elim.normalised:.3g}; read {_num(shown(reading, elim.measured))}, estimated "
            f"{_num(shown(reading, elim.estimate))} {unit_of(reading)}{note}"
        )
        lines.append(
            f"    then γ = {elim.after.statistic:.4g} against χ²({elim.after.dof}) = "
            f"{elim.after.critical:.4g}: {'passed' if elim.after.passed else 'failed'}"
        )
    if result.eliminations:
        final = result.final
        removed = ", ".join(r.key for r in result.readings if r.flag == "gross error")
        lines.append(
            f"  global test with the gross errors removed ({removed}): "
            f"γ = {final.statistic:.4g} against χ²({final.dof}) = {final.critical:.4g}: "
            f"{'passed' if final.passed else 'FAILED'}"
        )
    lines.append(
        f"  normalised corrections tested against {result.critical_value:.3f} ({result.critical_method})"
    )
    for reading in result.readings:
        if not all_readings and reading.flag not in ("gross error", "suspect", "unobservable"):
            continue
        unit = unit_of(reading)
        lines.append(
            f"    {reading.key:<22} {reading.flag or 'ok':<15} "
            f"read {_num(shown(reading, reading.measured))} "
            f"→ {_num(shown(reading, reading.reconciled))} {unit} ± "
            f"{_num(shown(reading, reading.u_after, True), 3)} "
            f"(z = {_num(reading.normalised, 3)})"
        )
    unchecked = [r.key for r in result.readings if r.flag in ("not checkable", "just determined")]
    if unchecked:
        lines.append(
            f"  not checkable (almost no redundancy; not confirmed either): {', '.join(unchecked)}"
        )
    for note in result.phase_notes:
        lines.append(f"  phase: {note}")
    for origin in result.origins:
        lines.append(f"  {origin.step} {origin.name}: {origin.origin} ({origin.note})")
    lines.append(f"  {result.caution}")
    return "\n".join(lines)
