"""The plant around the steps: its topology (every stream a step names exists, produced and consumed
by at most one step, no two steps with one id), its totals (boundary heat, work, exergy destroyed)
and the findings on a stream's state alone (a gas mixture below its dew point, a liquid solution
below its freezing point).
"""

from __future__ import annotations

import difflib
from collections import defaultdict
from typing import Any, cast

from audit.errors import Problem
from audit.findings import ERROR, WARNING, Finding, relative
from audit.input.document import Document
from audit.model.balance import Balance
from audit.properties.state import State
from audit.results import PlantTotals, StepResult, StreamResult
from audit.wording import celsius


# -- topology ----------------------------------------------------------------------------------------
def check_topology(
    balance: Balance, document: Document, findings: list[Finding], streams: dict[str, StreamResult]
) -> list[Problem]:
    problems: list[Problem] = []
    producers: dict[str, list[str]] = defaultdict(list)
    consumers: dict[str, list[str]] = defaultdict(list)
    seen_ids: dict[str, int] = {}
    raw_steps = document.data.get("steps") or []
    for index, step in enumerate(balance.steps):
        line, _ = document.position(("steps", index))
        if step.id in seen_ids:
            problems.append(
                Problem(
                    f"the step id '{step.id}' is used twice (also on line {seen_ids[step.id]})",
                    file=document.file,
                    line=line,
                    where=f"step {step.id}",
                )
            )
        seen_ids.setdefault(step.id, line or 0)
        inlets, outlets = step.stream_ids()
        for stream_id in dict.fromkeys(i for i in inlets if i in outlets):
            problems.append(
                Problem(
                    f"stream '{stream_id}' is both an inlet and an outlet of the step; a stream "
                    "cannot leave a step and enter it again (name the stream the step produces)",
                    file=document.file,
                    line=line,
                    where=f"step {step.id}",
                )
            )
        for role, ids, table in (("inlet", inlets, consumers), ("outlet", outlets, producers)):
            for stream_id in ids:
                if stream_id not in balance.streams:
                    path = _find_reference(raw_steps[index], stream_id, ("steps", index))
                    ref_line, ref_col = document.position(path)
                    close = difflib.get_close_matches(stream_id, list(balance.streams), n=1)
                    problems.append(
                        Problem(
                            f"{role} '{stream_id}' is not a stream of this balance"
                            + (f"; did you mean '{close[0]}'?" if close else ""),
                            file=document.file,
                            line=ref_line,
                            column=ref_col,
                            where=f"step {step.id}",
                        )
                    )
                    continue
                if step.id in table[stream_id]:
                    problems.append(
                        Problem(
                            f"stream '{stream_id}' is named twice as an {role} of the same step",
                            file=document.file,
                            line=line,
                            where=f"step {step.id}",
                        )
                    )
                table[stream_id].append(step.id)
    for stream_id, steps in producers.items():
        if len(steps) > 1:
            problems.append(
                Problem(
                    f"is produced by more than one step ({', '.join(steps)}); a stream leaves one "
                    "step only",
                    **document.place(("streams", stream_id)),
                    where=f"stream {stream_id}",
                )
            )
    for stream_id, steps in consumers.items():
        if len(steps) > 1:
            backwards = _connected_backwards(balance, steps, producers, consumers)
            advice = (
                f"{backwards}: swap its inlet and outlet"
                if backwards
                else "add a splitter if the stream divides"
            )
            problems.append(
                Problem(
                    f"is consumed by more than one step ({', '.join(steps)}); a stream enters one "
                    f"step only ({advice})",
                    **document.place(("streams", stream_id)),
                    where=f"stream {stream_id}",
                )
            )
    if balance.steps:
        for stream_id in balance.streams:
            if stream_id not in producers and stream_id not in consumers:
                findings.append(
                    Finding(
                        WARNING,
                        "stream-unused",
                        None,
                        f"stream {stream_id} is neither produced nor consumed by any step",
                        stream=stream_id,
                    )
                )
    return problems


