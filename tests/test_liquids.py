"""Brines, glycols and heat-transfer liquids (audit.properties.liquids): freezing points and
densities against published tables, the volume-to-mass conversion, the allow-list, the refusals
outside the correlations' ranges, the freezing-point finding and the fraction-basis probable cause.

Sources of the check values:

* Lange's Handbook of Chemistry, 15th ed. (J. A. Dean, ed., McGraw-Hill, 1999), Table 5.13
  "Compositions of aqueous antifreeze solutions" (read from a stored copy of the printed page; the
  copy lost the minus signs, which the °F column restores: −12.8 °C = 9 °F and so on);
* Melinder, Properties of Secondary Working Fluids for Indirect Systems (IIR, 2010): the base
  point of each fit (the constant term of the coefficient matrix: the property at the fit's base
  fraction and temperature), as transcribed in CoolProp's incompressible-liquid sources
  (classes EGSolution and PGSolution);
* CoolProp's own volume-based ASHRAE fits ('AEG', 'APG'), as a named reference library for the
  volume-to-mass conversion.
"""

from __future__ import annotations

import math

import pytest
from conftest import assert_close, audit_text, names

from audit.errors import InputErrors, StateError
from audit.properties.engine import PropertyEngine
from audit.properties.library import CP
from audit.properties.liquids import LiquidLibrary, resolve, to_mass_fraction

ZERO_C = 273.15


def _freezing(name: str, fraction: float, basis: str) -> float:
    return LiquidLibrary().freezing_point(resolve(name, fraction, basis)) - ZERO_C


def _density(name: str, fraction: float, basis: str, T_c: float) -> float:
    return LiquidLibrary().values(resolve(name, fraction, basis), T_c + ZERO_C, 101325.0).rho


# -- freezing points ------------------------------------------------------------------------------
@pytest.mark.parametrize(
    "percent, printed",
    # Lange's 15th ed., Table 5.13, propylene glycol-water, % by volume → freezing point [°C].
    # Tolerance 1.0 K: a different data set from Melinder's fit, and our volume-to-mass conversion.
    [(30, -12.8), (40, -20.6), (50, -33.3)],
)
def test_propylene_glycol_by_volume_freezes_where_the_handbook_says(percent, printed):
    assert_close(_freezing("propylene glycol", percent / 100, "volume"), printed, "K", atol=1.0)


@pytest.mark.parametrize(
    "percent, printed",
    # Lange's 15th ed., Table 5.13, sodium chloride brines, % by weight → freezing point [°C]
    # (printed to 0.01 K; tolerance 0.05 K).
    [(15, -10.88), (20, -16.46)],
)
def test_sodium_chloride_brine_freezes_where_the_handbook_says(percent, printed):
    assert_close(_freezing("sodium chloride", percent / 100, "mass"), printed, "K", atol=0.05)


@pytest.mark.parametrize(
    "percent, printed",
    # Lange's 15th ed., Table 5.13, glycerol-water, % by weight → freezing point [°C];
    # tolerance 1.5 K (another data set than Melinder's).
    [(30, -9.5), (50, -22.0)],
)
def test_glycerol_solution_freezes_where_the_handbook_says(percent, printed):
    assert_close(_freezing("glycerol", percent / 100, "mass"), printed, "K", atol=1.5)


def test_the_glycol_fits_reproduce_melinders_base_points():
    # Melinder (2010) fits as transcribed in CoolProp: ethylene glycol, base 30.8462 % by mass and
    # 31.728 °C: freezing point -15.25 °C, density 1034 kg/m3; propylene glycol, base 30.7031 % and
    # 32.7083 °C: -13.25 °C, 1018 kg/m3 (the constant terms of the coefficient matrices).
    assert_close(_freezing("ethylene glycol", 0.308462, "mass"), -15.25, "K", atol=0.005)
    assert_close(_density("ethylene glycol", 0.308462, "mass", 31.728), 1034.0, "kg/m3", atol=0.05)
    assert_close(_freezing("propylene glycol", 0.307031, "mass"), -13.25, "K", atol=0.005)
    assert_close(_density("propylene glycol", 0.307031, "mass", 32.7083), 1018.0, "kg/m3", atol=0.05)


