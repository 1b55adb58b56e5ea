"""Gas mixtures on the formation basis (audit.properties.mixtures) against NIST-JANAF, analytic ideal-gas
results and the Lemmon et al. (2000) air formulation; composition input and its errors."""

from __future__ import annotations

import functools
import math

import numpy as np
import pytest
from conftest import assert_close, audit_text, names

from audit.errors import InputError, StateError
from audit.properties.engine import PropertyEngine
from audit.properties.mixtures import VERIFIED_RANGE, IdealGasMixtures

chemicals_heat_capacity = pytest.importorskip("chemicals.heat_capacity")

R = 8.314_462_618_153_24  # J/(mol K), exact (2019 SI)

# CAS numbers (the keys of the chemicals library's tables) of the species with a verified range.
CAS = {
    "N2": "7727-37-9",
    "O2": "7782-44-7",
    "Ar": "7440-37-1",
    "CO2": "124-38-9",
    "H2O": "7732-18-5",
    "CO": "630-08-0",
    "H2": "1333-74-0",
    "CH4": "74-82-8",
    "NH3": "7664-41-7",
}
FLUID = {
    "N2": "Nitrogen",
    "O2": "Oxygen",
    "Ar": "Argon",
    "CO2": "CarbonDioxide",
    "H2O": "Water",
    "CO": "CarbonMonoxide",
    "H2": "Hydrogen",
    "CH4": "Methane",
    "NH3": "Ammonia",
}


@pytest.fixture(scope="module")
def engine() -> PropertyEngine:
    return PropertyEngine(298.15, 101_325.0)


@functools.cache
def _janaf_increments(formula: str, T: float) -> tuple[float, float]:
    """[H(T) − H(298.15 K)] [J/mol] and [S(T) − S(298.15 K)] [J/(mol K)] of the ideal gas from
    NIST-JANAF (Chase 1998): the JANAF Cp table as shipped by chemicals (integrated with a cubic
    spline), or, for the species chemicals lacks there, the NIST WebBook Shomate fits of the JANAF
    tables (N2, O2, H2 above 298 K) and the Poling et al. polynomial (H2 below 298 K); argon is
    monatomic, Cp = 5/2 R exactly."""
    from scipy.interpolate import CubicSpline

    hc = chemicals_heat_capacity  # its tables load on first access
    cas = CAS[formula]
    if formula == "Ar":
        return 2.5 * R * (T - 298.15), 2.5 * R * math.log(T / 298.15)
    if cas in hc.Cp_dict_JANAF_gas:
        T_table, cp_table = hc.Cp_dict_JANAF_gas[cas]
        spline = CubicSpline(T_table[1:], cp_table[1:])  # skip the 0 K row
        xs = np.linspace(298.15, T, 2001)
        return float(spline.integrate(298.15, T)), float(np.trapezoid(spline(xs) / xs, xs))
    if formula == "H2" and T < 298.15:
        poling = hc.Cp_data_Poling.loc[cas]
        coefficients = [poling[f"a{i}"] for i in range(5)]

        def cp(t: np.ndarray) -> np.ndarray:
            return R * sum(a * t**i for i, a in enumerate(coefficients))

        xs = np.linspace(298.15, T, 2001)
        return float(np.trapezoid(cp(xs), xs)), float(np.trapezoid(cp(xs) / xs, xs))
    shomate = hc.WebBook_Shomate_gases[cas]
    return (
        shomate.force_calculate_integral(298.15, T),
        shomate.force_calculate_integral_over_T(298.15, T),
    )


def _grid(formula: str) -> list[float]:
    low, high = VERIFIED_RANGE[FLUID[formula]]
    inner = [
        T
        for T in (250.0, 300.0, 400.0, 500.0, 600.0, 800.0, 1000.0, 1200.0, 1500.0, 1800.0, 2000.0)
        if low < T < high
    ]
    return [low, *inner, high]


@pytest.mark.parametrize("formula", sorted(CAS))
def test_ideal_gas_parts_against_janaf_over_the_verified_range(engine, formula):
    # The criterion the verified ranges were chosen by (audit.properties.mixtures): h within 50 J/mol and
    # s within 0.1 J/(mol K) of NIST-JANAF over the whole range.
    h0, s0 = engine.species_molar(formula, "g", 298.15, 1e5)
    for T in _grid(formula):
        h, s = engine.species_molar(formula, "g", T, 1e5)
        dh, ds = _janaf_increments(formula, T)
        assert_close(h - h0, dh, "J", atol=50.0, what=f"h({T:g} K) − h(298.15 K) of {formula}")
        assert_close(s - s0, ds, "J/(mol K)", atol=0.1, what=f"s({T:g} K) − s° of {formula}")


