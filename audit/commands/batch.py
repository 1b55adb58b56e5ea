"""``plant-audit batch PATHS...``: audit every balance in folders (recursively), globs and files,
in parallel worker processes, and exit with the worst file's code: 3 (an internal error on some
file, or a file that ran past ``--timeout``) > 4 (a report that could not be written) > 2 (an
invalid file, or a path that cannot be read) > 1 (findings at or above ``--fail-on`` that no
reviewer accepted) > 0 (every file passes). A broken file is reported and never stops the others.

Every output is checked before the first file is audited (a refused output: exit 2, nothing
written); the workbooks, the summary and the JUnit file are published together at the end."""

from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path
from typing import TYPE_CHECKING, Any

from audit.commands.outputs import record_history
from audit.commands.settings import add_history_options, configured
from audit.exitcodes import EXIT_HISTORY, EXIT_PASS
from audit.printable import escaped

if TYPE_CHECKING:
    from audit.outcomes import FileOutcome


NAME = "batch"
HELP = "audit every balance in folders, globs and files, in parallel"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument(
        "paths",
        nargs="+",
        metavar="PATH",
        help="balance files, folders (searched for *.yaml and *.yml) or globs",
    )
    parser.add_argument(
        "-o",
        "--output",
        type=Path,
        metavar="DIR",
        help="write summary.xlsx, index.html and each file's own workbook and HTML report into DIR",
    )
    parser.add_argument(
        "--workers", type=_positive, metavar="N", help="worker processes (default: one per core)"
    )
    parser.add_argument(
        "--timeout",
        type=_seconds,
        default=DEFAULT_TIMEOUT,
        metavar="SECONDS",
        help=f"time limit per file (default {DEFAULT_TIMEOUT:g} s; 0: none); a file that runs "
        "past it is stopped and reported as that file's internal error",
    )
    parser.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="run on the Dask cluster at ADDRESS (e.g. tcp://host:8786; needs the "
        "'distributed' extra) instead of local processes",
    )
    parser.add_argument(
        "--fail-on",
        choices=["error", "warning"],
        help="lowest severity that fails a file (default: the configuration's, else error)",
    )
    parser.add_argument("--junit", type=Path, metavar="PATH", help="write JUnit XML for CI")
    add_history_options(
        parser, "record every run in this SQLite file and say what is new since each balance's last run"
    )
    parser.add_argument(
        "--exclude",
        action="append",
        metavar="GLOB",
        help="skip files matching GLOB (relative to the folder searched; may be repeated; "
        "added to the configuration's)",
    )
    parser.add_argument(
        "--fail-on-history",
        action="store_true",
        help="exit 5 when every file passes but the runs could not be recorded in the history "
        "(default: a warning)",
    )
    parser.add_argument(
        "--allow-outside",
        action="store_true",
        help="let balances read stream or claim tables outside their own folder",
    )
    parser.add_argument(
        "-q",
        "--quiet",
        action="store_true",
        help="no progress bar and no per-file lines: print only the verdict",
    )


DEFAULT_TIMEOUT = 300.0


def _positive(text: str) -> int:
    value = int(text)
    if value < 1:
        raise argparse.ArgumentTypeError("must be at least 1")
    return value


def _seconds(text: str) -> float:
    """A time limit in seconds: a finite number, at least 0 (0: no limit)."""
    try:
        value = float(text)
    except ValueError:
        value = -1.0
    if not (math.isfinite(value) and value >= 0):
        raise argparse.ArgumentTypeError(
            f"'{text}' is not a time limit in seconds (a number, 0 for none)"
        )
    return value