# -- densities ------------------------------------------------------------------------------------
def test_brine_and_glycerol_densities_match_the_handbook():
    # Lange's 15th ed., Table 5.13: NaCl specific gravity at 15 °C 1.112 (15 %) and 1.152 (20 %);
    # glycerol specific gravity 20/20 °C 1.07470 (30 %) and 1.12845 (50 %). Water at 15 °C
    # 999.10 kg/m3 and at 20 °C 998.21 kg/m3 (IAPWS-95). Tolerance 0.1 %.
    assert_close(_density("sodium chloride", 0.15, "mass", 15.0), 1.112 * 999.10, "kg/m3", rtol=1e-3)
    assert_close(_density("sodium chloride", 0.20, "mass", 15.0), 1.152 * 999.10, "kg/m3", rtol=1e-3)
    assert_close(_density("glycerol", 0.30, "mass", 20.0), 1.07470 * 998.21, "kg/m3", rtol=1e-3)
    assert_close(_density("glycerol", 0.50, "mass", 20.0), 1.12845 * 998.21, "kg/m3", rtol=1e-3)


def test_propylene_glycol_by_volume_has_the_handbooks_specific_gravity():
    # Lange's 15th ed., Table 5.13: 40 % by volume, specific gravity 1.032 at 15.6 °C; water at
    # 15.6 °C 999.0 kg/m3. Tolerance 0.5 % (commercial glycol, another data set).
    assert_close(_density("propylene glycol", 0.40, "volume", 15.6), 1.032 * 999.0, "kg/m3", rtol=5e-3)


# -- volume to mass ---------------------------------------------------------------------------------
def test_volume_fraction_converts_with_the_pure_densities():
    # Analytic: x = φ ρ_g / (φ ρ_g + (1 − φ) ρ_w) with ρ_g = 1036.3 (Perry's 8th ed.) and
    # ρ_w = 998.21 kg/m3 at 20 °C.
    phi = 0.30
    expected = phi * 1036.3 / (phi * 1036.3 + (1 - phi) * 998.21)
    assert_close(to_mass_fraction("propylene glycol", phi), expected, rtol=1e-12)


@pytest.mark.parametrize(
    "code, solute, tolerance", [("AEG", "ethylene glycol", 2.5), ("APG", "propylene glycol", 1.0)]
)
def test_volume_basis_agrees_with_the_volume_based_fits(code, solute, tolerance):
    # CoolProp's volume-based ASHRAE fits as a named reference library: the freezing point of a
    # 40 % by volume solution. Another data set: measured here, the two fits differ by 2.0 K for
    # ethylene glycol (-26.75 against -24.80 °C) and by 0.1 K for propylene glycol.
    ashrae = CP.AbstractState("INCOMP", code)
    ashrae.set_volu_fractions([0.40])
    ashrae.update(CP.PT_INPUTS, 101325.0, 300.0)
    reference = ashrae.keyed_output(CP.iT_freeze) - ZERO_C
    assert_close(_freezing(solute, 0.40, "volume"), reference, "K", atol=tolerance)


# -- allow-list and ranges -----------------------------------------------------------------------------
def test_only_the_named_liquids_are_reached():
    with pytest.raises(StateError, match="unknown solution 'INCOMP::MEG'"):
        resolve("INCOMP::MEG", 0.3, "mass")
    with pytest.raises(StateError, match="unknown liquid 'MEG'"):
        resolve("MEG", None, None)
    with pytest.raises(StateError, match="is an aqueous solution: give its 'fraction'"):
        resolve("ethylene glycol", None, None)
    with pytest.raises(StateError, match="is a pure liquid: drop 'fraction'"):
        resolve("diethylbenzene", 0.3, "mass")
    with pytest.raises(StateError, match="calcium chloride solution is given by mass fraction"):
        resolve("calcium chloride", 0.2, "volume")


def test_a_fraction_outside_the_fit_is_refused_not_extrapolated():
    with pytest.raises(
        StateError,
        match=r"fraction 70 % by mass is outside the range of its correlation \(0 to 60 % by mass",
    ):
        resolve("ethylene glycol", 0.70, "mass")


def test_a_temperature_outside_the_fit_is_refused_not_extrapolated():
    liquid = resolve("sodium chloride", 0.1, "mass")
    with pytest.raises(StateError, match=r"outside the range of the correlation .* not extrapolated"):
        LiquidLibrary().values(liquid, 60.0 + ZERO_C, 2e5)


