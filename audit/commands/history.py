"""``plant-audit history FILE``: list the recorded runs of a balance, newest first, with what each
run found that the audited run before it did not (runs are recorded by ``check`` and ``batch``
with ``--history DB``)."""

from __future__ import annotations

import argparse
from pathlib import Path

from audit.exitcodes import EXIT_PASS

NAME = "history"
HELP = "list the recorded runs of a balance file"
DEFAULT_DATABASE = Path("plant-audit-history.sqlite")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", type=Path, help="the balance file")
    parser.add_argument(
        "--history",
        type=Path,
        metavar="DB",
        default=DEFAULT_DATABASE,
        help=f"the run history (default: {DEFAULT_DATABASE} here)",
    )
    parser.add_argument(
        "-n", "--limit", type=int, default=20, metavar="N", help="show the N newest runs (default 20)"
    )
    parser.add_argument("--findings", action="store_true", help="also list the new findings of each run")


def run(args: argparse.Namespace) -> int:
    from audit.history import audited_before, file_key, new_between, runs
    from audit.outcomes import describe_key

    found = runs(args.history, args.file)
    key = file_key(args.file)
    if not found:
        print(f"No recorded runs of {key} in {args.history}.")
        return EXIT_PASS
    shown = found[: args.limit]
    print(f"Runs of {key} recorded in {args.history}, newest first:")
    header = (
        f"{'run':>5}  {'at (UTC)':<20}  {'revision':<12}  {'content':<12}  {'verdict':<14}  "
        f"{'errors':>6}  {'warnings':>8}  {'accepted':>8}  new findings"
    )
    print(header)
    print("-" * len(header))
    for index, run_ in enumerate(shown):
        older = audited_before(found, index)
        new = new_between(older, run_)
        if run_.status != "audited":
            note = "-"
        elif older is None:
            note = f"{len(new)} (first audited run)"
        else:
            note = str(len(new))
        print(
            f"{run_.id:>5}  {run_.run_at:<20}  {run_.revision or '':<12}  "
            f"{(run_.sha256 or '')[:12]:<12}  {run_.verdict:<14}  {run_.errors:>6}  "
            f"{run_.warnings:>8}  {run_.accepted:>8}  {note}"
        )
        if run_.problems:
            print(f"{'':>7}{run_.problems[0]}")
        if args.findings:
            for finding in new:
                print(f"{'':>7}new: {describe_key(finding)}")
    return EXIT_PASS
