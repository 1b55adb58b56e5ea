"""The Python entry point: ``audit.run(path)`` reads a balance file and audits it.

Example (in a notebook)::

    import audit
    result = audit.run("sample_plant/maple-creek-clean.yaml")
    result.steps_frame()[["Q", "W", "S_gen", "W_rev"]]
    result.findings_frame()
"""

from __future__ import annotations

import hashlib
from pathlib import Path

from audit.loader import parse_document, read_text
from audit.model import validate_document
from audit.results import AuditResult
from audit.solve import solve


def run(path: str | Path) -> AuditResult:
    """Audit the balance file at ``path``.

    Raises :class:`audit.errors.InputError` when the file cannot be read, parsed, validated or
    evaluated; every message names the file and line.
    """
    path = Path(path)
    text = read_text(path)
    sha256 = hashlib.sha256(path.read_bytes()).hexdigest()
    document = parse_document(text, str(path))
    balance = validate_document(document)
    return solve(balance, document, sha256=sha256)
