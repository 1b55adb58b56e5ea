"""The plain physics functions of audit.physics against published and analytic values.

Each check value is printed with its source beside it; the tolerance is what the printed
precision allows. "analytic" marks values that follow exactly from R (exact since the 2019 SI).
"""

from __future__ import annotations

import math

import pytest
from conftest import assert_close

from audit.constants import FARADAY, GAS_CONSTANT
from audit.physics.bounds import (
    energy_residual,
    entropy_generation,
    isothermal_closed_work_bound,
    isothermal_flow_work_bound,
    reversible_work,
)
from audit.physics.efficiency import (
    isentropic_efficiency_compression,
    isentropic_efficiency_cooled_compression,
    isentropic_efficiency_expansion,
    second_law_efficiency,
)
from audit.physics.electrochemistry import (
    faradaic_efficiency,
    faraday_current,
    reversible_voltage,
    thermoneutral_voltage,
)
from audit.physics.exergy import (
    carnot_factor,
    entropy_of_heat,
    exergy_destroyed,
    flow_exergy,
    heat_exergy,
)
from audit.properties.engine import PropertyEngine

T0 = 298.15


# -- exergy ---------------------------------------------------------------------------------------
def test_carnot_factor_800_300():
    # analytic: 1 − 300/800 = 0.625
    assert carnot_factor(800.0, 300.0) == pytest.approx(0.625, abs=1e-15)
    assert carnot_factor(math.inf, 300.0) == 1.0


def test_heat_exergy_1000_kJ_at_600_K():
    # analytic: 1000 kJ × (1 − 298.15/600) = 503.0833 kJ, printed to 0.1 J
    assert_close(heat_exergy(1000e3, 600.0, T0), 503.0833e3, "kJ", atol=0.05)


def test_entropy_generated_by_heat_transfer_600_to_300_K():
    # analytic: 1000 kJ from 600 K to 300 K generates 1000/300 − 1000/600 = 1.666667 kJ/K
    S_in = entropy_of_heat(1000e3, 600.0) + entropy_of_heat(-1000e3, 300.0)
    assert_close(entropy_generation(0.0, S_in), 1.666667e3, "J/K", atol=5e-4)
    assert entropy_of_heat(1.0, math.inf) == 0.0


def test_flow_exergy_of_saturated_vapour_against_its_liquid_iapws95_table8():
    # IAPWS R6-95(2018) Table 8, 450 K: h' = 749.161585, h'' = 2774.41078 kJ/kg,
    # s' = 2.10865845, s'' = 6.60921221 kJ/(kg K). Phase equilibrium: g' = g'', so vapour has no
    # exergy relative to its liquid at the same T. Printed to ~1e-6 kJ/kg: tolerance 2e-5 kJ/kg.
    psi = flow_exergy(2774.41078e3, 6.60921221e3, 749.161585e3, 2.10865845e3, 450.0)
    assert_close(psi, 0.0, "kJ/kg", atol=0.02)


def test_gouy_stodola_free_expansion_ten_to_one_bar():
    # analytic (reference values row 28): 1 mol ideal gas, 298.15 K, 10 → 1 bar unresisted:
    # S_gen = R ln 10 = 19.14476 J/K, T0 S_gen = 5708.01 J
    S_gen = entropy_generation(GAS_CONSTANT * math.log(10.0), 0.0)
    assert_close(S_gen, 19.14476, "J/K", atol=5e-6)
    assert_close(exergy_destroyed(S_gen, T0), 5708.01, "J", atol=5e-3)


# -- bounds ---------------------------------------------------------------------------------------
def test_isothermal_work_bounds_ten_to_one_bar():
    # analytic (reference values row 28): W_rev = R T ln 10 = 5708.0095 J for 1 mol ideal gas
    # at 298.15 K from 10 to 1 bar; ΔG = ΔA = −R T ln 10 for an isothermal ideal gas.
    # Printed to 0.1 mJ: tolerance 5e-5 J.
    dG = dA = -GAS_CONSTANT * T0 * math.log(10.0)
    assert_close(isothermal_flow_work_bound(dG), 5708.0095, "J", atol=5e-5)
    assert_close(isothermal_closed_work_bound(dA), 5708.0095, "J", atol=5e-5)
    # The exergy drop gives the same with heat taken in at T0 (Carnot factor 0): ΔE = 0.
    W_rev = reversible_work(0.0, GAS_CONSTANT * math.log(10.0), T0, heat_exergy(5708.0, T0, T0))
    assert_close(W_rev, 5708.0095, "J", atol=5e-5)