def test_ideal_gas_part_of_methane_is_refused_beyond_its_verified_range(engine):
    # CoolProp's methane ideal-gas part departs from JANAF by ~77 J/mol at 700 K, 1.1 kJ/mol at
    # 1500 K (measured, see audit.properties.mixtures), so a mixture with methane stops at 600 K.
    engine.mixture_state({"CH4": 0.5, "N2": 0.5}, 600.0, 1e5)
    with pytest.raises(
        StateError,
        match=r"outside the range over which the ideal-gas "
        r"properties of CH4 were verified \(-73.15 to 326.85 °C",
    ):
        engine.mixture_state({"CH4": 0.5, "N2": 0.5}, 700.0, 1e5)
    with pytest.raises(StateError, match="properties of N2 were verified"):
        engine.mixture_state({"N2": 0.79, "O2": 0.21}, 2100.0, 1e5)


def test_entropy_and_enthalpy_of_mixing_of_an_ideal_gas_mixture(engine):
    # Ideal-gas mixture (Moran & Shapiro, 8th ed., §12.2): s = Σ x_i [S°_i − R ln(x_i p/p°)],
    # h = Σ x_i ΔfH°_i at 298.15 K. S° and ΔfH° from CODATA Key Values 1989 (reference-values
    # rows 14, 15): N2 191.609, O2 205.152, CO2 213.785 J/(mol K); ΔfH°(CO2) = −393.51 kJ/mol.
    x = {"N2": 0.70, "O2": 0.20, "CO2": 0.10}
    S = {"N2": 191.609, "O2": 205.152, "CO2": 213.785}
    P = 2.0e5
    state = engine.mixture_state(x, 298.15, P)
    expected_s = sum(x[f] * (S[f] - R * math.log(x[f] * P / 1e5)) for f in x)
    expected_h = 0.10 * -393_510.0
    assert_close(state.s * state.molar_mass, expected_s, "J/(mol K)", atol=1e-6)
    assert_close(state.h * state.molar_mass, expected_h, "J", atol=1e-6)
    # u = h − RT per mole and ρ = pM/(RT) for an ideal gas.
    assert_close(state.u * state.molar_mass, expected_h - R * 298.15, "J", atol=1e-6)
    assert_close(state.rho, P * state.molar_mass / (R * 298.15), "kg/m3", rtol=1e-12)


def test_air_mixture_against_the_lemmon_air_formulation(engine):
    # Lemmon, Jacobsen, Penoncello & Friend, J. Phys. Chem. Ref. Data 29 (2000) 331, as
    # implemented in CoolProp's pseudo-pure 'Air' (composition N2 0.7812, O2 0.2096, Ar 0.0092):
    # a real-fluid formulation of its own. At 1 bar, 300 → 1000 K, the ideal-gas mixture must agree
    # to about 0.1 % in Δh (departures at 1 bar are a few J/mol).
    CP = pytest.importorskip("CoolProp.CoolProp")
    x = {"N2": 0.7812, "O2": 0.2096, "Ar": 0.0092}
    a, b = engine.mixture_state(x, 300.0, 1e5), engine.mixture_state(x, 1000.0, 1e5)
    air = CP.AbstractState("HEOS", "Air")
    air.update(CP.PT_INPUTS, 1e5, 300.0)
    h1, s1 = air.hmolar(), air.smolar()
    air.update(CP.PT_INPUTS, 1e5, 1000.0)
    M = a.molar_mass
    assert_close((b.h - a.h) * M, air.hmolar() - h1, "J", rtol=1e-3, what="Δh of air")
    assert_close((b.s - a.s) * M, air.smolar() - s1, "J/(mol K)", atol=0.05, what="Δs of air")


def test_compressibility_estimate_of_methane_at_standard_conditions():
    # Reference-values row 37: Z(CH4, 288.15 K, 101.325 kPa) = 0.99802 (CoolProp) and 0.99801
    # (Tsonopoulos second-virial correlation, chemicals); ISO 6976 prints 0.9980 (from memory).
    mixtures = IdealGasMixtures()
    methane = mixtures.components({"CH4": 1.0})
    assert_close(mixtures.z_estimate(methane, 288.15, 101_325.0), 0.99802, atol=2e-5)


def test_mixture_at_high_pressure_is_refused(engine):
    # Methane at 30 bar and 15 °C: Z ≈ 0.94 (the second virial coefficient, about −48 cm³/mol,
    # times p/RT), far from an ideal gas.
    with pytest.raises(
        StateError,
        match=r"not an ideal gas \(compressibility Z ≈ 0\.9[0-9]+ by "
        r"its second virial coefficient.*real-fluid mixtures are not supported",
    ):
        engine.mixture_state({"CH4": 0.97, "N2": 0.02, "CO2": 0.01}, 288.15, 30e5)


