"""Cell voltages from each species' own state: E°(T) from CODATA formation data, the Nernst terms
of gases at unequal pressures, the real-gas (fugacity) correction, and the checks that use them.

Sources: CODATA Key Values for Thermodynamics (Cox, Wagman & Medvedev, 1989; reference-values rows
12-14, 19, 21): ΔfH°(H2O, l) = −285.830 kJ/mol, S°: H2O(l) 69.95, H2 130.680, O2 205.152 J/(mol K);
F = 96 485.332 12 C/mol and R = 8.314 462 618 J/(mol K) (CODATA 2018, exact). Fugacity coefficients
are computed here independently from the compressibility factor Z of the reference equations of
state (Leachman et al. 2009 for normal hydrogen, Schmidt & Wagner 1985 for oxygen), read with
CoolProp's high-level PropsSI: ln φ = ∫₀^p (Z − 1) dp′/p′ (Moran & Shapiro, 8th ed., §11.7).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from conftest import assert_close, audit_text, names
from CoolProp.CoolProp import PropsSI

R = 8.314_462_618_153_24  # J/(mol K)
F = 96_485.332_12  # C/mol
# CODATA 1989 (rows 12, 14): H2 + ½O2 → H2O(l)
DH0 = -285_830.0  # J/mol
DS0 = 69.95 - 130.680 - 0.5 * 205.152  # J/(mol K) = −163.306 (row 19)
E0_298 = 1.22889  # V (row 21)


def ln_phi(fluid: str, T: float, p: float) -> float:
    """ln φ = ∫₀^p (Z − 1)/p′ dp′, Simpson's rule on 400 intervals of PropsSI's Z (the integrand
    tends to B/(R T) as p′ → 0, so the lowest point is taken at 1 Pa)."""
    ps = np.linspace(1.0, p, 401)
    z = np.array([PropsSI("Z", "T", T, "P", x, fluid) for x in ps])
    f = (z - 1.0) / ps
    h = ps[1] - ps[0]
    return float(h / 3 * (f[0] + 4 * f[1:-1:2].sum() + 2 * f[2:-1:2].sum() + f[-1]))


def test_standard_reversible_voltage_from_codata_formation_data_by_hand():
    dG = DH0 - 298.15 * DS0
    assert_close(-dG / (2 * F), E0_298, "V", atol=1e-5, what="E° = −ΔrG°/2F, CODATA 1989")


def _electrolyser(tmp_path, T: float, p_h2: str, p_o2: str, claims: str, p_w: str = "1 bar"):
    xi = 10 * 1000.0 / (2 * F)  # mol/s, 10 cells at 1000 A
    return audit_text(
        tmp_path,
        f"""
        streams:
          W: {{fluid: Water, T: {T} K, P: {p_w}, flow: {xi:.9f} mol/s}}
          H: {{fluid: Hydrogen, T: {T} K, P: {p_h2}, flow: {xi:.9f} mol/s}}
          O: {{fluid: Oxygen, T: {T} K, P: {p_o2}, flow: {xi / 2:.9f} mol/s}}
        steps:
          - id: EL
            kind: electrolyser
            inlets: [W]
            outlets: [H, O]
            cells: 10
            current: 1000 A
            temperature: {T} K
            {claims}
        """,
    )


def test_standard_voltage_at_25_degC_through_the_cell(tmp_path):
    step = _electrolyser(tmp_path, 298.15, "1 bar", "1 bar", "cell_voltage: 1.6 V").step("EL")
    assert_close(step.extra["E_rev_standard"], E0_298, "V", atol=3e-4)  # CODATA ± 0.2 mV
    assert_close(step.extra["E_rev"], E0_298, "V", atol=3e-4)


def test_temperature_dependence_against_gibbs_helmholtz(tmp_path):
    # ΔG(T) = ΔH° − T ΔS° + Δcp [(T − T°) − T ln(T/T°)] with Δcp = cp(H2O, l) − cp(H2) − ½ cp(O2)
    # = 75.3 − 28.8 − ½ 29.4 = 31.8 J/(mol K) taken constant (NIST WebBook values at 25-80 °C,
    # from memory; they change by < 0.5 J/(mol K) over the range, < 0.02 mV here). At 80 °C the
    # Δcp term is 0.79 mV, so a linear estimate alone would be 0.8 mV off.
    T, T0, dcp = 353.15, 298.15, 31.8
    dG = DH0 - T * DS0 + dcp * ((T - T0) - T * math.log(T / T0))
    expected = -dG / (2 * F)  # 1.1831 V
    step = _electrolyser(tmp_path, T, "1 bar", "1 bar", "cell_voltage: 1.6 V").step("EL")
    assert_close(step.extra["E_rev_standard"], expected, "V", atol=3e-4, what="E°(80 °C)")


@pytest.fixture(scope="module")
def unequal(tmp_path_factory):
    """An electrolyser at 80 °C with H2 delivered at 30 bar and O2 at 1 bar, liquid water at 1 bar."""
    path = tmp_path_factory.mktemp("unequal")
    return _electrolyser(path, 353.15, "30 bar", "1 bar", "cell_voltage: 1.8 V").step("EL")


def test_nernst_terms_for_unequal_pressures_by_hand(unequal):
    # (R T / 2F) ln(p_H2 p_O2^½ / p°^1.5) with p_H2 = 30 bar, p_O2 = 1 bar: 51.75 mV (ideal gases),
    # plus the real-gas part (R T / 2F) (ln φ_H2 + ½ ln φ_O2); liquid water at 1 bar adds nothing.
    T = 353.15
    nernst = R * T / (2 * F) * math.log(30.0 * 1.0**0.5 / 1.0**1.5)
    assert_close(nernst, 0.051753, "V", atol=2e-6, what="Nernst term by hand")
    real = R * T / (2 * F) * (ln_phi("Hydrogen", T, 30e5) + 0.5 * ln_phi("Oxygen", T, 1e5))
    E_rev, E_std = unequal.extra["E_rev"], unequal.extra["E_rev_standard"]
    assert_close(E_rev - E_std, nernst + real, "V", atol=2e-5, what="E_rev − E° at own pressures")
    assert unequal.extra["species_pressures"] == pytest.approx(
        {"H2": 30e5, "O2": 1e5, "H2O(l)": 1e5}, rel=1e-9
    )


def test_real_gas_correction_at_30_bar_is_a_few_tenths_of_a_millivolt(unequal):
    # φ_H2(80 °C, 30 bar) from Z of the Leachman equation: ≈ 1.016 (a virial estimate with
    # B ≈ 15 cm³/mol, from memory, gives exp(B p / R T) ≈ 1.0155).
    T = 353.15
    phi = math.exp(ln_phi("Hydrogen", T, 30e5))
    assert_close(unequal.extra["fugacity_coefficients"]["H2"], phi, "-", rtol=2e-5)
    correction = R * T / (2 * F) * math.log(phi)
    assert 0.1e-3 < correction < 0.5e-3  # V: a few tenths of a mV
    assert_close(correction, 0.24e-3, "V", atol=0.03e-3)


def test_electrolyser_a_few_millivolts_below_its_reversible_voltage_is_an_error(tmp_path, unequal):
    E_rev = unequal.extra["E_rev"]  # 1.2351 V, checked by hand above
    below = _electrolyser(tmp_path, 353.15, "30 bar", "1 bar", f"cell_voltage: {E_rev - 0.003:.5f} V")
    (finding,) = [f for f in below.findings if f.name == "voltage-beyond-reversible"]
    assert_close(finding.margin, 0.003, "V", atol=1e-5)
    # 0.5 mV for E_rev plus the rounding of the written values (a 1e-5 V voltage, the states)
    assert "by 3 mV: an electrolyser cannot split at less (tolerance 0.5" in finding.message
    assert "mV from the rounding of the written values)" in finding.message
    above = _electrolyser(tmp_path, 353.15, "30 bar", "1 bar", f"cell_voltage: {E_rev + 0.001:.5f} V")
    assert ("EL", "voltage-beyond-reversible") not in names(above)


def test_voltage_check_work_bound_and_reported_voltage_agree(tmp_path):
    # Isothermal cell (streams and heat at 80 °C): the work bound is −ΔG of the streams at 80 °C,
    # which must be ξ n F E_rev with the same species states.
    T = 353.15
    result = _electrolyser(
        tmp_path, T, "30 bar", "1 bar", f"cell_voltage: 1.8 V\n            heat_temperature: {T} K"
    )
    step = result.step("EL")
    assert step.bound_basis == "-ΔG (isothermal flow)"
    xi = step.extra["extent"]
    assert_close(-step.W_rev, xi * 2 * F * step.extra["E_rev"], "W", rtol=2e-5)
    assert step.extra["E_rev_checked"] == step.extra["E_rev"]


def test_high_temperature_fuel_cell_above_minus_delta_g_fails_the_work_bound(tmp_path):
    # A solid-oxide cell at 700 °C, H2 + ½O2 → H2O(g), every stream at 700 °C and 1 bar. E_rev(973 K)
    # ≈ 0.98 V (−ΔG ≈ 189 kJ/mol; Larminie & Dicks, Table 2.2, from memory: 0.98 V at 1073 K
    # rising to 1.00 V at 973 K). Claimed: 100 cells at 1000 A and 1.02 V, above −ΔG.
    T = 973.15
    xi = 100 * 1000.0 / (2 * F)
    result = audit_text(
        tmp_path,
        f"""
        streams:
          H: {{fluid: Hydrogen, T: {T} K, P: 1 bar, flow: {xi:.9f} mol/s}}
          O: {{fluid: Oxygen, T: {T} K, P: 1 bar, flow: {xi / 2:.9f} mol/s}}
          W: {{fluid: Water, T: {T} K, P: 1 bar, flow: {xi:.9f} mol/s}}
        steps:
          - id: SOFC
            kind: fuel_cell
            inlets: [H, O]
            outlets: [W]
            cells: 100
            current: 1000 A
            cell_voltage: 1.02 V
        """,
    )
    step = result.step("SOFC")
    assert_close(step.extra["E_rev"], 1.00, "V", atol=0.01, what="E_rev at 700 °C")
    assert step.bound_basis == "-ΔG (isothermal flow)"
    found = {f.name: f for f in result.findings_for("SOFC")}
    assert "work-above-bound" in found and "voltage-beyond-reversible" in found
    assert_close(found["work-above-bound"].bound, xi * 2 * F * step.extra["E_rev"], "W", rtol=1e-4)
