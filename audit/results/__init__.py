"""Plain result objects: what the solver hands to the reports, all values SI.

The reports import these classes, never the solver. :class:`AuditResult` also offers pandas
DataFrames of streams, steps and findings for use from a notebook.
"""

from audit.results.delegated import Delegated
from audit.results.records import as_record
from audit.results.run import AuditResult, PlantTotals
from audit.results.steps import (
    HEAT_FLOW_FIELDS,
    STEP_FIELDS,
    Balance,
    BoundaryChoice,
    HeatFlow,
    StepResult,
)
from audit.results.streams import STANDARD_GRAVITY, STREAM_FIELDS, StreamResult

__all__ = [
    "HEAT_FLOW_FIELDS",
    "STANDARD_GRAVITY",
    "STEP_FIELDS",
    "STREAM_FIELDS",
    "AuditResult",
    "Balance",
    "BoundaryChoice",
    "Delegated",
    "HeatFlow",
    "PlantTotals",
    "StepResult",
    "StreamResult",
    "as_record",
]
