"""Unit conversions at the edge, against exact definitions (SI brochure, 9th ed.; NIST SP 811)."""

from __future__ import annotations

import pytest

from audit.errors import UnitError
from audit.units import NORMAL_CONDITIONS, STANDARD_CONDITIONS, to_flow, to_si

SITE = 101_300.0  # Pa


@pytest.mark.parametrize(
    "text,expected",
    [
        ("420 degC", 693.15),
        ("693.15 K", 693.15),
        ("212 degF", 373.15),
        ("32 °F", 273.15),
        ("25 °C", 298.15),
        ("-40 degC", 233.15),
        ("-40 degF", 233.15),
    ],
)
def test_temperatures(text, expected):
    # 0 °C = 273.15 K and °F = 9/5 K with 32 °F = 0 °C, exact by definition.
    assert to_si(text, "temperature") == pytest.approx(expected, abs=1e-9)


@pytest.mark.parametrize(
    "text,expected",
    [
        ("40 bar", 40e5),
        ("4 MPa", 4e6),
        ("101.325 kPa", 101_325.0),
        ("14.7 psia", 14.7 * 6894.757293168),
        ("40 bara", 40e5),
        ("40 bar(a)", 40e5),
        ("1 atm", 101_325.0),
        ("39 barg", 39e5 + SITE),
        ("39 bar(g)", 39e5 + SITE),
        ("500 kPa(g)", 5e5 + SITE),
        ("500 kPag", 5e5 + SITE),
        ("100 psig", 100 * 6894.757293168 + SITE),
        ("2 MPa(g)", 2e6 + SITE),
        ("300 mbarg", 3e4 + SITE),
    ],
)
def test_pressures_absolute_and_gauge(text, expected):
    # 1 psi = 6894.757293168 Pa (NIST SP 811); gauge = absolute − site pressure.
    assert to_si(text, "pressure", site_pressure=SITE) == pytest.approx(expected, rel=1e-12)


def test_gauge_needs_site_pressure():
    with pytest.raises(
        UnitError,
        match=r"'10 barg' is a gauge pressure, but the balance declares "
        r"no site_pressure",
    ):
        to_si("10 barg", "pressure")


@pytest.mark.parametrize(
    "text,basis,value",
    [
        ("12 t/h", "mass", 12_000 / 3600),
        ("3.3 kg/s", "mass", 3.3),
        ("1000 lb/h", "mass", 1000 * 0.45359237 / 3600),
        ("10 kmol/h", "molar", 10_000 / 3600),
        ("1 mol/s", "molar", 1.0),
        ("120 m3/h", "actual_volume", 120 / 3600),
    ],
)
def test_flows(text, basis, value):
    # 1 lb = 0.45359237 kg exactly (international pound, 1959).
    flow = to_flow(text)
    assert flow.basis == basis
    assert flow.value == pytest.approx(value, rel=1e-12)


def test_normal_and_standard_volume_flows():
    normal, standard = to_flow("1500 Nm3/h"), to_flow("36000 Sm3/d")
    assert normal.basis == standard.basis == "normal_volume"
    assert normal.reference == NORMAL_CONDITIONS == (273.15, 101_325.0)  # 0 °C, 1 atm
    assert standard.reference == STANDARD_CONDITIONS == (288.15, 101_325.0)  # ISO 13443
    assert normal.value == pytest.approx(1500 / 3600)
    assert standard.value == pytest.approx(36000 / 86400)


@pytest.mark.parametrize(
    "text,kind,expected",
    [
        ("2.5 MW", "power", 2.5e6),
        ("800 kW", "power", 8e5),
        ("1 Btu/h", "power", 0.29307107),
        ("40 kWh", "energy", 40 * 3.6e6),
        ("2800 kJ/kg", "specific_enthalpy", 2.8e6),
        ("6.5 kJ/(kg K)", "specific_entropy", 6500.0),
        ("5 K", "temperature_difference", 5.0),
        ("5 degC", "temperature_difference", 5.0),
        ("9 degF", "temperature_difference", 5.0),
        ("1.2 t", "mass", 1200.0),
    ],
)
def test_other_kinds(text, kind, expected):
    # 1 Btu (IT) = 1055.05585262 J, so 1 Btu/h = 0.29307107 W (NIST SP 811); pint's Btu is
    # 1055.056 J (4e-8 apart), hence rel 1e-6.
    assert to_si(text, kind) == pytest.approx(expected, rel=1e-6)


@pytest.mark.parametrize(
    "value,kind,message",
    [
        (40, "pressure", r"a bare number \(40\) has no unit; write it with its unit, such as '40 bar'"),
        ("40", "pressure", r"'40' has no unit"),
        ("40 kg", "pressure", r"'40 kg' is not a pressure: 'kg' has dimension \[mass\]"),
        ("4 MW", "temperature", r"'4 MW' is not a temperature"),
        ("nan degC", "temperature", r"'nan degC' is not a finite number"),
        ("inf bar", "pressure", r"'inf bar' is not a finite number"),
        ("1e400 bar", "pressure", r"is not a finite number"),
        ("-300 degC", "temperature", r"at or below absolute zero"),
        ("-1 bar", "pressure", r"not a positive absolute pressure"),
        ("12 blorbs/h", "mass_flow", r"unknown unit 'blorbs/h'"),
        ("abc", "power", r"'abc' is not a number followed by a unit"),
        (True, "power", r"expected a quantity with a unit"),
    ],
)
def test_refusals(value, kind, message):
    with pytest.raises(UnitError, match=message):
        to_si(value, kind)


def test_flow_refusals():
    with pytest.raises(UnitError, match=r"'5 kW' is not a flow"):
        to_flow("5 kW")
    with pytest.raises(UnitError, match=r"negative flow"):
        to_flow("-2 kg/s")


def test_known_unit_table_matches_pint_bit_for_bit():
    """The converters written out in audit.unit_table are pint's own, exactly (a drift in pint's
    definitions would show here first)."""
    from audit import units
    from audit.unit_table import KNOWN_UNITS, SI_DIMENSIONS

    for unit, known in KNOWN_UNITS.items():
        assert units._converter_of_pint(unit) == known, unit
    for si_unit, dimensionality in SI_DIMENSIONS.items():
        assert str(units.registry().Quantity(1.0, si_unit).dimensionality) == dimensionality


def test_unlisted_unit_still_read_through_pint():
    """A unit outside the table is converted by pint: 1 atm = 101 325 Pa exactly (standard
    atmosphere, 10th CGPM 1954, Resolution 4)."""
    from audit.unit_table import KNOWN_UNITS
    from audit.units import to_si

    assert "atm" not in KNOWN_UNITS
    assert to_si("2 atm", "pressure") == 202650.0
