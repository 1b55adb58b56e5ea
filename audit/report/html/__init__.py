"""The HTML report: one self-contained file per balance (inline SVG pictures, inline style, no
scripts, nothing fetched) and, for a batch, an index page linking each file's report.

``page`` holds the document shell, its style and the caution; ``sections`` the findings, steps,
streams and exchangers; ``report`` puts one balance's page together; ``index`` writes a batch's
pages. Every text from the balance is escaped.
"""
