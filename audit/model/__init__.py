"""The validated balance: pydantic models in SI, no I/O and no results.

* :mod:`audit.model.quantities`: field types for quantities written with units;
* :mod:`audit.model.streams`: a stream's fluid, state pair and flow;
* :mod:`audit.model.table_columns`: the stream fields a stream table may give, and how the table
  reader (:mod:`audit.input.tables`) reads their cells;
* :mod:`audit.model.steps`: the fields every step kind shares, heat claims;
* :mod:`audit.model.tolerances`, :mod:`audit.model.uncertainty`, :mod:`audit.model.acceptance`,
  :mod:`audit.model.composition`: the balance's tolerances, measurement uncertainties, reviewers'
  acceptances and gas compositions;
* :mod:`audit.model.balance`: the whole file, and validation with errors mapped to file positions.
"""