def _connected_backwards(
    balance: Balance,
    steps: list[str],
    producers: dict[str, list[str]],
    consumers: dict[str, list[str]],
) -> str:
    """'step P1 looks connected backwards (its outlet S01 enters no step and leaves no other)'
    when one of ``steps`` (the consumers of one stream) has one inlet and one outlet, and that
    outlet enters no step: its ports are probably swapped. '' otherwise."""
    by_id = {step.id: step for step in balance.steps}
    for step_id in steps:
        step = by_id.get(step_id)
        if step is None:
            continue
        inlets, outlets = step.stream_ids()
        if len(inlets) == 1 and len(outlets) == 1:
            outlet = outlets[0]
            if not consumers.get(outlet) and producers.get(outlet) == [step_id]:
                return f"step {step_id} looks connected backwards, its outlet {outlet} entering no step"
    return ""


def _find_reference(raw: Any, value: str, path: tuple) -> tuple:
    """The path of the first string equal to ``value`` inside ``raw`` (for error positions)."""
    if isinstance(raw, str):
        return path if raw == value else ()
    items = raw.items() if isinstance(raw, dict) else enumerate(raw) if isinstance(raw, list) else []
    for key, item in items:
        if key in ("id", "description"):
            continue
        found = _find_reference(item, value, (*path, key))
        if found:
            return found
    return () if len(path) > 2 else path


# -- plant totals --------------------------------------------------------------------------------
def plant_totals(
    balance: Balance, streams: dict[str, StreamResult], steps: list[StepResult]
) -> PlantTotals:
    flow_steps = [s for s in steps if not s.batch]
    produced = {o for s in flow_steps for o in s.outlets}
    consumed = {i for s in flow_steps for i in s.inlets}
    boundary_in = sorted(consumed - produced)
    boundary_out = sorted(produced - consumed)

    def energy(ids: list[str]) -> float:
        return sum(streams[i].mass_flow * (streams[i].h + streams[i].kinetic_potential) for i in ids)

    Q_net = sum(s.Q for s in flow_steps)
    W_net = sum(s.W for s in flow_steps)
    return PlantTotals(
        heat_in=sum(q.Q for s in flow_steps for q in s.heat_flows if q.Q > 0),
        heat_out=-sum(q.Q for s in flow_steps for q in s.heat_flows if q.Q < 0),
        work_out=sum(s.W for s in flow_steps if s.W > 0),
        work_in=-sum(s.W for s in flow_steps if s.W < 0),
        exergy_destroyed=sum(s.exergy_destroyed for s in flow_steps),
        boundary_inlets=boundary_in,
        boundary_outlets=boundary_out,
        boundary_energy_residual=Q_net - W_net - (energy(boundary_out) - energy(boundary_in)),
        sum_of_step_residuals=sum(s.energy_residual for s in flow_steps),
    )


# -- a stream's state alone -----------------------------------------------------------------------
def freezing_finding(stream_id: str, state: State) -> Finding:
    """A liquid solution colder than its freezing point: it would be ice slurry, not liquid."""
    T_f = cast(float, state.below_freezing)
    return Finding(
        ERROR,
        "below-freezing-point",
        None,
        f"stream {stream_id} ({state.fluid}) at {celsius(state.T)} is {T_f - state.T:.3g} K below "
        f"the solution's freezing point ({celsius(T_f)}): it would freeze; a stronger solution "
        "or a warmer stream is needed (its values here carry the liquid from the freezing point "
        "at constant heat capacity)",
        claimed=state.T,
        bound=T_f,
        margin=T_f - state.T,
        quantity="temperature",
        stream=stream_id,
    )


def dew_point_findings(stream_id: str, state: State) -> list[Finding]:
    """A gas mixture with a species above its saturation pressure would condense; the ideal-gas
    mixture model does not, so the stream's values assume a gas that cannot exist."""
    found = []
    for formula, partial, p_sat in state.condensing:
        found.append(
            Finding(
                ERROR,
                "below-dew-point",
                None,
                f"stream {stream_id} is below its dew point: the partial pressure of {formula} "
                f"({partial / 1e3:.4g} kPa) exceeds its saturation pressure at "
                f"{celsius(state.T)} ({p_sat / 1e3:.4g} kPa), so it would condense; the "
                "ideal-gas mixture model does not condense: give the condensate as a stream of its "
                "own and the gas at its dew point or above",
                claimed=partial,
                bound=p_sat,
                margin=partial - p_sat,
                margin_relative=relative(partial - p_sat, p_sat),
                quantity="pressure",
                stream=stream_id,
            )
        )
    return found
