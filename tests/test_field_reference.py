"""The field reference (docs/fields.md) is generated from the models and never drifts."""

from __future__ import annotations

from conftest import ROOT

from audit.commands.main import main
from audit.exitcodes import EXIT_PASS
from audit.report.fields import reference_text
from audit.steps import BALANCE_MODEL

DOCS = ROOT / "docs" / "fields.md"


def test_docs_fields_is_current() -> None:
    # If this fails: plant-audit fields -o docs/fields.md
    assert DOCS.read_text(encoding="utf-8") == reference_text()


def test_every_kind_and_field_is_listed_with_its_unit_and_default() -> None:
    text = reference_text()
    for kind, model in BALANCE_MODEL.step_kinds.items():
        section = text.split(f"## steps: kind `{kind}`\n", 1)[1].split("\n## ", 1)[0]
        for name in model.model_fields:
            if name != "kind":
                assert f"| `{name}` |" in section, (kind, name)
    expires = "| `expires` | date (YYYY-MM-DD) | **required** | last day the acceptance holds"
    assert expires in text
    assert "| `energy_absolute` | power (e.g. '2.5 MW' or '800 kW') | `1 kW` |" in text
    assert "## steps: kind `fired_heater`" in text and "## steps: kind `fuel_cell`" in text


def test_the_reference_of_h_and_s_is_stated_per_fluid_family() -> None:
    text = reference_text()
    assert "| water | formation | IAPWS-95 equation of state, shifted so that the ideal gas" in text
    assert "fluid reference | the equation of state's own reference" in text
    assert "formation (ideal-gas mixture)" in text


def test_fields_command_prints_the_reference(capsys) -> None:
    assert main(["fields"]) == EXIT_PASS
    assert capsys.readouterr().out == reference_text()
