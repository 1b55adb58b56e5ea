"""Batch discovery in a repository (audit.discovery) and a history that follows the balance
across checkouts (audit.identity)."""

from __future__ import annotations

import shutil
import sqlite3
from pathlib import Path

import pytest
from conftest import SAMPLE

from audit.batch import Skipped, discover
from audit.commands.main import main
from audit.discovery import looks_like_balance, matches
from audit.exitcodes import EXIT_FINDINGS, EXIT_PASS
from audit.identity import balance_identity

CLEAN = SAMPLE / "quillon-bay-clean.yaml"
SEEDED = SAMPLE / "quillon-bay-seeded.yaml"

WORKFLOW = """name: nightly
on:
  schedule:
    - cron: "0 2 * * *"
jobs:
  audit:
    runs-on: ubuntu-latest
    steps:
      - run: plant-audit batch .
"""
DOCS_CONFIG = """site_name: Plant balances
markdown_extensions:
  - emoji:
      emoji_index: !!python/name:material.extensions.emoji.twemoji
"""


def make_repository(root: Path) -> Path:
    """A repository: a CI workflow, a docs configuration, three balances, a draft and a hidden
    folder."""
    (root / ".git").mkdir(parents=True)
    (root / ".github" / "workflows").mkdir(parents=True)
    (root / ".github" / "workflows" / "nightly.yml").write_text(WORKFLOW, encoding="utf-8")
    (root / "mkdocs.yml").write_text(DOCS_CONFIG, encoding="utf-8")
    for name in ("north/boiler.yaml", "north/chiller.yaml", "south/site.yaml", "drafts/wip.yaml"):
        (root / name).parent.mkdir(parents=True, exist_ok=True)
        shutil.copy(CLEAN, root / name)
    (root / ".cache").mkdir()
    (root / ".cache" / "old.yaml").write_text("balance: [broken", encoding="utf-8")
    return root


@pytest.mark.parametrize(
    ("path", "globs", "expected"),
    [
        ("drafts/wip.yaml", ["drafts/**"], True),
        ("drafts/wip.yaml", ["drafts"], True),
        ("a/drafts/wip.yaml", ["drafts"], True),
        ("a/b/c.yaml", ["**/*.yaml"], True),
        ("c.yaml", ["**/*.yaml"], True),
        ("c.yml", ["**/*.yaml"], False),
        ("a/b/c.yaml", ["a/*.yaml"], False),
        ("a/b/c.yaml", ["*.yaml"], True),
        ("a/x1.yaml", ["a/x[0-9].yaml"], True),
    ],
)
def test_globs(path: str, globs: list[str], expected: bool) -> None:
    assert matches(path, globs) is expected


def test_discovery_skips_hidden_excluded_and_non_balances(tmp_path: Path) -> None:
    root = make_repository(tmp_path / "repo")
    found = discover([root], exclude=["drafts/**"])
    audited = sorted(Path(f).relative_to(root).as_posix() for f in found if isinstance(f, str))
    skipped = [Path(f.path).relative_to(root).as_posix() for f in found if isinstance(f, Skipped)]
    assert audited == ["north/boiler.yaml", "north/chiller.yaml", "south/site.yaml"]
    assert skipped == ["mkdocs.yml"]  # hidden folders are not even entered
    assert not looks_like_balance(root / "mkdocs.yml")
    assert looks_like_balance(CLEAN)


def test_a_repository_runs_nightly_with_a_stable_history(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    database = tmp_path / "history.sqlite"
    first = make_repository(tmp_path / "checkout-1")
    monkeypatch.chdir(first)
    code = main(["batch", ".", "--exclude", "drafts/**", "--history", str(database), "--workers", "1"])
    out = capsys.readouterr().out
    assert code == EXIT_PASS
    assert (
        "SKIPPED        mkdocs.yml: not a balance (no top-level 'balance', 'streams' or 'steps' key)"
        in out
    )
    assert out.count("first audited run") == 3
    assert "Batch: 4 files (3 pass, 1 skipped); exit code 0." in out

    # the next night, a fresh checkout elsewhere: the same balances, the same history
    second = make_repository(tmp_path / "checkout-2")
    shutil.copy(SEEDED, second / "south" / "site.yaml")
    monkeypatch.chdir(second)
    code = main(["batch", ".", "--exclude", "drafts/**", "--history", str(database), "--workers", "1"])
    out = capsys.readouterr().out
    assert code == EXIT_FINDINGS
    assert out.count("nothing new since") == 2
    assert "20 new since" in out
    with sqlite3.connect(database) as connection:
        keys = {k for (k,) in connection.execute("SELECT DISTINCT file FROM runs")}
    assert keys == {"north/boiler.yaml", "north/chiller.yaml", "south/site.yaml"}

    assert main(["history", "south/site.yaml", "--history", str(database)]) == EXIT_PASS
    out = capsys.readouterr().out
    assert out.startswith(f"Runs of south/site.yaml recorded in {database}, newest first:")
    assert "Trend (oldest → newest): errors and warnings 0 → 20; exergy destroyed" in out


def test_identity_prefers_a_declared_id_then_the_project_root(tmp_path: Path) -> None:
    plant = tmp_path / "a" / "b.yaml"
    assert balance_identity(plant, "boiler-7") == "id:boiler-7"
    assert balance_identity(plant, None, project_root=tmp_path) == "a/b.yaml"
    assert balance_identity(plant, None, batch_root=tmp_path / "a") == "b.yaml"
    assert balance_identity(plant, None) == str(plant.resolve())


def test_a_declared_id_keys_the_history(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    text = CLEAN.read_text(encoding="utf-8").replace("balance:\n", "balance:\n  id: quillon-site\n", 1)
    for name in ("one.yaml", "moved/two.yaml"):
        (tmp_path / name).parent.mkdir(exist_ok=True)
        (tmp_path / name).write_text(text, encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    assert main(["check", "one.yaml", "--brief", "--history", "h.sqlite"]) == EXIT_PASS
    assert main(["check", "moved/two.yaml", "--brief", "--history", "h.sqlite"]) == EXIT_PASS
    assert "nothing new since" in capsys.readouterr().out
    assert main(["history", "moved/two.yaml", "--history", "h.sqlite"]) == EXIT_PASS
    assert capsys.readouterr().out.startswith("Runs of id:quillon-site recorded in h.sqlite")