def test_exergy_is_relative_to_the_same_liquid_at_the_dead_state():
    engine = PropertyEngine(298.15, 101325.0, 0.1)
    dead = engine.liquid_state("propylene glycol", 0.3, "mass", 298.15, 101325.0)
    assert dead.h == pytest.approx(0.0, abs=1e-9) and dead.s == pytest.approx(0.0, abs=1e-12)
    assert dead.psi == pytest.approx(0.0, abs=1e-9)
    assert dead.basis == "same liquid at the dead state"
    cold = engine.liquid_state("propylene glycol", 0.3, "mass", 268.15, 101325.0)
    # Analytic: ψ = h − T0 s > 0 for a liquid colder than the dead state; with a constant c_p,
    # ψ ≈ c_p ((T − T0) − T0 ln(T/T0)); the fit's c_p varies little over 30 K (2 %).
    cp = 3.85e3
    approx = cp * ((268.15 - 298.15) - 298.15 * math.log(268.15 / 298.15))
    assert_close(cold.psi, approx, "kJ/kg", rtol=0.05)
    # (P, h) finds the temperature back
    again = engine.state(cold.fluid, "Ph", 101325.0, cold.h, table_basis=False)
    assert_close(again.T, 268.15, "K", atol=1e-6)


# -- in a balance ------------------------------------------------------------------------------------
LOOP = """
streams:
  w1: {fluid: Water, T: 30.00 degC, P: 3 bar, flow: 10.000 kg/s}
  w2: {fluid: Water, T: %(w2)s degC, P: 2.9 bar, flow: 10.000 kg/s}
  g1: {fluid: ethylene glycol, fraction: 40 %%, fraction_basis: %(basis)s,
       T: %(g1)s degC, P: 3 bar, flow: 12.000 kg/s}
  g2: {fluid: ethylene glycol, fraction: 40 %%, fraction_basis: %(basis)s,
       T: 10.00 degC, P: 2.8 bar, flow: 12.000 kg/s}
steps:
  - id: E1
    kind: heat_exchanger
    hot: {inlet: w1, outlet: w2}
    cold: {inlet: g1, outlet: g2}
"""


def _loop_duty(basis: str, g1: float = 5.0) -> float:
    engine = PropertyEngine(298.15, 101325.0, 0.1)
    a = engine.liquid_state("ethylene glycol", 0.40, basis, g1 + ZERO_C, 3e5)
    b = engine.liquid_state("ethylene glycol", 0.40, basis, 10.0 + ZERO_C, 2.8e5)
    return 12.0 * (b.h - a.h)


def _water_outlet_for(duty: float) -> float:
    """The water outlet temperature [°C] that gives ``duty`` (IAPWS-95 through the engine)."""
    engine = PropertyEngine(298.15, 101325.0, 0.1)
    h_in = engine.state("Water", "TP", 303.15, 3e5).h
    out = engine.state("Water", "Ph", 2.9e5, h_in - duty / 10.0, table_basis=False)
    return out.T - ZERO_C


def test_a_consistent_glycol_loop_passes(tmp_path):
    w2 = _water_outlet_for(_loop_duty("volume"))
    result = audit_text(tmp_path, LOOP % {"w2": f"{w2:.3f}", "basis": "volume", "g1": "5.00"})
    assert not [f for f in result.findings if f.severity == "error"], result.findings
    glycol = next(s for s in result.streams if s.id == "g1")
    assert glycol.fluid.startswith("ethylene glycol 40 % by volume (") and "% by mass)" in glycol.fluid
    assert glycol.basis == "same liquid at the dead state"


def test_glycol_below_its_freezing_point_is_an_error_finding_not_a_crash(tmp_path):
    # 40 % by volume propylene glycol freezes at -21.43 °C (Melinder's fit, our conversion; the
    # handbook's -20.6 °C above): at -22 °C the stream is a finding, the step is still evaluated.
    text = """
streams:
  g1: {fluid: propylene glycol, fraction: 40 %, fraction_basis: volume,
       T: -18 degC, P: 3 bar, flow: 2 kg/s}
  g2: {fluid: propylene glycol, fraction: 40 %, fraction_basis: volume,
       T: -22 degC, P: 3 bar, flow: 2 kg/s}
steps:
  - {id: K1, kind: cooler, inlet: g1, outlet: g2}
"""
    result = audit_text(tmp_path, text)
    frozen = [f for f in result.findings if f.name == "below-freezing-point"]
    assert len(frozen) == 1 and frozen[0].stream == "g2" and frozen[0].severity == "error"
    assert (
        "is 0.572 K below the solution's freezing point (-21.43 °C): it would freeze"
        in frozen[0].message
    )
    assert (None, "below-freezing-point") in names(result)
    assert [s.id for s in result.steps] == ["K1"]
    silent = audit_text(tmp_path, text.replace("T: -22 degC", "T: -21 degC"))
    assert not [f for f in silent.findings if f.name == "below-freezing-point"]


