"""Reactions on the formation basis: reaction properties against CODATA 1989 and NIST-JANAF,
heating values against Moran & Shapiro Table A-25 and the chemicals library, the element balance
of a stoichiometric methane–air combustion, and the fired heater's checks."""

from __future__ import annotations

import math

import numpy as np
import pytest
from conftest import assert_close, audit_text, names

from audit.errors import InputError
from audit.properties.engine import PropertyEngine
from audit.steps.reactions import heating_values, parse_reaction, reaction_properties

R = 8.314_462_618_153_24  # J/(mol K), exact (2019 SI)


@pytest.fixture(scope="module")
def engine() -> PropertyEngine:
    return PropertyEngine(298.15, 101_325.0)


# -- reaction properties ----------------------------------------------------------------------
def test_formation_of_liquid_water_against_codata(engine):
    # H2 + ½O2 → H2O(l) at 298.15 K, 1 bar (CODATA Key Values 1989; reference-values rows 12, 19):
    # ΔH° = −285.830 ± 0.040 kJ/mol, ΔG° = −237.140 kJ/mol, ΔS° = −163.306 J/(mol K). The liquid
    # comes from IAPWS-95 on the formation basis anchored at the vapour, so the CODATA
    # uncertainties (±0.04 kJ/mol, ±0.03 J/(mol K) on S° of the liquid) set the tolerances.
    props = reaction_properties(engine, parse_reaction("H2 + 1/2 O2 -> H2O(l)"), 298.15, 1e5)
    assert_close(props.dH, -285_830.0, "kJ/mol", atol=40.0, what="ΔH°")
    assert_close(props.dG, -237_140.0, "kJ/mol", atol=40.0, what="ΔG°")
    assert_close(props.dS, -163.306, "J/(mol K)", atol=0.05, what="ΔS°")


def test_formation_of_water_vapour_against_codata(engine):
    # H2 + ½O2 → H2O(g) at 298.15 K, 1 bar (reference-values row 20, from CODATA 1989): ΔH° =
    # −241.826, ΔG° = −228.582 kJ/mol, ΔS° = −44.421 J/(mol K); printed to 1 J/mol.
    props = reaction_properties(engine, parse_reaction("H2 + 0.5 O2 -> H2O"), 298.15, 1e5)
    assert_close(props.dH, -241_826.0, "kJ/mol", atol=1.0)
    assert_close(props.dG, -228_582.0, "kJ/mol", atol=1.0)
    assert_close(props.dS, -44.421, "J/(mol K)", atol=1e-3)


def test_reaction_gibbs_energy_at_1000_K_against_janaf_heat_capacities(engine):
    # Kirchhoff's law with NIST-JANAF heat capacities (chemicals: JANAF Cp table of H2O, WebBook
    # Shomate fits of the JANAF tables for H2 and O2): ΔH(T) = ΔH° + ∫ΔCp dT,
    # ΔS(T) = ΔS° + ∫ΔCp/T dT, from ΔH° = −241.826 kJ/mol, ΔS° = −44.421 J/(mol K) (CODATA).
    hc = pytest.importorskip("chemicals.heat_capacity")
    from scipy.interpolate import CubicSpline

    T = 1000.0
    table = hc.Cp_dict_JANAF_gas["7732-18-5"]
    water = CubicSpline(table[0][1:], table[1][1:])
    xs = np.linspace(298.15, T, 4001)
    h2, o2 = hc.WebBook_Shomate_gases["1333-74-0"], hc.WebBook_Shomate_gases["7782-44-7"]
    dcp = water(xs) - np.array([h2.force_calculate(x) + 0.5 * o2.force_calculate(x) for x in xs])
    dH = -241_826.0 + np.trapezoid(dcp, xs)
    dS = -44.421 + np.trapezoid(dcp / xs, xs)
    props = reaction_properties(engine, parse_reaction("H2 + 1/2 O2 -> H2O"), T, 1e5)
    # JANAF prints ΔfG°(H2O, g, 1000 K) = −192.590 kJ/mol (from memory); the integration is the
    # oracle here, to 0.1 kJ/mol (the species' ideal-gas parts agree with JANAF to 50 J/mol).
    assert_close(props.dH, float(dH), "kJ/mol", atol=100.0, what="ΔH(1000 K)")
    assert_close(props.dG, float(dH - T * dS), "kJ/mol", atol=100.0, what="ΔG(1000 K)")


