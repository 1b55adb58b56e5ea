"""CoolProp, loaded on first use, with the saturation expansions of the fluids a run uses only.

Importing CoolProp costs seconds (CoolProp 8 builds the saturation "superancillary" expansions of
all its fluids when the library loads), and a command that never evaluates a state (``--help``,
``schema``, ``template``, a file refused for its input) should not pay it. The property modules
therefore use :data:`CP`, which stands for ``CoolProp.CoolProp`` and imports it at the first
attribute read; after that the library's names are plain attributes of :data:`CP` (no lookup cost
in the hot loop).

The library has no setting that builds the expansions for some fluids only, so :func:`load`
imports it with ``COOLPROP_DISABLE_SUPERANCILLARIES_ENTIRELY`` (CoolProp's own environment switch,
read when each fluid is added to its library) set for the import alone, and :func:`new_state`
adds a fluid's own equation of state again, with its expansions, before the first state object of
that fluid is made. A fluid's expansions then cost about 40 ms instead of 3.5 s for all of them,
and every number is the one the fully loaded library gives, bit for bit (the sample plants' JSON,
the IAPWS and reference tests; ``tests/test_start_up.py`` compares saturation states with CoolProp
loaded whole).

When the user has set the switch, no expansions are built at all and saturation states are found
by iteration: the sample plants' results then move by up to 1.2e-9 relative (a step's enthalpy
change, a difference of large flows; most values by about 1e-12), and some calls outside the
fluid's range answer differently (a (P, Q) state of CO2 below its triple-point pressure is refused
instead of extrapolated). The notice CoolProp writes to the standard output at load is kept out of
the program's own output.
"""

from __future__ import annotations

import os
import sys
import threading
from types import ModuleType
from typing import TYPE_CHECKING, Any

__all__ = ["CP", "coolprop_version", "load", "new_state"]

DISABLE_SWITCH = "COOLPROP_DISABLE_SUPERANCILLARIES_ENTIRELY"
"""CoolProp's environment switch that skips the load-time saturation expansions."""


_selective = False
"""True when :func:`load` imported the library without expansions, for :func:`new_state` to add
them fluid by fluid (False when the user's switch is set or CoolProp was already loaded)."""

_expanded: set[str] = set()
"""Names (as written, and canonical) of the fluids whose expansions have been added."""

_lock = threading.Lock()


def load() -> ModuleType:
    """``CoolProp.CoolProp``, imported now if it is not yet, without the saturation expansions
    (:func:`new_state` adds them per fluid) unless the user has set the switch (then with none).
    The load-time notice is discarded: it would otherwise land in the standard output, e.g. in
    ``--json -``."""
    global _selective
    loaded = sys.modules.get("CoolProp.CoolProp")
    if loaded is not None:
        return loaded
    if os.environ.get(DISABLE_SWITCH):
        return _import_quietly()
    os.environ[DISABLE_SWITCH] = "1"
    try:
        module = _import_quietly()
    finally:
        del os.environ[DISABLE_SWITCH]  # read again as each fluid is added: on from now on
    _selective = True
    return module


def new_state(backend: str, name: str, saturation: bool = True) -> Any:
    """``CP.AbstractState(backend, name)``, the saturation expansions of each fluid of ``name``
    (a fluid, or ``A&B`` with optional ``[fractions]``) added first when they are not yet.

    ``saturation=False`` leaves them out (when they are not added yet) for a state object that is
    asked for constants and updated only well above the fluid's critical temperature, where no
    saturation search is made (:meth:`audit.properties.mixtures.IdealGasMixtures._gas_state`):
    its values are the same bit for bit (``tests/test_start_up.py``), and a fluid that is only a
    gas in mixtures (nitrogen, argon, methane in a flue gas) never costs its expansions. (The
    critical point itself is not such a constant: the expansions move it, by up to 0.02 K.)"""
    load()
    if _selective and saturation:
        for fluid in name.split("&"):
            fluid = fluid.split("[")[0].strip()
            if fluid not in _expanded:
                _expand(fluid)
    return CP.AbstractState(backend, name)


def _expand(fluid: str) -> None:
    """Add ``fluid``'s equation of state to CoolProp's library again, now with its expansions: the
    same entry as a fully loaded library holds (an unknown name is left for the state object to
    refuse in its own words)."""
    with _lock:
        if fluid in _expanded:
            return
        try:
            text = CP.get_fluid_param_string(fluid, "JSON")
            canonical = CP.get_fluid_param_string(fluid, "name")
        except ValueError:  # not a fluid of the library (its state object will say so)
            _expanded.add(fluid)
            return
        if canonical not in _expanded:
            overwrite = CP.get_config_bool(CP.OVERWRITE_FLUIDS)
            CP.set_config_bool(CP.OVERWRITE_FLUIDS, True)
            try:
                CP.add_fluids_as_JSON("HEOS", text)
            finally:
                CP.set_config_bool(CP.OVERWRITE_FLUIDS, overwrite)
        _expanded.update((fluid, canonical))


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
