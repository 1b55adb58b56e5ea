"""``plant-audit fields``: print (or write) the field reference of a balance file: every part and
step kind, each field's unit, default and meaning, and the reference of h and s per fluid family
(generated from the models; the project keeps it as docs/fields.md)."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from audit.exitcodes import EXIT_PASS

NAME = "fields"
HELP = "print the reference of every field of a balance file (Markdown)"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("-o", "--output", type=Path, help="write it to this file instead")


def run(args: argparse.Namespace) -> int:
    from audit.report.fields import reference_text

    text = reference_text()
    if args.output:
        from audit.report.files import write_text

        write_text(args.output, text, "the field reference")
    else:
        sys.stdout.write(text)
    return EXIT_PASS