def test_gas_pressure_enters_reaction_gibbs_energy_as_r_t_ln_p(engine):
    # Ideal gases: ΔG(T, p) = ΔG(T, p°) + Δν_gas R T ln(p/p°), ΔH independent of p (analytic).
    reaction = parse_reaction("CH4 + 2 O2 -> CO2 + 2 H2O")  # Δν_gas = 0
    shift = parse_reaction("H2 + 1/2 O2 -> H2O")  # Δν_gas = −1/2
    at_1 = reaction_properties(engine, shift, 400.0, 1e5)
    at_10 = reaction_properties(engine, shift, 400.0, 10e5)
    assert_close(at_10.dG - at_1.dG, -0.5 * R * 400.0 * math.log(10.0), "J", atol=1e-6)
    assert_close(at_10.dH, at_1.dH, "J", atol=1e-6)
    a, b = (reaction_properties(engine, reaction, 400.0, p) for p in (1e5, 10e5))
    assert_close(b.dG, a.dG, "J", atol=1e-6)


# -- heating values --------------------------------------------------------------------------------
@pytest.mark.parametrize(
    "fuel, hhv, lhv",
    [
        # Moran & Shapiro, Fundamentals of Engineering Thermodynamics, Table A-25 (25 °C, 1 atm):
        # methane 55 510 / 50 020 kJ/kg, hydrogen 141 780 / 119 950 kJ/kg (reference-values rows 25, 26).
        ("CH4", 55_510e3, 50_020e3),
        ("H2", 141_780e3, 119_950e3),
    ],
)
def test_heating_values_against_moran_shapiro_table_a25(engine, fuel, hhv, lhv):
    # Tolerance 1e-3: the table prints 4 significant digits and the choice of ΔfH(CH4) (JANAF
    # −74.873 vs ATcT −74.534 kJ/mol) moves methane's HHV by 0.04 %.
    values = heating_values(engine, {fuel: 1.0})
    assert_close(values.per_kg("higher"), hhv, "kJ/kg", rtol=1e-3, what=f"HHV of {fuel}")
    assert_close(values.per_kg("lower"), lhv, "kJ/kg", rtol=1e-3, what=f"LHV of {fuel}")


def test_heating_value_of_methane_against_chemicals_stoichiometry(engine):
    # chemicals.combustion (combustion_stoichiometry, HHV_stoichiometry, LHV_from_HHV) with its
    # own formation enthalpies of CO2 and water and JANAF's ΔfH°(CH4) = −74.873 kJ/mol: 890.25 and
    # 802.23 kJ/mol; the formation-data spread between sources is about 0.3 kJ/mol (row 25).
    combustion = pytest.importorskip("chemicals.combustion")
    stoichiometry = combustion.combustion_stoichiometry({"C": 1, "H": 4})
    hhv = -combustion.HHV_stoichiometry(stoichiometry, Hf=-74_873.0)
    lhv = -combustion.LHV_from_HHV(-hhv, stoichiometry["H2O"])
    values = heating_values(engine, {"CH4": 1.0})
    assert_close(values.higher, hhv, "kJ/mol", rtol=5e-4)
    assert_close(values.lower, lhv, "kJ/mol", rtol=5e-4)
    assert values.oxygen_needed == -stoichiometry["O2"]


def test_inert_species_of_a_fuel_do_not_burn(engine):
    # 3 % CO2 and N2 in a natural gas dilute it: HV per mole scales with the methane fraction.
    pure = heating_values(engine, {"CH4": 1.0})
    gas = heating_values(engine, {"CH4": 0.97, "N2": 0.02, "CO2": 0.01})
    assert_close(gas.lower, 0.97 * pure.lower, "kJ/mol", rtol=1e-12)


# -- parsing -------------------------------------------------------------------------------------------
def test_reaction_coefficients_as_fractions_decimals_and_integers():
    for text in (
        "H2 + 1/2 O2 -> H2O(l)",
        "H2 + 0.5 O2 -> H2O(l)",
        "2 H2 + O2 -> 2 H2O(l)",
        "H2 + ½ O2 → H2O(l)",
    ):
        nu = parse_reaction(text).nu()
        assert nu["O2"] / nu["H2"] == 0.5 and nu["H2O"] / nu["H2"] == -1.0


