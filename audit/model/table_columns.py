"""The stream model's table columns: which fields a stream table may give, how the table reader
reads each field's cells, and the headers and choices of an empty stream table.

The table reader (:mod:`audit.input.tables`) knows no stream model; it is handed
:func:`stream_kinds`. The cell kinds are those of :mod:`audit.input.tables.cells`: a quantity kind
(its unit in the header or the cell), ``fraction``, ``mapping`` (a composition) or ``text``."""

from __future__ import annotations

import typing

from audit.model.streams import StreamSpec

STREAM_KINDS: dict[str, str] = {
    "T": "temperature",
    "P": "pressure",
    "h": "specific_enthalpy",
    "s": "specific_entropy",
    "u": "specific_enthalpy",
    "v": "specific_volume",
    "rho": "density",
    "T_sat": "temperature",
    "wet_bulb": "temperature",
    "dew_point": "temperature",
    "velocity": "velocity",
    "elevation": "length",
    "flow": "flow",
    "quality": "fraction",
    "composition": "mapping",
}
"""How a stream table reads each field's cells; any other stream field is text."""

STREAM_TEMPLATE_HEADERS = [
    "id",
    "fluid",
    "T [degC]",
    "P [barg]",
    "quality",
    "h [kJ/kg]",
    "s [kJ/(kg K)]",
    "flow [t/h]",
    "phase",
    "description",
]
"""The headers of an empty stream table (``plant-audit template``)."""


def stream_kinds() -> dict[str, str]:
    """Field → how its cells are read, for every field a stream table may give (with ``id``)."""
    kinds = {"id": "text"}
    for name in StreamSpec.model_fields:
        kinds[name] = STREAM_KINDS.get(name, "text")
    return kinds


def stream_template_headers() -> list[str]:
    """The headers of an empty stream table: :data:`STREAM_TEMPLATE_HEADERS`, and ``composition``
    when streams take one."""
    extra = ["composition"] if "composition" in StreamSpec.model_fields else []
    return [*STREAM_TEMPLATE_HEADERS[:-1], *extra, STREAM_TEMPLATE_HEADERS[-1]]


def stream_choices() -> dict[str, list[str]]:
    """Header → the words a stream field accepts, for fields limited to a list (``phase``)."""
    choices = {}
    for name, info in StreamSpec.model_fields.items():
        words = [
            w
            for arg in typing.get_args(info.annotation)
            for w in (typing.get_args(arg) if typing.get_origin(arg) is typing.Literal else [])
        ]
        if typing.get_origin(info.annotation) is typing.Literal:
            words = list(typing.get_args(info.annotation))
        if words and all(isinstance(w, str) for w in words):
            choices[name] = words
    return choices
