"""Compare two revisions of a balance: findings new, resolved or changed; stream states and step
claims that changed beyond a tolerance; streams and steps added or removed.

Findings are matched by (step, stream, finding name) — when one revision has several findings
with the same key, they pair in the order reported. Streams and steps are matched by id.

A number has *changed* when ``|new − old| > atol + rtol · max(|old|, |new|)``: ``atol`` per kind of
quantity (:data:`ABSOLUTE`, below the precision a balance is written with: 1 mK, 1 Pa, 1 g/h …)
and ``rtol`` (default 1e-6) given by the caller; text (fluid, phase, kind, inlets) changes when it
differs. Values are SI throughout. Every claim a step writes differently in the two files is
listed too, as written (:mod:`audit.claim_changes`).
"""

from __future__ import annotations

import math
from collections import defaultdict
from dataclasses import dataclass, field

from audit.claim_changes import claim_changes
from audit.findings import Finding, at_or_above
from audit.outcomes import FindingKey, finding_key
from audit.results import AuditResult

DEFAULT_RTOL = 1e-6

ABSOLUTE: dict[str | None, float] = {
    "temperature": 1e-3,  # K
    "temperature_difference": 1e-3,  # K
    "pressure": 1.0,  # Pa
    "mass_flow": 1e-6,  # kg/s (3.6 g/h)
    "power": 1.0,  # W
    "energy": 1.0,  # J
    "entropy_rate": 1e-3,  # W/K
    "entropy": 1e-3,  # J/K
    "specific_energy": 1.0,  # J/kg
    "specific_entropy": 1e-3,  # J/(kg K)
    "fraction": 1e-6,  # -
    None: 0.0,
}
"""Absolute tolerance [SI] per kind of quantity."""

STREAM_FIELDS: list[tuple[str, str | None]] = [
    ("fluid", None),
    ("phase", None),
    ("T", "temperature"),
    ("P", "pressure"),
    ("mass_flow", "mass_flow"),
    ("quality", "fraction"),
    ("h", "specific_energy"),
    ("s", "specific_entropy"),
]
"""The stream properties compared, with their kind of quantity (None: text)."""

NEW = "new"
RESOLVED = "resolved"
CHANGED = "changed"


@dataclass(frozen=True)
class FindingChange:
    """A finding that is new, resolved, or present in both revisions with a changed margin,
    severity or acceptance (``what`` lists how)."""

    status: str
    key: FindingKey
    old: Finding | None
    new: Finding | None
    what: tuple[str, ...] = ()


@dataclass(frozen=True)
class ValueChange:
    """A stream property or step claim that changed: ``where`` is 'stream' or 'step'."""

    where: str
    id: str
    field: str
    old: float | str | None
    new: float | str | None
    quantity: str | None = None


@dataclass
class RevisionDiff:
    """What changed from ``old`` to ``new`` (see the module docstring)."""

    old_file: str
    new_file: str
    old_revision: str | None
    new_revision: str | None
    rtol: float
    findings: list[FindingChange] = field(default_factory=list)
    streams_added: list[str] = field(default_factory=list)
    streams_removed: list[str] = field(default_factory=list)
    steps_added: list[str] = field(default_factory=list)
    steps_removed: list[str] = field(default_factory=list)
    changes: list[ValueChange] = field(default_factory=list)

    def with_status(self, status: str) -> list[FindingChange]:
        return [c for c in self.findings if c.status == status]

    def new_failing(self, fail_on: str = "error") -> list[Finding]:
        """New findings (and findings whose acceptance ended) at or above ``fail_on`` that no
        reviewer accepted: what a review gate blocks on."""
        failing = []
        for change in self.findings:
            f = change.new
            if f is None or f.accepted or not at_or_above(f.severity, fail_on):
                continue
            was_failing = (
                change.old is not None
                and not change.old.accepted
                and at_or_above(change.old.severity, fail_on)
            )
            if change.status == NEW or not was_failing:
                failing.append(f)
        return failing

    @property
    def unchanged(self) -> bool:
        return not (
            self.findings
            or self.streams_added
            or self.streams_removed
            or self.steps_added
            or self.steps_removed
            or self.changes
        )