@pytest.mark.parametrize(
    "text, message",
    [
        ("H2 + O2 -> H2O", r"does not balance: O 2 on the left, 1 on the right"),
        ("CH4 + O2 -> CO2 + 2 H2O", r"does not balance: O 2 on the left, 4 on the right"),
        ("H2 + 1/2 O2", r"needs one arrow '->'"),
        ("XY + O2 -> CO2", r"no formation data for 'XY'"),
        ("H2 + 1/2 O2 -> H2O(s)", r"cannot read 'H2O\(s\)'"),
    ],
)
def test_reaction_errors(text, message):
    with pytest.raises(ValueError, match=message):
        parse_reaction(text)


def test_unbalanced_reaction_in_a_file_is_an_input_error_at_its_step(tmp_path):
    with pytest.raises(InputError, match=r"step R1.*does not balance: O 2 on the left"):
        audit_text(
            tmp_path,
            """
            streams:
              A: {fluid: Hydrogen, T: 25 degC, P: 1 bar, flow: 1 mol/s}
              B: {fluid: Water, T: 25 degC, P: 1 bar, flow: 1 mol/s}
            steps:
              - {id: R1, kind: reactor, inlets: [A], outlets: [B], reactions: ["H2 + O2 -> H2O"]}
            """,
        )


# -- a stoichiometric methane–air combustion ---------------------------------------------------------
# 1 mol/s of CH4 with exactly 2 mol/s of O2 in air of 79 % N2 and 21 % O2 (mole): 9.5238095 mol/s
# of air; products 1 CO2 + 2 H2O + 7.5238095 N2 = 10.5238095 mol/s (analytic stoichiometry).
AIR = 2.0 / 0.21
FLUE_FLOW = 1.0 + 2.0 + AIR * 0.79
FLUE_X = {"CO2": 1.0 / FLUE_FLOW, "H2O": 2.0 / FLUE_FLOW, "N2": AIR * 0.79 / FLUE_FLOW}


def _combustion(tmp_path, co2_fraction: float = FLUE_X["CO2"], extra: str = ""):
    x = dict(FLUE_X, CO2=co2_fraction)
    x["N2"] = 1.0 - x["CO2"] - x["H2O"]
    flue = ", ".join(f"{k}: {v:.9f}" for k, v in x.items())
    return audit_text(
        tmp_path,
        f"""
        streams:
          F: {{fluid: Methane, T: 25 degC, P: 1.01325 bar, flow: 1 mol/s}}
          A: {{composition: {{N2: 0.79, O2: 0.21}}, T: 25 degC, P: 1.01325 bar,
              flow: {AIR:.9f} mol/s}}
          G: {{composition: {{{flue}}}, T: 1000 K, P: 1.01325 bar, flow: {FLUE_FLOW:.9f} mol/s}}
        steps:
          - id: R
            kind: reactor
            inlets: [F, A]
            outlets: [G]
            reactions: [{{equation: "CH4 + 2 O2 -> CO2 + 2 H2O"{extra}}}]
        """,
    )


