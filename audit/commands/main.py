"""The command line, kept thin: parse arguments, dispatch to :mod:`audit.commands`, map errors to
exit codes (see :mod:`audit.exitcodes`). Only the command line prints."""

from __future__ import annotations

import argparse
import sys
import traceback

from audit.commands import batch, check, convert, diff, history, reconcile, schema, template
from audit.errors import InputError, ReportError
from audit.exitcodes import EXIT_INPUT, EXIT_INTERNAL, EXIT_REPORT
from audit.printable import escaped
from audit.version import __version__

COMMANDS = [check, batch, diff, history, schema, template, convert, reconcile]


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="plant-audit",
        description="Check a plant energy balance against the first and second laws, with "
        "real-fluid properties.",
    )
    parser.add_argument("--version", action="version", version=f"plant-audit {__version__}")
    commands = parser.add_subparsers(dest="command", required=True)
    for module in COMMANDS:
        sub = commands.add_parser(module.NAME, help=module.HELP, description=module.__doc__)
        module.add_arguments(sub)
        sub.set_defaults(handler=module.run)
    return parser


def _tolerant_streams() -> None:
    """A console that cannot encode a character (an id in another script on a Latin-1 terminal)
    shows it as an escape instead of ending the run with a traceback."""
    for stream in (sys.stdout, sys.stderr):
        reconfigure = getattr(stream, "reconfigure", None)
        if reconfigure is not None:
            try:
                reconfigure(errors="backslashreplace")
            except (ValueError, OSError):  # pragma: no cover - a stream that cannot be changed
                pass


def main(argv: list[str] | None = None) -> int:
    _tolerant_streams()
    args = _parser().parse_args(argv)
    try:
        return args.handler(args)
    except ReportError as exc:
        print(f"error: {escaped(exc)} (a report could not be written)", file=sys.stderr)
        return EXIT_REPORT
    except InputError as exc:
        for problem in exc.problems:
            print(f"error: {escaped(problem)}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return EXIT_INTERNAL
    except Exception:  # a bug of ours: say so plainly, with a short trace for the report
        print("internal error in plant-audit (please report it with the input file):", file=sys.stderr)
        traceback.print_exc(limit=3, file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