def test_mixture_state_by_enthalpy_and_entropy_returns_the_same_state(engine):
    flue = {"CO2": 0.0845, "H2O": 0.1665, "N2": 0.7156, "O2": 0.0249, "Ar": 0.0085}
    state = engine.mixture_state(flue, 423.15, 1.013e5)
    by_h = engine.state(state.fluid, "Ph", 1.013e5, state.h, table_basis=False)
    by_s = engine.state(state.fluid, "Ps", 1.013e5, state.s, table_basis=False)
    assert_close(by_h.T, 423.15, "K", atol=1e-6)
    assert_close(by_s.T, 423.15, "K", atol=1e-6)
    # Isentropic compression of an ideal gas with constant cp is T2 = T1 (p2/p1)^(R/cp); here only
    # the direction and the saturation query are checked: a mixture never condenses in the engine.
    assert engine.state(state.fluid, "Ps", 2e5, state.s, table_basis=False).T > 423.15
    assert engine.saturation_temperature(state.fluid, 1e5) is None
    with pytest.raises(StateError, match="a gas mixture has no quality"):
        engine.state(state.fluid, "PQ", 1e5, 0.5)


# -- through a balance file ----------------------------------------------------------------------
FLUE = "{CO2: 0.0845, H2O: 0.1665, N2: 0.7156, O2: 0.0249, Ar: 0.0085}"


def test_stream_with_a_composition_gets_a_readable_name_and_keeps_its_composition(tmp_path):
    result = audit_text(
        tmp_path,
        """
        streams:
          G: {composition: {CH4: 0.97, N2: 0.02, CO2: 0.01}, T: 15 degC, P: 1.3 bar,
              flow: 1 kmol/h}
          A: {composition: air, T: 25 degC, P: 1.013 bar, flow: 1 kg/s}
          S30: {fluid: Air, T: 25 degC, P: 7 bar, flow: 1 kg/s}
        """,
    )
    gas, air, compressed = result.stream("G"), result.stream("A"), result.stream("S30")
    assert gas.fluid == "mixture(CH4 0.97, N2 0.02, CO2 0.01)"
    assert gas.composition == {"CH4": 0.97, "N2": 0.02, "CO2": 0.01}
    assert gas.basis == "formation (ideal-gas mixture)" and gas.phase == "gas"
    assert air.composition is not None and set(air.composition) == {"N2", "O2", "Ar", "CO2"}
    # The pure-fluid Air (Lemmon et al. 2000) stays available, on its own reference.
    assert compressed.fluid == "Air" and compressed.composition is None
    assert compressed.basis == "fluid reference"


def test_normal_volume_flow_of_a_mixture_uses_the_ideal_gas_molar_volume(tmp_path):
    # Molar volume of an ideal gas at 273.15 K and 101.325 kPa: 22.413 969 54 L/mol
    # (CODATA 2018, exact from R).
    result = audit_text(
        tmp_path,
        """
        streams:
          A: {composition: {N2: 0.79, O2: 0.21}, T: 25 degC, P: 1.013 bar, flow: 3600 Nm3/h}
        """,
    )
    stream = result.stream("A")
    assert_close(stream.molar_flow, 1.0 / 0.022_413_969_54, "-", rtol=1e-9)


def test_mass_fractions_are_converted_to_mole_fractions(tmp_path):
    # Half hydrogen, half methane by mass; molar masses 2.01588 and 16.0425 g/mol (IUPAC atomic
    # weights): x_H2 = (0.5/2.01588) / (0.5/2.01588 + 0.5/16.0425) = 0.88836.
    result = audit_text(
        tmp_path,
        """
        streams:
          G: {composition: {H2: 0.5, CH4: 0.5}, composition_basis: mass, T: 25 degC,
              P: 1 bar, flow: 1 kg/s}
        """,
    )
    x = result.stream("G").composition
    assert_close(x["H2"], 0.88836, atol=2e-5)
    assert_close(x["CH4"], 0.11164, atol=2e-5)


