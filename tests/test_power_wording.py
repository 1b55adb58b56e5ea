"""Powers in messages: kW below 1 MW, MW above, four significant digits, and no negative zero."""

from audit.steps.laws import format_power


def test_powers_are_written_in_kilowatts_or_megawatts():
    assert format_power(12_345.0) == "12.35 kW"
    assert format_power(2.5e6) == "2.5 MW"
    assert format_power(3_000.0, batch=True) == "3 kJ"


def test_no_work_is_written_zero_not_minus_zero():
    # minus a step's zero work, as in "claims 0 kW of work absorbed"
    assert format_power(-0.0) == "0 kW"
