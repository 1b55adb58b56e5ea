"""``plant-audit history FILE``: list the recorded runs of a balance, newest first, with what each
run found that the audited run before it did not, and the trend of its findings and of the exergy
it destroys (runs are recorded by ``check`` and ``batch`` with ``--history``, or always when the
project configuration names a history). The balance is looked up by its identity
(:mod:`audit.identity`), so the runs of every checkout of it are listed together."""

from __future__ import annotations

import argparse
from pathlib import Path

from audit.exitcodes import EXIT_PASS

NAME = "history"
HELP = "list the recorded runs of a balance file, with the trend of its findings"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", type=Path, help="the balance file")
    parser.add_argument(
        "--history",
        type=Path,
        metavar="DB",
        help="the run history (default: the project's, see 'plant-audit config')",
    )
    parser.add_argument(
        "-n", "--limit", type=int, default=20, metavar="N", help="show the N newest runs (default 20)"
    )
    parser.add_argument("--findings", action="store_true", help="also list the new findings of each run")


def run(args: argparse.Namespace) -> int:
    from audit.commands.settings import configured
    from audit.history import audited_before, new_between, runs
    from audit.identity import balance_identity, declared_id
    from audit.outcomes import describe_key
    from audit.wording import kilowatts

    settings = configured(args)
    database = args.history or settings.default_history()
    project = settings.root if settings.file is not None else None
    key = balance_identity(args.file, declared_id(args.file), project)
    found = runs(database, args.file, key=key)
    if not found:
        print(f"No recorded runs of {key} in {database}.")
        return EXIT_PASS
    shown = found[: args.limit]
    print(f"Runs of {key} recorded in {database}, newest first:")
    header = (
        f"{'run':>5}  {'at (UTC)':<20}  {'revision':<10}  {'verdict':<8}  "
        f"{'errors':>6}  {'warnings':>8}  {'accepted':>8}  {'exergy destroyed':>16}  new"
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
        exergy = kilowatts(run_.exergy_destroyed) if run_.exergy_destroyed is not None else "-"
        print(
            f"{run_.id:>5}  {run_.run_at:<20}  {(run_.revision or '')[:10]:<10}  "
            f"{run_.verdict[:8]:<8}  {run_.errors:>6}  {run_.warnings:>8}  {run_.accepted:>8}  "
            f"{exergy:>16}  {note}"
        )
        if run_.problems:
            print(f"{'':>7}{run_.problems[0]}")
        if args.findings:
            for finding in new:
                print(f"{'':>7}new: {describe_key(finding)}")
    print(trend_line(list(reversed([r for r in shown if r.status == "audited"]))))
    return EXIT_PASS


def trend_line(audited: list) -> str:  # list of audit.history.Run, oldest first
    """'Trend (oldest → newest): findings 5 → 3 → 3; exergy destroyed 1.2 MW → 1.1 MW'."""
    from audit.wording import kilowatts

    if not audited:
        return "Trend: no audited run."
    findings = " → ".join(str(r.errors + r.warnings) for r in audited)
    exergy = " → ".join(
        kilowatts(r.exergy_destroyed) if r.exergy_destroyed is not None else "-" for r in audited
    )
    return f"Trend (oldest → newest): errors and warnings {findings}; exergy destroyed {exergy}"
