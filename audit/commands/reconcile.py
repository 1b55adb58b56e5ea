"""``plant-audit reconcile FILE``: reconcile a measured balance (all readings adjusted together,
each within its uncertainty, so that every balance closes), test it statistically, name the
readings that cannot be right, and exit 0 (pass), 1 (the global test fails or a gross error is
named) or 2 (invalid input).

``check`` and ``reconcile``: ``check`` is unchanged and never reconciles. ``reconcile`` prints the
reconciliation only, and its reports are those of ``check`` with the reconciliation added: ``-o``
the findings workbook with the Reconciliation sheet (and the global test on the Overview),
``--json`` the JSON results with the ``reconciliation`` section, ``--html`` the HTML report with a
Reconciliation section. The verdict inside those reports (``verdict`` in the JSON, the Overview's)
is the audit's, as ``check`` gives it; the exit code is the reconciliation's."""

from __future__ import annotations

import argparse
from pathlib import Path

from audit.commands.outputs import check_run_outputs, table_files
from audit.exitcodes import EXIT_FINDINGS, EXIT_PASS
from audit.printable import escaped, escaped_lines
from audit.report.publish import Output, publish_set

NAME = "reconcile"
HELP = "reconcile a measured balance and name the reading that is wrong"


def _confidence(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        value = 0.0
    if not 0.5 <= value < 1.0:
        raise argparse.ArgumentTypeError(
            f"'{text}' is not a confidence (a fraction from 0.5 up to 1, such as 0.95)"
        )
    return value


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", type=Path, help="the balance file (YAML) with uncertainties")
    parser.add_argument(
        "-o",
        "--output",
        type=Path,
        metavar="XLSX",
        help="write the findings workbook with the Reconciliation sheet",
    )
    parser.add_argument(
        "--json",
        type=Path,
        metavar="PATH",
        help="write the JSON results with the reconciliation section",
    )
    parser.add_argument(
        "--html", type=Path, metavar="PATH", help="write the HTML report with the reconciliation"
    )
    parser.add_argument(
        "--fail-on",
        choices=["error", "warning"],
        default="error",
        help="error (default): fail when the global test fails, a gross error "
        "is named or a claim is impossible; warning: also on suspect or "
        "not-checkable readings and phase changes",
    )
    parser.add_argument(
        "--confidence",
        type=_confidence,
        default=0.95,
        help="confidence of the global and the reading tests (default 0.95)",
    )
    parser.add_argument(
        "--unmeasured",
        action="append",
        default=[],
        metavar="KEY",
        help="estimate this quantity instead of taking its value, e.g. "
        "S20.quality or C1.shaft_power (repeatable)",
    )
    parser.add_argument("--all", action="store_true", help="print every reading")


def run(args: argparse.Namespace) -> int:
    from audit.reconcile import reconcile_file
    from audit.report.reconciliation_text import console_section

    outputs = []
    if args.json:
        outputs.append(Output(args.json, "the JSON results"))
    if args.output:
        outputs.append(Output(args.output, "the findings workbook"))
    if args.html:
        outputs.append(Output(args.html, "the HTML report"))
    check_run_outputs(outputs, table_files(args.file), None, [args.file])
    result = reconcile_file(args.file, args.confidence, tuple(args.unmeasured))
    failed = result.fails(args.fail_on)
    if outputs:
        from audit.api import run as audit_file

        audit = audit_file(args.file)  # the reports are check's, with the reconciliation added

    def write() -> None:
        if args.json:
            from audit.report.machine import write_json

            write_json(audit, args.json, fail_on=args.fail_on, reconciliation=result)
        if args.output:
            from audit.report.workbook import write_workbook

            write_workbook(audit, args.output, fail_on=args.fail_on, reconciliation=result)
        if args.html:
            from audit.report.html.report import write_html

            write_html(audit, args.html, fail_on=args.fail_on, reconciliation=result)

    publish_set(write)
    print(escaped_lines(console_section(result, all_readings=args.all)))
    print(f"{escaped(args.file)}: {'FAIL' if failed else 'PASS'}")
    return EXIT_FINDINGS if failed else EXIT_PASS
