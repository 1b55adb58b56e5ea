"""The bound named is the bound computed (design note 2.5): −ΔG at the step's one temperature for
an isothermal flow step, −ΔA (and −ΔA − P0·ΔV for useful work) for an isothermal closed step,
otherwise the exergy drop; each carried under its own name.

Independent values: CoolProp's high-level PropsSI with the Span–Wagner equation of state for CO2
(R. Span, W. Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509) and IAPWS-95 for water (W. Wagner,
A. Pruß, J. Phys. Chem. Ref. Data 31 (2002) 387), called here directly, not through the tool.
"""

from __future__ import annotations

import pytest
from conftest import assert_close, audit_text, names
from CoolProp.CoolProp import PropsSI

HEADER = """
balance:
  name: named bounds
  dead_state: {T: 298.15 K, P: 101.325 kPa}
  tolerances: {energy_absolute: 1 W, energy_absolute_batch: 1 J, energy_relative: 1.0e-5}
"""

T = 305.0  # K, 0.87 K above the critical temperature of CO2 (304.13 K, Span & Wagner 1996)
P1, P2 = 90e5, 60e5  # Pa


def _co2(prop: str, P: float) -> float:
    return PropsSI(prop, "T", T, "P", P, "CO2")


DS = _co2("S", P2) - _co2("S", P1)
MINUS_DG = -((_co2("H", P2) - _co2("H", P1)) - T * DS)  # ≈ 9.10 kJ/kg
MINUS_DA = -((_co2("U", P2) - _co2("U", P1)) - T * DS)  # ≈ 32.67 kJ/kg
DV = 1 / _co2("D", P2) - 1 / _co2("D", P1)


def test_near_critical_gibbs_and_helmholtz_bounds_differ_by_more_than_two():
    assert MINUS_DA / MINUS_DG > 2.0
    assert_close(MINUS_DG, 9.10e3, "J/kg", rtol=2e-3, what="−Δg, Span–Wagner via PropsSI")
    assert_close(MINUS_DA, 32.67e3, "J/kg", rtol=2e-3, what="−Δa, Span–Wagner via PropsSI")


def _flow(tmp_path, work: str):
    body = f"""
streams:
  IN: {{fluid: CO2, T: {T} K, P: 90 bar, flow: 1 kg/s}}
  OUT: {{fluid: CO2, T: {T} K, P: 60 bar, flow: 1 kg/s}}
steps:
  - id: ISO
    kind: general
    inlets: [IN]
    outlets: [OUT]
    work_delivered: {work}
    heat_temperature: {T} K
"""
    return audit_text(tmp_path, body, HEADER)


@pytest.mark.parametrize("work,fails", [("8 kW", False), ("20 kW", True)])
def test_isothermal_flow_step_is_checked_against_minus_dG(tmp_path, work, fails):
    result = _flow(tmp_path, work)
    step = result.step("ISO")
    assert step.bound_basis == "-ΔG (isothermal flow)"
    assert step.T_isothermal == pytest.approx(T, abs=1e-9)
    assert_close(step.minus_dG_isothermal, MINUS_DG, "W", rtol=1e-4, what="−ΔG of the streams at T")
    assert step.W_rev == step.minus_dG_isothermal == step.classical_bound
    assert step.minus_dA_isothermal is None
    # the exergy drop is kept beside it, under its own name, and differs from it
    assert step.W_rev_exergy != pytest.approx(step.W_rev, rel=1e-3)
    # W_rev − W = T·S_gen + residual (the inferred heat is exchanged at T): the margin is T·S_gen
    assert_close(step.W_rev - step.W, T * step.S_gen + step.energy_residual, "W", atol=1e-6)
    assert (("ISO", "work-above-bound") in names(result)) is fails
    if fails:
        (finding,) = [f for f in result.findings if f.name == "work-above-bound"]
        assert finding.bound == step.minus_dG_isothermal


def _vessel(tmp_path, work: str):
    body = f"""
steps:
  - id: VES
    kind: vessel
    fluid: CO2
    mass: 1 kg
    initial: {{T: {T} K, P: 90 bar}}
    final: {{T: {T} K, P: 60 bar}}
    work_delivered: {work}
"""
    return audit_text(tmp_path, body, HEADER)


@pytest.mark.parametrize("work,fails", [("20 kJ", False), ("40 kJ", True)])
def test_isothermal_closed_step_is_checked_against_minus_dA(tmp_path, work, fails):
    result = _vessel(tmp_path, work)
    step = result.step("VES")
    assert step.bound_basis == "-ΔA (isothermal closed)"
    assert_close(step.minus_dA_isothermal, MINUS_DA, "J", rtol=1e-4, what="−ΔA of the contents at T")
    assert step.W_rev == step.minus_dA_isothermal == step.classical_bound
    assert_close(step.useful_work_bound, MINUS_DA - 101325.0 * DV, "J", rtol=1e-4)
    assert step.minus_dG_isothermal is None  # 90 → 60 bar is not isobaric
    (heat,) = step.heat_flows
    assert heat.temperature == pytest.approx(T) and "isothermal step" in heat.note
    assert (("VES", "work-above-bound") in names(result)) is fails
    if fails:
        (finding,) = [f for f in result.findings if f.name == "work-above-bound"]
        assert finding.bound == step.minus_dA_isothermal