def test_energy_residual_closes_for_a_consistent_balance():
    # analytic: Q − W − ΔE
    assert energy_residual(100.0, 40.0, 60.0) == 0.0
    assert energy_residual(100.0, 40.0, 50.0) == 10.0


# -- efficiencies ----------------------------------------------------------------------------------
def test_turbine_isentropic_efficiency_steam_3_MPa_400_C_to_50_kPa_100_C():
    # Textbook example (Çengel & Boles, Thermodynamics: An Engineering Approach, 7th ed.,
    # Example 7-14; the figures are from memory): steam from 3 MPa, 400 °C to 50 kPa, 100 °C in
    # an adiabatic turbine: h1 = 3231.7, h2 = 2682.4, h2s ≈ 2407.4 kJ/kg, η_T = 0.667.
    # Recomputed here with IAPWS-95 through the property engine; steam-table rounding and the
    # three printed digits allow 2e-3.
    engine = PropertyEngine(T0, 101_325.0)
    inlet = engine.state("Water", "TP", 673.15, 3.0e6)
    outlet = engine.state("Water", "TP", 373.15, 50.0e3)
    h_s = engine.state("Water", "Ps", 50.0e3, inlet.s, table_basis=False).h
    assert_close(inlet.h - outlet.h, 3231.7e3 - 2682.4e3, "kJ/kg", atol=0.5e3)
    eta = isentropic_efficiency_expansion(inlet.h, outlet.h, h_s)
    assert_close(eta, 0.667, "-", atol=2e-3, what="η_T")


def test_compressor_isentropic_efficiency_ideal_gas():
    # analytic: ideal gas of constant cp, T1 = 300 K, T2s = 400 K, T2 = 425 K: η = 100/125 = 0.8
    cp = 1004.5
    eta = isentropic_efficiency_compression(cp * 300.0, cp * 425.0, cp * 400.0)
    assert eta == pytest.approx(0.8, rel=1e-12)
    # the same machine with its heat loss known: 2 kg/s, 125 kJ/kg absorbed as shaft work
    cooled = isentropic_efficiency_cooled_compression(2.0, cp * 300.0, cp * 400.0, 2.0 * cp * 125.0)
    assert cooled == pytest.approx(0.8, rel=1e-12)


def test_second_law_efficiency_producer_and_consumer():
    # definition: W / W_rev for a producer, W_rev / W for a consumer, None across signs
    assert second_law_efficiency(80.0, 100.0) == pytest.approx(0.8, rel=1e-15)
    assert second_law_efficiency(-125.0, -100.0) == pytest.approx(0.8, rel=1e-15)
    assert second_law_efficiency(10.0, -5.0) is None


# -- electrochemistry ------------------------------------------------------------------------------
@pytest.mark.parametrize(
    ("dG", "dH", "E_rev", "E_tn"),
    [
        # reference values rows 19-22 (derived from CODATA 1989): H2 + ½O2 → H2O(l):
        # ΔrG = −237.140, ΔrH = −285.830 kJ/mol → E° = 1.22889 V, E_tn = 1.48121 V
        (-237.140e3, -285.830e3, 1.22889, 1.48121),
        # H2 + ½O2 → H2O(g): ΔrG = −228.582, ΔrH = −241.826 kJ/mol → 1.18454 V, 1.25317 V
        (-228.582e3, -241.826e3, 1.18454, 1.25317),
    ],
)
def test_water_cell_voltages(dG, dH, E_rev, E_tn):
    # printed to 1e-5 V (and ΔG, ΔH to 1 J/mol, 5e-6 V): tolerance 1e-5 V
    assert_close(reversible_voltage(dG, 2), E_rev, "V", atol=1e-5)
    assert_close(thermoneutral_voltage(dH, 2), E_tn, "V", atol=1e-5)


def test_faraday_current_and_efficiency():
    # CODATA 2018 (exact): F = 96 485.332 123 310 0 C/mol; 1 mol/s of a 2-electron reaction
    assert_close(faraday_current(2, 1.0), 2 * 96_485.332_123_310_0, "-", rtol=1e-12)
    assert FARADAY == pytest.approx(96_485.332_123_310_0, rel=1e-15)
    # definition: 90 % of the charge passed drives the reaction (electrolyser), and a fuel cell
    # that delivers 90 % of the current its fuel could carry
    xi = 0.9 * 1000.0 / (2 * FARADAY)
    assert faradaic_efficiency(2, xi, 1000.0, electrolytic=True) == pytest.approx(0.9, rel=1e-12)
    xi = 1000.0 / (2 * FARADAY * 0.9)
    assert faradaic_efficiency(2, xi, 1000.0, electrolytic=False) == pytest.approx(0.9, rel=1e-12)
