"""Reconciliation of the measured sample site (sample_plant/README.md, "The measured revision"):
its seeded slip is S20's pressure logged as '1.893 bar' from a gauge transmitter; the site
pressure is 1.013 bar (both written in the sample file). The measured revision has a second gross
error: C1's shaft power is logged as 118 kW where the clean revision
(sample_plant/quillon-bay-clean.yaml) has 152.3 kW, so C1's first law is 34 kW short, about 30
standard deviations of its balance; S22's temperature (with its pressure) is hard to tell apart
from that power reading."""

from __future__ import annotations

import json

import pytest
from conftest import SAMPLE

from audit.commands.main import main
from audit.errors import InputError
from audit.reconcile import reconcile_file

MEASURED = SAMPLE / "quillon-bay-measured.yaml"


@pytest.fixture(scope="module")
def result():
    return reconcile_file(MEASURED)


def test_global_test_fails_and_s20_pressure_is_named(result):
    assert not result.first.passed
    named = [e for e in result.eliminations if "S20.P" in e.equivalent_set]
    assert named, [e.equivalent_set for e in result.eliminations]
    # the estimate is the reading plus the site pressure (1.893 barg = 2.906 bar), within 5 %
    assert named[0].estimate == pytest.approx(1.893e5 + 1.013e5, rel=0.05)
    assert "gauge reading written as absolute" in named[0].note


def test_the_compressor_power_is_named_with_the_discharge_temperature(result):
    (named,) = [e for e in result.eliminations if "C1.shaft_power" in e.named]
    assert {"S22.T", "S22.P"} <= set(named.named)  # one of these: the tests cannot tell them apart
    # removed in the end: the removal set {C1.shaft_power, S20.P} leaves the smaller γ, and the
    # power estimated is the clean revision's 152.3 kW within 1 % (sample_plant/quillon-bay-clean.yaml)
    assert named.removed == "C1.shaft_power"
    assert named.estimate == pytest.approx(152.3e3, rel=0.01)
    assert "fit better at the end" in named.note


def test_after_removing_the_gross_errors_the_global_test_passes(result):
    assert result.final.passed
    assert result.converged
    assert result.fails()


def test_each_round_is_tested_with_the_readings_it_names(result):
    # After C1.shaft_power replaced S22.T (the first choice), the global test printed after each
    # round is that of the readings removed up to it: the last round's is the final one.
    last = result.eliminations[-1].after
    assert last.statistic == pytest.approx(result.final.statistic, rel=1e-9)
    assert last.dof == result.final.dof
    assert [e.after.dof for e in result.eliminations] == [25, 24]


def test_every_reconciled_balance_closes(result):
    for key, residual, unit in result.constraints:
        scale = {"kg/s": 1e-6, "W": 1e-2, "J": 1.0}[unit]  # far below any reading's uncertainty
        assert abs(residual) < scale, key


def test_command_line_exit_code_and_json(tmp_path, capsys):
    out = tmp_path / "r.json"
    assert main(["reconcile", str(MEASURED), "--json", str(out), "-o", str(tmp_path / "r.xlsx")]) == 1
    text = capsys.readouterr().out
    assert "S20.P" in text and "statistical estimate, not a calibration" in text
    data = json.loads(out.read_text())["reconciliation"]
    assert any("S20.P" in s for s in data["gross_errors"])


def test_a_balance_without_uncertainty_is_refused():
    with pytest.raises(InputError, match="reconciliation needs the uncertainty of the readings"):
        reconcile_file(SAMPLE / "quillon-bay-clean.yaml")


def test_confidence_out_of_range_is_refused(capsys):
    with pytest.raises(SystemExit):
        main(["reconcile", str(MEASURED), "--confidence", "1.5"])
    assert "is not a confidence" in capsys.readouterr().err
