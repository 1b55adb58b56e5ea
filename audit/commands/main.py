"""The command line, kept thin: parse arguments, dispatch to :mod:`audit.commands`, map errors to
exit codes (see :mod:`audit.exitcodes`). Only the command line prints.

Signals: Ctrl-C (SIGINT) exits 130 and SIGTERM exits 143, after the temporary files are removed
and the worker processes stopped (the reports of earlier runs stay as they were). A closed
standard output (``plant-audit check x.yaml | head -1``) is not an error: the rest of the text is
dropped and the exit code stays the audit's."""

from __future__ import annotations

import argparse
import os
import signal
import sys
from typing import Any, TextIO

from audit.commands import (
    batch,
    check,
    config,
    convert,
    diff,
    fields,
    history,
    reconcile,
    schema,
    template,
)
from audit.errors import InputError, ReportError
from audit.exitcodes import (
    EXIT_INPUT,
    EXIT_INTERNAL,
    EXIT_INTERRUPTED,
    EXIT_REPORT,
    EXIT_TERMINATED,
)
from audit.printable import escaped
from audit.version import __version__

COMMANDS = [check, batch, diff, history, schema, template, convert, reconcile, config, fields]


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


class Terminated(KeyboardInterrupt):
    """SIGTERM, raised where the program is so that it cleans up as for Ctrl-C."""


def _terminate(signum: int, frame: Any) -> None:
    raise Terminated()


class _ClosedPipeSafe:
    """The standard output, quiet once its reader has gone (a closed pipe): what is left to print
    is dropped, without a traceback, and the exit code stays the audit's."""

    def __init__(self, stream: TextIO) -> None:
        self._stream = stream
        self.closed_pipe = False

    def write(self, text: str) -> int:
        if not self.closed_pipe:
            try:
                return self._stream.write(text)
            except BrokenPipeError:
                self._drop()
        return len(text)

    def flush(self) -> None:
        if not self.closed_pipe:
            try:
                self._stream.flush()
            except BrokenPipeError:
                self._drop()

    def _drop(self) -> None:
        self.closed_pipe = True
        try:  # the buffered rest goes nowhere, also when Python flushes at exit
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, self._stream.fileno())
            os.close(devnull)
        except (OSError, ValueError):
            pass

    def __getattr__(self, name: str) -> Any:
        return getattr(self._stream, name)


def main(argv: list[str] | None = None) -> int:
    _tolerant_streams()
    # The command line uses no pydantic plugins: spare each start pydantic's search of every
    # installed package for them (about 40 ms). A value set by the user is kept.
    os.environ.setdefault("PYDANTIC_DISABLE_PLUGINS", "__all__")
    args = _parser().parse_args(argv)
    previous = signal.getsignal(signal.SIGTERM)
    stdout = sys.stdout
    if stdout is not None and not isinstance(stdout, _ClosedPipeSafe):
        sys.stdout = _ClosedPipeSafe(stdout)
    try:
        signal.signal(signal.SIGTERM, _terminate)
    except ValueError:  # not the main thread: leave SIGTERM as it is
        previous = None
    try:
        code = _run(args)
        sys.stdout.flush()
        return code
    finally:
        sys.stdout = stdout
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)


def _run(args: argparse.Namespace) -> int:
    try:
        return args.handler(args)
    except ReportError as exc:
        print(f"error: {escaped(exc)} (a report could not be written)", file=sys.stderr)
        return EXIT_REPORT
    except InputError as exc:
        for problem in exc.problems:
            print(f"error: {escaped(problem)}", file=sys.stderr)
        return EXIT_INPUT
    except Terminated:
        print("stopped (SIGTERM); temporary files removed, earlier reports kept", file=sys.stderr)
        return EXIT_TERMINATED
    except KeyboardInterrupt:
        print("interrupted; temporary files removed, earlier reports kept", file=sys.stderr)
        return EXIT_INTERRUPTED
    except Exception:  # a bug of ours: say so plainly, with a short trace for the report
        print("internal error in plant-audit (please report it with the input file):", file=sys.stderr)
        import traceback  # only for a crash: not loaded on every start

        traceback.print_exc(limit=3, file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