def run(args: argparse.Namespace) -> int:
    from audit.batch import SUMMARY_NAME, run_batch
    from audit.executors import DaskCluster, LocalProcesses
    from audit.outcomes import batch_exit_code
    from audit.report.files import staged
    from audit.report.publish import Output, commit

    configured(args)
    if args.scheduler and args.workers:
        print(
            "note: --workers is ignored with --scheduler (the cluster has its own workers)",
            file=sys.stderr,
        )
    timeout = args.timeout or None
    executor = (
        DaskCluster(address=args.scheduler)
        if args.scheduler
        else LocalProcesses(args.workers, timeout=timeout)
    )
    outputs = []
    if args.history:
        outputs.append(Output(args.history, "the run history"))
    if args.output:
        outputs.append(Output(args.output / SUMMARY_NAME, "the batch summary workbook"))
        outputs.append(Output(args.output / "index.html", "the batch HTML index"))
    if args.junit:
        outputs.append(Output(args.junit, "the JUnit XML"))
    progress = _Progress(enabled=not args.quiet and sys.stdout.isatty())
    history_problem = None
    with staged() as staging:
        with progress:
            outcomes = run_batch(
                args.paths,
                output=args.output,
                fail_on=args.fail_on,
                executor=executor,
                on_start=progress.start,
                on_done=progress.advance,
                allow_outside=args.allow_outside,
                exclude=args.exclude,
                include=args.include,
                tolerances=args.tolerances,
                staging=staging,
                outputs=outputs,
            )
        if args.history:
            from audit.commands.settings import identify

            identify(outcomes, args.settings, args.paths)
            history_problem = record_history(args.history, outcomes, args.fail_on)
        if args.output:
            from audit.report.batch_workbook import write_batch_workbook

            write_batch_workbook(outcomes, args.output / SUMMARY_NAME, fail_on=args.fail_on)
            from audit.report.html.index import write_batch_html

            write_batch_html(outcomes, args.output, fail_on=args.fail_on, history=args.history)
        if args.junit:
            from audit.report.junit import write_junit

            write_junit(outcomes, args.junit, fail_on=args.fail_on)
        commit(staging)
    code = batch_exit_code(outcomes, args.fail_on)
    if not args.quiet:
        for outcome in outcomes:
            print(escaped(_line(outcome, args.fail_on)))
    print(_verdict(outcomes, args.fail_on, code))
    if history_problem is not None and args.fail_on_history and code == EXIT_PASS:
        return EXIT_HISTORY
    return code


def _line(outcome: FileOutcome, fail_on: str) -> str:
    verdict = outcome.verdict(fail_on)
    if outcome.result is None:
        detail = outcome.problems[0] if outcome.problems else ""
        more = f" (and {len(outcome.problems) - 1} more)" if len(outcome.problems) > 1 else ""
        if not detail.startswith(outcome.path):
            detail = f"{outcome.path}: {detail}"
        return f"{verdict:<14} {detail}{more}"
    result = outcome.result
    counts = result.counts(include_accepted=False)
    accepted = sum(1 for f in result.findings if f.accepted)
    revision = f" revision {result.revision}" if result.revision else ""
    text = (
        f"{verdict:<14} {outcome.path}{revision}: {counts['error']} error, "
        f"{counts['warning']} warning" + (f", {accepted} accepted" if accepted else "")
    )
    note = outcome.history_note()
    problem = f"; {outcome.problems[0]}" if outcome.problems else ""  # its workbook not written
    return text + (f"; {note}" if note else "") + problem


def _verdict(outcomes: list[FileOutcome], fail_on: str, code: int) -> str:
    verdicts = [o.verdict(fail_on) for o in outcomes]
    parts = ", ".join(
        f"{verdicts.count(v)} {v.lower()}"
        for v in dict.fromkeys(
            ["PASS", "FAIL", "INVALID", "INTERNAL ERROR", "REPORT NOT WRITTEN", "SKIPPED"]
        )
        if verdicts.count(v)
    )
    return (
        f"Batch: {len(outcomes)} files ({parts}); exit code {code}. Consistency check only: "
        "not a safety or code-compliance review; defer to local codes and licensed engineers."
    )


class _Progress:
    """A rich progress bar on a terminal; nothing otherwise."""

    def __init__(self, enabled: bool) -> None:
        self.enabled = enabled
        self._bar: Any = None  # a rich Progress once started
        self._task: Any = None

    def __enter__(self) -> _Progress:
        return self

    def __exit__(self, *exc: object) -> None:
        if self._bar is not None:
            self._bar.stop()

    def start(self, total: int) -> None:
        if not self.enabled:
            return
        from rich.progress import BarColumn, MofNCompleteColumn, Progress, TimeRemainingColumn

        # No refresh thread (auto_refresh off): worker processes are forked while it runs.
        self._bar = Progress(
            "[progress.description]{task.description}",
            BarColumn(),
            MofNCompleteColumn(),
            TimeRemainingColumn(),
            transient=True,
            auto_refresh=False,
        )
        self._task = self._bar.add_task("auditing", total=total)
        self._bar.start()

    def advance(self, outcome: FileOutcome, done: int, total: int) -> None:
        if self._bar is not None:
            self._bar.update(self._task, completed=done, description=Path(outcome.path).name)
            self._bar.refresh()
