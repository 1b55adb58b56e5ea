"""CoolProp, loaded on first use.

Importing CoolProp costs seconds (CoolProp 8 builds the saturation expansions of every fluid when
the library loads), and a command that never evaluates a state (``--help``, ``schema``,
``template``, a file refused for its input) should not pay it. The property modules therefore use
:data:`CP`, which stands for ``CoolProp.CoolProp`` and imports it at the first attribute read;
after that the library's names are plain attributes of :data:`CP` (no lookup cost in the hot loop).

``COOLPROP_DISABLE_SUPERANCILLARIES_ENTIRELY`` (CoolProp's own environment switch, read when the
library loads) skips those expansions: start-up drops by about 3.5 s of CPU, and saturation states
are then found by iteration (the sample plant's results agree to about 1e-12 relative, saturation
pressures near a triple point to 3e-8; see DEVELOPERS.md). plant-audit does not set it; when the
user has set it, the notice CoolProp writes to the standard output at load is kept out of the
program's own output.
"""

from __future__ import annotations

import os
import sys
from types import ModuleType
from typing import TYPE_CHECKING, Any

__all__ = ["CP", "coolprop_version", "load"]

DISABLE_SWITCH = "COOLPROP_DISABLE_SUPERANCILLARIES_ENTIRELY"
"""CoolProp's environment switch that skips the load-time saturation expansions."""


def load() -> ModuleType:
    """``CoolProp.CoolProp``, imported now if it is not yet (its load-time notice, if any, is
    discarded: it would otherwise land in the standard output, e.g. in ``--json -``)."""
    loaded = sys.modules.get("CoolProp.CoolProp")
    if loaded is not None:
        return loaded
    if not os.environ.get(DISABLE_SWITCH):
        import CoolProp.CoolProp as module

        return module
    return _import_quietly()


def _import_quietly() -> ModuleType:
    """Import CoolProp with the process's standard output (file descriptor 1) sent to the null
    device: the notice is written by the compiled library, below Python's ``sys.stdout``."""
    sys.stdout.flush()
    saved = os.dup(1)
    null = os.open(os.devnull, os.O_WRONLY)
    try:
        os.dup2(null, 1)
        import CoolProp.CoolProp as module
    finally:
        os.dup2(saved, 1)
        os.close(saved)
        os.close(null)
    return module


def coolprop_version() -> str:
    """The version of the CoolProp library (loads it)."""
    load()
    import CoolProp

    return str(CoolProp.__version__)


class _Library:
    """Stands for ``CoolProp.CoolProp``; the first attribute read imports it and copies its names
    onto this object, so that later reads are ordinary attribute reads."""

    def __getattr__(self, name: str) -> Any:
        module = load()
        self.__dict__.update(
            {key: value for key, value in vars(module).items() if not key.startswith("__")}
        )
        return getattr(module, name)


if TYPE_CHECKING:
    import CoolProp.CoolProp as CP
else:
    CP = _Library()
