"""plant-audit: checks a plant energy balance against the first and second laws.

How the parts fit (data flows one way: file → model → states → step results → findings → reports):

* :mod:`audit.input.document` reads the YAML safely and remembers where every value was written;
* :mod:`audit.input.tables` merges the streams (and step claims) a balance takes from a spreadsheet
  (.xlsx, .csv) into that data, remembering the cell of every value; the one input module that
  reads spreadsheets;
* :mod:`audit.model.balance` validates it into pydantic models (:mod:`audit.model.streams`,
  :mod:`audit.model.tolerances`, one model per step kind in :mod:`audit.steps`), with units turned into SI
  at this edge by :mod:`audit.units` and :mod:`audit.model.quantities`;
* :mod:`audit.properties.engine` is the engine's entry point for CoolProp: stream states on the formation
  basis (:mod:`audit.formation`); gas mixtures (ideal-gas mixtures of the pure species, written
  with :mod:`audit.model.composition`) are evaluated for it by :mod:`audit.properties.mixtures`, the one other
  module that calls CoolProp; :mod:`audit.steps.reactions` parses reactions and computes reaction
  properties and heating values through the engine;
* :mod:`audit.steps.laws` holds the first law, entropy generation and reversible work shared by every step
  kind; each kind in :mod:`audit.steps` adds its own checks and emits :class:`audit.findings.Finding`;
* :mod:`audit.solve` runs it all and returns an :class:`audit.results.AuditResult`;
* :mod:`audit.review.acceptance` then marks the findings a reviewer accepted (in the balance or beside it);
* around one audit: :mod:`audit.batch` audits many files through :mod:`audit.executors` (local
  worker processes or a Dask cluster) into :class:`audit.outcomes.FileOutcome` objects;
  :mod:`audit.history` records runs in SQLite; :mod:`audit.diff` compares two revisions;
* :mod:`audit.report` renders results (console, JSON, CSV, workbook) and never computes physics;
* :mod:`audit.commands.main` is the thin command line; :func:`run` is the Python entry point.
"""

from audit.version import __version__


def run(path, **options):  # noqa: ANN001, ANN003, ANN201 - see audit.api.run for the signature
    """Audit the balance file at ``path`` and return an :class:`audit.results.AuditResult`
    (``options``: those of :func:`audit.api.run`, e.g. ``allow_outside=True``)."""
    from audit.api import run as _run

    return _run(path, **options)


__all__ = ["run", "__version__"]
