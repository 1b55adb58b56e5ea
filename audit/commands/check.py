"""``plant-audit check FILE``: audit one balance, print the stream table and the findings, write
the requested reports, and exit 0 (pass), 1 (findings at or above ``--fail-on``), 2 (invalid
input) or 4 (a report could not be written)."""

from __future__ import annotations

import argparse
import hashlib
import time
from pathlib import Path
from typing import TYPE_CHECKING

from audit.errors import InputError
from audit.exitcodes import EXIT_FINDINGS, EXIT_PASS
from audit.printable import escaped

if TYPE_CHECKING:
    from audit.outcomes import FileOutcome

NAME = "check"
HELP = "audit one balance file"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", type=Path, help="the balance file (YAML)")
    parser.add_argument("-o", "--output", type=Path, metavar="XLSX", help="write the findings workbook")
    parser.add_argument("--json", type=Path, metavar="PATH", help="write all results as JSON")
    parser.add_argument(
        "--csv", type=Path, metavar="DIR", help="write findings, steps and streams as CSV files into DIR"
    )
    parser.add_argument(
        "--fail-on",
        choices=["error", "warning"],
        default="error",
        help="lowest severity that fails the check (default: error)",
    )
    parser.add_argument(
        "--fail-on-marginal",
        action="store_true",
        help="fail also on law findings that are marginal: beyond the tolerance "
        "but within the declared measurement uncertainty",
    )
    parser.add_argument(
        "--monte-carlo",
        type=_draws,
        default=0,
        metavar="N",
        help="cross-check the uncertainty propagation with N Monte Carlo draws "
        "per step with a law finding (fixed seed)",
    )
    parser.add_argument(
        "--brief", action="store_true", help="print the findings summary without the stream table"
    )
    parser.add_argument("-q", "--quiet", action="store_true", help="print only the verdict")
    parser.add_argument("--junit", type=Path, metavar="PATH", help="write JUnit XML for CI")
    parser.add_argument(
        "--html", type=Path, metavar="PATH", help="write the report as one self-contained HTML file"
    )
    parser.add_argument(
        "--history",
        type=Path,
        metavar="DB",
        help="record the run in this SQLite file and say what is new since the file's last run",
    )
    parser.add_argument(
        "--allow-outside",
        action="store_true",
        help="let the balance read stream or claim tables outside its own folder",
    )


MAX_DRAWS = 1_000_000
"""Most Monte Carlo draws per step: GUM Supplement 1 (JCGM 101:2008, §7.2) takes 10^6 trials as
usually enough for a 95 % coverage interval correct to one or two significant digits (from
memory); more only costs memory and time."""


def _draws(text: str) -> int:
    """A number of Monte Carlo draws: a whole number from 2 to :data:`MAX_DRAWS`."""
    try:
        value = int(text) if len(text) < 20 else 0
    except ValueError:
        value = 0
    if value < 2:
        raise argparse.ArgumentTypeError(
            f"'{escaped(text)}' is not a number of draws (a whole number of at least 2)"
        )
    if value > MAX_DRAWS:
        raise argparse.ArgumentTypeError(
            f"{value:,} draws is more than the {MAX_DRAWS:,} plant-audit makes (10^6 draws settle "
            "a 95 % interval to one or two digits; GUM Supplement 1)"
        )
    return value


def run(args: argparse.Namespace) -> int:
    from audit.api import run as audit_file
    from audit.report.console import findings_summary, stream_table

    if args.junit or args.history:
        outcome = _outcome(args)
        if args.history:
            from audit.history import record

            record(args.history, [outcome], fail_on=args.fail_on)
        if args.junit:
            from audit.report.junit import write_junit

            write_junit([outcome], args.junit, fail_on=args.fail_on)
        if outcome.result is None:
            raise outcome.error  # type: ignore[attr-defined]  # the command line reports it
        result = outcome.result
    else:
        result = audit_file(args.file, allow_outside=args.allow_outside, monte_carlo=args.monte_carlo)
    if args.json:
        from audit.report.machine import write_json

        write_json(result, args.json)
    if args.csv:
        from audit.report.machine import write_csv

        write_csv(result, args.csv)
    if args.output:
        from audit.report.workbook import write_workbook

        write_workbook(result, args.output, fail_on=args.fail_on)
    if args.html:
        from audit.report.html.report import write_html

        write_html(result, args.html, fail_on=args.fail_on, marginal=args.fail_on_marginal)
    failed = result.fails(args.fail_on, marginal=args.fail_on_marginal)
    if args.quiet:
        print(f"{escaped(args.file)}: {'FAIL' if failed else 'PASS'}")
    else:
        if not args.brief:
            print(stream_table(result))
            print()
        print(findings_summary(result, args.fail_on, marginal=args.fail_on_marginal))
    if args.history and not args.quiet:
        print(f"History ({args.history}): {outcome.history_note()}")
    return EXIT_FINDINGS if failed else EXIT_PASS


def _outcome(args: argparse.Namespace) -> FileOutcome:
    """Audit the file as a batch of one, keeping an input error (as ``outcome.error``) for the
    command line to report after the JUnit file and the history are written."""
    from audit.api import run as audit_file
    from audit.outcomes import AUDITED, INVALID, FileOutcome

    outcome = FileOutcome(path=str(args.file), status=AUDITED)
    try:
        outcome.sha256 = hashlib.sha256(args.file.read_bytes()).hexdigest()
    except OSError:
        pass
    started = time.perf_counter()
    try:
        outcome.result = audit_file(
            args.file, allow_outside=args.allow_outside, monte_carlo=args.monte_carlo
        )
    except InputError as exc:
        outcome.status = INVALID
        outcome.problems = [str(p) for p in exc.problems]
        outcome.error = exc  # type: ignore[attr-defined]
    outcome.seconds = time.perf_counter() - started
    return outcome
