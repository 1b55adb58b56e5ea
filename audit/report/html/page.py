"""The HTML document shell shared by the report and the batch index: style, caution, verdict."""

from __future__ import annotations

from audit.report.pictures.svg import esc

CAUTION = (
    "Consistency check only: this report checks the thermodynamic consistency of the balance "
    "(first and second laws). It is not a safety review, a hazard study or a check of compliance "
    "with any design code; a balance that passes may still be unsafe. Defer to local codes and "
    "regulations and to licensed engineers."
)

STYLE = """
body{font-family:sans-serif;font-size:15px;line-height:1.4;color:#222;margin:0;background:#fff}
main{max-width:1200px;margin:0 auto;padding:12px 16px 40px}
h1{font-size:1.5em;margin:.4em 0}h2{font-size:1.25em;margin-top:1.6em;border-bottom:1px solid #ccd}
h3{font-size:1.05em;margin:1.2em 0 .3em}
nav a{margin-right:1em}
.caution{border-left:6px solid #d98c00;background:#fff7e6;padding:8px 12px;margin:10px 0}
.verdict{display:inline-block;font-weight:bold;padding:4px 12px;border-radius:4px;color:#fff}
.verdict.pass{background:#2e7d32}.verdict.fail{background:#c62828}
.verdict.invalid,.verdict.other{background:#6d4c41}
.figure{overflow-x:auto;margin:8px 0;border:1px solid #e3e6ea;padding:4px}
.scroll{overflow-x:auto}
table{border-collapse:collapse;margin:6px 0}
th,td{border:1px solid #d6dae0;padding:3px 8px;text-align:left;vertical-align:top}
th{background:#eef1f4}td.n{text-align:right;white-space:nowrap}
tr.error td:first-child,section.step.error>h3{color:#c62828}
tr.warning td:first-child,section.step.warning>h3{color:#a86a00}
section.step{border-left:6px solid #c9ced4;padding:2px 12px;margin:12px 0}
section.step.error{border-left-color:#c62828;background:#fdf3f2}
section.step.warning{border-left-color:#d98c00;background:#fffaf0}
section.step:target,tr:target{outline:3px solid #2a62b5}
.mark{font-weight:bold}
.muted{color:#5f6b76}
"""


def page(title: str, body: str) -> str:
    """A whole HTML document: ``title`` is plain text (escaped here), ``body`` is markup."""
    return (
        "<!DOCTYPE html>\n"
        '<html lang="en"><head><meta charset="utf-8">'
        '<meta name="viewport" content="width=device-width, initial-scale=1">'
        '<link rel="icon" href="data:,">'
        f"<title>{esc(title)}</title><style>{STYLE}</style></head>"
        f"<body><main>{body}</main></body></html>\n"
    )


def verdict_badge(verdict: str) -> str:
    """The verdict (PASS, FAIL, INVALID, ...) as a coloured badge."""
    kind = {"PASS": "pass", "FAIL": "fail", "INVALID": "invalid"}.get(verdict, "other")
    return f'<span class="verdict {kind}" data-verdict="{esc(verdict)}">{esc(verdict)}</span>'


def caution() -> str:
    return f'<p class="caution" role="note"><strong>Caution.</strong> {esc(CAUTION)}</p>'