def test_stoichiometric_methane_air_combustion_closes_its_elements(tmp_path):
    result = _combustion(tmp_path)
    step = result.step("R")
    assert not result.findings_for("R")
    assert all(abs(v) < 1e-9 for v in step.mass_residual.values())
    assert_close(step.extra["extent"], 1.0, "-", rtol=1e-8)
    # Reported at 25 °C, 1 bar (methane's ideal-gas part is not verified at 1000 K): the lower
    # heating value per mole, −802.3 kJ/mol (reference-values row 25: LHV 802.6, spread 0.3).
    assert step.extra["reaction_T"] == 298.15
    assert_close(step.extra["dH_rxn"], -802_290.0, "kJ/mol", atol=400.0)
    assert any("25 °C and 1 bar" in note for note in step.notes)
    # Heat inferred: Q = Σ n_e (ΔfH°_e + [H(1000 K) − H(298.15 K)]_e) − Σ n_i ΔfH°_i, with the
    # increments from NIST-JANAF heat capacities (chemicals: JANAF Cp tables of CO2 and H2O, the
    # WebBook Shomate fit of JANAF for N2) and ΔfH° from CODATA 1989 (CH4: JANAF).
    hc = pytest.importorskip("chemicals.heat_capacity")
    from scipy.interpolate import CubicSpline

    def janaf_dh(cas: str) -> float:
        T, cp = hc.Cp_dict_JANAF_gas[cas]
        return float(CubicSpline(T[1:], cp[1:]).integrate(298.15, 1000.0))

    n2 = hc.WebBook_Shomate_gases["7727-37-9"].force_calculate_integral(298.15, 1000.0)
    products = (
        1.0 * (-393_510.0 + janaf_dh("124-38-9"))
        + 2.0 * (-241_826.0 + janaf_dh("7732-18-5"))
        + AIR * 0.79 * n2
    )
    expected_Q = products - (-74_873.0)  # ΔfH°(CH4), JANAF; air at 25 °C has h = 0
    assert_close(step.Q, expected_Q, "kW", rtol=1e-3, what="heat of the combustor")


def test_missing_carbon_is_an_element_imbalance_and_silences_the_laws(tmp_path):
    # 10 % of the CO2 dropped from the flue gas (made up as N2): 0.1 mol/s of carbon, i.e.
    # 0.1 × 12.011 g/mol = 1.2011 g/s of C (IUPAC/CIAAW atomic weight), vanishes.
    result = _combustion(tmp_path, co2_fraction=0.9 * FLUE_X["CO2"])
    found = {f.name: f for f in result.findings_for("R")}
    assert "element-imbalance" in found
    carbon = [f for f in result.findings_for("R") if " of C " in f.message]
    assert len(carbon) == 1
    assert_close(carbon[0].margin, 0.1 * 12.011e-3, "kg/s", rtol=1e-6)
    assert "vanishes" in carbon[0].message
    assert not {"energy-imbalance", "negative-entropy-generation"} & set(found)


def test_claimed_extent_that_contradicts_the_streams(tmp_path):
    # The streams burn 1 mol/s of CH4; an extent of 0.8 mol/s leaves 0.2 mol/s of CH4 (3.2 g/s)
    # and 0.4 mol/s of O2 unexplained.
    result = _combustion(tmp_path, extra=", extent: 0.8 mol/s")
    found = [f for f in result.findings_for("R") if f.name == "species-imbalance"]
    assert len(found) == 1 and found[0].severity == "error"
    assert "the claimed extents do not match the streams" in found[0].message
    assert_close(found[0].margin, 0.4 * 31.9988e-3, "kg/s", rtol=1e-4)


def test_side_product_no_written_reaction_explains_is_a_warning(tmp_path):
    # 0.05 mol/s of the carbon leaves as CO (with 0.025 mol/s more O2): elements balance, the
    # written complete combustion does not explain it.
    n = {"CO2": 0.95, "CO": 0.05, "H2O": 2.0, "O2": 0.025, "N2": AIR * 0.79}
    total = sum(n.values())
    flue = ", ".join(f"{k}: {v / total:.10f}" for k, v in n.items())
    result = audit_text(
        tmp_path,
        f"""
        streams:
          F: {{fluid: Methane, T: 25 degC, P: 1.01325 bar, flow: 1 mol/s}}
          A: {{composition: {{N2: 0.79, O2: 0.21}}, T: 25 degC, P: 1.01325 bar,
              flow: {AIR:.9f} mol/s}}
          G: {{composition: {{{flue}}}, T: 1000 K, P: 1.01325 bar, flow: {total:.9f} mol/s}}
        steps:
          - {{id: R, kind: reactor, inlets: [F, A], outlets: [G],
              reactions: ["CH4 + 2 O2 -> CO2 + 2 H2O"]}}
        """,
    )
    assert names(result) == {("R", "species-imbalance")}
    (finding,) = result.findings_for("R")
    assert finding.severity == "warning" and "CO appears" in finding.message


def test_stream_without_formation_data_cannot_react(tmp_path):
    with pytest.raises(InputError, match=r"step R.*stream B \(R134a\) has no formation data"):
        audit_text(
            tmp_path,
            """
            streams:
              A: {fluid: Hydrogen, T: 25 degC, P: 1 bar, flow: 1 mol/s}
              B: {fluid: R134a, T: 25 degC, P: 1 bar, flow: 1 mol/s}
            steps:
              - {id: R, kind: reactor, inlets: [A], outlets: [B], reactions: ["H2 -> H2"]}
            """,
        )


