"""``plant-audit schema``: print (or write) the JSON Schema of a balance file, of an acceptance
file or of the JSON results."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from audit.commands.outputs import check_run_outputs
from audit.exitcodes import EXIT_PASS
from audit.report.publish import Output, is_standard_output, publish_set

NAME = "schema"
HELP = "print the JSON Schema of a balance file (for editor completion)"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument(
        "-o", "--output", type=Path, help="write it to this file instead ('-': the standard output)"
    )
    parser.add_argument(
        "--results", action="store_true", help="the schema of the JSON results (--json) instead"
    )
    parser.add_argument(
        "--accepted", action="store_true", help="the schema of an acceptance file (*.accepted.yaml)"
    )


def run(args: argparse.Namespace) -> int:
    from audit.reading import schema_text

    if args.results:
        from audit.report.results_schema import results_schema_text

        text = results_schema_text()
    elif args.accepted:
        from audit.model.editor_schema import acceptance_schema_text

        text = acceptance_schema_text()
    else:
        text = schema_text()
    if args.output and not is_standard_output(args.output):
        from audit.report.files import write_text

        check_run_outputs([Output(args.output, "the JSON Schema")], [], None)
        publish_set(lambda: write_text(args.output, text, "the JSON Schema"))
    else:
        sys.stdout.write(text)
    return EXIT_PASS