def differs(
    old: float | str | None, new: float | str | None, quantity: str | None, rtol: float = DEFAULT_RTOL
) -> bool:
    """True when ``new`` differs from ``old`` beyond ``ABSOLUTE[quantity] + rtol·max(|old|,
    |new|)`` (numbers [SI]); text and None compare as they are."""
    if isinstance(old, (int, float)) and isinstance(new, (int, float)):
        if math.isinf(old) or math.isinf(new) or math.isnan(old) or math.isnan(new):
            return not (old == new or (math.isnan(old) and math.isnan(new)))
        return abs(new - old) > ABSOLUTE.get(quantity, 0.0) + rtol * max(abs(old), abs(new))
    return old != new


def compare(old: AuditResult, new: AuditResult, rtol: float = DEFAULT_RTOL) -> RevisionDiff:
    """The differences from revision ``old`` to revision ``new``."""
    diff = RevisionDiff(old.file, new.file, old.revision, new.revision, rtol)
    diff.findings = _findings(old.findings, new.findings, rtol)

    old_streams = {s.id: s for s in old.streams}
    new_streams = {s.id: s for s in new.streams}
    diff.streams_added = [i for i in new_streams if i not in old_streams]
    diff.streams_removed = [i for i in old_streams if i not in new_streams]
    for stream_id, after in new_streams.items():
        before = old_streams.get(stream_id)
        if before is None:
            continue
        for name, quantity in STREAM_FIELDS:
            a, b = getattr(before, name), getattr(after, name)
            if differs(a, b, quantity, rtol):
                diff.changes.append(ValueChange("stream", stream_id, name, a, b, quantity))

    old_steps = {s.id: s for s in old.steps}
    new_steps = {s.id: s for s in new.steps}
    diff.steps_added = [i for i in new_steps if i not in old_steps]
    diff.steps_removed = [i for i in old_steps if i not in new_steps]
    for step_id, after_step in new_steps.items():
        before_step = old_steps.get(step_id)
        if before_step is None:
            continue
        energy = "energy" if after_step.batch else "power"
        texts = [
            ("kind", before_step.kind, after_step.kind),
            ("inlets", ", ".join(before_step.inlets), ", ".join(after_step.inlets)),
            ("outlets", ", ".join(before_step.outlets), ", ".join(after_step.outlets)),
            ("claimed", ", ".join(before_step.claimed), ", ".join(after_step.claimed)),
        ]
        for name, a, b in texts:
            if a != b:
                diff.changes.append(ValueChange("step", step_id, name, a, b))
        for name in ("Q", "W"):
            a, b = getattr(before_step, name), getattr(after_step, name)
            if differs(a, b, energy, rtol):
                diff.changes.append(ValueChange("step", step_id, name, a, b, energy))
    # every claim written differently (a fuel's heating value, an efficiency, ...), as written
    for step_id, name, a_text, b_text in claim_changes(old.file, new.file):
        diff.changes.append(ValueChange("step", step_id, f"written {name}", a_text, b_text))
    return diff


def _findings(old: list[Finding], new: list[Finding], rtol: float) -> list[FindingChange]:
    before: dict[FindingKey, list[Finding]] = defaultdict(list)
    for f in old:
        before[finding_key(f)].append(f)
    changes: list[FindingChange] = []
    for f in new:
        key = finding_key(f)
        if not before.get(key):
            changes.append(FindingChange(NEW, key, None, f))
            continue
        earlier = before[key].pop(0)
        what = []
        if earlier.severity != f.severity:
            what.append(f"severity {earlier.severity} → {f.severity}")
        if differs(earlier.margin, f.margin, f.quantity, rtol):
            what.append("margin")
        if bool(earlier.accepted) != bool(f.accepted):
            what.append("now accepted" if f.accepted else "no longer accepted")
        if what:
            changes.append(FindingChange(CHANGED, key, earlier, f, tuple(what)))
    for key, remaining in before.items():
        for f in remaining:
            changes.append(FindingChange(RESOLVED, key, f, None))
    return changes