def test_glycol_written_by_volume_when_it_was_by_mass_is_a_probable_cause(tmp_path):
    # The water side carries the duty of the solution by mass; the file says by volume.
    w2 = _water_outlet_for(_loop_duty("mass"))
    result = audit_text(tmp_path, LOOP % {"w2": f"{w2:.3f}", "basis": "volume", "g1": "5.00"})
    imbalance = [f for f in result.findings if f.name == "energy-imbalance"]
    assert imbalance, result.findings
    assert any(
        cause.startswith("closes if the fraction of ethylene glycol 40 % by volume (")
        and cause.endswith("is by mass, not by volume (streams g1, g2)")
        for cause in imbalance[0].probable_causes
    ), imbalance[0].probable_causes
    consistent = audit_text(tmp_path, LOOP % {"w2": f"{w2:.3f}", "basis": "mass", "g1": "5.00"})
    assert not [f for f in consistent.findings if f.name == "energy-imbalance"]


def test_a_stream_outside_the_fit_is_refused_with_file_line_and_stream(tmp_path):
    text = LOOP % {"w2": "25.000", "basis": "mass", "g1": "5.00"}
    g2 = "g2: {fluid: ethylene glycol, fraction: 40 %"
    text = text.replace(g2, g2.replace("40 %", "65 %"))
    with pytest.raises(InputErrors) as caught:
        audit_text(tmp_path, text)
    problem = caught.value.problems[0]
    assert (problem.where, problem.line) == ("stream g2", 10), (problem.where, problem.line)
    assert problem.file.endswith("balance.yaml")
    assert "fraction 65 % by mass is outside the range of its correlation" in problem.message


@pytest.mark.parametrize(
    "fields, message",
    [
        ("fraction: 40 %", "a solution gives both 'fraction' and 'fraction_basis'"),
        ("fraction: 40, fraction_basis: mass", "a fraction is a number from 0 to 1; 40 is not"),
        (
            "fraction: 0.4, fraction_basis: mass, quality: 0",
            "a liquid solution is written with T and P only",
        ),
    ],
)
def test_a_solution_is_written_the_right_way(tmp_path, fields, message):
    text = f"""
streams:
  g1: {{fluid: propylene glycol, {fields}, T: 5 degC, P: 3 bar, flow: 1 kg/s}}
  g2: {{fluid: propylene glycol, fraction: 0.4, fraction_basis: mass, T: 9 degC, P: 3 bar, flow: 1 kg/s}}
steps:
  - {{id: H1, kind: heater, inlet: g1, outlet: g2}}
"""
    with pytest.raises(InputErrors, match=message):
        audit_text(tmp_path, text)


def test_a_pure_heat_transfer_liquid_needs_no_fraction(tmp_path):
    text = """
streams:
  o1: {fluid: diethylbenzene, T: 20 degC, P: 2 bar, flow: 3 kg/s}
  o2: {fluid: diethylbenzene, T: 60 degC, P: 2 bar, flow: 3 kg/s}
steps:
  - {id: H1, kind: heater, inlet: o1, outlet: o2}
"""
    result = audit_text(tmp_path, text)
    assert not [f for f in result.findings if f.severity == "error"]
    step = result.steps[0]
    # Analytic: Q = ṁ ∫c_p dT with Melinder's linear c_p(T) = 999.729 + 2.87576 T [J/(kg K)], T in
    # K (CoolProp's transcription of the fit, class DEBLiquidClass), from 293.15 to 333.15 K.
    expected = 3 * (999.729 * 40 + 2.87576 * (333.15**2 - 293.15**2) / 2)
    assert_close(step.Q, expected, "kW", rtol=2e-3)


def test_the_field_reference_names_every_liquid_of_the_allow_list():
    from audit.model.streams import StreamSpec
    from audit.properties.liquids import PURE_LIQUIDS, SOLUTIONS

    text = " ".join(str(StreamSpec.model_fields["fraction"].description).split())
    for name in [*SOLUTIONS, *PURE_LIQUIDS]:
        assert name in text, name
