"""The reference slip: a fluid's printed h and s written on another common reference than the one
the balance says (or, declaring none, than the fluid's own).

Such a slip moves every enthalpy of the fluid by one constant and every entropy by one constant,
the differences between two references (:mod:`audit.model.references`). Undone, it re-evaluates
every stream of the fluid whose state is fixed by h or s (a state fixed by T, P or quality does
not depend on the reference); :mod:`audit.review.causes` names it when that closes every failing
step the fluid passes through and breaks none.

The fraction-basis slip is its kin for a liquid solution (:mod:`audit.properties.liquids`): a glycol
fraction written by volume when it was by mass, or the reverse, on every stream of that liquid;
undone, every such stream is re-evaluated with the other basis (:func:`fraction_basis_slips`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from audit.errors import StateError
from audit.model.references import NAMED_REFERENCES, for_fluid
from audit.review.runner import StepRunner

_SMALLEST = 1.0  # J/kg: references closer than this are the same reference


@dataclass
class FluidSlip:
    """A reference slip of one fluid: the changed printed inputs of each stream it moves."""

    sentence: str
    fluid: str
    changes: dict[str, dict[str, Any]] = field(default_factory=dict)


def reference_slips(runner: StepRunner) -> list[FluidSlip]:
    """One slip per pure fluid of the balance and per common reference other than the one its
    printed h and s are read on, when some stream of the fluid is fixed by h or s."""
    engine = runner.engine
    by_fluid: dict[str, list[str]] = {}
    for stream_id, spec in runner.balance.streams.items():
        if spec.fluid is not None and spec.composition is None and spec.pair in ("Ph", "Ps"):
            by_fluid.setdefault(runner.streams[stream_id].fluid, []).append(stream_id)
    slips = []
    for fluid, stream_ids in by_fluid.items():
        dh_now, ds_now = engine.printed_offset(fluid)
        declared = for_fluid(engine.reference, fluid)
        now = declared if isinstance(declared, str) else ("the declared" if declared else None)
        for name in NAMED_REFERENCES:
            other = engine.variant(reference={fluid: name}, formulation=engine.formulation)
            try:
                dh, ds = other.printed_offset(fluid)
            except StateError:
                continue
            if abs(dh - dh_now) < _SMALLEST:
                continue
            changes = {}
            for stream_id in stream_ids:
                spec = runner.balance.streams[stream_id]
                if spec.pair == "Ph":
                    changes[stream_id] = {"h": float(spec.h) + dh - dh_now}  # type: ignore[arg-type]
                else:
                    changes[stream_id] = {"s": float(spec.s) + ds - ds_now}  # type: ignore[arg-type]
            read_on = f"the {now} reference" if now else "its own reference"
            sentence = (
                f"closes if the h and s of {fluid} are printed on the {name} reference "
                f"({NAMED_REFERENCES[name]}), not {read_on}: every printed h of {fluid} is then "
                f"{(dh - dh_now) / 1e3:+.6g} kJ/kg and every s {(ds - ds_now) / 1e3:+.6g} kJ/(kg·K) "
                f"from the tool's basis; declare 'reference: {{{fluid}: {name}}}' under 'balance:'"
            )
            slips.append(FluidSlip(sentence, fluid, changes))
    return slips


def fraction_basis_slips(runner: StepRunner) -> list[FluidSlip]:
    """One slip per liquid solution whose fraction is written with a basis: the other basis (by
    mass for by volume, and the reverse) on every stream of that liquid."""
    by_liquid: dict[str, list[str]] = {}
    for stream_id, spec in runner.balance.streams.items():
        if spec.fraction_basis is not None:
            by_liquid.setdefault(runner.streams[stream_id].fluid, []).append(stream_id)
    slips = []
    for fluid, stream_ids in by_liquid.items():
        written = runner.balance.streams[stream_ids[0]].fraction_basis
        other = "mass" if written == "volume" else "volume"
        changes: dict[str, dict[str, Any]] = {sid: {"fraction_basis": other} for sid in stream_ids}
        sentence = (
            f"closes if the fraction of {fluid} is by {other}, not by {written} "
            f"(streams {', '.join(stream_ids)})"
        )
        slips.append(FluidSlip(sentence, fluid, changes))
    return slips