# -- fired heater ------------------------------------------------------------------------------------
def _boiler(tmp_path, claims: str, flue_T: str = "150 degC"):
    # The sample site's boiler B1 (sample_plant/quillon-bay-clean.yaml), on its own.
    return audit_text(
        tmp_path,
        f"""
        streams:
          S02: {{fluid: Water, T: 105.73 degC, P: 42.513 bar, flow: 10.8 t/h}}
          S03: {{fluid: Water, T: 400 degC, P: 41.013 bar, flow: 10.8 t/h}}
          S40: {{composition: {{CH4: 0.97, N2: 0.02, CO2: 0.01}}, T: 15 degC, P: 1.3 bar,
                 flow: 918.6 Nm3/h}}
          S41: {{composition: air, T: 25 degC, P: 1.013 bar, flow: 9787 Nm3/h}}
          S42: {{composition: {{CO2: 0.0845, H2O: 0.1665, N2: 0.7156, O2: 0.0249, Ar: 0.0085}},
                 T: {flue_T}, P: 1.013 bar, flow: 10706 Nm3/h}}
        steps:
          - id: B1
            kind: fired_heater
            fuel: S40
            air: S41
            flue_gas: S42
            heated: {{inlet: S02, outlet: S03}}
            heat_loss: 45 kW
            {claims}
        """,
    )


def test_consistent_fired_boiler_is_silent_and_reports_its_heat_input(tmp_path):
    # LHV of 0.97 CH4 + 0.02 N2 + 0.01 CO2: 0.97 × 802.29 kJ/mol / 16.562 g/mol = 46.99 MJ/kg
    # (methane's LHV 50.02 MJ/kg per Moran & Shapiro A-25, diluted by the inerts' mass).
    result = _boiler(tmp_path, "duty: 8.30 MW\n            fuel_lhv: 47.0 MJ/kg")
    assert not result.findings_for("B1")
    extra = result.step("B1").extra
    assert_close(extra["fuel_lhv"], 0.97 * 802_290.0 / 16.5619e-3, "kJ/kg", rtol=2e-4)
    assert_close(extra["air_ratio"], 1.15, "-", atol=2e-3)  # 15 % excess air by design
    assert 0.9 < extra["efficiency_lhv"] < 0.95


@pytest.mark.parametrize(
    "claim, hint",
    [
        ("fuel_lhv: 52.1 MJ/kg", "it matches the higher heating value"),
        ("fuel_hhv: 47.0 MJ/kg", "it matches the lower heating value"),
        ("fuel_lhv: 40.0 MJ/kg", None),
    ],
)
def test_wrong_heating_value_is_found_with_its_margin(tmp_path, claim, hint):
    result = _boiler(tmp_path, claim)
    (finding,) = [f for f in result.findings_for("B1") if f.name == "heating-value-mismatch"]
    value = float(claim.split(":")[1].split()[0]) * 1e6
    assert_close(finding.claimed, value, "kJ/kg", rtol=1e-12)
    assert_close(finding.margin, abs(value - finding.bound), "kJ/kg", rtol=1e-12)
    if hint:
        assert hint in finding.message
    assert names(result) == {("B1", "heating-value-mismatch")}


def test_heating_value_per_normal_cubic_metre(tmp_path):
    # 46.99 MJ/kg × 16.562 g/mol / 22.414 L/mol (ideal-gas molar volume at 0 °C, 1 atm,
    # CODATA 2018) = 34.72 MJ/Nm³.
    assert not _boiler(tmp_path, "fuel_lhv: 34.72 MJ/Nm3").findings_for("B1")
    with pytest.raises(InputError, match="a heating value per volume needs its reference"):
        _boiler(tmp_path, "fuel_lhv: 34.72 MJ/m3")


def test_flue_gas_colder_than_the_feedwater_is_a_temperature_cross(tmp_path):
    result = _boiler(tmp_path, "", flue_T="95 degC")
    assert ("B1", "temperature-cross") in names(result)
