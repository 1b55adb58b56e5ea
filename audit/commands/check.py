"""``plant-audit check FILE``: audit one balance, print the stream table and the findings, write
the requested reports (checked first, then published together: all or none), and exit 0 (pass),
1 (findings at or above ``--fail-on``), 2 (invalid input or a refused output) or 4 (a report
could not be written); 5 with ``--fail-on-history`` when the run could not be recorded."""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path
from typing import TYPE_CHECKING, TextIO

from audit.commands.outputs import (
    check_run_outputs,
    is_standard_input,
    read_standard_input,
    record_history,
)
from audit.commands.settings import add_history_options, configured
from audit.errors import InputError
from audit.exitcodes import EXIT_FINDINGS, EXIT_HISTORY, EXIT_PASS
from audit.printable import escaped
from audit.report.publish import Output, is_standard_output

if TYPE_CHECKING:
    from audit.outcomes import FileOutcome
    from audit.results import AuditResult

NAME = "check"
HELP = "audit one balance file"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", type=Path, help="the balance file (YAML); '-' reads the standard input")
    parser.add_argument("-o", "--output", type=Path, metavar="XLSX", help="write the findings workbook")
    parser.add_argument(
        "--json",
        type=Path,
        metavar="PATH",
        help="write all results as JSON ('-': to the standard output, the console text then "
        "goes to the standard error)",
    )
    parser.add_argument(
        "--csv", type=Path, metavar="DIR", help="write findings, steps and streams as CSV files into DIR"
    )
    parser.add_argument(
        "--fail-on",
        choices=["error", "warning"],
        help="lowest severity that fails the check (default: the configuration's, else error)",
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
    add_history_options(
        parser, "record the run in this SQLite file and say what is new since the balance's last run"
    )
    parser.add_argument(
        "--fail-on-history",
        action="store_true",
        help=f"exit {EXIT_HISTORY} when the audit passes but could not be recorded in the "
        "history (default: a warning; the reports and the exit code stay those of the audit)",
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
    from audit.api import Inputs
    from audit.api import run as audit_file

    configured(args)
    outputs = planned_outputs(args)
    inputs = Inputs()
    data = read_standard_input() if is_standard_input(args.file) else None
    check_run_outputs(outputs, inputs.files, args.history, [args.file])  # before the audit: fail fast
    started = time.perf_counter()
    try:
        result = audit_file(
            args.file,
            allow_outside=args.allow_outside,
            monte_carlo=args.monte_carlo,
            tolerances=args.tolerances,
            data=data,
            inputs=inputs,
        )
        error: InputError | None = None
    except InputError as exc:
        if not (args.junit or args.history):
            raise
        result, error = None, exc
    seconds = time.perf_counter() - started
    # again, with the tables the balance named
    check_run_outputs(outputs, inputs.files, args.history, [args.file])
    outcome = _outcome(args, result, error, inputs.sha256)
    outcome.seconds = seconds
    history_problem = None
    if args.history:
        from audit.commands.settings import identify

        identify([outcome], args.settings)
        history_problem = record_history(args.history, [outcome], args.fail_on)
    json_text = _write_reports(args, outcome)
    if error is not None:
        raise error  # the command line reports it, after the JUnit file and the history
    assert result is not None
    if json_text is not None:
        sys.stdout.write(json_text)
    failed = result.fails(args.fail_on, marginal=args.fail_on_marginal)
    console = _console(json_text)
    if args.quiet:
        print(f"{escaped(args.file)}: {'FAIL' if failed else 'PASS'}", file=console)
    else:  # the tables (rich) are loaded only when they are printed
        from audit.report.console import colour_wanted, findings_summary, step_table, stream_table

        colour = colour_wanted(console.isatty())
        if not args.brief:
            print(stream_table(result, colour=colour), file=console)
            print(file=console)
            print(step_table(result, colour=colour), file=console)
            print(file=console)
        print(
            findings_summary(result, args.fail_on, marginal=args.fail_on_marginal, colour=colour),
            file=console,
        )
    if args.history and not args.quiet and history_problem is None:
        print(f"History ({escaped(args.history)}): {outcome.history_note()}", file=console)
    if failed:
        return EXIT_FINDINGS
    return EXIT_HISTORY if history_problem is not None and args.fail_on_history else EXIT_PASS


def _console(json_text: str | None) -> TextIO:
    """Where the console text goes: the standard error when the JSON takes the standard output."""
    return sys.stderr if json_text is not None else sys.stdout


def planned_outputs(args: argparse.Namespace) -> list[Output]:
    """Every file ``check`` will write, each file of the ``--csv`` folder too."""
    outputs = []
    if args.output:
        outputs.append(Output(args.output, "the findings workbook"))
    if args.json:
        outputs.append(Output(args.json, "the JSON results"))
    if args.csv:
        if is_standard_output(args.csv):
            raise InputError("--csv writes a folder of files; '-' (the standard output) is not one")
        outputs.append(Output(args.csv, "the CSV folder", folder=True))
        from audit.report.columns import FINDINGS, STEPS, STREAMS  # the tables' names

        for table in (FINDINGS, STEPS, STREAMS):
            outputs.append(Output(args.csv / f"{table.name}.csv", f"the CSV table of {table.name}"))
    if args.junit:
        outputs.append(Output(args.junit, "the JUnit XML"))
    if args.html:
        outputs.append(Output(args.html, "the HTML report"))
    for output in outputs:
        if is_standard_output(output.path) and output.what != "the JSON results":
            raise InputError(
                f"'-' (the standard output) is offered for --json only, not for {output.what}"
            )
    return outputs


def _write_reports(args: argparse.Namespace, outcome: FileOutcome) -> str | None:
    """Write every requested report as one set (all or none); returns the JSON text when it goes
    to the standard output (printed by the caller, once the files are in place)."""
    from audit.report.publish import publish_set

    result = outcome.result
    json_text: list[str] = []

    def write() -> None:
        if args.junit:
            from audit.report.junit import write_junit

            write_junit([outcome], args.junit, fail_on=args.fail_on)
        if result is None:
            return
        if args.json:
            from audit.report.machine import json_text as to_json
            from audit.report.machine import write_json

            marginal = args.fail_on_marginal
            if is_standard_output(args.json):
                json_text.append(to_json(result, args.fail_on, marginal))
            else:
                write_json(result, args.json, fail_on=args.fail_on, marginal=marginal)
        if args.csv:
            from audit.report.machine import write_csv

            write_csv(result, args.csv)
        if args.output:
            from audit.report.workbook import write_workbook

            write_workbook(result, args.output, fail_on=args.fail_on)
        if args.html:
            from audit.report.html.report import write_html

            write_html(result, args.html, fail_on=args.fail_on, marginal=args.fail_on_marginal)

    publish_set(write)
    return json_text[0] if json_text else None


def _outcome(
    args: argparse.Namespace, result: AuditResult | None, error: InputError | None, sha256: str | None
) -> FileOutcome:
    """The run as a batch of one (for the JUnit file and the history)."""
    from audit.outcomes import AUDITED, INVALID, FileOutcome

    outcome = FileOutcome(path=str(args.file), status=AUDITED, result=result, sha256=sha256)
    if error is not None:
        outcome.status = INVALID
        outcome.problems = [str(p) for p in error.problems]
    return outcome
