"""plant-audit: checks a plant energy balance against the first and second laws.

How the parts fit (data flows one way: file → model → states → step results → findings → reports):

* :mod:`audit.loader` reads the YAML safely and remembers where every value was written;
* :mod:`audit.model` validates it into pydantic models (:mod:`audit.state_spec`,
  :mod:`audit.tolerances`, one model per step kind in :mod:`audit.steps`), with units turned into SI
  at this edge by :mod:`audit.units` and :mod:`audit.quantities`;
* :mod:`audit.properties` is the one module that calls CoolProp: stream states on the formation
  basis (:mod:`audit.formation`);
* :mod:`audit.laws` holds the first law, entropy generation and reversible work shared by every step
  kind; each kind in :mod:`audit.steps` adds its own checks and emits :class:`audit.findings.Finding`;
* :mod:`audit.solve` runs it all and returns an :class:`audit.results.AuditResult`;
* :mod:`audit.report` renders results (console, JSON, CSV, workbook) and never computes physics;
* :mod:`audit.cli` is the thin command line; :func:`run` is the Python entry point.
"""

__version__ = "0.1.0"


def run(path):  # noqa: ANN001, ANN201 - re-exported below with its real signature
    """Audit the balance file at ``path`` and return an :class:`audit.results.AuditResult`."""
    from audit.api import run as _run

    return _run(path)


__all__ = ["run", "__version__"]
