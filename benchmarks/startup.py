"""Cold start of the command line: the median wall and CPU seconds of fresh ``plant-audit``
processes for the answers that need no property call (``--help``, ``schema``, ``template``, an
invalid file) and for a check of the 23-stream sample, with the goals beside them.

Each command runs ``--runs`` times (default 7) in a new interpreter; Python's compiled-module
cache is allowed (as in an installed copy), so the first run of each command is left out.

Usage::

    python benchmarks/startup.py            # all commands
    python benchmarks/startup.py --runs 11  # steadier medians on a busy machine
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
SAMPLE = ROOT / "sample_plant" / "quillon-bay-seeded.yaml"
INVALID = ROOT / "tests" / "bad_inputs" / "balance_name_missing.yaml"
GOALS = {"check of the sample": 1.0, "an invalid file": 0.5}


def commands(folder: Path) -> dict[str, list[str]]:
    """The commands timed, by name (outputs go to ``folder``)."""
    return {
        "--help": ["--help"],
        "schema": ["schema"],
        "template": ["template", "--streams", str(folder / "t.xlsx"), "--force"],
        "an invalid file": ["check", str(INVALID), "-q"],
        "check of the sample": ["check", str(SAMPLE), "-q", "--json", str(folder / "x.json")],
    }


def timed(argv: list[str], runs: int) -> tuple[float, float, float]:
    """(median wall, minimum wall, median CPU) seconds of ``runs`` fresh processes, after one
    untimed run that fills the compiled-module cache."""
    environment = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    call = [sys.executable, "-m", "audit", *argv]
    subprocess.run(call, capture_output=True, check=False, cwd=ROOT, env=environment)
    walls, cpus = [], []
    for _ in range(runs):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        started = time.perf_counter()
        subprocess.run(call, capture_output=True, check=False, cwd=ROOT, env=environment)
        walls.append(time.perf_counter() - started)
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpus.append(after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime)
    return statistics.median(walls), min(walls), statistics.median(cpus)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7)
    args = parser.parse_args()
    bare = timed_python(args.runs)
    print(f"{'command':<22} {'wall median':>11} {'wall min':>9} {'CPU median':>10}  goal")
    print(f"{'python -c pass':<22} {bare:>10.3f}s")
    with tempfile.TemporaryDirectory() as folder:
        for name, argv in commands(Path(folder)).items():
            wall, fastest, cpu = timed(argv, args.runs)
            goal = GOALS.get(name)
            verdict = "" if goal is None else f"≤ {goal} s: {'met' if wall <= goal else 'not met'}"
            print(f"{name:<22} {wall:>10.3f}s {fastest:>8.3f}s {cpu:>9.3f}s  {verdict}")


def timed_python(runs: int) -> float:
    """Median wall seconds of a bare interpreter (the part no change of ours can remove)."""
    walls = []
    for _ in range(runs):
        started = time.perf_counter()
        subprocess.run([sys.executable, "-c", "pass"], check=False)
        walls.append(time.perf_counter() - started)
    return statistics.median(walls)


if __name__ == "__main__":
    main()
