"""plant-audit: checks a plant energy balance against the first and second laws.

How the parts fit. Data flows one way, stage by stage; each stage is a package (or a module) that
imports only the stages above it in this list (import contracts in pyproject.toml, checked in CI)::

    errors, exitcodes, version   the exception hierarchy, exit codes, the version
    constants, formation         R, F, 0 °C, standard conditions; formation data with sources
    wording, units               SI → engineering text; unit strings → SI (one pint registry)
    findings                     the Finding record and the table of finding names
    input/                       the file edge: safe YAML with positions, stream/claim tables
    model/                       pydantic models of the balance in SI (no I/O, no results)
    properties/                  the only code that imports CoolProp: states, mixtures, basis
    physics/                     plain functions on SI floats: exergy, efficiencies, voltages, bounds
    exchangers                   a heat exchanger's T–Q profile and rating values (records)
    results                      step, stream and plant result records
    steps/                       shared step machinery; steps/kinds/: one module per kind
    reading, solve               file → validated balance; balance → states → step results
    review/                      verdicts with uncertainty, probable causes, acceptances
    reconcile/                   data reconciliation of measured balances
    outcomes, diff, history      per-file outcomes, revision diffs, the run history
    accounts                     the plant's exergy account, read from the results
    report/                      console, JSON, CSV, JUnit, workbook (one module per sheet),
                                 HTML (report/html/) and SVG pictures (report/pictures/)
    api, executors, batch        ``audit.run(path)``; many files in parallel
    commands/                    the command line: the only code that prints

:func:`run` is the Python entry point (:func:`audit.api.run`).
"""

from audit.version import __version__


def run(path, **options):  # noqa: ANN001, ANN003, ANN201 - see audit.api.run for the signature
    """Audit the balance file at ``path`` and return an :class:`audit.results.AuditResult`
    (``options``: those of :func:`audit.api.run`, e.g. ``allow_outside=True``)."""
    from audit.api import run as _run

    return _run(path, **options)


def frames(result):  # noqa: ANN001, ANN201 - see audit.api.frames
    """The result's tables as DataFrames with SI units in their headers (:func:`audit.api.frames`)."""
    from audit.api import frames as _frames

    return _frames(result)


__all__ = ["frames", "run", "__version__"]
