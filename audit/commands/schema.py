"""``plant-audit schema``: print (or write) the JSON Schema of a balance file."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from audit.exitcodes import EXIT_PASS

NAME = "schema"
HELP = "print the JSON Schema of a balance file (for editor completion)"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("-o", "--output", type=Path, help="write it to this file instead")


def run(args: argparse.Namespace) -> int:
    from audit.reading import schema_text

    text = schema_text()
    if args.output:
        from audit.report.files import write_text

        write_text(args.output, text, "the JSON Schema")
    else:
        sys.stdout.write(text)
    return EXIT_PASS
