"""The formation basis against CODATA Key Values (Cox, Wagman & Medvedev 1989) and NIST-JANAF
(Chase 1998), at 298.15 K and 1 bar."""

from __future__ import annotations

import math

import pytest
from conftest import assert_close

from audit.formation import SPECIES
from audit.properties.engine import GAS_CONSTANT, PropertyEngine

T_STD, P_STD = 298.15, 1.0e5


@pytest.fixture(scope="module")
def engine() -> PropertyEngine:
    return PropertyEngine(298.15, 101_325.0)


def molar(state):
    """(h [J/mol], s [J/(mol K)], g [J/mol]) of a state."""
    M = state.molar_mass
    return state.h * M, state.s * M, state.g * M


def test_codata_liquid_water(engine):
    # CODATA 1989: H2O(l) ΔfH° = −285.830 ± 0.040 kJ/mol, S° = 69.95 ± 0.03 J/(mol K). The engine
    # anchors the ideal gas to H2O(g) and reaches the liquid through IAPWS-95, so agreement within
    # the CODATA uncertainties checks both the anchor and the equation of state.
    h, s, _ = molar(engine.state("Water", "TP", T_STD, P_STD))
    assert_close(h, -285_830.0, "kJ/mol", atol=40.0)
    assert_close(s, 69.95, "J/(mol K)", atol=0.06)


@pytest.mark.parametrize("fluid", sorted(SPECIES))
def test_ideal_gas_anchor(engine, fluid):
    # At 100 Pa every species is an ideal gas to better than 1e-5 in h and s; then h = ΔfH° and
    # s = S° − R ln(p/p°) exactly on the formation basis (values and sources in audit/formation.py).
    data = SPECIES[fluid]
    T = T_STD
    p = 100.0 if fluid != "Water" else 50.0  # below water's vapour pressure (3.17 kPa)
    h, s, _ = molar(engine.state(fluid, "TP", T, p))
    assert_close(h, data.enthalpy_of_formation, "kJ/mol", atol=5.0, what=f"h of {fluid}")
    expected_s = data.standard_entropy - GAS_CONSTANT * math.log(p / P_STD)
    assert_close(s, expected_s, "J/(mol K)", atol=0.01, what=f"s of {fluid}")


def test_gibbs_energy_of_water_formation(engine):
    # H2 + ½ O2 → H2O(l) at 298.15 K, 1 bar: ΔrG° = −237.140 kJ/mol, ΔrH° = −285.830 kJ/mol
    # (derived from CODATA 1989; reference-values row 19). Real gases at 1 bar: departures of H2
    # and O2 are below 0.01 kJ/mol.
    h_w, _, g_w = molar(engine.state("Water", "TP", T_STD, P_STD))
    h_h, _, g_h = molar(engine.state("Hydrogen", "TP", T_STD, P_STD))
    h_o, _, g_o = molar(engine.state("Oxygen", "TP", T_STD, P_STD))
    assert_close(g_w - g_h - 0.5 * g_o, -237_140.0, "kJ/mol", atol=50.0)
    assert_close(h_w - h_h - 0.5 * h_o, -285_830.0, "kJ/mol", atol=50.0)


def test_formation_data_against_chemicals_library(engine):
    """ΔfH° and S° of the gases through the engine against the NIST-JANAF tables as transcribed in
    the independent ``chemicals`` package. CODATA (used here for CO2 and CO) and JANAF differ by up
    to 12 J/mol in ΔfH° and 0.01 J/(mol K) in S° (reference-values rows 15-16), hence the tolerances."""
    reaction = pytest.importorskip("chemicals.reaction")
    cases = {
        "CarbonDioxide": "124-38-9",
        "CarbonMonoxide": "630-08-0",
        "Methane": "74-82-8",
        "Ammonia": "7664-41-7",
        "Water": "7732-18-5",
        "Nitrogen": "7727-37-9",
        "Hydrogen": "1333-74-0",
        "Oxygen": "7782-44-7",
        "Argon": "7440-37-1",
    }
    for fluid, cas in cases.items():
        # The elements are not in the package's JANAF table: its WebBook table is used for them.
        method = "JANAF" if reaction.Hfg(cas, method="JANAF") is not None else "WEBBOOK"
        h, s, _ = molar(engine.state(fluid, "TP", T_STD, 50.0))
        s_standard = s + GAS_CONSTANT * math.log(50.0 / P_STD)
        assert_close(
            h,
            reaction.Hfg(cas, method=method) or 0.0,
            "kJ/mol",
            atol=20.0,
            what=f"ΔfH° of {fluid} ({method})",
        )
        assert_close(
            s_standard,
            reaction.S0g(cas, method=method),
            "J/(mol K)",
            atol=0.02,
            what=f"S° of {fluid} ({method})",
        )


def test_fluids_without_formation_data_say_so(engine):
    state = engine.state("R134a", "TP", 300.0, 1e5)
    assert state.basis == "fluid reference"
    assert engine.state("Water", "TP", 300.0, 1e5).basis == "formation"