def test_isothermal_band_uses_one_temperature_not_each_streams_own(tmp_path):
    # Water pumped 1 → 50 bar at 80 °C, warming 0.3 K (within the 0.5 K band). −ΔG at the one
    # temperature T = 80.15 °C is −(Δh − T·Δs) ≈ −v·ΔP plus a small term; Σ ṁ g with each stream's
    # own temperature would add 0.3 K × s (about 0.3 × 1.07 kJ/(kg K) on CoolProp's reference),
    # hundreds of W for 1 kg/s.
    T_in, T_out = 353.15, 353.45
    body = f"""
streams:
  A: {{fluid: Water, T: {T_in} K, P: 1 bar, flow: 1 kg/s}}
  B: {{fluid: Water, T: {T_out} K, P: 50 bar, flow: 1 kg/s}}
steps:
  - {{id: P1, kind: pump, inlet: A, outlet: B}}
"""
    step = audit_text(tmp_path, body, HEADER).step("P1")
    Tm = 0.5 * (T_in + T_out)
    dh = PropsSI("H", "T", T_out, "P", 50e5, "Water") - PropsSI("H", "T", T_in, "P", 1e5, "Water")
    ds = PropsSI("S", "T", T_out, "P", 50e5, "Water") - PropsSI("S", "T", T_in, "P", 1e5, "Water")
    assert step.bound_basis == "-ΔG (isothermal flow)"
    assert_close(step.minus_dG_isothermal, -(dh - Tm * ds), "W", rtol=1e-5, what="−ΔG at one T")
    assert abs(step.minus_dG_isothermal - (-step.dG)) > 100.0  # Σ ṁ g is not the bound


def test_not_isothermal_keeps_the_exergy_drop(tmp_path):
    body = """
streams:
  A: {fluid: Nitrogen, T: 300 K, P: 2 bar, flow: 1 kg/s}
  B: {fluid: Nitrogen, T: 400 K, P: 2 bar, flow: 1 kg/s}
steps:
  - {id: H1, kind: heater, inlet: A, outlet: B, source_temperature: 500 K}
"""
    step = audit_text(tmp_path, body, HEADER).step("H1")
    assert step.bound_basis == "exergy drop"
    assert step.W_rev == step.W_rev_exergy
    assert step.minus_dG_isothermal is None and step.T_isothermal is None


def test_json_and_workbook_carry_each_bound_under_its_own_name(tmp_path):
    import openpyxl

    from audit.report.machine import to_dict
    from audit.report.workbook import write_workbook

    result = _vessel(tmp_path, "20 kJ")
    (step,) = to_dict(result)["steps"]
    assert step["bound_basis"] == "-ΔA (isothermal closed)"
    assert step["W_rev"] == step["minus_dA_isothermal"]
    for key in ("W_rev_exergy", "T_isothermal", "minus_dG_isothermal", "useful_work_bound"):
        assert key in step
    book_path = tmp_path / "book.xlsx"
    write_workbook(result, book_path)
    sheet = openpyxl.load_workbook(book_path)["Steps"]
    headers = [c.value for c in next(sheet.iter_rows(max_row=1))]
    for header in (
        "exergy drop Ẇ_rev [kW | kJ]",
        "isothermal at [°C]",
        "−ΔG at that temperature [kW | kJ]",
        "−ΔA at that temperature [kJ]",
        "useful-work bound Ẇ_rev − P0·ΔV [kJ]",
    ):
        assert header in headers


@pytest.mark.parametrize("work,fails", [("0 kW", False), ("5 kW", True)])
def test_boiling_water_claims_no_other_work_however_large_its_duty(tmp_path, work, fails):
    # Water boiling at 101.325 kPa (IAPWS-95: 99.974 °C, h_fg = 2256.4 kJ/kg; reference-values
    # row 9): ΔG = 0 at that one temperature, so no work beyond the tolerance (here 1e-5 of the
    # duty, set explicitly; the default tolerance is another matter). The heat's source temperature
    # is not declared: on an isothermal step it is exchanged at the step's temperature.
    body = f"""
streams:
  L: {{fluid: Water, P: 101.325 kPa, quality: 0, flow: 1 kg/s}}
  V: {{fluid: Water, P: 101.325 kPa, quality: 1, flow: 1 kg/s}}
steps:
  - id: BOIL
    kind: general
    inlets: [L]
    outlets: [V]
    work_delivered: {work}
"""
    result = audit_text(tmp_path, body, HEADER)
    step = result.step("BOIL")
    assert step.bound_basis == "-ΔG (isothermal flow)"
    assert abs(step.W_rev) < 1e-6 * step.Q
    assert_close(step.Q, 2256.4e3 + step.W, "W", atol=100.0, what="inferred duty = h_fg + W")
    assert (("BOIL", "work-above-bound") in names(result)) is fails
