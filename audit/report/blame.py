"""Streams named by a finding elsewhere: a probable cause that blames a stream (``closes if stream
S20's pressure ... is gauge``) belongs to a step's finding, yet the stream's own row should not say
it has no findings."""

from __future__ import annotations

import re

from audit.results import AuditResult


def blamed_streams(result: AuditResult) -> dict[str, list[str]]:
    """Stream id → where the findings whose probable causes name it are (``step R1``, ...), in
    the order reported, without repeats."""
    ids = {s.id for s in result.streams}
    named: dict[str, list[str]] = {}
    for finding in result.findings:
        where = f"step {finding.step}" if finding.step else "plant"
        for cause in finding.probable_causes:
            for stream_id in re.findall(r"\bstream (\S+?)(?:'s\b|[\s,;:)]|$)", cause):
                if stream_id in ids and where not in named.setdefault(stream_id, []):
                    named[stream_id].append(where)
    return named


def blamed_text(result: AuditResult, stream_id: str) -> str | None:
    """'none of its own; a probable cause of findings at step R1, step EV1' for a blamed stream,
    None for the others (for many streams: :func:`blamed_streams` once, then :func:`blame_note`)."""
    return blame_note(blamed_streams(result).get(stream_id))


def blame_note(places: list[str] | None) -> str | None:
    """The text of :func:`blamed_text` for a stream blamed at ``places`` (None: not blamed)."""
    if not places:
        return None
    return "none of its own; a probable cause of findings at " + ", ".join(places)
