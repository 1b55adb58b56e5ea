"""Reconciliation of the measured sample site (sample_plant/README.md, "The measured revision"):
its seeded slip is S20's pressure logged as '1.893 bar' from a gauge transmitter; the site
pressure is 1.013 bar (both written in the sample file)."""

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


def test_after_removing_the_gross_errors_the_global_test_passes(result):
    assert result.final.passed
    assert result.converged
    assert result.fails()


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
