"""Exit codes of the command line (documented in the README)."""

EXIT_PASS = 0  # no finding at or above --fail-on
EXIT_FINDINGS = 1  # findings at or above --fail-on
EXIT_INPUT = 2  # invalid input: the messages name file, line and field
EXIT_INTERNAL = 3  # an internal error of plant-audit
EXIT_REPORT = 4  # a report could not be written: the message names the path and the reason
