"""``plant-audit check FILE``: audit one balance, print the stream table and the findings, write
the requested reports, and exit 0 (pass), 1 (findings at or above ``--fail-on``) or 2 (invalid
input)."""

from __future__ import annotations

import argparse
from pathlib import Path

from audit.exitcodes import EXIT_FINDINGS, EXIT_PASS

NAME = "check"
HELP = "audit one balance file"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", type=Path, help="the balance file (YAML)")
    parser.add_argument("-o", "--output", type=Path, metavar="XLSX",
                        help="write the findings workbook")
    parser.add_argument("--json", type=Path, metavar="PATH", help="write all results as JSON")
    parser.add_argument("--csv", type=Path, metavar="DIR",
                        help="write findings, steps and streams as CSV files into DIR")
    parser.add_argument("--fail-on", choices=["error", "warning"], default="error",
                        help="lowest severity that fails the check (default: error)")
    parser.add_argument("--brief", action="store_true",
                        help="print the findings summary without the stream table")
    parser.add_argument("-q", "--quiet", action="store_true", help="print only the verdict")


def run(args: argparse.Namespace) -> int:
    from audit.api import run as audit_file
    from audit.report.console import findings_summary, stream_table

    result = audit_file(args.file)
    if args.json:
        from audit.report.machine import write_json

        write_json(result, args.json)
    if args.csv:
        from audit.report.machine import write_csv

        write_csv(result, args.csv)
    if args.output:
        from audit.report.workbook import write_workbook

        write_workbook(result, args.output, fail_on=args.fail_on)
    failed = result.fails(args.fail_on)
    if args.quiet:
        print(f"{args.file}: {'FAIL' if failed else 'PASS'}")
    else:
        if not args.brief:
            print(stream_table(result))
            print()
        print(findings_summary(result, args.fail_on))
    return EXIT_FINDINGS if failed else EXIT_PASS
