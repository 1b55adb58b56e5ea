"""The same input gives byte-identical JSON results, apart from the two run-time provenance fields
("run at (UTC)" and "solve time [s]"): across runs in one process, across processes with different
string-hash seeds (so no result may depend on the iteration order of a set), and with the Monte Carlo
cross-check, whose draws use a fixed seed."""

from __future__ import annotations

import json
import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

from audit.commands.main import main

SAMPLE = Path(__file__).resolve().parents[1] / "sample_plant"
RUN_TIME_FIELDS = ("run at (UTC)", "solve time [s]")
_RUN_TIME = re.compile(r'^(\s*"(?:run at \(UTC\)|solve time \[s\])": )"[^"]*"(,?)$', re.MULTILINE)


def without_run_time(text: str) -> str:
    """The JSON text with the values of the run-time provenance fields blanked, all else as is."""
    blanked, count = _RUN_TIME.subn(r'\1"-"\2', text)
    assert count == len(RUN_TIME_FIELDS), "the run-time fields moved: update this test"
    return blanked


def check_json(path: Path, target: Path, *extra: str) -> str:
    code = main(["check", str(path), "--json", str(target), "-q", *extra])
    assert code in (0, 1)
    return target.read_text(encoding="utf-8")


@pytest.mark.parametrize(
    "name, extra",
    [
        ("quillon-bay-seeded.yaml", ()),
        ("quillon-bay-clean.yaml", ()),
        ("quillon-bay-measured.yaml", ("--monte-carlo", "20")),
    ],
)
def test_same_input_same_json(name, extra, tmp_path, capsys):
    first = check_json(SAMPLE / name, tmp_path / "first.json", *extra)
    second = check_json(SAMPLE / name, tmp_path / "second.json", *extra)
    capsys.readouterr()
    assert without_run_time(first) == without_run_time(second)
    a, b = json.loads(first), json.loads(second)
    differing = {k for k in a["provenance"] if a["provenance"][k] != b["provenance"].get(k)}
    assert differing <= set(RUN_TIME_FIELDS)


def test_same_json_across_hash_seeds(tmp_path, capsys):
    """Another process, another string-hash seed: the same bytes (sets and dicts of strings iterate
    in a different order there, so any order-dependent result would show)."""
    sample = SAMPLE / "quillon-bay-seeded.yaml"
    here = check_json(sample, tmp_path / "here.json")
    capsys.readouterr()
    seed = "1" if os.environ.get("PYTHONHASHSEED") != "1" else "2"
    there = tmp_path / "there.json"
    done = subprocess.run(
        [sys.executable, "-m", "audit", "check", str(sample), "--json", str(there), "-q"],
        capture_output=True,
        text=True,
        timeout=300,
        env={**os.environ, "PYTHONHASHSEED": seed},
    )
    assert done.returncode == 1, done.stderr  # the seeded sample fails by design
    assert without_run_time(there.read_text(encoding="utf-8")) == without_run_time(here)
