"""Start-up: what the command line loads for answers that need no property call, and CoolProp's
load-time notice kept out of the output when its superancillary switch is set."""

from __future__ import annotations

import json
import os
import subprocess
import sys

import pytest
from conftest import ROOT, SAMPLE

HEAVY = ("CoolProp", "pandas", "pint", "scipy", "numpy", "rich")

_PROBE = """
import runpy, sys
sys.argv = ["plant-audit", *{args!r}]
try:
    runpy.run_module("audit", run_name="__main__")
except SystemExit:
    pass
sys.stderr.write("LOADED " + " ".join(m for m in {heavy!r} if m in sys.modules) + "\\n")
"""


def _loaded(args: list[str], tmp_path) -> set[str]:
    done = subprocess.run(
        [sys.executable, "-c", _PROBE.format(args=args, heavy=HEAVY)],
        capture_output=True,
        text=True,
        cwd=tmp_path,
        env={**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)},
        check=False,
    )
    line = [x for x in done.stderr.splitlines() if x.startswith("LOADED")][-1]
    return set(line.split()[1:])


@pytest.mark.parametrize(
    "args",
    [
        ["--help"],
        ["schema"],
        ["check", str(ROOT / "tests" / "bad_inputs" / "balance_name_missing.yaml"), "-q"],
    ],
)
def test_answers_without_properties_load_no_heavy_library(args, tmp_path):
    assert _loaded(args, tmp_path) == set()


def test_a_quiet_check_loads_the_property_library_only(tmp_path):
    # The sample site (reactions, electrolysers, humid air, liquids, measured readings): a quiet
    # check needs CoolProp and nothing else heavy (no numpy for one reaction's extent, no console
    # tables, no frames).
    assert _loaded(
        ["check", str(SAMPLE / "quillon-bay-seeded.yaml"), "-q", "--json", str(tmp_path / "x.json")],
        tmp_path,
    ) == {"CoolProp"}


def test_superancillary_switch_keeps_the_notice_out_of_the_output(tmp_path):
    done = subprocess.run(
        [sys.executable, "-m", "audit", "check", str(SAMPLE / "quillon-bay-clean.yaml"), "-q"],
        capture_output=True,
        text=True,
        env={
            **os.environ,
            "PYTHONPATH": os.pathsep.join(sys.path),
            "COOLPROP_DISABLE_SUPERANCILLARIES_ENTIRELY": "1",
        },
        check=False,
    )
    assert done.returncode == 0
    assert "superancillaries" not in done.stdout + done.stderr
    assert done.stdout.strip().endswith("PASS")


def _probe(script: str, how: str):  # noqa: ANN202 - the JSON the script prints
    """Run ``script`` in a fresh interpreter with the property layer (``how="audit"``) or CoolProp
    loaded whole (``"whole"``) and return what it prints as JSON."""
    done = subprocess.run(
        [sys.executable, "-c", script, how],
        capture_output=True,
        text=True,
        env={**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)},
        check=True,
    )
    return json.loads(done.stdout.strip().splitlines()[-1])


_SATURATION = """
import json, sys
if sys.argv[1] == "audit":
    from audit.properties.library import CP, new_state
else:
    import CoolProp.CoolProp as CP

    def new_state(backend, name):
        return CP.AbstractState(backend, name)

values = []
for fluid in ("Water", "CO2", "Ammonia", "Nitrogen"):
    state = new_state("HEOS", fluid)
    for fraction in (0.3, 0.6, 0.9, 0.99):
        T = state.Ttriple() + fraction * (state.T_critical() - state.Ttriple())
        for quality in (0, 1):
            state.update(CP.QT_INPUTS, quality, T)
            values += [state.p(), state.rhomolar(), state.hmass(), state.smass()]
    state.update(CP.PT_INPUTS, 101325.0, 300.0)
    values += [state.hmass(), state.smass()]
print(json.dumps(values))
"""


def test_expansions_per_fluid_give_the_fully_loaded_library_numbers():
    # CoolProp itself, loaded whole (every fluid's saturation expansions built at load), is the
    # reference: the property layer, which builds them for the fluids it opens only, must give
    # the same saturation and single-phase states bit for bit.
    assert _probe(_SATURATION, "audit") == _probe(_SATURATION, "whole")


_DENSITY_TEMPERATURE = """
import json, sys
if sys.argv[1] == "audit":
    from audit.properties.library import CP, new_state
else:
    import CoolProp.CoolProp as CP

    def new_state(backend, name, saturation=True):
        return CP.AbstractState(backend, name)

values = []
for fluid in ("Water", "CarbonDioxide", "Nitrogen", "Argon", "Methane", "Hydrogen", "Oxygen"):
    state = new_state("HEOS", fluid, saturation=False)
    values += [state.molar_mass(), state.Tmin(), state.Tmax(), state.pmax()]
    T_far = state.T_critical() + 1.0  # audit.properties.mixtures.ABOVE_CRITICAL
    for T in (160.0, 200.0, 298.15, 400.0, 700.12345, 1500.0):
        if not state.Tmin() <= T <= state.Tmax():
            continue
        if T < T_far:
            continue
        for rho in (1e-3, 0.5):  # the ideal-gas limit the mixtures read, and a gas
            state.update(CP.DmolarT_INPUTS, rho, T)
            values += [state.hmolar_idealgas(), state.smolar_idealgas(), state.Bvirial()]
            values += [state.hmolar(), state.smolar()]
        for P in (1e3, 1e5, 1e6, 5e6, 3e7):
            state.update(CP.PT_INPUTS, P, T)
            values += [state.hmolar(), state.hmolar_idealgas(), state.fugacity_coefficient(0)]
print(json.dumps(values))
"""


def test_states_without_expansions_give_the_fully_loaded_library_numbers():
    # A state object made without a fluid's saturation expansions (a gas-mixture species) is asked
    # for constants and updated, at (ρ, T) or (T, P), only 1 K or more above its critical
    # temperature: every value must be that of CoolProp loaded whole, bit for bit.
    assert _probe(_DENSITY_TEMPERATURE, "audit") == _probe(_DENSITY_TEMPERATURE, "whole")


_CRITICAL = """
import json, sys
from audit.formation import SPECIES
if sys.argv[1] == "audit":
    from audit.properties.library import new_state
else:
    import CoolProp.CoolProp as CP

    def new_state(backend, name, saturation=True):
        return CP.AbstractState(backend, name)

print(json.dumps({d.fluid: new_state("HEOS", d.fluid, saturation=False).T_critical()
                  for d in SPECIES.values()}))
"""


def test_the_expansions_move_no_species_critical_point_near_the_margin():
    # mixtures._far_above_critical reads T_c without the expansions, which move it (oxygen by
    # 0.018 K): the margin of 1 K must stay far above that for every species with formation data.
    from audit.properties.mixtures import ABOVE_CRITICAL

    without, whole = _probe(_CRITICAL, "audit"), _probe(_CRITICAL, "whole")
    assert without.keys() == whole.keys()
    assert max(abs(without[f] - whole[f]) for f in whole) < ABOVE_CRITICAL / 20
