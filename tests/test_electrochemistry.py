"""Electrolysers and fuel cells: Faraday's constant, reversible and thermoneutral voltages against
CODATA 1989 and NIST-JANAF, and each cell check firing on a step built to violate it and silent on
a consistent one.

The test cells run at 25 °C and 1 bar with liquid water, where the reaction properties are the
standard ones: ΔG° = −237.140 kJ/mol and ΔH° = −285.830 kJ/mol for H2 + ½O2 → H2O(l) (CODATA Key
Values 1989; reference-values rows 12, 19), so E_rev = 1.22889 V and E_tn = 1.48121 V (rows 21, 22).
The CODATA uncertainty of ΔfH°(H2O, l), ±0.040 kJ/mol, is ±0.21 mV over 2F.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from conftest import assert_close, audit_text, names

from audit.errors import InputError
from audit.properties.engine import PropertyEngine
from audit.steps.reactions import FARADAY, parse_reaction, reaction_properties

R = 8.314_462_618_153_24  # J/(mol K), exact (2019 SI)
F = 96_485.332_12  # C/mol, CODATA 2018 (exact: N_A e)
DG0, DH0 = -237_140.0, -285_830.0  # J/mol, H2 + ½O2 → H2O(l), CODATA 1989
E_REV, E_TN = 1.22889, 1.48121  # V, reference-values rows 21, 22


@pytest.fixture(scope="module")
def engine() -> PropertyEngine:
    return PropertyEngine(298.15, 101_325.0)


def test_faraday_constant_is_avogadro_times_elementary_charge():
    # 2019 SI: N_A = 6.022 140 76e23 /mol and e = 1.602 176 634e-19 C exactly (CODATA 2018).
    assert FARADAY == 6.022_140_76e23 * 1.602_176_634e-19
    assert_close(FARADAY, F, "-", rtol=1e-10)


def test_reversible_and_thermoneutral_voltages_at_standard_conditions(engine):
    liquid = reaction_properties(engine, parse_reaction("H2 + 1/2 O2 -> H2O(l)"), 298.15, 1e5)
    assert_close(-liquid.dG / (2 * FARADAY), E_REV, "V", atol=3e-4, what="E_rev, liquid")
    assert_close(-liquid.dH / (2 * FARADAY), E_TN, "V", atol=3e-4, what="E_tn, liquid")
    # With water vapour as the product: 1.18454 V and 1.25317 V (rows 21, 22; from the CODATA
    # values of H2O(g), which the formation basis holds exactly).
    vapour = reaction_properties(engine, parse_reaction("H2 + 1/2 O2 -> H2O"), 298.15, 1e5)
    assert_close(-vapour.dG / (2 * FARADAY), 1.18454, "V", atol=2e-5)
    assert_close(-vapour.dH / (2 * FARADAY), 1.25317, "V", atol=2e-5)


def test_reversible_voltage_at_80_degC_against_janaf_heat_capacities(engine):
    # E_rev(T) = −ΔG(T)/2F with ΔG(T) from Kirchhoff's law: NIST-JANAF Cp of liquid water and the
    # WebBook Shomate fits of JANAF for H2 and O2 (chemicals), from the CODATA ΔH°, ΔS° at 25 °C.
    # About 1.18 V at 80 °C is the figure textbooks print (Larminie & Dicks, from memory).
    hc = pytest.importorskip("chemicals.heat_capacity")
    from scipy.interpolate import CubicSpline

    T = 353.15
    table = hc.Cp_dict_JANAF_liquid["7732-18-5"]
    points = [(t, c) for t, c in zip(*table, strict=True) if t >= 298.15 and c > 0]
    liquid = CubicSpline(*zip(*points, strict=True)) if len(points) > 3 else None
    if liquid is None:  # pragma: no cover - the table has 298.15–500 K
        pytest.skip("no JANAF liquid-water Cp table")
    h2, o2 = hc.WebBook_Shomate_gases["1333-74-0"], hc.WebBook_Shomate_gases["7782-44-7"]
    xs = np.linspace(298.15, T, 2001)
    dcp = liquid(xs) - np.array([h2.force_calculate(x) + 0.5 * o2.force_calculate(x) for x in xs])
    dH = DH0 + np.trapezoid(dcp, xs)
    dS = (DH0 - DG0) / 298.15 + np.trapezoid(dcp / xs, xs)
    props = reaction_properties(engine, parse_reaction("H2 + 1/2 O2 -> H2O(l)"), T, 1e5)
    assert_close(
        -props.dG / (2 * FARADAY),
        float(-(dH - T * dS) / (2 * FARADAY)),
        "V",
        atol=5e-4,
        what="E_rev at 80 °C",
    )


def test_reversible_voltage_rises_with_pressure_by_the_nernst_term(engine):
    # Pure gases at p and liquid water at p (nearly incompressible, V = M/ρ = 18.0153 g/mol /
    # 997.05 kg/m³ at 25 °C, IAPWS-95): ΔE = [1.5 R T ln(p/p°) − V (p − p°)] / 2F (analytic).
    split = parse_reaction("H2O(l) -> H2 + 1/2 O2")
    low = reaction_properties(engine, split, 298.15, 1e5)
    high = reaction_properties(engine, split, 298.15, 30e5)
    V = 18.015_268e-3 / 997.05
    expected = (1.5 * R * 298.15 * math.log(30.0) - V * 29e5) / (2 * FARADAY)
    assert_close((high.dG - low.dG) / (2 * FARADAY), expected, "V", atol=1e-5)


# -- electrolyser checks ----------------------------------------------------------------------
def _rates(cells: int, current: float = 1000.0) -> tuple[float, float]:
    """Water (= H2) and O2 flows [mol/s] that a charge of cells × current makes: ξ = I N / 2F."""
    xi = cells * current / (2 * F)
    return xi, xi / 2


def _electrolyser(tmp_path, claims: str, cells: int = 10, made_by: float = 1000.0):
    water, oxygen = _rates(cells, made_by)
    return audit_text(
        tmp_path,
        f"""
        streams:
          W: {{fluid: Water, T: 25 degC, P: 1 bar, flow: {water:.9f} mol/s}}
          H: {{fluid: Hydrogen, T: 25 degC, P: 1 bar, flow: {water:.9f} mol/s}}
          O: {{fluid: Oxygen, T: 25 degC, P: 1 bar, flow: {oxygen:.9f} mol/s}}
        steps:
          - id: EL
            kind: electrolyser
            inlets: [W]
            outlets: [H, O]
            cells: {cells}
            temperature: 25 degC
            pressure: 1 bar
            {claims}
        """,
    )


def _heat(Q_in: float) -> str:
    word = "added" if Q_in >= 0 else "removed"
    return f"heat: [{{{word}: {abs(Q_in):.4f} kW, temperature: 25 degC}}]"


def test_consistent_electrolyser_is_silent(tmp_path):
    # 10 cells, 1000 A, 1.80 V: 18 kW; ξ = 10 kA / 2F; the heat removed closes the first law:
    # ξ (−ΔH°) − 18 kW with ΔH° from CODATA.
    xi, _ = _rates(10)
    heat = _heat((xi * -DH0 - 18_000.0) / 1e3)
    result = _electrolyser(
        tmp_path,
        f"cell_voltage: 1.80 V\n            current: 1000 A\n"
        f"            power: 18 kW\n            {heat}",
    )
    assert names(result) == set()
    extra = result.step("EL").extra
    assert extra["reaction"] == "H2O(l) -> H2 + 1/2 O2"
    assert_close(extra["E_rev"], E_REV, "V", atol=3e-4)
    assert_close(extra["E_tn"], E_TN, "V", atol=3e-4)
    assert_close(extra["faradaic_efficiency"], 1.0, "-", atol=1e-6)
    assert_close(extra["gibbs_work"], xi * -DG0, "W", atol=xi * 40.0)


def test_electrolyser_below_the_reversible_voltage(tmp_path):
    result = _electrolyser(tmp_path, "cell_voltage: 1.20 V\n            current: 1000 A")
    # Below E_rev the cell also absorbs less work than −ΔG of its isothermal reaction: the work
    # bound and entropy generation, with the heat the first law implies at the cell's own
    # temperature, fail with it (design note 2.5).
    assert names(result) == {
        ("EL", "voltage-beyond-reversible"),
        ("EL", "input-below-minimum"),
        ("EL", "negative-entropy-generation"),
    }
    (finding,) = [f for f in result.findings_for("EL") if f.name == "voltage-beyond-reversible"]
    assert_close(finding.margin, E_REV - 1.20, "V", atol=3e-4)
    assert "below the reversible voltage" in finding.message


def test_electrolyser_below_thermoneutral_needs_heat_in(tmp_path):
    # 100 cells at 1.40 V, 1000 A: the cells must take in n F ξ (E_tn − V) = 100 kA × 0.08121 V =
    # 8.121 kW; a balance that removes 5 kW is short by 13.12 kW.
    xi, _ = _rates(100)
    claims = "cell_voltage: 1.40 V\n            current: 1000 A\n            "
    short = _electrolyser(tmp_path, claims + _heat(-5.0), cells=100)
    found = {f.name: f for f in short.findings_for("EL")}
    assert "heat-needed-below-thermoneutral" in found
    assert_close(
        found["heat-needed-below-thermoneutral"].margin, 100_000 * (E_TN - 1.40) + 5e3, "kW", atol=30.0
    )
    fine = _electrolyser(tmp_path, claims + _heat((xi * -DH0 - 140_000.0) / 1e3), cells=100)
    assert names(fine) == set()


def test_electrolyser_power_below_the_gibbs_minimum(tmp_path):
    # 100 cells' worth of production needs at least ξ (−ΔG°) = 122.89 kW; 110 kW is claimed, with
    # the heat removed that a 110 kW input would imply. The bound is the streams' reversible work.
    xi, _ = _rates(100)
    result = _electrolyser(
        tmp_path, f"power: 110 kW\n            {_heat((xi * -DH0 - 110e3) / 1e3)}", cells=100
    )
    (finding,) = [f for f in result.findings_for("EL") if f.name == "input-below-minimum"]
    assert_close(finding.bound, xi * DG0, "kW", atol=xi * 40.0 + 5.0)
    assert_close(finding.margin, xi * -DG0 - 110e3, "kW", atol=xi * 40.0 + 5.0)


def test_electrolyser_current_too_small_for_its_production(tmp_path):
    # The streams need 1000 A through the cells; 900 A is claimed: η_F = 1000/900 = 1.111.
    result = _electrolyser(tmp_path, "cell_voltage: 1.80 V\n            current: 900 A")
    assert names(result) == {("EL", "faraday-mismatch")}
    (finding,) = result.findings_for("EL")
    assert_close(finding.claimed, 1000 / 900, "-", rtol=1e-6)
    assert "above 1" in finding.message


def test_claimed_faradaic_efficiency_that_the_streams_contradict(tmp_path):
    result = _electrolyser(
        tmp_path,
        "cell_voltage: 1.80 V\n            current: 1000 A\n            faradaic_efficiency: 0.95",
    )
    assert names(result) == {("EL", "faraday-mismatch")}
    assert_close(result.findings_for("EL")[0].margin, 0.05, "-", atol=1e-6)


def test_claimed_power_unlike_voltage_times_current_times_cells(tmp_path):
    result = _electrolyser(
        tmp_path, "cell_voltage: 1.80 V\n            current: 1000 A\n            power: 20 kW"
    )
    assert names(result) == {("EL", "power-mismatch")}
    assert_close(result.findings_for("EL")[0].margin, 2_000.0, "kW", rtol=1e-9)


def test_reaction_written_backwards_is_turned_the_way_the_cell_runs(tmp_path):
    result = _electrolyser(
        tmp_path,
        "reaction: 'H2 + 1/2 O2 -> H2O(l)'\n"
        "            cell_voltage: 1.80 V\n            current: 1000 A",
    )
    assert_close(result.step("EL").extra["E_rev"], E_REV, "V", atol=3e-4)
    assert_close(result.step("EL").extra["extent"], _rates(10)[0], "-", rtol=1e-6)


@pytest.mark.parametrize(
    "claims, message",
    [
        ("cell_voltage: 1.8 V", r"step EL.*give the stack 'power', or 'cell_voltage' and 'current'"),
        (
            "power: 18 kW\n            faradaic_efficiency: 1.05",
            r"step EL.*a faradaic efficiency is above 0 and at most 1 \(got 1.05\)",
        ),
        (
            "power: 18 kW\n            reaction: 'H2 -> H2'",
            r"step EL.*give 'electrons' \(per mole of reaction\)",
        ),
    ],
)
def test_cell_claim_errors(tmp_path, claims, message):
    with pytest.raises(InputError, match=message):
        _electrolyser(tmp_path, claims)


# -- fuel cell checks ---------------------------------------------------------------------------
def _fuel_cell(tmp_path, claims: str, cells: int = 100):
    hydrogen, oxygen = _rates(cells)
    return audit_text(
        tmp_path,
        f"""
        streams:
          H: {{fluid: Hydrogen, T: 25 degC, P: 1 bar, flow: {hydrogen:.9f} mol/s}}
          O: {{fluid: Oxygen, T: 25 degC, P: 1 bar, flow: {oxygen:.9f} mol/s}}
          W: {{fluid: Water, T: 25 degC, P: 1 bar, flow: {hydrogen:.9f} mol/s, phase: liquid}}
        steps:
          - id: FC
            kind: fuel_cell
            inlets: [H, O]
            outlets: [W]
            cells: {cells}
            {claims}
        """,
    )


def test_consistent_fuel_cell_is_silent(tmp_path):
    # 100 cells at 0.70 V and 1000 A deliver 70 kW; the heat removed is ξ(−ΔH°) − 70 kW.
    xi, _ = _rates(100)
    result = _fuel_cell(
        tmp_path,
        f"cell_voltage: 0.70 V\n            current: 1000 A\n"
        f"            {_heat(-(xi * -DH0 - 70e3) / 1e3)}",
    )
    assert names(result) == set()
    assert result.step("FC").extra["reaction"] == "H2 + 1/2 O2 -> H2O(l)"
    assert_close(result.step("FC").extra["E_rev"], E_REV, "V", atol=3e-4)


def test_fuel_cell_above_the_reversible_voltage_claims_more_than_minus_delta_g(tmp_path):
    # 1.25 V > 1.229 V; 125 kW delivered > ξ(−ΔG°) = 122.89 kW: the voltage check, the general
    # work bound (a fuel cell cannot deliver more than −ΔG of its reaction) and its twin, a
    # negative entropy generation (the heat removed at 25 °C is too small), all fire.
    xi, _ = _rates(100)
    result = _fuel_cell(
        tmp_path,
        f"cell_voltage: 1.25 V\n            current: 1000 A\n"
        f"            {_heat(-(xi * -DH0 - 125e3) / 1e3)}",
    )
    found = {f.name: f for f in result.findings_for("FC")}
    assert set(found) == {"voltage-beyond-reversible", "work-above-bound", "negative-entropy-generation"}
    assert_close(found["voltage-beyond-reversible"].margin, 1.25 - E_REV, "V", atol=3e-4)
    assert_close(found["work-above-bound"].bound, xi * -DG0, "kW", atol=xi * 40.0 + 5.0)


def test_fuel_cell_current_above_what_its_fuel_can_carry(tmp_path):
    # The streams consume fuel for 1000 A; 1100 A claimed: current efficiency 1.1.
    result = _fuel_cell(tmp_path, "cell_voltage: 0.70 V\n            current: 1100 A")
    assert names(result) == {("FC", "faraday-mismatch")}
    assert_close(result.findings_for("FC")[0].claimed, 1.1, "-", rtol=1e-6)
