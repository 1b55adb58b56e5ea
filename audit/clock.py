"""The run time the reports record: now, or the time ``SOURCE_DATE_EPOCH`` gives.

``SOURCE_DATE_EPOCH`` (seconds since 1970-01-01 UTC, a whole number; the convention of
reproducible builds, https://reproducible-builds.org/specs/source-date-epoch/) fixes the run time
written into the JSON results, the workbooks and the run history, so that the same input gives
the same bytes; in that mode the solve time, which varies from run to run, is left out of the
provenance. A value that is not a whole number of seconds from 0 up to 253402300799
(9999-12-31 23:59:59) is ignored and the current time is used.
"""

from __future__ import annotations

import os
from datetime import datetime, timezone

_LAST_SECOND = 253_402_300_799  # 9999-12-31 23:59:59 UTC


def _epoch() -> int | None:
    text = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    if text.isascii() and text.isdigit() and int(text) <= _LAST_SECOND:
        return int(text)
    return None


def reproducible() -> bool:
    """True when ``SOURCE_DATE_EPOCH`` fixes the run time (reports leave out varying timings)."""
    return _epoch() is not None


def run_time() -> datetime:
    """The run time, timezone-aware UTC: ``SOURCE_DATE_EPOCH`` when it is set and valid, else now."""
    epoch = _epoch()
    if epoch is not None:
        return datetime.fromtimestamp(epoch, timezone.utc)
    return datetime.now(timezone.utc)
