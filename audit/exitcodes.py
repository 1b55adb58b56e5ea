"""Exit codes of the command line (documented in the README)."""

EXIT_PASS = 0  # no finding at or above --fail-on
EXIT_FINDINGS = 1  # findings at or above --fail-on
EXIT_INPUT = 2  # invalid input: the messages name file, line and field
EXIT_INTERNAL = 3  # an internal error of plant-audit
EXIT_REPORT = 4  # a report could not be written: the message names the path and the reason
EXIT_HISTORY = 5  # the run could not be recorded in the history (only with --fail-on-history)
EXIT_INTERRUPTED = 130  # interrupted (Ctrl-C, SIGINT): 128 + the signal's number
EXIT_TERMINATED = 143  # stopped by SIGTERM: 128 + the signal's number
