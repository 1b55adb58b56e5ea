"""The project configuration (audit.config): where it is found, what it sets, how the command line
overrides it, and what ``plant-audit config`` prints."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest
from conftest import SAMPLE

from audit.commands.main import main
from audit.config import DEFAULT, load_settings
from audit.errors import InputError
from audit.exitcodes import EXIT_FINDINGS, EXIT_INPUT, EXIT_PASS

SEEDED = SAMPLE / "quillon-bay-seeded.yaml"
CLEAN = SAMPLE / "quillon-bay-clean.yaml"


def test_no_configuration_gives_the_defaults(tmp_path: Path) -> None:
    settings = load_settings(tmp_path)
    assert settings.file is None
    assert settings["fail-on"] == "error" and settings.source("fail-on") == DEFAULT
    assert settings["include"] == ["**/*.yaml", "**/*.yml"] and settings["exclude"] == []
    assert settings.history_path() is None
    assert settings.default_history() == tmp_path.resolve() / "plant-audit-history.sqlite"


def test_pyproject_table_is_found_walking_up(tmp_path: Path) -> None:
    (tmp_path / "pyproject.toml").write_text(
        '[project]\nname = "x"\n\n[tool.plant-audit]\nfail-on = "warning"\nworkers = 2\n'
        'history = "audit/history.sqlite"\nexclude = ["drafts/**"]\n',
        encoding="utf-8",
    )
    deep = tmp_path / "plants" / "north"
    deep.mkdir(parents=True)
    settings = load_settings(deep)
    assert settings.file == (tmp_path / "pyproject.toml").resolve()
    assert settings.root == tmp_path.resolve()
    assert settings["fail-on"] == "warning" and settings["workers"] == 2
    assert settings.source("workers") == str(settings.file)
    assert settings.history_path() == tmp_path.resolve() / "audit" / "history.sqlite"
    settings.override("fail-on", "error")
    assert settings["fail-on"] == "error" and settings.source("fail-on") == "command line"


def test_a_pyproject_without_the_table_is_passed_over(tmp_path: Path) -> None:
    (tmp_path / "plant-audit.toml").write_text('fail-on = "warning"\n', encoding="utf-8")
    inner = tmp_path / "tool"
    inner.mkdir()
    (inner / "pyproject.toml").write_text('[project]\nname = "x"\n', encoding="utf-8")
    assert load_settings(inner).file == (tmp_path / "plant-audit.toml").resolve()


def test_plant_audit_toml_wins_in_the_same_folder(tmp_path: Path) -> None:
    (tmp_path / "pyproject.toml").write_text("[tool.plant-audit]\nworkers = 3\n", encoding="utf-8")
    (tmp_path / "plant-audit.toml").write_text("workers = 1\n", encoding="utf-8")
    assert load_settings(tmp_path)["workers"] == 1


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("colour = true\n", r"unknown setting 'colour' \(the settings are: include, exclude"),
        ('fail-on = "info"\n', r"setting 'fail-on' must be 'error' or 'warning', not 'info'"),
        ("workers = 0\n", r"setting 'workers' must be a whole number of at least 1, not 0"),
        ("exclude = 3\n", r"setting 'exclude' must be a list of glob patterns, not 3"),
        ("history = 1\n", r"setting 'history' must be a file path, not 1"),
        ("tolerances = 1\n", r"setting 'tolerances' must be a table of tolerances, not 1"),
        ("workers = \n", r"cannot read the configuration: "),
    ],
)
def test_wrong_settings_are_input_errors(tmp_path: Path, text: str, message: str) -> None:
    (tmp_path / "plant-audit.toml").write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match=message):
        load_settings(tmp_path)


def test_config_command_says_where_each_setting_comes_from(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    config = tmp_path / "plant-audit.toml"
    config.write_text('fail-on = "warning"\n', encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    assert main(["config"]) == EXIT_PASS
    out = capsys.readouterr().out
    assert f"configuration: {config.resolve()}" in out
    assert f'fail-on     "warning"  [{config.resolve()}]' in out
    assert "workers     one per core  [default]" in out
    assert main(["config", "--json"]) == EXIT_PASS
    data = json.loads(capsys.readouterr().out)
    assert data["settings"]["fail-on"] == {"value": "warning", "source": str(config.resolve())}
    config.write_text("workers = -1\n", encoding="utf-8")
    assert main(["config"]) == EXIT_INPUT
    assert "setting 'workers' must be a whole number" in capsys.readouterr().err


def test_check_takes_the_gate_tolerances_and_history_from_the_configuration(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    plant = tmp_path / "plant.yaml"
    shutil.copy(SEEDED, plant)
    (tmp_path / "plant-audit.toml").write_text(
        'history = "runs.sqlite"\n[tolerances]\nenergy_relative = 0.5\n', encoding="utf-8"
    )
    monkeypatch.chdir(tmp_path)
    assert main(["check", "plant.yaml", "--brief", "--json", "out.json"]) == EXIT_FINDINGS
    out = capsys.readouterr().out
    assert "History (" in out and "first audited run" in out
    assert (tmp_path / "runs.sqlite").is_file()
    data = json.loads((tmp_path / "out.json").read_text(encoding="utf-8"))
    assert data["balance"]["tolerances"]["energy_relative"] == 0.5  # the project's default
    assert not any(f["name"] == "energy-imbalance" and f["step"] == "T1" for f in data["findings"])
    # the command line wins: no history
    assert main(["check", "plant.yaml", "--brief", "--no-history"]) == EXIT_FINDINGS
    assert "History (" not in capsys.readouterr().out


def test_a_balance_keeps_its_own_tolerance_over_the_project_default(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    text = SEEDED.read_text(encoding="utf-8").replace(
        "balance:\n", "balance:\n  tolerances:\n    energy_relative: 0.02\n", 1
    )
    (tmp_path / "plant.yaml").write_text(text, encoding="utf-8")
    (tmp_path / "plant-audit.toml").write_text("[tolerances]\nenergy_relative = 0.5\n", encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    assert main(["check", "plant.yaml", "-q", "--json", "out.json"]) == EXIT_FINDINGS
    data = json.loads((tmp_path / "out.json").read_text(encoding="utf-8"))
    assert data["balance"]["tolerances"]["energy_relative"] == 0.02
    assert data["verdict"]["fail_on"] == "error"
