"""Start-up: what the command line loads for answers that need no property call, and CoolProp's
load-time notice kept out of the output when its superancillary switch is set."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest
from conftest import ROOT, SAMPLE

HEAVY = ("CoolProp", "pandas", "pint", "scipy")

_PROBE = """
import runpy, sys
sys.argv = ["plant-audit", *{args!r}]
try:
    runpy.run_module("audit", run_name="__main__")
except SystemExit:
    pass
sys.stderr.write("LOADED " + " ".join(m for m in {heavy!r} if m in sys.modules) + "\\n")
"""


def _loaded(args: list[str], tmp_path) -> set[str]:
    done = subprocess.run(
        [sys.executable, "-c", _PROBE.format(args=args, heavy=HEAVY)],
        capture_output=True,
        text=True,
        cwd=tmp_path,
        env={**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)},
        check=False,
    )
    line = [x for x in done.stderr.splitlines() if x.startswith("LOADED")][-1]
    return set(line.split()[1:])


@pytest.mark.parametrize(
    "args",
    [
        ["--help"],
        ["schema"],
        ["check", str(ROOT / "tests" / "bad_inputs" / "balance_name_missing.yaml"), "-q"],
    ],
)
def test_answers_without_properties_load_no_heavy_library(args, tmp_path):
    assert _loaded(args, tmp_path) == set()


def test_superancillary_switch_keeps_the_notice_out_of_the_output(tmp_path):
    done = subprocess.run(
        [sys.executable, "-m", "audit", "check", str(SAMPLE / "quillon-bay-clean.yaml"), "-q"],
        capture_output=True,
        text=True,
        env={
            **os.environ,
            "PYTHONPATH": os.pathsep.join(sys.path),
            "COOLPROP_DISABLE_SUPERANCILLARIES_ENTIRELY": "1",
        },
        check=False,
    )
    assert done.returncode == 0
    assert "superancillaries" not in done.stdout + done.stderr
    assert done.stdout.strip().endswith("PASS")
