"""``plant-audit diff OLD NEW``: compare two revisions of a balance — findings new, resolved or
changed in margin; stream states and step claims that changed; streams and steps added or removed
— and exit 1 when the new revision has new findings at or above ``--fail-on`` that no reviewer
accepted (0 otherwise; 2 when either file is invalid)."""

from __future__ import annotations

import argparse
import math
from pathlib import Path
from typing import TYPE_CHECKING

from audit.commands.outputs import check_run_outputs, table_files
from audit.exitcodes import EXIT_FINDINGS, EXIT_PASS
from audit.printable import escaped, escaped_lines
from audit.report.display import shown, unit
from audit.report.publish import Output, publish_set

if TYPE_CHECKING:
    from audit.diff import FindingChange, RevisionDiff

NAME = "diff"
HELP = "compare two revisions of a balance"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("old", type=Path, help="the earlier revision (YAML)")
    parser.add_argument("new", type=Path, help="the later revision (YAML)")
    parser.add_argument(
        "-o", "--output", type=Path, metavar="XLSX", help="write the comparison workbook"
    )
    parser.add_argument(
        "--rtol",
        type=_relative_tolerance,
        default=None,
        metavar="R",
        help="relative change below which a number counts as unchanged "
        "(default 1e-6; absolute floors per quantity are in the README)",
    )
    parser.add_argument(
        "--fail-on",
        choices=["error", "warning"],
        default="error",
        help="lowest severity of a new finding that fails (default: error)",
    )


def _relative_tolerance(text: str) -> float:
    """A relative tolerance: a finite number from 0 to 1 (not 'nan', 'inf' or negative)."""
    try:
        value = float(text) if len(text) < 40 else math.nan
    except ValueError:
        value = math.nan
    if not (math.isfinite(value) and 0.0 <= value < 1.0):
        raise argparse.ArgumentTypeError(
            f"'{escaped(text)}' is not a relative tolerance (a number from 0 up to 1, e.g. 1e-6)"
        )
    return value


def run(args: argparse.Namespace) -> int:
    from audit.api import run as audit_file
    from audit.diff import DEFAULT_RTOL, compare

    outputs = [Output(args.output, "the comparison workbook")] if args.output else []
    tables = [*table_files(args.old), *table_files(args.new)]
    check_run_outputs(outputs, tables, None, [args.old, args.new])
    old, new = audit_file(args.old), audit_file(args.new)
    diff = compare(old, new, rtol=DEFAULT_RTOL if args.rtol is None else args.rtol)
    if args.output:
        from audit.report.diff_workbook import write_diff_workbook

        publish_set(lambda: _ignore(write_diff_workbook(diff, args.output, fail_on=args.fail_on)))
    print(escaped_lines(summary(diff, args.fail_on)))
    return EXIT_FINDINGS if diff.new_failing(args.fail_on) else EXIT_PASS


def _ignore(value: object) -> None:
    """Drop a writer's return value (publish_set takes a writer that returns nothing)."""


def summary(diff: RevisionDiff, fail_on: str = "error") -> str:
    """The console summary of a comparison."""
    from audit.diff import CHANGED, NEW, RESOLVED
    from audit.outcomes import describe_key

    def revision(file: str, rev: str | None) -> str:
        return f"{file}" + (f" (revision {rev})" if rev else "")

    lines = [
        f"Comparing {revision(diff.old_file, diff.old_revision)} → "
        f"{revision(diff.new_file, diff.new_revision)}"
    ]
    if diff.unchanged:
        lines.append("No differences beyond tolerance.")
    titles = {NEW: "New findings", RESOLVED: "Resolved findings", CHANGED: "Changed findings"}
    for status in (NEW, RESOLVED, CHANGED):
        changes = diff.with_status(status)
        if not changes:
            continue
        lines.append(f"{titles[status]} ({len(changes)}):")
        for change in changes:
            f = change.new or change.old
            assert f is not None
            text = f"  {f.severity.upper():<7} {describe_key(change.key)}"
            if status == CHANGED:
                text += ": " + "; ".join(
                    _margin_change(change) if w == "margin" else w for w in change.what
                )
            else:
                text += f": {f.message}"
            if change.new is not None and change.new.accepted:
                text += f" [ACCEPTED: {change.new.accepted}]"
            lines.append(text)
    for label, ids in (
        ("Streams added", diff.streams_added),
        ("Streams removed", diff.streams_removed),
        ("Steps added", diff.steps_added),
        ("Steps removed", diff.steps_removed),
    ):
        if ids:
            lines.append(f"{label}: {', '.join(ids)}")
    for where in ("stream", "step"):
        by_id: dict[str, list[str]] = {}
        for value in diff.changes:
            if value.where == where:
                by_id.setdefault(value.id, []).append(
                    f"{value.field} {_value(value.old, value.quantity)} → "
                    f"{_value(value.new, value.quantity)}"
                )
        if by_id:
            lines.append(f"{where.capitalize()}s changed ({len(by_id)}):")
            lines.extend(f"  {i}: " + "; ".join(parts) for i, parts in by_id.items())
    failing = diff.new_failing(fail_on)
    lines.append(
        f"Verdict: {'FAIL' if failing else 'PASS'} ({len(failing)} new finding(s) at "
        f"or above '{fail_on}' not accepted)"
    )
    lines.append(
        "Consistency check only: not a safety or code-compliance review; defer to local "
        "codes and licensed engineers."
    )
    return "\n".join(lines)


def _value(value: float | str | None, quantity: str | None) -> str:
    if value is None:
        return "—"
    if isinstance(value, str):
        return value or "—"
    number = shown(value, quantity)
    return f"{number:.6g} {unit(quantity)}".rstrip() if number is not None else str(value)


def _margin_change(change: FindingChange) -> str:
    f = change.new
    assert f is not None and change.old is not None
    difference = f.quantity == "temperature"

    def fmt(value: float | None) -> str:
        number = shown(value, f.quantity, difference=difference)
        return "—" if number is None else f"{number:.4g}"

    return (
        f"margin {fmt(change.old.margin)} → {fmt(f.margin)} {unit(f.quantity, difference=difference)}"
    ).rstrip()