def test_dew_point_is_flagged_and_silent_above_it(tmp_path):
    # p_sat(40 °C) of water = 7.3849 kPa (IAPWS-95, Wagner & Pruß 2002; steam tables print
    # 7.384 kPa); the flue gas' water partial pressure is 0.1665 × 101.3 kPa = 16.866 kPa.
    result = audit_text(
        tmp_path,
        f"""
        streams:
          WET: {{composition: {FLUE}, T: 40 degC, P: 1.013 bar, flow: 1 kg/s}}
          DRY: {{composition: {FLUE}, T: 150 degC, P: 1.013 bar, flow: 1 kg/s}}
        """,
    )
    found = [f for f in result.findings if f.name == "below-dew-point"]
    assert [f.stream for f in found] == ["WET"]
    finding = found[0]
    assert finding.severity == "error"
    assert_close(finding.claimed, 0.1665 * 101_300.0, "Pa", rtol=1e-9)
    assert_close(finding.bound, 7384.9, "Pa", atol=1.0)
    assert "below its dew point" in finding.message and "H2O" in finding.message


@pytest.mark.parametrize(
    "composition, message",
    [
        ("{N2: 0.78, O2: 0.20}", r"stream G.*the mole fractions sum to 0\.98, 0\.02 short of 1"),
        ("{N2: 0.79, O2: 0.22}", r"stream G.*sum to 1\.01, 0\.01 over 1 \(allowed: 1e-06\)"),
        ("{N2: 0.79, XY2: 0.21}", r"stream G.*no formation data for 'XY2' in the composition"),
        ("{N2: 0.79, O2: -0.21}", r"stream G.*the fraction of O2 is -0\.21"),
        ("steam", r"stream G.*unknown named composition 'steam'"),
    ],
)
def test_composition_errors_name_the_stream_and_say_why(tmp_path, composition, message):
    with pytest.raises(InputError, match=message):
        audit_text(
            tmp_path,
            f"""
            streams:
              G: {{composition: {composition}, T: 25 degC, P: 1 bar, flow: 1 kg/s}}
            """,
        )


@pytest.mark.parametrize(
    "stream, message",
    [
        (
            "{fluid: Water, composition: air, T: 25 degC, P: 1 bar, flow: 1 kg/s}",
            "exactly one of 'fluid' .* or 'composition'",
        ),
        ("{T: 25 degC, P: 1 bar, flow: 1 kg/s}", "exactly one of 'fluid' .* or 'composition'"),
        (
            "{composition: air, P: 1 bar, h: 300 kJ/kg, flow: 1 kg/s}",
            "a gas mixture is written with T and P",
        ),
        (
            "{composition: air, composition_basis: mass, T: 25 degC, P: 1 bar, flow: 1 kg/s}",
            "a named composition gives mole fractions",
        ),
        (
            "{composition: air, T: 25 degC, P: 1 bar, flow: 1 kg/s, phase: liquid}",
            "a gas mixture is a gas; it cannot be declared liquid",
        ),
    ],
)
def test_stream_shape_errors(tmp_path, stream, message):
    with pytest.raises(InputError, match=message):
        audit_text(
            tmp_path,
            f"""
            streams:
              G: {stream}
            """,
        )


def test_flue_gas_cooler_with_mixture_streams_closes(tmp_path):
    # A flue-gas cooler from 300 °C to 150 °C: the duty is ṁ Σ x_i Δh_i, with Δh_i from JANAF
    # (checked above); here the step must close with the duty the same model gives, and an
    # economiser (heat exchanger with a mixture hot side) must run its T–Q profile on the mixture.
    result = audit_text(
        tmp_path,
        f"""
        streams:
          G1: {{composition: {FLUE}, T: 300 degC, P: 1.02 bar, flow: 3.7 kg/s}}
          G2: {{composition: {FLUE}, T: 150 degC, P: 1.013 bar, flow: 3.7 kg/s}}
          W1: {{fluid: Water, T: 105 degC, P: 45 bar, flow: 3 kg/s}}
          W2: {{fluid: Water, T: 150 degC, P: 44.5 bar, flow: 3 kg/s}}
        steps:
          - id: ECO
            kind: heat_exchanger
            hot: {{inlet: G1, outlet: G2}}
            cold: {{inlet: W1, outlet: W2}}
        """,
    )
    step = result.step("ECO")
    released = step.extra["hot_duty"]
    # Independent duty of the gas side from JANAF increments (mixing terms cancel in Δh).
    x = {"CO2": 0.0845, "H2O": 0.1665, "N2": 0.7156, "O2": 0.0249, "Ar": 0.0085}
    dh = sum(x[f] * (_janaf_increments(f, 573.15)[0] - _janaf_increments(f, 423.15)[0]) for f in x)
    M = result.stream("G1").mass_flow / result.stream("G1").molar_flow
    assert_close(released, 3.7 / M * dh, "kW", rtol=2e-3, what="flue-gas duty")
    assert ("ECO", "temperature-cross") not in names(result)
    assert ("ECO", "internal-pinch") not in names(result)
