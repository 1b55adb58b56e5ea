"""``plant-audit template --streams FILE``: write an empty stream-table workbook (.xlsx) with the
headers and units the audit reads, a claims sheet and an instructions sheet, so a stream table
starts in the right shape. Name it in a balance file with ``streams_from: {file: FILE}``."""

from __future__ import annotations

import argparse
from pathlib import Path

from audit.commands.outputs import check_run_outputs
from audit.errors import InputError
from audit.exitcodes import EXIT_PASS
from audit.report.publish import Output

NAME = "template"
HELP = "write an empty stream-table workbook with the expected headers and units"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument(
        "--streams", type=Path, required=True, metavar="XLSX", help="the workbook to write (.xlsx)"
    )
    parser.add_argument(
        "--force", action="store_true", help="replace the file if it exists (its contents are lost)"
    )


def run(args: argparse.Namespace) -> int:
    from audit.input.tables import CLAIM_HEADERS
    from audit.model.table_columns import stream_choices, stream_template_headers
    from audit.report.template import write_table_workbook

    path: Path = args.streams
    if path.suffix.lower() != ".xlsx":
        raise InputError(
            "a stream-table template is an .xlsx workbook; give a name ending in .xlsx", file=str(path)
        )
    check_run_outputs([Output(path, "the stream-table template")], [], None)
    if path.exists() and not args.force:
        raise InputError(
            "the file exists; writing a template would replace its contents (add --force to replace it)",
            file=str(path),
        )
    write_table_workbook(
        path,
        stream_template_headers(),
        claim_headers=CLAIM_HEADERS,
        choices=stream_choices(),
        title="plant-audit stream table",
    )
    print(
        f"wrote {path}: sheets 'streams', 'claims' and 'instructions'; name it in the balance "
        f"file with 'streams_from: {{file: {path.name}, sheet: streams}}'"
    )
    return EXIT_PASS
